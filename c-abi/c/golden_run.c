/*
 * Replays every golden vector through the C API (fixsight.h) and compares
 * every output byte with the expected file; then runs the bad-input cases.
 * C99, freestanding apart from memcpy/memset/strcmp. Shared by the host C
 * test and the C firmware; the platform provides console output and the
 * measurement hooks (golden.h).
 *
 * Each kernel id has a dispatcher below that mirrors targets/harness (and
 * run_vector in host-verify/src/<family>.rs). Kernels with a second C path
 * (row streams, strips, blob round trip) run it too, outside the measured
 * window, and it must give the same bits.
 *
 * Code-size images (-DGOLDEN_SIZE_IMAGE, linked without bad_input.c) drop
 * the second paths and the bad-input cases; with -DGOLDEN_KEEP=K_<family>_<name>
 * (or -1 for none) they route every other kernel id to a no-op, so the
 * growth of .text over the `none` image is what that kernel id adds.
 *
 * Pixels per vector (the "px" of the console line): the first output's,
 * or the first input's when the output is a single row (a summary such as
 * the two thresholds, not an image).
 */
#include "fixsight.h"
#include "golden.h"

#include <stdint.h>
#include <string.h>

/* ---------------------------------------------------------------- arena -- */

/* 640 KiB: the chain vector needs a few dozen KiB; room to spare. */
#define ARENA_BYTES (640u * 1024u)
static uint64_t arena[ARENA_BYTES / 8];
static uint32_t arena_used;

static void *alloc(uint32_t bytes) {
    uint32_t n = (bytes + 7u) & ~7u;
    if (n > ARENA_BYTES - arena_used) return 0;
    void *p = (uint8_t *)arena + arena_used;
    arena_used += n;
    return p;
}

/* ------------------------------------------------------------- console -- */

void golden_print_int(int64_t v) {
    char buf[24];
    int i = 23;
    int neg = v < 0;
    uint64_t u = neg ? (uint64_t)(-(v + 1)) + 1u : (uint64_t)v;
    buf[i] = 0;
    do {
        buf[--i] = (char)('0' + (int)(u % 10u));
        u /= 10u;
    } while (u);
    if (neg) buf[--i] = '-';
    golden_platform_write(buf + i);
}

static void say(const char *s) { golden_platform_write(s); }

/* -------------------------------------------------------------- params -- */

/* Harness-side failure (missing parameter, arena full): not a C API status. */
#define HARNESS_ERROR (-1000)
static const char *why;

static const golden_param *param(const golden_vector *v, const char *key) {
    for (int32_t i = 0; i < v->nparams; i++)
        if (strcmp(v->params[i].key, key) == 0) return &v->params[i];
    return 0;
}

static int p_int(const golden_vector *v, const char *key, int32_t *out) {
    const golden_param *p = param(v, key);
    if (!p || p->kind != GOLDEN_INT || p->value < INT32_MIN || p->value > INT32_MAX) {
        why = key;
        return -1;
    }
    *out = (int32_t)p->value;
    return 0;
}

static int p_u32(const golden_vector *v, const char *key, uint32_t *out) {
    const golden_param *p = param(v, key);
    if (!p || p->kind != GOLDEN_INT || p->value < 0 || p->value > (int64_t)UINT32_MAX) {
        why = key;
        return -1;
    }
    *out = (uint32_t)p->value;
    return 0;
}

/* The border rule: "clamp" or {"fill": c}. */
static int p_border(const golden_vector *v, int32_t *out) {
    const golden_param *p = param(v, "border");
    if (p && p->kind == GOLDEN_STR && strcmp(p->str, "clamp") == 0) {
        *out = FXS_BORDER_CLAMP;
        return 0;
    }
    return p_int(v, "border.fill", out);
}

/* -------------------------------------------------------------- images -- */

typedef struct img {
    void *p;
    int32_t w, h, ch, elem;
    int32_t s;  /* stride in elements: w * ch + the vector's row_pad */
    uint32_t n; /* elements of the buffer: s * h */
} img;

static uint32_t elem_size(int32_t e) {
    return e == GOLDEN_U8 ? 1u : (e == GOLDEN_I16 || e == GOLDEN_U16) ? 2u : 4u;
}

/* A buffer shaped like `g` with `pad` elements after every row, every byte
 * `fill`. */
static int shape(const golden_image *g, int32_t pad, uint8_t fill, img *out) {
    uint32_t sz = elem_size(g->elem);
    out->w = g->width;
    out->h = g->height;
    out->ch = g->channels;
    out->elem = g->elem;
    out->s = g->width * g->channels + pad;
    out->n = (uint32_t)out->s * (uint32_t)g->height;
    out->p = alloc(out->n * sz);
    if (!out->p) return -1;
    memset(out->p, fill, out->n * sz);
    return 0;
}

/* Element `i` (row-major, packed) of an image's little-endian file bytes,
 * stored at element `at` of `p`. */
static void put(void *p, uint32_t sz, uint32_t at, const uint8_t *b) {
    uint32_t u = 0;
    for (uint32_t k = 0; k < sz; k++) u |= (uint32_t)b[k] << (8u * k);
    if (sz == 1) ((uint8_t *)p)[at] = (uint8_t)u;
    else if (sz == 2) ((uint16_t *)p)[at] = (uint16_t)u;
    else ((uint32_t *)p)[at] = u;
}

/* Decodes little-endian file bytes into a typed array in the arena, rows
 * `pad` elements apart more than packed, padding bytes GOLDEN_IN_PAD. */
static int decode(const golden_image *g, int32_t pad, img *out) {
    uint32_t sz = elem_size(g->elem), row = (uint32_t)(g->width * g->channels);
    if (shape(g, pad, (uint8_t)GOLDEN_IN_PAD, out)) return -1;
    if (row * (uint32_t)g->height * sz != g->nbytes) return -1;
    for (uint32_t y = 0; y < (uint32_t)g->height; y++)
        for (uint32_t x = 0; x < row; x++)
            put(out->p, sz, y * (uint32_t)out->s + x, g->bytes + (y * row + x) * sz);
    return 0;
}

/* What an output buffer holds before a call: 0xA5 bytes, or GOLDEN_OUT_PAD
 * for a padded-row vector (its padding must still hold it afterwards). */
static uint8_t out_fill(int32_t pad) { return pad ? (uint8_t)GOLDEN_OUT_PAD : 0xA5u; }

/* An output shaped like the expected image. */
static int blank(const golden_image *g, int32_t pad, img *out) {
    return shape(g, pad, out_fill(pad), out);
}

/* Little-endian byte `k` of element `i` of a typed buffer. */
static uint8_t byte_of(const img *b, uint32_t sz, uint32_t i, uint32_t k) {
    uint32_t u = sz == 1   ? ((const uint8_t *)b->p)[i]
                 : sz == 2 ? ((const uint16_t *)b->p)[i]
                           : ((const uint32_t *)b->p)[i];
    return (uint8_t)(u >> (8u * k));
}

/* Index (packed, row-major) of the first element whose little-endian bytes
 * differ, or -1. */
static int64_t first_difference(const img *got, const golden_image *want) {
    uint32_t sz = elem_size(want->elem), row = (uint32_t)(got->w * got->ch);
    for (uint32_t y = 0; y < (uint32_t)got->h; y++)
        for (uint32_t x = 0; x < row; x++)
            for (uint32_t k = 0; k < sz; k++)
                if (byte_of(got, sz, y * (uint32_t)got->s + x, k) != want->bytes[(y * row + x) * sz + k])
                    return (int64_t)(y * row + x);
    return -1;
}

/* The first padding element (row * stride + its index after the row's
 * pixels) that no longer holds GOLDEN_OUT_PAD bytes, or -1. */
static int64_t padding_touched(const img *got, int32_t *row_at) {
    uint32_t sz = elem_size(got->elem), row = (uint32_t)(got->w * got->ch);
    for (uint32_t y = 0; y < (uint32_t)got->h; y++)
        for (uint32_t x = row; x < (uint32_t)got->s; x++)
            for (uint32_t k = 0; k < sz; k++)
                if (byte_of(got, sz, y * (uint32_t)got->s + x, k) != (uint8_t)GOLDEN_OUT_PAD) {
                    *row_at = (int32_t)y;
                    return (int64_t)(x - row);
                }
    return -1;
}

static fxs_u8_view u8v(const img *b) {
    fxs_u8_view x = {(const uint8_t *)b->p, b->n, b->w, b->h, b->s};
    return x;
}
static fxs_u8_view_mut u8m(const img *b) {
    fxs_u8_view_mut x = {(uint8_t *)b->p, b->n, b->w, b->h, b->s};
    return x;
}
static fxs_i16_view i16v(const img *b) {
    fxs_i16_view x = {(const int16_t *)b->p, b->n, b->w, b->h, b->s};
    return x;
}
static fxs_i16_view_mut i16m(const img *b) {
    fxs_i16_view_mut x = {(int16_t *)b->p, b->n, b->w, b->h, b->s};
    return x;
}
static fxs_u16_view u16v(const img *b) {
    fxs_u16_view x = {(const uint16_t *)b->p, b->n, b->w, b->h, b->s};
    return x;
}
static fxs_u16_view_mut u16m(const img *b) {
    fxs_u16_view_mut x = {(uint16_t *)b->p, b->n, b->w, b->h, b->s};
    return x;
}

