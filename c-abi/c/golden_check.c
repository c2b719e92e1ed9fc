/*
 * A small runner for checking a port of fixsight kernels on your own
 * board, without our harness: `fixsight-verify golden export-c` writes
 * this file with golden_types.h, golden_vectors.h and golden_vectors.c
 * (the chosen vectors as C data). Link them with your port, which
 * provides golden_port_run() and golden_port_print(), and call
 * golden_check_all(). C99, no allocation, no stdio.
 *
 * golden_port_run() writes expected image k of vector v into `out` in the
 * golden layout (packed rows). For a vector with v->row_pad > 0 (padded
 * rows, golden/README.md) it lays its inputs out with rows of
 * width * channels + row_pad elements, padding bytes GOLDEN_IN_PAD, runs
 * its kernel on them, and writes into `out` with that same stride: `out`
 * arrives filled with GOLDEN_OUT_PAD bytes, and the padding must still hold
 * them afterwards.
 *
 * For every vector and every expected image it prints one line:
 *   pass <id> <image>
 *   FAIL <id> <image> x <x> y <y> channel <c> expected <e> got <g> differing <n> of <total>
 *   FAIL <id> <image> padding y <y> element <k> overwritten <n>
 *   not-claimed <id>
 * then "summary passed <p> failed <f> not-claimed <n>" (passed and failed
 * count expected images, not-claimed counts vectors). Returns 0 when no
 * image failed and at least one passed, else 1.
 */
#include "golden_vectors.h"

static uint8_t out_buf[GOLDEN_MAX_OUTPUT_BYTES];

static void print_int(char *line, int32_t *at, int64_t v) {
    char digits[24];
    int32_t n = 0;
    uint64_t u = v < 0 ? (uint64_t)0 - (uint64_t)v : (uint64_t)v;
    if (v < 0) line[(*at)++] = '-';
    do {
        digits[n++] = (char)('0' + (u % 10u));
        u /= 10u;
    } while (u != 0u);
    while (n > 0) line[(*at)++] = digits[--n];
}

static void print_str(char *line, int32_t *at, const char *s) {
    /* Ids are at most 200 characters (the manifest's rule is far shorter). */
    int32_t i = 0;
    while (s[i] != '\0' && *at < 400) line[(*at)++] = s[i++];
}

static int32_t elem_size(int32_t elem) {
    switch (elem) {
    case GOLDEN_U8: return 1;
    case GOLDEN_I16: case GOLDEN_U16: return 2;
    default: return 4;
    }
}

/* Element `i` of an image's little-endian bytes. */
static int64_t element(const uint8_t *b, int32_t elem, uint32_t i) {
    switch (elem) {
    case GOLDEN_U8: return b[i];
    case GOLDEN_I16: return (int16_t)(uint16_t)(b[2 * i] | (b[2 * i + 1] << 8));
    case GOLDEN_U16: return (uint16_t)(b[2 * i] | (b[2 * i + 1] << 8));
    case GOLDEN_I32:
        return (int32_t)((uint32_t)b[4 * i] | ((uint32_t)b[4 * i + 1] << 8) |
                         ((uint32_t)b[4 * i + 2] << 16) | ((uint32_t)b[4 * i + 3] << 24));
    default:
        return (uint32_t)b[4 * i] | ((uint32_t)b[4 * i + 1] << 8) |
               ((uint32_t)b[4 * i + 2] << 16) | ((uint32_t)b[4 * i + 3] << 24);
    }
}

