/*
 * fixsight.h -- C interface of the fixsight kernels (C99, needs <stdint.h> only).
 *
 * Link with the static library of your core, built by c-abi/build-libs.sh:
 *   target/<triple>/c-release/libfixsight_c.a
 * (host: also -lpthread -ldl -lm, which the Rust standard library needs).
 *
 * Integer models: every kernel here is the function of the same name in
 * the Rust crate `fixsight`; its rounding, saturation and border rules are
 * in README.md, "Kernel semantics", and in the module docs of
 * kernels/src/<family>.rs. The C path gives the same bits as the Rust path
 * (checked on every golden vector on the host and on an emulated Cortex-M4).
 *
 * NOT A SAFETY FUNCTION. Nothing here is developed, assessed or certified as
 * a safety function; a vehicle built on it must meet the functional-safety
 * standards that apply (ISO 13849, IEC 61508, ISO 3691-4, ...) and local
 * rules, with independent protective measures.
 *
 * ---------------------------------------------------------------------------
 * Rules for every function
 * ---------------------------------------------------------------------------
 * - Every function returns an fxs_status: FXS_OK (0) or a negative code
 *   below; fxs_status_message(code) gives a static English message. On an
 *   error nothing is written, except where a function says otherwise.
 * - No allocation, no global state, no callbacks: every buffer is yours.
 *   The functions are reentrant; two calls may run at once when they share
 *   no written memory.
 * - Images are described by an fxs_*_view (read) or fxs_*_view_mut
 *   (written): `data` points to row 0, `len` is the number of elements
 *   available at `data`, `width`/`height` in pixels (1..32767), `stride`
 *   in elements from one row start to the next (>= width * channels). The
 *   image spans stride * (height - 1) + width * channels elements; `len`
 *   must be at least that.
 * - Lengths (`*_len`, `len`) count elements of the pointed-to type, not
 *   bytes (bytes only for uint8_t buffers).
 * - Checks, in this order, before any kernel runs (the first failure is
 *   returned): NULL pointer -> FXS_E_NULL_POINTER; pointer not aligned for
 *   its type -> FXS_E_MISALIGNED; negative size, stride, length or row ->
 *   FXS_E_NEGATIVE; width/height 0 -> FXS_E_ZERO_SIZE, above 32767 ->
 *   FXS_E_TOO_LARGE; stride < width * channels -> FXS_E_STRIDE_TOO_SMALL;
 *   stride * height >= 2^31 -> FXS_E_LAYOUT_OVERFLOW; `len` below the span
 *   -> FXS_E_BUFFER_TOO_SHORT; buffer past the end of the address space ->
 *   FXS_E_ADDRESS_RANGE; a written buffer overlapping any other buffer or
 *   object of the call -> FXS_E_OVERLAP. Then the kernel's own checks
 *   (sizes that must match, parameters out of range, ...).
 * - Aliasing: inputs may share memory with each other; a written buffer
 *   may share no byte with any other argument (only the elements an image
 *   spans count, so images side by side in one allocation are fine).
 *   In-place kernels (fxs_hysteresis_link, fxs_thinning_thin) take one
 *   fxs_u8_view_mut that is read and written.
 * - What remains your duty (it cannot be checked): every pointer really
 *   points to `len` elements of memory you own, and no one else reads or
 *   writes it during the call (for objects: while the object is in use).
 * - Objects (fxs_filter, fxs_filter_stream, fxs_nms_stream, fxs_pixel_map,
 *   fxs_control_grid) live in storage you provide: declare a variable of
 *   the type (FXS_*_SIZE bytes, aligned to 8), set it up with its init
 *   function, pass its address. A zeroed or never-initialised object gives
 *   FXS_E_NOT_INITIALISED. An object that borrows memory (a stream's rings,
 *   a map's coordinates, a grid's points or blob, the filter of a stream)
 *   must not outlive it, and that memory must stay unchanged; do not copy
 *   an initialised object, re-initialise it instead. No object needs to be
 *   freed.
 * - `border` arguments: FXS_BORDER_CLAMP (-1) clamps coordinates into the
 *   image; 0..255 is the fill value outside it; anything else gives
 *   FXS_E_BAD_PARAMETER.
 * - `int32_t` parameters out of their documented range give
 *   FXS_E_BAD_PARAMETER (or FXS_E_NEGATIVE when negative).
 */