/* Copies the pixels of input 0 to output 0, row by row, leaving the
 * output's padding as it is (in-place kernels). */
static int copy_in(const img *in, const img *out) {
    uint32_t sz = elem_size(in->elem), row = (uint32_t)(in->w * in->ch) * sz;
    if (in->n != out->n || in->s != out->s || in->h != out->h || in->elem != out->elem) return -1;
    for (uint32_t y = 0; y < (uint32_t)in->h; y++)
        memcpy((uint8_t *)out->p + y * (uint32_t)out->s * sz, (const uint8_t *)in->p + y * (uint32_t)in->s * sz, row);
    return 0;
}

#define NEED(cond, what)                                                                          \
    do {                                                                                          \
        if (!(cond)) {                                                                            \
            why = (what);                                                                         \
            return HARNESS_ERROR;                                                                 \
        }                                                                                         \
    } while (0)
#define TRY(call)                                                                                 \
    do {                                                                                          \
        fxs_status s_ = (call);                                                                   \
        if (s_ != FXS_OK) return s_;                                                              \
    } while (0)

typedef fxs_status (*run_fn)(const golden_vector *v, const img *in, const img *out);

static fxs_status run_noop(const golden_vector *v, const img *in, const img *out) {
    (void)v;
    (void)in;
    (void)out;
    return FXS_OK;
}

/* -------------------------------------------------------------- filter -- */

/* The filter of a `filter.*` vector: a preset by kernel id, or the taps of
 * `filter.separable`. */
static fxs_status make_filter(const golden_vector *v, fxs_filter *f) {
    static const struct {
        const char *id;
        int32_t preset;
    } presets[] = {
        {"filter.binomial3", FXS_FILTER_BINOMIAL3}, {"filter.binomial5", FXS_FILTER_BINOMIAL5},
        {"filter.binomial7", FXS_FILTER_BINOMIAL7}, {"filter.sobel_x", FXS_FILTER_SOBEL_X},
        {"filter.sobel_y", FXS_FILTER_SOBEL_Y},     {"filter.scharr_x", FXS_FILTER_SCHARR_X},
        {"filter.scharr_y", FXS_FILTER_SCHARR_Y},
    };
    int32_t border;
    NEED(p_border(v, &border) == 0, "border");
    for (uint32_t i = 0; i < sizeof presets / sizeof presets[0]; i++)
        if (strcmp(v->kernel, presets[i].id) == 0) return fxs_filter_preset(f, presets[i].preset, border);
    {
        const golden_param *h = param(v, "h"), *vv = param(v, "v");
        int32_t hs, vs;
        int16_t ht[9], vt[9];
        NEED(h && vv && h->kind == GOLDEN_INTS && vv->kind == GOLDEN_INTS, "h, v");
        NEED(h->count <= 9 && vv->count <= 9, "at most 9 taps");
        NEED(p_int(v, "h_shift", &hs) == 0 && p_int(v, "v_shift", &vs) == 0, "shifts");
        for (int32_t i = 0; i < h->count; i++) ht[i] = (int16_t)h->ints[i];
        for (int32_t i = 0; i < vv->count; i++) vt[i] = (int16_t)vv->ints[i];
        return fxs_filter_separable(f, ht, h->count, hs, vt, vv->count, vs, border);
    }
}

static fxs_status run_filter(const golden_vector *v, const img *in, const img *out) {
    fxs_filter f;
    fxs_u8_view src = u8v(&in[0]);
    int32_t *scratch = alloc(4u * (uint32_t)in[0].w);
    NEED(scratch, "arena full");
    TRY(make_filter(v, &f));
    if (out[0].elem == GOLDEN_U8) {
        fxs_u8_view_mut dst = u8m(&out[0]);
        return fxs_filter_frame_u8(&f, &src, &dst, scratch, (uintptr_t)in[0].w);
    } else {
        fxs_i16_view_mut dst = i16m(&out[0]);
        return fxs_filter_frame_i16(&f, &src, &dst, scratch, (uintptr_t)in[0].w);
    }
}

/* The same filter as a row stream: push every row, then flush. */
static fxs_status stream_filter(const golden_vector *v, const img *in, const img *out) {
    fxs_filter f;
    fxs_filter_stream st;
    int32_t rows, w = in[0].w, h = in[0].h, y, got = 0, at;
    uint8_t *ring;
    int32_t *acc;
    void *spare;
    int wide = out[0].elem == GOLDEN_I16;
    TRY(make_filter(v, &f));
    TRY(fxs_filter_ring_rows(&f, &rows));
    ring = alloc((uint32_t)(rows * w));
    acc = alloc(4u * (uint32_t)w);
    spare = alloc(2u * (uint32_t)w);
    NEED(ring && acc && spare, "arena full");
    TRY(fxs_filter_stream_init(&st, &f, w, h, ring, (uintptr_t)(rows * w), acc, (uintptr_t)w));
    for (y = 0; y <= h; y++) {
        for (;;) {
            const uint8_t *row = (const uint8_t *)in[0].p + y * in[0].s;
            /* the call that reports the end writes nothing: any row will do */
            void *o = got >= h ? spare
                      : wide   ? (void *)((int16_t *)out[0].p + got * out[0].s)
                               : (void *)((uint8_t *)out[0].p + got * out[0].s);
            if (y < h)
                TRY(wide ? fxs_filter_stream_push_i16(&st, row, (uintptr_t)w, (int16_t *)o, (uintptr_t)w, &at)
                         : fxs_filter_stream_push_u8(&st, row, (uintptr_t)w, (uint8_t *)o, (uintptr_t)w, &at));
            else
                TRY(wide ? fxs_filter_stream_flush_i16(&st, (int16_t *)o, (uintptr_t)w, &at)
                         : fxs_filter_stream_flush_u8(&st, (uint8_t *)o, (uintptr_t)w, &at));
            if (at >= 0) {
                NEED(at == got, "stream rows out of order");
                got++;
            }
            if (y < h || at < 0) break;
        }
    }
    NEED(got == h, "stream emitted too few rows");
    return FXS_OK;
}

/* ------------------------------------------------------------ gradient -- */

typedef fxs_status (*magnitude_fn)(const fxs_i16_view *, const fxs_i16_view *, const fxs_u16_view_mut *);

/* A magnitude kernel of gx, gy (inputs 0 and 1) into output 0. */
static fxs_status magnitude(const img *in, const img *out, magnitude_fn k) {
    fxs_i16_view gx = i16v(&in[0]), gy = i16v(&in[1]);
    fxs_u16_view_mut m = u16m(&out[0]);
    return k(&gx, &gy, &m);
}

static fxs_status run_magnitude_l1(const golden_vector *v, const img *in, const img *out) {
    (void)v;
    return magnitude(in, out, fxs_gradient_magnitude_l1);
}

static fxs_status run_magnitude_l2_approx(const golden_vector *v, const img *in, const img *out) {
    (void)v;
    return magnitude(in, out, fxs_gradient_magnitude_l2_approx);
}

static fxs_status run_magnitude_l2_round(const golden_vector *v, const img *in, const img *out) {
    (void)v;
    return magnitude(in, out, fxs_gradient_magnitude_l2_round);
}

static fxs_status run_direction(const golden_vector *v, const img *in, const img *out) {
    fxs_i16_view gx = i16v(&in[0]), gy = i16v(&in[1]);
    fxs_u8_view_mut d = u8m(&out[0]);
    (void)v;
    return fxs_gradient_direction(&gx, &gy, &d);
}

static fxs_status run_angles(const golden_vector *v, const img *in, const img *out) {
    (void)v;
    return magnitude(in, out, fxs_gradient_angles);
}

/* ----------------------------------------------------------------- nms -- */

static fxs_status run_suppress(const golden_vector *v, const img *in, const img *out) {
    fxs_u16_view m = u16v(&in[0]);
    fxs_u8_view d = u8v(&in[1]);
    fxs_u16_view_mut o = u16m(&out[0]);
    (void)v;
    return fxs_nms_suppress(&m, &d, &o);
}

static fxs_status run_suppress_interpolated(const golden_vector *v, const img *in,
                                            const img *out) {
    fxs_u16_view m = u16v(&in[0]);
    fxs_i16_view gx = i16v(&in[1]), gy = i16v(&in[2]);
    fxs_u16_view_mut o = u16m(&out[0]);
    (void)v;
    return fxs_nms_suppress_interpolated(&m, &gx, &gy, &o);
}