int32_t golden_check_all(void) {
    int32_t passed = 0, failed = 0, unclaimed = 0;
    char line[512];
    for (int32_t n = 0; n < GOLDEN_VECTOR_COUNT; n++) {
        const golden_vector *v = &GOLDEN_VECTORS[n];
        for (int32_t k = 0; k < v->nexpected; k++) {
            const golden_image *want = &v->expected[k];
            int32_t at = 0;
            uint32_t i, sz = (uint32_t)elem_size(want->elem);
            uint32_t row = (uint32_t)(want->width * want->channels);
            uint32_t stride = row + (uint32_t)v->row_pad;
            if (v->row_pad == 0)
                for (i = 0; i < want->nbytes; i++) out_buf[i] = (uint8_t)~want->bytes[i];
            else
                for (i = 0; i < stride * (uint32_t)want->height * sz; i++) out_buf[i] = (uint8_t)GOLDEN_OUT_PAD;
            int32_t r = golden_port_run(v, k, out_buf);
            if (r == 1) {
                if (k == 0) {
                    unclaimed++;
                    print_str(line, &at, "not-claimed ");
                    print_str(line, &at, v->id);
                    line[at] = '\0';
                    golden_port_print(line);
                }
                break;
            }
            uint32_t count = want->nbytes / sz;
            uint32_t differing = 0, first = 0, padded = 0, pad_y = 0, pad_k = 0;
            for (i = 0; i < count; i++) {
                uint32_t got_at = (i / row) * stride + i % row;
                if (element(out_buf, want->elem, got_at) != element(want->bytes, want->elem, i)) {
                    if (differing == 0) first = i;
                    differing++;
                }
            }
            for (i = 0; i < (stride - row) * (uint32_t)want->height; i++) {
                uint32_t y = i / (stride - row), e = i % (stride - row), b;
                for (b = 0; b < sz; b++)
                    if (out_buf[(y * stride + row + e) * sz + b] != (uint8_t)GOLDEN_OUT_PAD) break;
                if (b < sz) {
                    if (padded == 0) {
                        pad_y = y;
                        pad_k = e;
                    }
                    padded++;
                }
            }
            if (r != 0 || differing != 0 || padded != 0) {
                failed++;
                print_str(line, &at, "FAIL ");
                print_str(line, &at, v->id);
                print_str(line, &at, " ");
                print_str(line, &at, want->name);
            }
            if (r == 0 && differing == 0 && padded != 0) {
                print_str(line, &at, " padding y ");
                print_int(line, &at, pad_y);
                print_str(line, &at, " element ");
                print_int(line, &at, pad_k);
                print_str(line, &at, " overwritten ");
                print_int(line, &at, padded);
            } else if (r != 0 || differing != 0) {
                if (r != 0) {
                    print_str(line, &at, " port returned ");
                    print_int(line, &at, r);
                } else {
                    uint32_t c = (uint32_t)want->channels;
                    uint32_t px = first / c;
                    print_str(line, &at, " x ");
                    print_int(line, &at, (int64_t)(px % (uint32_t)want->width));
                    print_str(line, &at, " y ");
                    print_int(line, &at, (int64_t)(px / (uint32_t)want->width));
                    print_str(line, &at, " channel ");
                    print_int(line, &at, (int64_t)(first % c));
                    print_str(line, &at, " expected ");
                    print_int(line, &at, element(want->bytes, want->elem, first));
                    print_str(line, &at, " got ");
                    print_int(line, &at, element(out_buf, want->elem, (first / row) * stride + first % row));
                    print_str(line, &at, " differing ");
                    print_int(line, &at, differing);
                    print_str(line, &at, " of ");
                    print_int(line, &at, count);
                }
            } else {
                passed++;
                print_str(line, &at, "pass ");
                print_str(line, &at, v->id);
                print_str(line, &at, " ");
                print_str(line, &at, want->name);
            }
            line[at] = '\0';
            golden_port_print(line);
        }
    }
    char line2[128];
    int32_t at = 0;
    print_str(line2, &at, "summary passed ");
    print_int(line2, &at, passed);
    print_str(line2, &at, " failed ");
    print_int(line2, &at, failed);
    print_str(line2, &at, " not-claimed ");
    print_int(line2, &at, unclaimed);
    line2[at] = '\0';
    golden_port_print(line2);
    return failed != 0 || passed == 0;
}
