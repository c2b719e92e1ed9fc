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
    uint32_t n; /* elements */
} img;

static uint32_t elem_size(int32_t e) {
    return e == GOLDEN_U8 ? 1u : (e == GOLDEN_I16 || e == GOLDEN_U16) ? 2u : 4u;
}

/* Decodes little-endian file bytes into a typed array in the arena. */
static int decode(const golden_image *g, img *out) {
    uint32_t sz = elem_size(g->elem);
    out->w = g->width;
    out->h = g->height;
    out->ch = g->channels;
    out->elem = g->elem;
    out->n = (uint32_t)g->width * (uint32_t)g->height * (uint32_t)g->channels;
    out->p = alloc(out->n * sz);
    if (!out->p || out->n * sz != g->nbytes) return -1;
    for (uint32_t i = 0; i < out->n; i++) {
        const uint8_t *b = g->bytes + i * sz;
        uint32_t u = 0;
        for (uint32_t k = 0; k < sz; k++) u |= (uint32_t)b[k] << (8u * k);
        if (sz == 1) ((uint8_t *)out->p)[i] = (uint8_t)u;
        else if (sz == 2) ((uint16_t *)out->p)[i] = (uint16_t)u;
        else ((uint32_t *)out->p)[i] = u;
    }
    return 0;
}

/* An output shaped like the expected image, every byte 0xA5. */
static int blank(const golden_image *g, img *out) {
    uint32_t sz = elem_size(g->elem);
    out->w = g->width;
    out->h = g->height;
    out->ch = g->channels;
    out->elem = g->elem;
    out->n = (uint32_t)g->width * (uint32_t)g->height * (uint32_t)g->channels;
    out->p = alloc(out->n * sz);
    if (!out->p) return -1;
    memset(out->p, 0xA5, out->n * sz);
    return 0;
}

/* Index of the first element whose little-endian bytes differ, or -1. */
static int64_t first_difference(const img *got, const golden_image *want) {
    uint32_t sz = elem_size(want->elem);
    for (uint32_t i = 0; i < got->n; i++) {
        uint32_t u = sz == 1   ? ((const uint8_t *)got->p)[i]
                     : sz == 2 ? ((const uint16_t *)got->p)[i]
                               : ((const uint32_t *)got->p)[i];
        for (uint32_t k = 0; k < sz; k++)
            if ((uint8_t)(u >> (8u * k)) != want->bytes[i * sz + k]) return (int64_t)i;
    }
    return -1;
}

static fxs_u8_view u8v(const img *b) {
    fxs_u8_view x = {(const uint8_t *)b->p, b->n, b->w, b->h, b->w * b->ch};
    return x;
}
static fxs_u8_view_mut u8m(const img *b) {
    fxs_u8_view_mut x = {(uint8_t *)b->p, b->n, b->w, b->h, b->w * b->ch};
    return x;
}
static fxs_i16_view i16v(const img *b) {
    fxs_i16_view x = {(const int16_t *)b->p, b->n, b->w, b->h, b->w};
    return x;
}
static fxs_i16_view_mut i16m(const img *b) {
    fxs_i16_view_mut x = {(int16_t *)b->p, b->n, b->w, b->h, b->w};
    return x;
}
static fxs_u16_view u16v(const img *b) {
    fxs_u16_view x = {(const uint16_t *)b->p, b->n, b->w, b->h, b->w};
    return x;
}
static fxs_u16_view_mut u16m(const img *b) {
    fxs_u16_view_mut x = {(uint16_t *)b->p, b->n, b->w, b->h, b->w};
    return x;
}

/* Copies input 0 to output 0 (in-place kernels). */
static int copy_in(const img *in, const img *out) {
    if (in->n != out->n || in->elem != out->elem) return -1;
    memcpy(out->p, in->p, in->n * elem_size(in->elem));
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
            const uint8_t *row = (const uint8_t *)in[0].p + y * w;
            /* the call that reports the end writes nothing: any row will do */
            void *o = got >= h ? spare
                      : wide   ? (void *)((int16_t *)out[0].p + got * w)
                               : (void *)((uint8_t *)out[0].p + got * w);
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

/* ----------------------------------------------------------------- nms -- */

static fxs_status run_suppress(const golden_vector *v, const img *in, const img *out) {
    fxs_u16_view m = u16v(&in[0]);
    fxs_u8_view d = u8v(&in[1]);
    fxs_u16_view_mut o = u16m(&out[0]);
    (void)v;
    return fxs_nms_suppress(&m, &d, &o);
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
        TRY(fxs_nms_stream_push(&st, (const uint16_t *)in[0].p + y * w, (uintptr_t)w,
                                (const uint8_t *)in[1].p + y * w, (uintptr_t)w,
                                (uint16_t *)out[0].p + got * w, (uintptr_t)w, &at));
        if (at >= 0) got++;
    }
    do { /* the call that reports the end writes nothing: any row will do */
        TRY(fxs_nms_stream_flush(&st, got < h ? (uint16_t *)out[0].p + got * w : spare, (uintptr_t)w, &at));
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
    img gx = {0, w, h, 1, GOLDEN_I16, (uint32_t)n}, gy = gx, mag = gx, dir = gx, sup = gx;
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
    X(gradient_magnitude_l1, "gradient.magnitude_l1", run_magnitude_l1, 0)                        \
    X(gradient_magnitude_l2_approx, "gradient.magnitude_l2_approx", run_magnitude_l2_approx, 0)   \
    X(gradient_magnitude_l2_round, "gradient.magnitude_l2_round", run_magnitude_l2_round, 0)      \
    X(gradient_direction, "gradient.direction", run_direction, 0)                                 \
    X(nms_suppress, "nms.suppress", run_suppress, stream_suppress)                                \
    X(hysteresis_thresholds, "hysteresis.thresholds", run_thresholds, 0)                          \
    X(hysteresis_classify, "hysteresis.classify", run_classify, 0)                                \
    X(hysteresis_link, "hysteresis.link", run_link, 0)                                            \
    X(thinning_thin, "thinning.thin", run_thin, 0)                                                \
    X(chain_edges, "chain.edges", run_edges, 0)                                                   \
    X(warp_pixel_map, "warp.pixel_map", run_pixel_map, strips_pixel_map)                          \
    X(warp_control_grid, "warp.control_grid", run_control_grid, frame_control_grid)

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

/* Families on main whose C functions are left for later: their vectors
 * are listed ("later" lines) and not counted. */
static const char *const LATER[] = {"gradient.angles", "nms.suppress_interpolated", "lines.", "marking.",
                                    "pipeline.", "track."};

static int later(const char *kernel) {
    for (uint32_t i = 0; i < sizeof LATER / sizeof LATER[0]; i++)
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
    int64_t at = -1;
    int32_t bad_image = -1, pass2 = 0;
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
            if (decode(&v->inputs[i], &in[i])) status = "ERROR";
        for (int32_t i = 0; i < v->nexpected; i++)
            if (blank(&v->expected[i], &out[i])) status = "ERROR";
        if (status[0] == 'p') {
            s = measured(run, v, in, out, &win, &stack);
            for (pass2 = 0; s == FXS_OK && bad_image < 0; pass2++) {
                for (int32_t i = 0; i < v->nexpected && bad_image < 0; i++) {
                    at = first_difference(&out[i], &v->expected[i]);
                    if (at >= 0) bad_image = i;
                }
                if (pass2 == 1 || !alt) break;
                for (int32_t i = 0; i < v->nexpected; i++)
                    memset(out[i].p, 0xA5, out[i].n * elem_size(out[i].elem));
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