static fxs_status stream_suppress(const golden_vector *v, const img *in, const img *out) {
    fxs_nms_stream st;
    int32_t w = in[0].w, h = in[0].h, y, got = 0, at;
    uint16_t *mr = alloc(6u * (uint32_t)w), *spare = alloc(2u * (uint32_t)w);
    uint8_t *dr = alloc(3u * (uint32_t)w);
    (void)v;
    NEED(mr && dr && spare, "arena full");
    TRY(fxs_nms_stream_init(&st, w, h, mr, 3u * (uintptr_t)w, dr, 3u * (uintptr_t)w));
    for (y = 0; y < h; y++) {
        TRY(fxs_nms_stream_push(&st, (const uint16_t *)in[0].p + y * in[0].s, (uintptr_t)w,
                                (const uint8_t *)in[1].p + y * in[1].s, (uintptr_t)w,
                                (uint16_t *)out[0].p + got * out[0].s, (uintptr_t)w, &at));
        if (at >= 0) got++;
    }
    do { /* the call that reports the end writes nothing: any row will do */
        TRY(fxs_nms_stream_flush(&st, got < h ? (uint16_t *)out[0].p + got * out[0].s : spare, (uintptr_t)w, &at));
        if (at >= 0) got++;
    } while (at >= 0);
    NEED(got == h, "stream emitted too few rows");
    return FXS_OK;
}

/* ---------------------------------------------------------- hysteresis -- */

static fxs_status thresholds_of(const golden_vector *v, const img *mag, uint16_t *low, uint16_t *high) {
    int32_t bins, shift, permille, ratio;
    fxs_u16_view m = u16v(mag);
    uint32_t *hist;
    NEED(p_int(v, "bins", &bins) == 0 && bins > 0, "bins");
    NEED(p_int(v, "shift", &shift) == 0 && p_int(v, "high_permille", &permille) == 0 &&
             p_int(v, "low_ratio_u0f16", &ratio) == 0,
         "threshold parameters");
    hist = alloc(4u * (uint32_t)bins);
    NEED(hist, "arena full");
    memset(hist, 0, 4u * (uint32_t)bins);
    return fxs_hysteresis_thresholds(&m, hist, (uintptr_t)bins, shift, permille, ratio, low, high);
}

static fxs_status run_thresholds(const golden_vector *v, const img *in, const img *out) {
    NEED(out[0].elem == GOLDEN_U16 && out[0].n >= 2, "thresholds output");
    return thresholds_of(v, &in[0], (uint16_t *)out[0].p, (uint16_t *)out[0].p + 1);
}

static fxs_status run_classify(const golden_vector *v, const img *in, const img *out) {
    int32_t low, high;
    fxs_u16_view m = u16v(&in[0]);
    fxs_u8_view_mut c = u8m(&out[0]);
    NEED(p_int(v, "low", &low) == 0 && p_int(v, "high", &high) == 0, "low, high");
    return fxs_hysteresis_classify(&m, low, high, &c);
}

static fxs_status run_link(const golden_vector *v, const img *in, const img *out) {
    int32_t n;
    uint32_t *stack;
    fxs_u8_view_mut m = u8m(&out[0]);
    NEED(p_int(v, "stack", &n) == 0 && n >= 0, "stack");
    stack = alloc(4u * (uint32_t)n);
    NEED(stack, "arena full");
    memset(stack, 0, 4u * (uint32_t)n);
    NEED(copy_in(&in[0], &out[0]) == 0, "codes and edges differ in shape");
    return fxs_hysteresis_link(&m, stack, (uintptr_t)n, 0);
}

/* ------------------------------------------------------------ thinning -- */

static fxs_status run_thin(const golden_vector *v, const img *in, const img *out) {
    uint8_t *scratch = alloc(3u * (uint32_t)out[0].w);
    fxs_u8_view_mut m = u8m(&out[0]);
    (void)v;
    NEED(scratch, "arena full");
    NEED(copy_in(&in[0], &out[0]) == 0, "map and thin differ in shape");
    return fxs_thinning_thin(&m, scratch, 3u * (uintptr_t)out[0].w, 0);
}

/* --------------------------------------------------------------- chain -- */

/* chain.edges as host-verify/src/chain.rs composes it: the 7-tap Gaussian
 * convolved with Sobel's taps (shift 7 each, clamped border), rounded L2
 * magnitude, direction, suppression, automatic thresholds, classify, link,
 * thin, all through the C API. */
static fxs_status run_edges(const golden_vector *v, const img *in, const img *out) {
    static const int16_t d[9] = {-1, -14, -61, -88, 0, 88, 61, 14, 1};
    static const int16_t s[9] = {1, 16, 91, 240, 328, 240, 91, 16, 1};
    int32_t w = in[0].w, h = in[0].h, n = w * h, stack_len;
    fxs_filter fx, fy;
    img gx = {0, w, h, 1, GOLDEN_I16, w, (uint32_t)n}, gy = gx, mag = gx, dir = gx, sup = gx;
    uint16_t low, high;
    int32_t *row = alloc(4u * (uint32_t)w);
    uint8_t *scratch = alloc(3u * (uint32_t)w);
    uint32_t *stack;
    gx.p = alloc(2u * (uint32_t)n);
    gy.p = alloc(2u * (uint32_t)n);
    mag.p = alloc(2u * (uint32_t)n);
    mag.elem = GOLDEN_U16;
    dir.p = alloc((uint32_t)n);
    dir.elem = GOLDEN_U8;
    sup.p = alloc(2u * (uint32_t)n);
    sup.elem = GOLDEN_U16;
    NEED(row && scratch && gx.p && gy.p && mag.p && dir.p && sup.p, "arena full");
    NEED(p_int(v, "stack", &stack_len) == 0 && stack_len >= 0, "stack");
    stack = alloc(4u * (uint32_t)stack_len);
    NEED(stack, "arena full");
    memset(stack, 0, 4u * (uint32_t)stack_len);
    TRY(fxs_filter_separable(&fx, d, 9, 7, s, 9, 7, FXS_BORDER_CLAMP));
    TRY(fxs_filter_separable(&fy, s, 9, 7, d, 9, 7, FXS_BORDER_CLAMP));
    {
        fxs_u8_view src = u8v(&in[0]);
        fxs_i16_view_mut gxm = i16m(&gx), gym = i16m(&gy);
        fxs_i16_view gxv = i16v(&gx), gyv = i16v(&gy);
        fxs_u16_view_mut magm = u16m(&mag), supm = u16m(&sup);
        fxs_u8_view_mut dirm = u8m(&dir), edges = u8m(&out[0]);
        fxs_u16_view magv = u16v(&mag), supv = u16v(&sup);
        fxs_u8_view dirv = u8v(&dir);
        TRY(fxs_filter_frame_i16(&fx, &src, &gxm, row, (uintptr_t)w));
        TRY(fxs_filter_frame_i16(&fy, &src, &gym, row, (uintptr_t)w));
        TRY(fxs_gradient_magnitude_l2_round(&gxv, &gyv, &magm));
        TRY(fxs_gradient_direction(&gxv, &gyv, &dirm));
        TRY(fxs_nms_suppress(&magv, &dirv, &supm));
        TRY(thresholds_of(v, &sup, &low, &high));
        TRY(fxs_hysteresis_classify(&supv, low, high, &edges));
        TRY(fxs_hysteresis_link(&edges, stack, (uintptr_t)stack_len, 0));
        return fxs_thinning_thin(&edges, scratch, 3u * (uintptr_t)w, 0);
    }
}

/* --------------------------------------------------------------- lines -- */

static fxs_status run_cos_sin(const golden_vector *v, const img *in, const img *out) {
    int32_t q;
    const uint32_t *a = (const uint32_t *)in[0].p;
    int16_t *cs = (int16_t *)out[0].p;
    NEED(p_int(v, "frac_bits", &q) == 0, "frac_bits");
    NEED(in[0].elem == GOLDEN_U32 && out[0].elem == GOLDEN_I16 && out[0].n == 2 * in[0].n, "cos_sin shapes");
    for (uint32_t i = 0; i < in[0].n; i++) TRY(fxs_lines_cos_sin(a[i], q, &cs[2 * i], &cs[2 * i + 1]));
    return FXS_OK;
}

static int vote_params_of(const golden_vector *v, fxs_vote_params *p) {
    return p_int(v, "width", &p->width) || p_int(v, "height", &p->height) ||
           p_int(v, "theta_start", &p->theta_start) || p_int(v, "theta_step_log2", &p->theta_step_log2) ||
           p_int(v, "theta_bins", &p->theta_bins) || p_int(v, "rho_step_log2", &p->rho_step_log2) ||
           p_int(v, "rho_bins", &p->rho_bins) || p_int(v, "trig_frac_bits", &p->trig_frac_bits) ||
           p_int(v, "gate", &p->gate) || p_int(v, "weight_shift", &p->weight_shift);
}

/* Votes inputs 0..3 (edges, gx, gy, weights; gradients only when gating,
 * weights only when weighting) into `cells`: whole frame (`rows` 0), row by
 * row (`rows` 1), or row by row through the grid of input 4 (`rows` 2). */