#ifndef FIXSIGHT_H
#define FIXSIGHT_H

#include <stdint.h>

#ifdef __cplusplus
extern "C" {
#endif

/* ======================================================================== */
/* Status codes                                                             */
/* ======================================================================== */

typedef int32_t fxs_status;

#define FXS_OK 0
/* One code per kernel error (fixsight::Error). */
#define FXS_E_ZERO_SIZE (-1)            /* width or height is 0 */
#define FXS_E_TOO_LARGE (-2)            /* width or height above 32767 */
#define FXS_E_STRIDE_TOO_SMALL (-3)     /* stride < width * channels */
#define FXS_E_LAYOUT_OVERFLOW (-4)      /* stride * height >= 2^31 */
#define FXS_E_BUFFER_TOO_SHORT (-5)     /* a buffer is shorter than needed */
#define FXS_E_SIZE_MISMATCH (-6)        /* images that must match in size do not */
#define FXS_E_UNSUPPORTED_CHANNELS (-7) /* channel count not accepted */
#define FXS_E_BAD_TAPS (-8)             /* empty, even or > 9 taps, shift > 16 or sum > 30 */
#define FXS_E_ACCUMULATOR_OVERFLOW (-9) /* 255 * sum|h| * sum|v| + 2^(s-1) > 2^31 - 1 */
#define FXS_E_BAD_PARAMETER (-10)       /* scalar parameter out of range */
#define FXS_E_STREAM_ORDER (-11)        /* too many rows, or flush before the last row */
#define FXS_E_MAP_OUT_OF_RANGE (-12)    /* coordinate beyond one source size past an edge */
#define FXS_E_GRID_CELL_OVERFLOW (-13)  /* control points too far apart for the step */
#define FXS_E_GRID_COVERAGE (-14)       /* grid does not cover the output */
#define FXS_E_BLOB_SIZE (-15)           /* blob length differs from its header */
#define FXS_E_BLOB_MAGIC (-16)          /* blob does not start with "FSMT" */
#define FXS_E_BLOB_VERSION (-17)        /* blob format version not supported */
#define FXS_E_BLOB_FIELD (-18)          /* blob header field inconsistent */
#define FXS_E_BLOB_CRC (-19)            /* blob CRC-32 mismatch */
#define FXS_E_ROW_RANGE (-20)           /* strip of rows does not fit the output */
#define FXS_E_THRESHOLD_ORDER (-21)     /* low threshold above high */
#define FXS_E_BAD_EDGE_CODE (-22)       /* edge-code map value other than 0, 1, 2 */
#define FXS_E_ROW_LENGTH (-23)          /* camera row of the wrong length (pipeline) */
#define FXS_E_ROW_COUNT (-24)           /* frame ended with the wrong row count (pipeline) */
#define FXS_E_FRAME_ORDER (-25)         /* frame number not increasing (track) */
#define FXS_E_POINT_OUTSIDE (-26)       /* point outside the accepted area (lines) */
#define FXS_E_BAND_ROWS (-27)           /* band of source rows lacks a row the strip reads (warp) */
#define FXS_E_KERNEL_OTHER (-99)        /* kernel error of a newer kernel crate */
/* Found at the C boundary. */
#define FXS_E_NULL_POINTER (-101)    /* a required pointer is NULL */
#define FXS_E_NEGATIVE (-102)        /* negative size, stride, length or row */
#define FXS_E_MISALIGNED (-103)      /* pointer not aligned for its type */
#define FXS_E_OVERLAP (-104)         /* a written buffer overlaps another argument */
#define FXS_E_NOT_INITIALISED (-105) /* object not set up by its init function */
#define FXS_E_ADDRESS_RANGE (-106)   /* buffer runs past the end of the address space */

/* A static, NUL-terminated message for any code (never NULL). */
const char *fxs_status_message(int32_t status);

/* ======================================================================== */
/* Images, borders, object storage                                          */
/* ======================================================================== */

typedef struct fxs_u8_view {
    const uint8_t *data;
    uintptr_t len;
    int32_t width;
    int32_t height;
    int32_t stride;
} fxs_u8_view;

typedef struct fxs_u8_view_mut {
    uint8_t *data;
    uintptr_t len;
    int32_t width;
    int32_t height;
    int32_t stride;
} fxs_u8_view_mut;

typedef struct fxs_i16_view {
    const int16_t *data;
    uintptr_t len;
    int32_t width;
    int32_t height;
    int32_t stride;
} fxs_i16_view;

typedef struct fxs_i16_view_mut {
    int16_t *data;
    uintptr_t len;
    int32_t width;
    int32_t height;
    int32_t stride;
} fxs_i16_view_mut;

typedef struct fxs_u16_view {
    const uint16_t *data;
    uintptr_t len;
    int32_t width;
    int32_t height;
    int32_t stride;
} fxs_u16_view;

typedef struct fxs_u16_view_mut {
    uint16_t *data;
    uintptr_t len;
    int32_t width;
    int32_t height;
    int32_t stride;
} fxs_u16_view_mut;

#define FXS_BORDER_CLAMP (-1)

/* Object storage: sizes per pointer width, alignment 8. */
#define FXS_OBJECT_ALIGN 8
#define FXS_FILTER_SIZE_32 88
#define FXS_FILTER_SIZE_64 88
#define FXS_FILTER_STREAM_SIZE_32 88
#define FXS_FILTER_STREAM_SIZE_64 168
#define FXS_NMS_STREAM_SIZE_32 64
#define FXS_NMS_STREAM_SIZE_64 128
#define FXS_PIXEL_MAP_SIZE_32 48
#define FXS_PIXEL_MAP_SIZE_64 88
#define FXS_CONTROL_GRID_SIZE_32 64
#define FXS_CONTROL_GRID_SIZE_64 120
#if UINTPTR_MAX > 0xFFFFFFFFu
#define FXS_FILTER_SIZE FXS_FILTER_SIZE_64
#define FXS_FILTER_STREAM_SIZE FXS_FILTER_STREAM_SIZE_64
#define FXS_NMS_STREAM_SIZE FXS_NMS_STREAM_SIZE_64
#define FXS_PIXEL_MAP_SIZE FXS_PIXEL_MAP_SIZE_64
#define FXS_CONTROL_GRID_SIZE FXS_CONTROL_GRID_SIZE_64
#else
#define FXS_FILTER_SIZE FXS_FILTER_SIZE_32
#define FXS_FILTER_STREAM_SIZE FXS_FILTER_STREAM_SIZE_32
#define FXS_NMS_STREAM_SIZE FXS_NMS_STREAM_SIZE_32
#define FXS_PIXEL_MAP_SIZE FXS_PIXEL_MAP_SIZE_32
#define FXS_CONTROL_GRID_SIZE FXS_CONTROL_GRID_SIZE_32
#endif

/* ======================================================================== */
/* filter: separable FIR filters (kernel ids filter.*)                     */
/* Integer model: README.md "Separable filter"; kernels/src/filter.rs.     */
/* ======================================================================== */

/* A checked filter: taps, shifts, border. 88 bytes on every target. */
typedef union fxs_filter {
    uint8_t bytes[FXS_FILTER_SIZE];
    uint64_t align_;
} fxs_filter;

/* A row stream: borrows its fxs_filter, ring and accumulator row. */
typedef union fxs_filter_stream {
    uint8_t bytes[FXS_FILTER_STREAM_SIZE];
    uint64_t align_;
} fxs_filter_stream;

#define FXS_FILTER_BINOMIAL3 0 /* [1 2 1]/4 both ways, uint8_t output */
#define FXS_FILTER_BINOMIAL5 1 /* [1 4 6 4 1]/16 both ways, uint8_t output */
#define FXS_FILTER_BINOMIAL7 2 /* [1 6 15 20 15 6 1]/64 both ways, uint8_t output */
#define FXS_FILTER_SOBEL_X 3   /* [-1 0 1] x [1 2 1], int16_t output, +-1020 */
#define FXS_FILTER_SOBEL_Y 4   /* [1 2 1] x [-1 0 1], int16_t output */
#define FXS_FILTER_SCHARR_X 5  /* [-1 0 1] x [3 10 3], int16_t output, +-4080 */
#define FXS_FILTER_SCHARR_Y 6  /* [3 10 3] x [-1 0 1], int16_t output */

/* A preset (FXS_FILTER_*) with a border rule.
 * Errors: FXS_E_NULL_POINTER, FXS_E_MISALIGNED, FXS_E_BAD_PARAMETER
 * (unknown preset or border). */
fxs_status fxs_filter_preset(fxs_filter *out, int32_t preset, int32_t border_rule);

/* Caller-chosen taps (kernel id filter.separable): h[h_len] along rows,
 * v[v_len] along columns, each odd length 1..9 and shift 0..16, h_shift +
 * v_shift <= 30; tap k applies to offset k - len/2 (no flip). Reads at most
 * 10 taps of each array.
 * Errors: FXS_E_NULL_POINTER, FXS_E_NEGATIVE, FXS_E_BAD_TAPS,
 * FXS_E_ACCUMULATOR_OVERFLOW, FXS_E_BAD_PARAMETER (border). */
fxs_status fxs_filter_separable(fxs_filter *out, const int16_t *h, int32_t h_len, int32_t h_shift,
                                const int16_t *v, int32_t v_len, int32_t v_shift,
                                int32_t border_rule);

/* Input rows a stream ring must hold (2 * ry + 1) into *rows. */
fxs_status fxs_filter_ring_rows(const fxs_filter *f, int32_t *rows);

/* Whole frame: src and dst single-channel, same width and height;
 * scratch[scratch_len] with scratch_len >= width int32_t. dst may not
 * overlap src or scratch. fxs_filter_frame_u8 for smoothing (round half up,
 * saturate to 0..255), fxs_filter_frame_i16 for derivatives.
 * Errors: the image checks, FXS_E_SIZE_MISMATCH, FXS_E_BUFFER_TOO_SHORT
 * (scratch), FXS_E_NOT_INITIALISED (f), FXS_E_OVERLAP. */
fxs_status fxs_filter_frame_u8(const fxs_filter *f, const fxs_u8_view *src,
                               const fxs_u8_view_mut *dst, int32_t *scratch,
                               uintptr_t scratch_len);
fxs_status fxs_filter_frame_i16(const fxs_filter *f, const fxs_u8_view *src,
                                const fxs_i16_view_mut *dst, int32_t *scratch,
                                uintptr_t scratch_len);

/* Row streaming, bit-identical to the whole frame: ring[ring_len] with
 * ring_len >= ring_rows * width bytes, acc[acc_len] with acc_len >= width.
 * The stream borrows f, ring and acc until its last use.
 * Push the `height` input rows in order (row_len >= width bytes each);
 * after ry rows of latency each push writes output row *out_row into out
 * (out_len >= width), else sets *out_row = -1. After the last push call
 * flush until *out_row is -1. Output type may differ per call.
 * Errors: as the frame form, FXS_E_STREAM_ORDER (a push after `height` rows,
 * a flush before), FXS_E_OVERLAP (row or out overlapping the ring, acc,
 * the filter or the stream). */
fxs_status fxs_filter_stream_init(fxs_filter_stream *stream, const fxs_filter *f, int32_t width,
                                  int32_t height, uint8_t *ring, uintptr_t ring_len, int32_t *acc,
                                  uintptr_t acc_len);
fxs_status fxs_filter_stream_push_u8(fxs_filter_stream *stream, const uint8_t *row,
                                     uintptr_t row_len, uint8_t *out, uintptr_t out_len,
                                     int32_t *out_row);
fxs_status fxs_filter_stream_push_i16(fxs_filter_stream *stream, const uint8_t *row,
                                      uintptr_t row_len, int16_t *out, uintptr_t out_len,
                                      int32_t *out_row);
fxs_status fxs_filter_stream_flush_u8(fxs_filter_stream *stream, uint8_t *out, uintptr_t out_len,
                                      int32_t *out_row);
fxs_status fxs_filter_stream_flush_i16(fxs_filter_stream *stream, int16_t *out,
                                       uintptr_t out_len, int32_t *out_row);

/* ======================================================================== */
/* gradient: magnitude and direction (kernel ids gradient.*)               */
/* Integer model: README.md "Gradient magnitude and direction".            */
/* ======================================================================== */

/* gx, gy, and the output single-channel, one size; gx and gy may share
 * memory, the output may overlap neither. Height 1 is the row form.
 * Errors: the image checks, FXS_E_SIZE_MISMATCH, FXS_E_OVERLAP. */
/* |gx| + |gy| (saturating abs). */
fxs_status fxs_gradient_magnitude_l1(const fxs_i16_view *gx, const fxs_i16_view *gy,
                                     const fxs_u16_view_mut *mag);
/* (123 max + 51 min + 64) >> 7, within 4.03 % of the L2 norm. */
fxs_status fxs_gradient_magnitude_l2_approx(const fxs_i16_view *gx, const fxs_i16_view *gy,
                                            const fxs_u16_view_mut *mag);
/* The integer nearest to sqrt(gx^2 + gy^2), exact. */
fxs_status fxs_gradient_magnitude_l2_round(const fxs_i16_view *gx, const fxs_i16_view *gy,
                                           const fxs_u16_view_mut *mag);
/* Sector 0..3 (0, 45, 90, 135 degrees; y down the rows). */
fxs_status fxs_gradient_direction(const fxs_i16_view *gx, const fxs_i16_view *gy,
                                  const fxs_u8_view_mut *dir);

/* ======================================================================== */
/* nms: non-maximum suppression (kernel id nms.suppress)                   */
/* Integer model: README.md "Edges"; kernels/src/nms.rs.                   */
/* ======================================================================== */

/* A row stream: borrows its two rings. */
typedef union fxs_nms_stream {
    uint8_t bytes[FXS_NMS_STREAM_SIZE];
    uint64_t align_;
} fxs_nms_stream;

/* Whole frame: mag (uint16_t), dir (sectors 0..3) and out one size; out may
 * overlap neither input.
 * Errors: the image checks, FXS_E_SIZE_MISMATCH, FXS_E_BAD_PARAMETER (a
 * sector above 3; rows before it are already written), FXS_E_OVERLAP. */
fxs_status fxs_nms_suppress(const fxs_u16_view *mag, const fxs_u8_view *dir,
                            const fxs_u16_view_mut *out);

/* Row streaming, bit-identical to the whole frame: mag_ring and dir_ring
 * hold >= 3 * width elements each and are borrowed until the last use.
 * Output row y comes out on the push of row y + 1 (*out_row = y, else -1);
 * the last row on flush. mag_len, dir_len, out_len >= width.
 * Errors: as the frame form, FXS_E_STREAM_ORDER, FXS_E_BUFFER_TOO_SHORT. */
fxs_status fxs_nms_stream_init(fxs_nms_stream *stream, int32_t width, int32_t height,
                               uint16_t *mag_ring, uintptr_t mag_ring_len, uint8_t *dir_ring,
                               uintptr_t dir_ring_len);
fxs_status fxs_nms_stream_push(fxs_nms_stream *stream, const uint16_t *mag, uintptr_t mag_len,
                               const uint8_t *dir, uintptr_t dir_len, uint16_t *out,
                               uintptr_t out_len, int32_t *out_row);
fxs_status fxs_nms_stream_flush(fxs_nms_stream *stream, uint16_t *out, uintptr_t out_len,
                                int32_t *out_row);

/* ======================================================================== */
/* hysteresis: thresholds, classify, link (kernel ids hysteresis.*)        */
/* Integer model: README.md "Edges"; kernels/src/hysteresis.rs.            */
/* ======================================================================== */

typedef struct fxs_link_stats {
    uint32_t edges;      /* pixels set to 255 */
    uint32_t passes;     /* raster passes (1 when the stack never filled) */
    uint32_t deferred;   /* neighbours deferred because the stack was full */
    uint32_t peak_stack; /* most stack entries in use */
} fxs_link_stats;

/* Automatic thresholds from the histogram of the nonzero magnitudes:
 * hist[bins] scratch (bins >= 1), shift 0..15 (bin width 2^shift),
 * high_permille 1..999, low_ratio_u0f16 1..65535 (low = high * ratio /
 * 65536, rounded half up, at least 1). Writes *low and *high (65535 both
 * when no magnitude is nonzero).
 * Errors: the image checks, FXS_E_BUFFER_TOO_SHORT (bins 0),
 * FXS_E_BAD_PARAMETER, FXS_E_NEGATIVE, FXS_E_OVERLAP. */
fxs_status fxs_hysteresis_thresholds(const fxs_u16_view *mag, uint32_t *hist, uintptr_t bins,
                                     int32_t shift, int32_t high_permille,
                                     int32_t low_ratio_u0f16, uint16_t *low, uint16_t *high);

/* Edge codes: 2 (strong) if m >= high, 1 (weak) if low <= m < high, else 0;
 * 1 <= low <= high <= 65535.
 * Errors: the image checks, FXS_E_SIZE_MISMATCH, FXS_E_BAD_PARAMETER
 * (low 0 or above 65535), FXS_E_THRESHOLD_ORDER, FXS_E_OVERLAP. */
fxs_status fxs_hysteresis_classify(const fxs_u16_view *mag, int32_t low, int32_t high,
                                   const fxs_u8_view_mut *codes);

/* Hysteresis in place: codes 0/1/2 become 255 (strong, or weak 8-connected
 * to strong through weak pixels) or 0. stack[stack_len] scratch, at least
 * 8 entries; a smaller stack costs passes, never a different result.
 * stats may be NULL.
 * Errors: the image checks, FXS_E_BUFFER_TOO_SHORT (stack),
 * FXS_E_BAD_EDGE_CODE (map unchanged), FXS_E_OVERLAP. */
fxs_status fxs_hysteresis_link(const fxs_u8_view_mut *map, uint32_t *stack, uintptr_t stack_len,
                               fxs_link_stats *stats);

/* ======================================================================== */
/* thinning (kernel id thinning.thin)                                      */
/* Zhang & Suen (1984); kernels/src/thinning.rs.                           */
/* ======================================================================== */

typedef struct fxs_thin_stats {
    uint32_t iterations; /* full iterations, including the last one */
    uint32_t deleted;    /* pixels deleted */
} fxs_thin_stats;

/* Thins a binary map (0 = background, else foreground) in place;
 * scratch[scratch_len] with scratch_len >= 3 * width bytes; stats may be NULL.
 * Errors: the image checks, FXS_E_BUFFER_TOO_SHORT, FXS_E_OVERLAP. */
fxs_status fxs_thinning_thin(const fxs_u8_view_mut *map, uint8_t *scratch, uintptr_t scratch_len,
                             fxs_thin_stats *stats);

/* ======================================================================== */
/* warp: bilinear warp by pixel map or control grid (kernel ids warp.*)    */
/* Integer model: README.md "Warp"; blob format in kernels/src/warp.rs.    */
/* ======================================================================== */

typedef struct fxs_warp_geometry {
    int32_t out_width;  /* 1..32767 */
    int32_t out_height; /* 1..32767 */
    int32_t src_width;  /* 1..32767 */
    int32_t src_height; /* 1..32767 */
    int32_t frac_bits;  /* F, 2..10: raw coordinate r means r / 2^F pixels */
} fxs_warp_geometry;

/* A checked pixel map: borrows its coordinates. */
typedef union fxs_pixel_map {
    uint8_t bytes[FXS_PIXEL_MAP_SIZE];
    uint64_t align_;
} fxs_pixel_map;

/* A checked control grid: borrows its points or blob. */
typedef union fxs_control_grid {
    uint8_t bytes[FXS_CONTROL_GRID_SIZE];
    uint64_t align_;
} fxs_control_grid;

/* A pixel map over coords[coords_len]: 2 * out_width * out_height raw
 * int32_t, (x, y) per output pixel, row-major; every pair is checked once
 * against the accepted range (one source size beyond each edge).
 * Errors: FXS_E_NULL_POINTER, FXS_E_NEGATIVE, FXS_E_ZERO_SIZE,
 * FXS_E_TOO_LARGE, FXS_E_BAD_PARAMETER (frac_bits), FXS_E_BUFFER_TOO_SHORT,
 * FXS_E_MAP_OUT_OF_RANGE, FXS_E_OVERLAP. */
fxs_status fxs_warp_pixel_map_init(fxs_pixel_map *map, const int32_t *coords,
                                   uintptr_t coords_len, const fxs_warp_geometry *geom);

/* Output rows first_row .. first_row + dst->height - 1 into dst (width
 * out_width), sampling src (src_width x src_height); both with `channels`
 * (1..4) interleaved elements per pixel, stride in elements. A frame may be
 * produced in strips; strips are bit-identical to the whole frame.
 * Errors: the image checks, FXS_E_SIZE_MISMATCH, FXS_E_ROW_RANGE,
 * FXS_E_UNSUPPORTED_CHANNELS, FXS_E_BAD_PARAMETER (border),
 * FXS_E_NOT_INITIALISED, FXS_E_OVERLAP (dst with src, the map or its
 * coordinates). */
fxs_status fxs_warp_pixel_map_rows(const fxs_pixel_map *map, const fxs_u8_view *src,
                                   int32_t channels, const fxs_u8_view_mut *dst,
                                   int32_t first_row, int32_t border_rule);

/* Control-point columns and rows for points every 2^grid_log2 output
 * pixels (grid_log2 2..6): max(2, ceil((out - 1) / 2^k) + 1) each way. */
fxs_status fxs_warp_control_grid_size(const fxs_warp_geometry *geom, int32_t grid_log2,
                                      int32_t *cols, int32_t *rows);

/* A grid over points[points_len]: 2 * cols * rows raw int32_t, (x, y) per
 * point, row-major; checked once (range, and every cell's accumulator).
 * Errors: as fxs_warp_pixel_map_init, FXS_E_GRID_CELL_OVERFLOW. */
fxs_status fxs_warp_control_grid_init(fxs_control_grid *grid, const int32_t *points,
                                      uintptr_t points_len, const fxs_warp_geometry *geom,
                                      int32_t grid_log2);

/* A grid from a blob (magic "FSMT", version 1, CRC-32 checked), borrowed,
 * not copied.
 * Errors: FXS_E_BLOB_SIZE, FXS_E_BLOB_MAGIC, FXS_E_BLOB_VERSION,
 * FXS_E_BLOB_FIELD, FXS_E_BLOB_CRC, FXS_E_GRID_COVERAGE, and as
 * fxs_warp_control_grid_init. */
fxs_status fxs_warp_control_grid_from_blob(fxs_control_grid *grid, const uint8_t *blob,
                                           uintptr_t blob_len);

/* As fxs_warp_pixel_map_rows, with a grid. */
fxs_status fxs_warp_control_grid_rows(const fxs_control_grid *grid, const fxs_u8_view *src,
                                      int32_t channels, const fxs_u8_view_mut *dst,
                                      int32_t first_row, int32_t border_rule);

/* Writes the grid as a blob (32 + 8 * cols * rows bytes) into
 * out[out_len] and its length into *written.
 * Errors: FXS_E_BUFFER_TOO_SHORT, FXS_E_OVERLAP (out with the grid or the
 * memory it borrows), FXS_E_NOT_INITIALISED. */
fxs_status fxs_warp_control_grid_write_blob(const fxs_control_grid *grid, uint8_t *out,
                                            uintptr_t out_len, uintptr_t *written);

#ifdef __cplusplus
}
#endif

#endif /* FIXSIGHT_H */