static fxs_status vote(const golden_vector *v, const img *in, uint16_t *cells, uintptr_t ncells,
                       fxs_lines_accumulator *acc, int rows) {
    fxs_vote_params p;
    int16_t *trig;
    NEED(vote_params_of(v, &p) == 0, "vote parameters");
    NEED(p.theta_bins > 0, "theta_bins");
    trig = alloc(4u * (uint32_t)p.theta_bins);
    NEED(trig, "arena full");
    TRY(fxs_lines_accumulator_init(acc, &p, cells, ncells, trig, 2u * (uintptr_t)p.theta_bins));
    if (rows == 0) {
        fxs_u8_view e = u8v(&in[0]);
        fxs_i16_view gx = i16v(&in[1]), gy = i16v(&in[2]);
        fxs_u16_view wt = u16v(&in[3]);
        return fxs_lines_vote_frame(acc, &e, p.gate ? &gx : 0, p.gate ? &gy : 0, p.weight_shift >= 0 ? &wt : 0);
    } else {
        fxs_control_grid grid;
        int32_t w = in[0].w, y;
        if (rows == 2) {
            fxs_warp_geometry g;
            int32_t log2;
            NEED(p_int(v, "frac_bits", &g.frac_bits) == 0 && p_int(v, "grid_log2", &log2) == 0, "grid parameters");
            NEED(in[4].elem == GOLDEN_I32 && in[4].ch == 2, "grid must be i32 pairs");
            g.out_width = in[0].w;
            g.out_height = in[0].h;
            g.src_width = p.width;
            g.src_height = p.height;
            TRY(fxs_warp_control_grid_init(&grid, (const int32_t *)in[4].p, in[4].n, &g, log2));
        }
        for (y = 0; y < in[0].h; y++) {
            const uint8_t *e = (const uint8_t *)in[0].p + y * w;
            const int16_t *gx = p.gate ? (const int16_t *)in[1].p + y * w : 0;
            const int16_t *gy = p.gate ? (const int16_t *)in[2].p + y * w : 0;
            const uint16_t *wt = p.weight_shift >= 0 ? (const uint16_t *)in[3].p + y * w : 0;
            if (rows == 2)
                TRY(fxs_lines_vote_row_corrected(acc, y, e, (uintptr_t)w, gx, (uintptr_t)w, gy, (uintptr_t)w, wt,
                                                 (uintptr_t)w, &grid));
            else
                TRY(fxs_lines_vote_row(acc, y, e, (uintptr_t)w, gx, (uintptr_t)w, gy, (uintptr_t)w, wt,
                                       (uintptr_t)w));
        }
        return FXS_OK;
    }
}

static fxs_status run_accumulator(const golden_vector *v, const img *in, const img *out) {
    fxs_lines_accumulator acc;
    NEED(out[0].elem == GOLDEN_U16, "cells must be u16");
    return vote(v, in, (uint16_t *)out[0].p, out[0].n, &acc, 0);
}

/* The same votes row by row. */
static fxs_status rows_accumulator(const golden_vector *v, const img *in, const img *out) {
    fxs_lines_accumulator acc;
    return vote(v, in, (uint16_t *)out[0].p, out[0].n, &acc, 1);
}

static fxs_status run_correct_point(const golden_vector *v, const img *in, const img *out) {
    fxs_lines_accumulator acc;
    NEED(out[0].elem == GOLDEN_U16, "cells must be u16");
    return vote(v, in, (uint16_t *)out[0].p, out[0].n, &acc, 2);
}

/* `k` rows of 5 int32_t into output 0 (rows past `found` zero). */
static int32_t *rows5(const img *out, int32_t k) {
    if (out[0].elem != GOLDEN_I32 || out[0].n != 5u * (uint32_t)k) return 0;
    memset(out[0].p, 0, out[0].n * 4u);
    return (int32_t *)out[0].p;
}

static fxs_status run_peak(const golden_vector *v, const img *in, const img *out) {
    fxs_lines_accumulator acc;
    fxs_peak_params pp;
    fxs_line_peak pk[FXS_LINES_MAX_OUT];
    int32_t k, found, t, r, *o;
    uint16_t *cells;
    NEED(p_int(v, "k", &k) == 0 && k > 0 && k <= FXS_LINES_MAX_OUT, "k");
    NEED(p_int(v, "threshold", &pp.threshold) == 0 && p_int(v, "radius_theta", &pp.radius_theta) == 0 &&
             p_int(v, "radius_rho", &pp.radius_rho) == 0,
         "peak parameters");
    NEED(p_int(v, "theta_bins", &t) == 0 && p_int(v, "rho_bins", &r) == 0 && t > 0 && r > 0, "bins");
    cells = alloc(2u * (uint32_t)(t * r));
    o = rows5(out, k);
    NEED(cells && o, "arena full or output not 5 x k i32");
    TRY(vote(v, in, cells, (uintptr_t)(t * r), &acc, 0));
    TRY(fxs_lines_peaks(&acc, &pp, pk, (uintptr_t)k, &found));
    for (int32_t i = 0; i < found; i++) {
        o[5 * i] = pk[i].theta_bin;
        o[5 * i + 1] = pk[i].rho_bin;
        o[5 * i + 2] = pk[i].votes;
        o[5 * i + 3] = pk[i].line.rho;
        o[5 * i + 4] = pk[i].line.theta;
    }
    return FXS_OK;
}

static fxs_status run_segments(const golden_vector *v, const img *in, const img *out) {
    fxs_line line = {0, 0, 0};
    fxs_segment_params sp;
    fxs_segment seg[FXS_LINES_MAX_OUT];
    fxs_u8_view e = u8v(&in[0]);
    int32_t k, theta, found, *o;
    NEED(p_int(v, "k", &k) == 0 && k > 0 && k <= FXS_LINES_MAX_OUT, "k");
    NEED(p_int(v, "rho", &line.rho) == 0 && p_int(v, "theta", &theta) == 0 && theta >= 0 && theta <= 65535,
         "line");
    line.theta = (uint16_t)theta;
    NEED(p_int(v, "min_length", &sp.min_length) == 0 && p_int(v, "max_gap", &sp.max_gap) == 0 &&
             p_int(v, "tolerance", &sp.tolerance) == 0,
         "segment parameters");
    o = rows5(out, k);
    NEED(o, "output not 5 x k i32");
    TRY(fxs_lines_segments(&e, &line, &sp, seg, (uintptr_t)k, &found));
    for (int32_t i = 0; i < found; i++) {
        o[5 * i] = seg[i].x0;
        o[5 * i + 1] = seg[i].y0;
        o[5 * i + 2] = seg[i].x1;
        o[5 * i + 3] = seg[i].y1;
        o[5 * i + 4] = (int32_t)seg[i].hits;
    }
    return FXS_OK;
}

/* ------------------------------------------------------------- marking -- */

static fxs_status run_select(const golden_vector *v, const img *in, const img *out) {
    fxs_marking_limits l;
    fxs_marking_line lines[FXS_MARKING_MAX_LINES];
    fxs_marking_result r;
    const golden_param *c = param(v, "contrast");
    const int32_t *raw = (const int32_t *)in[0].p;
    int32_t *o = (int32_t *)out[0].p;
    NEED(c && c->kind == GOLDEN_STR, "contrast");
    l.contrast = strcmp(c->str, "brighter") == 0 ? FXS_CONTRAST_BRIGHTER
                 : strcmp(c->str, "darker") == 0 ? FXS_CONTRAST_DARKER
                 : strcmp(c->str, "either") == 0 ? FXS_CONTRAST_EITHER
                                                 : -1;
    NEED(l.contrast >= 0, "contrast");
    NEED(p_int(v, "near_row_q4", &l.near_row_q4) == 0 && p_int(v, "far_row_q4", &l.far_row_q4) == 0 &&
             p_int(v, "horizon_row_q4", &l.horizon_row_q4) == 0 && p_int(v, "max_tilt", &l.max_tilt) == 0 &&
             p_int(v, "near_x_min_q4", &l.near_x_min_q4) == 0 && p_int(v, "near_x_max_q4", &l.near_x_max_q4) == 0 &&
             p_int(v, "near_sep_min_q4", &l.near_sep_min_q4) == 0 &&
             p_int(v, "near_sep_nominal_q4", &l.near_sep_nominal_q4) == 0 &&
             p_int(v, "near_sep_max_q4", &l.near_sep_max_q4) == 0 &&
             p_int(v, "converge_tol_q4", &l.converge_tol_q4) == 0,
         "marking limits");
    NEED(in[0].elem == GOLDEN_I32 && in[0].w == 4 && in[0].h <= FXS_MARKING_MAX_LINES, "lines: i32, 4 wide");
    NEED(out[0].elem == GOLDEN_I32 && out[0].n == 10, "marking output: 10 i32");
    for (int32_t i = 0; i < in[0].h; i++) {
        const int32_t *w = raw + 4 * i;
        NEED(w[1] >= 0 && w[1] <= 65535, "theta");
        lines[i].rho_q4 = w[0];
        lines[i].theta = (uint16_t)w[1];
        lines[i].votes = (uint32_t)w[2];
        lines[i].polarity = (int16_t)w[3];
    }
    TRY(fxs_marking_select(lines, (uintptr_t)in[0].h, &l, &r));
    o[0] = r.found;
    o[1] = r.left;
    o[2] = r.right;
    o[3] = r.near_left_q4;
    o[4] = r.near_right_q4;
    o[5] = r.far_left_q4;
    o[6] = r.far_right_q4;
    o[7] = (int32_t)r.votes_lo;
    o[8] = (int32_t)r.votes_hi;
    o[9] = r.candidates;
    return FXS_OK;
}

/* --------------------------------------------------------------- track -- */

static int axis_of(const golden_vector *v, const char *a, const char *b, const char *c, fxs_track_axis_noise *n) {
    return p_u32(v, a, &n->meas_var) || p_u32(v, b, &n->accel_index_q16) || p_u32(v, c, &n->init_vel_var_q16);
}

static fxs_status run_tracker(const golden_vector *v, const img *in, const img *out) {
    fxs_track_config c;
    fxs_tracker t;
    fxs_detection batch[FXS_TRACK_MAX_DETECTIONS];
    fxs_frame_report r;
    int32_t slots, maxd;
    uint32_t at = 0, calls;
    const uint32_t *frames = (const uint32_t *)in[0].p;
    const int32_t *dets = (const int32_t *)in[1].p;
    int32_t *states = (int32_t *)out[0].p, *report = (int32_t *)out[1].p;
    NEED(p_int(v, "slots", &slots) == 0 && slots == FXS_TRACK_SLOTS, "slots");
    NEED(p_int(v, "max_detections", &maxd) == 0 && maxd == FXS_TRACK_MAX_DETECTIONS, "max_detections");
    NEED(axis_of(v, "rho.meas_var", "rho.accel_index_q16", "rho.init_vel_var_q16", &c.rho) == 0 &&
             axis_of(v, "theta.meas_var", "theta.accel_index_q16", "theta.init_vel_var_q16", &c.theta) == 0,
         "axis noise");
    NEED(p_u32(v, "gate_q8", &c.gate_q8) == 0 && p_int(v, "confirm_hits", &c.confirm_hits) == 0 &&
             p_int(v, "max_missed", &c.max_missed) == 0 && p_u32(v, "birth_weight", &c.birth_weight) == 0 &&
             p_int(v, "reference_x_q4", &c.reference_x_q4) == 0 &&
             p_int(v, "reference_y_q4", &c.reference_y_q4) == 0 && p_int(v, "warn_horizon", &c.warn_horizon) == 0 &&
             p_int(v, "warn_min_hits", &c.warn_min_hits) == 0 &&
             p_int(v, "warn_raise_frames", &c.warn_raise_frames) == 0 &&
             p_int(v, "warn_clear_frames", &c.warn_clear_frames) == 0,
         "tracker settings");
    NEED(in[0].elem == GOLDEN_U32 && in[1].elem == GOLDEN_I32 && out[0].elem == GOLDEN_I32 &&
             out[1].elem == GOLDEN_I32,
         "tracker element types");
    calls = in[0].n / 2u;
    NEED(out[1].n == 5u * calls && out[0].n == (uint32_t)(FXS_TRACK_SLOTS * FXS_TRACK_WORDS) * calls,
         "tracker output sizes");
    TRY(fxs_tracker_init(&t, &c));
    for (uint32_t k = 0; k < calls; k++) {
        uint32_t n = frames[2 * k + 1];
        NEED(n <= FXS_TRACK_MAX_DETECTIONS && 3u * (at + n) <= in[1].n, "detections of a call");
        for (uint32_t i = 0; i < n; i++) {
            const int32_t *d = dets + 3u * (at + i);
            batch[i].rho_q4 = d[0];
            batch[i].theta = (uint16_t)d[1];
            batch[i].reserved = 0;
            batch[i].weight = (uint32_t)d[2];
        }
        at += n;
        TRY(fxs_tracker_update(&t, frames[2 * k], batch, n, &r));
        report[5 * k] = (int32_t)r.associated;
        report[5 * k + 1] = (int32_t)r.born;
        report[5 * k + 2] = (int32_t)r.dropped;
        report[5 * k + 3] = r.warning_track;
        report[5 * k + 4] = r.warning_frames;
        for (int32_t s = 0; s < FXS_TRACK_SLOTS; s++)
            TRY(fxs_tracker_slot_words(&t, s, states + (k * FXS_TRACK_SLOTS + (uint32_t)s) * FXS_TRACK_WORDS,
                                       FXS_TRACK_WORDS));
    }
    return FXS_OK;
}

/* ------------------------------------------------------------ pipeline -- */

/* A string parameter mapped through {name, value} pairs. */
static int p_enum(const golden_vector *v, const char *key, const char *const *names, int32_t n, int32_t *out) {
    const golden_param *p = param(v, key);
    if (p && p->kind == GOLDEN_STR)
        for (int32_t i = 0; i < n; i++)
            if (strcmp(p->str, names[i]) == 0) {
                *out = i;
                return 0;
            }
    why = key;
    return -1;
}

static fxs_edge_stream edge_stream; /* 45 KiB: a static, as a firmware would keep it */

static fxs_status run_edge_stream(const golden_vector *v, const img *in, const img *out) {
    /* Index = the FXS_* value of each name. */
    static const char *const smoothing[] = {"none", "binomial3", "binomial5", "binomial7", "gauss7"};
    static const char *const operators[] = {"sobel", "scharr"};
    static const char *const magnitudes[] = {"l1", "l2_approx", "l2_round"};
    static const char *const rules[] = {"fixed", "auto"};
    static const char *const thinning[] = {"off", "until_stable", "at_most"};
    static const char *const suppression[] = {"sectors", "interpolated"};
    fxs_edge_config c;
    fxs_edge_report r;
    fxs_edge_point pts[64];
    int32_t frames, height, last_rows, w = in[0].w, at;
    uintptr_t first = 0, got;
    uint16_t *t = (uint16_t *)out[2].p;
    int16_t *grad = (int16_t *)out[1].p;
    NEED(p_enum(v, "smoothing", smoothing, 5, &c.smoothing) == 0 &&
             p_enum(v, "operator", operators, 2, &c.gradient_operator) == 0 &&
             p_enum(v, "magnitude", magnitudes, 3, &c.magnitude) == 0 &&
             p_enum(v, "thresholds", rules, 2, &c.threshold_rule) == 0 &&
             p_enum(v, "thinning", thinning, 3, &c.thinning) == 0,
         "edge configuration names");
    /* `suppression` is absent from the vectors written before the choice: sectors. */
    c.suppression = FXS_SUPPRESSION_SECTORS;
    NEED(!param(v, "suppression") || p_enum(v, "suppression", suppression, 2, &c.suppression) == 0,
         "suppression name");
    NEED(p_int(v, "frac_bits", &c.frac_bits) == 0 && p_int(v, "low", &c.low) == 0 && p_int(v, "high", &c.high) == 0 &&
             p_int(v, "shift", &c.shift) == 0 && p_int(v, "high_permille", &c.high_permille) == 0 &&
             p_int(v, "low_ratio_u0f16", &c.low_ratio_u0f16) == 0 && p_int(v, "thinning_cap", &c.thinning_cap) == 0,
         "edge configuration numbers");
    NEED(p_int(v, "frames", &frames) == 0 && p_int(v, "height", &height) == 0 &&
             p_int(v, "last_rows", &last_rows) == 0,
         "frames, height, last_rows");
    NEED(frames > 0 && last_rows > 0 && last_rows <= height && in[0].h == frames * height, "frames do not fit the input");
    NEED(out[0].elem == GOLDEN_U8 && out[0].n == (uint32_t)(w * last_rows), "edges: u8, width x last_rows");
    NEED(out[1].elem == GOLDEN_I16 && out[1].n == 2u * (uint32_t)(w * last_rows), "grad: i16 x2");
    NEED(out[2].elem == GOLDEN_U16 && out[2].n == 4, "thresholds: 4 u16");
    TRY(fxs_edge_stream_init(&edge_stream, &c, w, height));
    for (int32_t f = 0; f < frames; f++) {
        int32_t rows = f + 1 == frames ? last_rows : height;
        for (int32_t y = 0; y < rows; y++)
            TRY(fxs_edge_stream_push_row(&edge_stream, (const uint8_t *)in[0].p + (f * height + y) * w, (uintptr_t)w,
                                         &at));
        TRY(rows == height ? fxs_edge_stream_finish(&edge_stream, &r) : fxs_edge_stream_finish_short(&edge_stream, &r));
    }
    t[0] = r.low;
    t[1] = r.high;
    t[2] = r.next_low;
    t[3] = r.next_high;
    for (int32_t y = 0; y < last_rows; y++)
        TRY(fxs_edge_stream_edge_row(&edge_stream, y, (uint8_t *)out[0].p + y * w, (uintptr_t)w));
    memset(grad, 0, out[1].n * 2u);
    do { /* the points in batches of 64 */
        TRY(fxs_edge_stream_points(&edge_stream, first, pts, 64, &got));
        for (uintptr_t i = 0; i < got; i++) {
            uint32_t k = 2u * ((uint32_t)pts[i].y * (uint32_t)w + pts[i].x);
            NEED(pts[i].has_gradient && pts[i].y < last_rows && pts[i].x < w, "point gradient not stored");
            grad[k] = pts[i].gx;
            grad[k + 1] = pts[i].gy;
        }
        first += got;
    } while (got == 64);
    return FXS_OK;
}

/* ----------------------------------------------------------- point job -- */

static fxs_point_job point_job; /* 51 KiB: a static, as a firmware would keep it */

/* Words per frame of a pipeline.point_job record (host-verify/src/pipeline/job.rs). */
#define JOB_WORDS                                                                                 \
    (9 + 5 * FXS_POINT_JOB_PEAKS + (int32_t)(sizeof(fxs_marking_result) / 4) + 6 + FXS_POINT_JOB_TRACKS * FXS_TRACK_WORDS)

/* The job settings of a pipeline.point_job or pipeline.image_job vector:
 * the demo configuration already in *c with the vector's fields replaced
 * (JobParams in host-verify/src/pipeline/job.rs); the grid of input 1
 * (output and source both the frame size) into *grid when grid_log2 is
 * nonzero. */
static fxs_status job_setup(const golden_vector *v, const img *in, const img *out, fxs_point_job_config *c,
                            fxs_control_grid *grid, int32_t *frames, int32_t *height, int32_t *grid_log2) {
    int32_t radius, w = in[0].w;
    const golden_param *m = param(v, "marking"), *ref = param(v, "reference");
    NEED(p_int(v, "frames", frames) == 0 && p_int(v, "height", height) == 0 && p_int(v, "grid_log2", grid_log2) == 0,
         "frames, height, grid_log2");
    NEED(*frames > 0 && in[0].elem == GOLDEN_U8 && in[0].h == *frames * *height, "frames do not fit the input");
    NEED(out[0].elem == GOLDEN_I32 && out[0].n == (uint32_t)(JOB_WORDS * *frames), "record: i32, words x frames");
    c->vote.width = w;
    c->vote.height = *height;
    NEED(p_int(v, "theta_start", &c->vote.theta_start) == 0 && p_int(v, "theta_step_log2", &c->vote.theta_step_log2) == 0 &&
             p_int(v, "theta_bins", &c->vote.theta_bins) == 0 && p_int(v, "rho_step_log2", &c->vote.rho_step_log2) == 0 &&
             p_int(v, "rho_bins", &c->vote.rho_bins) == 0 && p_int(v, "gate", &c->vote.gate) == 0,
         "vote parameters");
    NEED(p_int(v, "peak_threshold", &c->peaks.threshold) == 0 && p_int(v, "peak_radius", &radius) == 0, "peaks");
    c->peaks.radius_theta = radius;
    c->peaks.radius_rho = radius;
    NEED(m && m->kind == GOLDEN_INTS && m->count == 10 && ref && ref->kind == GOLDEN_INTS && ref->count == 2,
         "marking, reference");
    c->marking.near_row_q4 = (int32_t)m->ints[0];
    c->marking.far_row_q4 = (int32_t)m->ints[1];
    c->marking.horizon_row_q4 = (int32_t)m->ints[2];
    c->marking.max_tilt = (int32_t)m->ints[3];
    c->marking.near_x_min_q4 = (int32_t)m->ints[4];
    c->marking.near_x_max_q4 = (int32_t)m->ints[5];
    c->marking.near_sep_min_q4 = (int32_t)m->ints[6];
    c->marking.near_sep_nominal_q4 = (int32_t)m->ints[7];
    c->marking.near_sep_max_q4 = (int32_t)m->ints[8];
    c->marking.converge_tol_q4 = (int32_t)m->ints[9];
    c->marking.contrast = FXS_CONTRAST_BRIGHTER;
    c->track.reference_x_q4 = (int32_t)ref->ints[0];
    c->track.reference_y_q4 = (int32_t)ref->ints[1];
    NEED(p_u32(v, "rho_meas_var", &c->track.rho.meas_var) == 0, "rho_meas_var");
    if (*grid_log2 != 0) {
        fxs_warp_geometry g = {w, *height, w, *height, 0};
        NEED(p_int(v, "grid_frac_bits", &g.frac_bits) == 0, "grid_frac_bits");
        NEED(in[1].elem == GOLDEN_I32 && in[1].ch == 2, "grid must be i32 pairs");
        TRY(fxs_warp_control_grid_init(grid, (const int32_t *)in[1].p, in[1].n, &g, *grid_log2));
    }
    return FXS_OK;
}

/* One frame's record words up to the track slots (the layout of
 * frame_record in host-verify/src/pipeline/job.rs), from the report and
 * the `found` peaks read back; *x then points at the track slots. */
static fxs_status job_record(int32_t **at, const fxs_point_job_report *r, const fxs_line_peak *pk, int32_t found) {
    int32_t *x = *at;
    NEED(found == (int32_t)r->peaks, "peaks and report differ");
    *x++ = (int32_t)r->frame;
    *x++ = (int32_t)r->edges.edge_points;
    *x++ = (int32_t)r->edges.candidates;
    *x++ = r->edges.low;
    *x++ = r->edges.high;
    *x++ = (int32_t)r->voted;
    *x++ = (int32_t)r->outside;
    *x++ = (int32_t)r->ungated;
    *x++ = (int32_t)r->peaks;
    for (int32_t i = 0; i < FXS_POINT_JOB_PEAKS; i++, x += 5) {
        x[0] = i < found ? pk[i].theta_bin : 0;
        x[1] = i < found ? pk[i].rho_bin : 0;
        x[2] = i < found ? pk[i].votes : 0;
        x[3] = i < found ? pk[i].line.rho : 0;
        x[4] = i < found ? pk[i].line.theta : 0;
    }
    *x++ = r->marking.found;
    *x++ = r->marking.left;
    *x++ = r->marking.right;
    *x++ = r->marking.near_left_q4;
    *x++ = r->marking.near_right_q4;
    *x++ = r->marking.far_left_q4;
    *x++ = r->marking.far_right_q4;
    *x++ = (int32_t)r->marking.votes_lo;
    *x++ = (int32_t)r->marking.votes_hi;
    *x++ = r->marking.candidates;
    *x++ = (int32_t)r->track.associated;
    *x++ = (int32_t)r->track.born;
    *x++ = (int32_t)r->track.dropped;
    *x++ = r->track.warning_track >= 0;
    *x++ = r->track.warning_track >= 0 ? r->track.warning_track : 0;
    *x++ = r->track.warning_track >= 0 ? r->track.warning_frames : 0;
    *at = x;
    return FXS_OK;
}

/* pipeline.point_job: every frame of the input through the job, one
 * record per frame. */
static fxs_status run_point_job(const golden_vector *v, const img *in, const img *out) {
    fxs_point_job_config c;
    fxs_point_job_report r;
    fxs_control_grid grid;
    fxs_line_peak pk[FXS_POINT_JOB_PEAKS];
    int32_t frames, height, grid_log2, found, w = in[0].w, *x = (int32_t *)out[0].p;
    TRY(fxs_point_job_demo_config(&c));
    TRY(job_setup(v, in, out, &c, &grid, &frames, &height, &grid_log2));
    TRY(fxs_point_job_init(&point_job, &c, w, height));
    for (int32_t f = 0; f < frames; f++) {
        for (int32_t y = 0; y < height; y++)
            TRY(fxs_point_job_push_row(&point_job, (const uint8_t *)in[0].p + (f * height + y) * w, (uintptr_t)w, 0));
        TRY(fxs_point_job_finish(&point_job, grid_log2 != 0 ? &grid : 0, &r));
        TRY(fxs_point_job_peaks(&point_job, pk, FXS_POINT_JOB_PEAKS, &found));
        TRY(job_record(&x, &r, pk, found));
        for (int32_t s = 0; s < FXS_POINT_JOB_TRACKS; s++, x += FXS_TRACK_WORDS)
            TRY(fxs_point_job_track_words(&point_job, s, x, FXS_TRACK_WORDS));
    }
    return FXS_OK;
}

/* ----------------------------------------------------------- image job -- */

static fxs_image_job image_job; /* 51 KiB, as point_job */

/* pipeline.image_job: ImageJobConfig::DEMO_QVGA with the vector's fields
 * replaced (clamped border), camera rows pushed one at a time through the
 * vector's grid into a ring of exactly fxs_image_job_ring_len bytes
 * (`whole_frame`: a ring of the whole camera frame, and the row count
 * checked after every push), one record per frame. */
static fxs_status image_job_frames(const golden_vector *v, const img *in, const img *out, int whole_frame) {
    fxs_image_job_config c;
    fxs_point_job_report r;
    fxs_control_grid grid;
    fxs_line_peak pk[FXS_POINT_JOB_PEAKS];
    int32_t frames, height, grid_log2, found, n = 0, w = in[0].w, *x = (int32_t *)out[0].p;
    uintptr_t ring_len;
    uint8_t *ring;
    TRY(fxs_image_job_demo_config(&c));
    TRY(job_setup(v, in, out, &c.job, &grid, &frames, &height, &grid_log2));
    NEED(grid_log2 != 0 && c.border == FXS_BORDER_CLAMP, "image job: a grid, clamped border");
    TRY(fxs_image_job_ring_len(&grid, &ring_len));
    if (whole_frame) {
        NEED(ring_len <= (uintptr_t)(w * height), "ring longer than the frame");
        ring_len = (uintptr_t)(w * height);
    }
    ring = alloc((uint32_t)ring_len);
    NEED(ring, "arena full");
    TRY(fxs_image_job_init(&image_job, &c, &grid, ring, ring_len));
    for (int32_t f = 0; f < frames; f++) {
        for (int32_t y = 0; y < height; y++) {
            TRY(fxs_image_job_push_row(&image_job, (const uint8_t *)in[0].p + (f * height + y) * w, (uintptr_t)w,
                                       whole_frame ? &n : 0));
            NEED(!whole_frame || n == y + 1, "camera rows pushed");
        }
        TRY(fxs_image_job_finish(&image_job, &r));
        NEED(r.outside == 0, "image job: a point outside the vote frame");
        TRY(fxs_image_job_peaks(&image_job, pk, FXS_POINT_JOB_PEAKS, &found));
        TRY(job_record(&x, &r, pk, found));
        for (int32_t s = 0; s < FXS_POINT_JOB_TRACKS; s++, x += FXS_TRACK_WORDS)
            TRY(fxs_image_job_track_words(&image_job, s, x, FXS_TRACK_WORDS));
    }
    return FXS_OK;
}

static fxs_status run_image_job(const golden_vector *v, const img *in, const img *out) {
    return image_job_frames(v, in, out, 0);
}

/* The same frames with a ring of the whole camera frame. */
static fxs_status whole_ring_image_job(const golden_vector *v, const img *in, const img *out) {
    return image_job_frames(v, in, out, 1);
}

/* ---------------------------------------------------------------- warp -- */

static fxs_status pixel_map_strips(const golden_vector *v, const img *in, const img *out,
                                   int32_t strip) {
    fxs_pixel_map map;
    fxs_warp_geometry g;
    int32_t border, y, c = in[0].ch, w = out[0].w;
    fxs_u8_view src = u8v(&in[0]);
    NEED(p_border(v, &border) == 0, "border");
    NEED(p_int(v, "frac_bits", &g.frac_bits) == 0, "frac_bits");
    NEED(in[1].elem == GOLDEN_I32 && in[1].ch == 2, "map must be i32 pairs");
    g.out_width = in[1].w;
    g.out_height = in[1].h;
    g.src_width = in[0].w;
    g.src_height = in[0].h;
    TRY(fxs_warp_pixel_map_init(&map, (const int32_t *)in[1].p, in[1].n, &g));
    for (y = 0; y < out[0].h; y += strip) {
        int32_t rows = out[0].h - y < strip ? out[0].h - y : strip;
        fxs_u8_view_mut dst = {(uint8_t *)out[0].p + y * w * c, (uintptr_t)(rows * w * c), w, rows, w * c};
        TRY(fxs_warp_pixel_map_rows(&map, &src, c, &dst, y, border));
    }
    return FXS_OK;
}

static fxs_status run_pixel_map(const golden_vector *v, const img *in, const img *out) {
    return pixel_map_strips(v, in, out, out[0].h);
}

/* The same map in strips of 7 rows. */
static fxs_status strips_pixel_map(const golden_vector *v, const img *in, const img *out) {
    return pixel_map_strips(v, in, out, 7);
}

static fxs_status grid_strips(const golden_vector *v, const img *in, const img *out, int32_t strip,
                              int round_trip) {
    fxs_control_grid grid;
    int32_t border, y, c = in[0].ch, w = out[0].w;
    fxs_u8_view src = u8v(&in[0]);
    NEED(p_border(v, &border) == 0, "border");
    NEED(in[1].elem == GOLDEN_U8, "blob must be bytes");
    TRY(fxs_warp_control_grid_from_blob(&grid, (const uint8_t *)in[1].p, in[1].n));
    if (round_trip) {
        /* Writing the grid back gives the blob it came from. */
        uintptr_t written = 0;
        uint8_t *copy = alloc(in[1].n);
        NEED(copy, "arena full");
        TRY(fxs_warp_control_grid_write_blob(&grid, copy, in[1].n, &written));
        NEED(written == in[1].n && memcmp(copy, in[1].p, in[1].n) == 0, "blob round trip");
    }
    for (y = 0; y < out[0].h; y += strip) {
        int32_t rows = out[0].h - y < strip ? out[0].h - y : strip;
        fxs_u8_view_mut dst = {(uint8_t *)out[0].p + y * w * c, (uintptr_t)(rows * w * c), w, rows, w * c};
        TRY(fxs_warp_control_grid_rows(&grid, &src, c, &dst, y, border));
    }
    return FXS_OK;
}

static fxs_status run_control_grid(const golden_vector *v, const img *in, const img *out) {
    int32_t strip;
    NEED(p_int(v, "strip_rows", &strip) == 0, "strip_rows");
    return grid_strips(v, in, out, strip < 1 ? 1 : strip, 0);
}

/* The whole frame in one call, after a blob round trip. */
static fxs_status frame_control_grid(const golden_vector *v, const img *in, const img *out) {
    return grid_strips(v, in, out, out[0].h, 1);
}

/* warp.grid_stream as host-verify/src/warp/run.rs feeds it: source rows
 * pushed one at a time into a ring of exactly the smallest size, each strip
 * taken as soon as it is ready, straight into its rows of the output. */
static fxs_status run_grid_stream(const golden_vector *v, const img *in, const img *out) {
    fxs_control_grid grid;
    fxs_grid_stream st;
    int32_t border, strip, c = in[0].ch, w = out[0].w, h = out[0].h, row = in[0].w * in[0].ch;
    int32_t done = 0, first, rows, finished;
    uintptr_t ring_len;
    uint8_t *ring;
    NEED(p_border(v, &border) == 0 && p_int(v, "strip_rows", &strip) == 0, "border, strip_rows");
    NEED(in[1].elem == GOLDEN_U8, "blob must be bytes");
    strip = strip < 1 ? 1 : strip > h ? h : strip;
    TRY(fxs_warp_control_grid_from_blob(&grid, (const uint8_t *)in[1].p, in[1].n));
    TRY(fxs_warp_grid_stream_ring_len(&grid, c, strip, &ring_len));
    ring = alloc((uint32_t)ring_len);
    NEED(ring, "arena full");
    TRY(fxs_warp_grid_stream_init(&st, &grid, ring, ring_len, c, strip, border));
    for (int32_t y = 0; y <= in[0].h; y++) {
        while (done < h) {
            int32_t left = h - done < strip ? h - done : strip;
            fxs_u8_view_mut dst = {(uint8_t *)out[0].p + done * w * c, (uintptr_t)(left * w * c), w, left, w * c};
            TRY(fxs_warp_grid_stream_next_strip(&st, &dst, &first, &rows));
            if (rows == 0) break;
            NEED(first == done, "strips out of order");
            done += rows;
        }
        if (y < in[0].h) TRY(fxs_warp_grid_stream_push_row(&st, (const uint8_t *)in[0].p + y * row, (uintptr_t)row, 0));
    }
    TRY(fxs_warp_grid_stream_finished(&st, &finished));
    NEED(done == h && finished == 1, "stream did not finish");
    return FXS_OK;
}

/* ------------------------------------------------------------ dispatch -- */

/* X(token, kernel id, dispatcher, second path or 0). */
#define GOLDEN_KERNELS(X)                                                                         \
    X(filter_binomial3, "filter.binomial3", run_filter, stream_filter)                            \
    X(filter_binomial5, "filter.binomial5", run_filter, stream_filter)                            \
    X(filter_binomial7, "filter.binomial7", run_filter, stream_filter)                            \
    X(filter_sobel_x, "filter.sobel_x", run_filter, stream_filter)                                \
    X(filter_sobel_y, "filter.sobel_y", run_filter, stream_filter)                                \
    X(filter_scharr_x, "filter.scharr_x", run_filter, stream_filter)                              \
    X(filter_scharr_y, "filter.scharr_y", run_filter, stream_filter)                              \
    X(filter_separable, "filter.separable", run_filter, stream_filter)                            \
    X(filter_filter_stream, "filter.filter_stream", stream_filter, run_filter)                    \
    X(gradient_magnitude_l1, "gradient.magnitude_l1", run_magnitude_l1, 0)                        \
    X(gradient_magnitude_l2_approx, "gradient.magnitude_l2_approx", run_magnitude_l2_approx, 0)   \
    X(gradient_magnitude_l2_round, "gradient.magnitude_l2_round", run_magnitude_l2_round, 0)      \
    X(gradient_direction, "gradient.direction", run_direction, 0)                                 \
    X(gradient_angles, "gradient.angles", run_angles, 0)                                          \
    X(nms_suppress, "nms.suppress", run_suppress, stream_suppress)                                \
    X(nms_suppress_interpolated, "nms.suppress_interpolated", run_suppress_interpolated, 0)      \
    X(hysteresis_thresholds, "hysteresis.thresholds", run_thresholds, 0)                          \
    X(hysteresis_classify, "hysteresis.classify", run_classify, 0)                                \
    X(hysteresis_link, "hysteresis.link", run_link, 0)                                            \
    X(thinning_thin, "thinning.thin", run_thin, 0)                                                \
    X(chain_edges, "chain.edges", run_edges, 0)                                                   \
    X(warp_pixel_map, "warp.pixel_map", run_pixel_map, strips_pixel_map)                          \
    X(warp_control_grid, "warp.control_grid", run_control_grid, frame_control_grid)               \
    X(warp_grid_stream, "warp.grid_stream", run_grid_stream, frame_control_grid)                  \
    X(lines_cos_sin, "lines.cos_sin", run_cos_sin, 0)                                             \
    X(lines_accumulator, "lines.accumulator", run_accumulator, rows_accumulator)                  \
    X(lines_correct_point, "lines.correct_point", run_correct_point, 0)                           \
    X(lines_peak, "lines.peak", run_peak, 0)                                                      \
    X(lines_segments, "lines.segments", run_segments, 0)                                          \
    X(marking_select, "marking.select", run_select, 0)                                            \
    X(track_tracker, "track.tracker", run_tracker, 0)                                             \
    X(pipeline_edge_stream, "pipeline.edge_stream", run_edge_stream, 0)                           \
    X(pipeline_point_job, "pipeline.point_job", run_point_job, 0)                                 \
    X(pipeline_image_job, "pipeline.image_job", run_image_job, whole_ring_image_job)

enum {
#define X(tok, id, run, alt) K_##tok,
    GOLDEN_KERNELS(X)
#undef X
        K_COUNT
};

#ifdef GOLDEN_KEEP
#define PICK_RUN(tok, f) ((GOLDEN_KEEP == K_##tok) ? (f) : run_noop)
#else
#define PICK_RUN(tok, f) (f)
#endif
#ifdef GOLDEN_SIZE_IMAGE
#define PICK_ALT(tok, f) ((run_fn)0)
/* Size images leave the bad-input cases out: they call every function. */
int golden_bad_inputs(int32_t *cases) {
    *cases = 0;
    return 0;
}
#else
#define PICK_ALT(tok, f) (f)
#endif

static const struct {
    const char *id;
    run_fn run;
    run_fn alt;
} KERNELS[K_COUNT] = {
#define X(tok, id, run, alt) {id, PICK_RUN(tok, run), PICK_ALT(tok, alt)},
    GOLDEN_KERNELS(X)
#undef X
};

/* Kernel-id prefixes whose C functions are left for later: their vectors
 * are listed ("later" lines) and not counted (the list ends with a NULL);
 * a kernel id that lands on main before its C functions goes here and in
 * LATER of tests/host_c.rs. */
static const char *const LATER[] = {0};

static int later(const char *kernel) {
    for (uint32_t i = 0; LATER[i]; i++)
        if (strncmp(kernel, LATER[i], strlen(LATER[i])) == 0) return 1;
    return 0;
}

/* ------------------------------------------------------------- running -- */

static uint32_t window;

static fxs_status measured(run_fn run, const golden_vector *v, const img *in, const img *out,
                           uint32_t *win, uint32_t *stack) {
    fxs_status s;
    golden_platform_begin();
    s = run(v, in, out);
    *stack = golden_platform_end();
    *win = window++;
    return s;
}

static void detail_status(fxs_status s) {
    say(" status ");
    golden_print_int(s);
    say(" ");
    say(s == HARNESS_ERROR ? why : fxs_status_message(s));
}

/* Runs one vector; returns 1 when it passed. */
static int run_vector(int32_t index, const golden_vector *v) {
    img in[6], out[6];
    run_fn run = 0, alt = 0;
    uint32_t win = 0xFFFFFFFFu, stack = 0;
    const char *status = "pass";
    fxs_status s = FXS_OK;
    int64_t at = -1, pad_at = -1;
    int32_t bad_image = -1, pass2 = 0, pad_row = 0;
    for (int32_t k = 0; k < K_COUNT; k++)
        if (strcmp(KERNELS[k].id, v->kernel) == 0) {
            run = KERNELS[k].run;
            alt = KERNELS[k].alt;
        }
    arena_used = 0;
    if (!run) {
        status = "UNSUPPORTED";
    } else if (v->ninputs > 6 || v->nexpected > 6) {
        status = "ERROR";
    } else {
        for (int32_t i = 0; i < v->ninputs; i++)
            if (decode(&v->inputs[i], v->row_pad, &in[i])) status = "ERROR";
        for (int32_t i = 0; i < v->nexpected; i++)
            if (blank(&v->expected[i], v->row_pad, &out[i])) status = "ERROR";
        if (status[0] == 'p') {
            s = measured(run, v, in, out, &win, &stack);
            for (pass2 = 0; s == FXS_OK && bad_image < 0; pass2++) {
                for (int32_t i = 0; i < v->nexpected && bad_image < 0; i++) {
                    at = first_difference(&out[i], &v->expected[i]);
                    if (at < 0) {
                        pad_at = padding_touched(&out[i], &pad_row);
                        at = pad_at;
                    }
                    if (at >= 0) bad_image = i;
                }
                if (pass2 == 1 || !alt) break;
                for (int32_t i = 0; i < v->nexpected; i++)
                    memset(out[i].p, out_fill(v->row_pad), out[i].n * elem_size(out[i].elem));
                s = alt(v, in, out);
            }
            if (s != FXS_OK) status = "ERROR";
            else if (bad_image >= 0) status = "FAIL";
        }
    }
    say("vec ");
    golden_print_int(index);
    say(" ");
    say(v->id);
    say(" ");
    say(v->kernel);
    say(" ");
    say(status);
    say(" win ");
    golden_print_int(win);
    say(" px ");
    {
        const golden_image *g = v->expected[0].height > 1 || v->ninputs == 0 ? &v->expected[0] : &v->inputs[0];
        golden_print_int((int64_t)g->width * g->height);
    }
    say(" stack ");
    golden_print_int(stack);
    if (s != FXS_OK) {
        detail_status(s);
        if (pass2 == 1) say(" (second C path)");
    } else if (bad_image >= 0 && pad_at >= 0) {
        say(" output `");
        say(v->expected[bad_image].name);
        say("`: padding element ");
        golden_print_int(pad_at);
        say(" after row ");
        golden_print_int(pad_row);
        say(" was overwritten");
        if (pass2 == 1) say(" (second C path)");
    } else if (bad_image >= 0) {
        say(" output `");
        say(v->expected[bad_image].name);
        say("` differs first at element ");
        golden_print_int(at);
        if (pass2 == 1) say(" (second C path)");
    }
    say("\n");
    return status[0] == 'p';
}

int golden_run_all(const char *arch) {
    int32_t passed = 0, cases = 0, bad, skipped = 0;
    uint32_t win, stack;
    say("fixsight-target ");
    say(arch);
    say(" c\n");
    measured(run_noop, 0, 0, 0, &win, &stack);
    say("cal win ");
    golden_print_int(win);
    say(" stack ");
    golden_print_int(stack);
    say("\n");
    for (int32_t i = 0; i < GOLDEN_VECTOR_COUNT; i++) {
        const golden_vector *v = &GOLDEN_VECTORS[i];
        if (later(v->kernel)) {
            say("later ");
            say(v->id);
            say(" ");
            say(v->kernel);
            say(" family not in the C ABI yet\n");
            skipped++;
        } else {
            passed += run_vector(i, v);
        }
    }
    say("done vectors ");
    golden_print_int(GOLDEN_VECTOR_COUNT - skipped);
    say(" passed ");
    golden_print_int(passed);
    say("\n");
    bad = golden_bad_inputs(&cases);
    say("badinput cases ");
    golden_print_int(cases);
    say(" failed ");
    golden_print_int(bad);
    say("\n");
    return (passed == GOLDEN_VECTOR_COUNT - skipped && bad == 0) ? 0 : 1;
}
