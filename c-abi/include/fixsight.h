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
 *   fxs_control_grid, fxs_grid_stream, fxs_lines_accumulator, fxs_tracker, fxs_edge_stream,
 *   fxs_point_job, fxs_image_job) live in storage you provide: declare a variable of
 *   the type (FXS_*_SIZE bytes, aligned to 8), set it up with its init
 *   function, pass its address. A zeroed or never-initialised object gives
 *   FXS_E_NOT_INITIALISED. An object that borrows memory (a stream's rings,
 *   a map's coordinates, a grid's points or blob, the filter of a stream,
 *   a grid stream's or an image job's ring and its grid's points or blob)
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
#define FXS_GRID_STREAM_SIZE_32 128
#define FXS_GRID_STREAM_SIZE_64 248
#define FXS_LINES_ACCUMULATOR_SIZE_32 104
#define FXS_LINES_ACCUMULATOR_SIZE_64 176
#define FXS_TRACKER_SIZE_32 416
#define FXS_TRACKER_SIZE_64 416
#define FXS_EDGE_STREAM_SIZE_32 45976
#define FXS_EDGE_STREAM_SIZE_64 46016
#define FXS_POINT_JOB_SIZE_32 52264
#define FXS_POINT_JOB_SIZE_64 52360
#define FXS_IMAGE_JOB_SIZE_32 52384
#define FXS_IMAGE_JOB_SIZE_64 52600
#if UINTPTR_MAX > 0xFFFFFFFFu
#define FXS_FILTER_SIZE FXS_FILTER_SIZE_64
#define FXS_FILTER_STREAM_SIZE FXS_FILTER_STREAM_SIZE_64
#define FXS_NMS_STREAM_SIZE FXS_NMS_STREAM_SIZE_64
#define FXS_PIXEL_MAP_SIZE FXS_PIXEL_MAP_SIZE_64
#define FXS_CONTROL_GRID_SIZE FXS_CONTROL_GRID_SIZE_64
#define FXS_GRID_STREAM_SIZE FXS_GRID_STREAM_SIZE_64
#define FXS_LINES_ACCUMULATOR_SIZE FXS_LINES_ACCUMULATOR_SIZE_64
#define FXS_TRACKER_SIZE FXS_TRACKER_SIZE_64
#define FXS_EDGE_STREAM_SIZE FXS_EDGE_STREAM_SIZE_64
#define FXS_POINT_JOB_SIZE FXS_POINT_JOB_SIZE_64
#define FXS_IMAGE_JOB_SIZE FXS_IMAGE_JOB_SIZE_64
#else
#define FXS_FILTER_SIZE FXS_FILTER_SIZE_32
#define FXS_FILTER_STREAM_SIZE FXS_FILTER_STREAM_SIZE_32
#define FXS_NMS_STREAM_SIZE FXS_NMS_STREAM_SIZE_32
#define FXS_PIXEL_MAP_SIZE FXS_PIXEL_MAP_SIZE_32
#define FXS_CONTROL_GRID_SIZE FXS_CONTROL_GRID_SIZE_32
#define FXS_GRID_STREAM_SIZE FXS_GRID_STREAM_SIZE_32
#define FXS_LINES_ACCUMULATOR_SIZE FXS_LINES_ACCUMULATOR_SIZE_32
#define FXS_TRACKER_SIZE FXS_TRACKER_SIZE_32
#define FXS_EDGE_STREAM_SIZE FXS_EDGE_STREAM_SIZE_32
#define FXS_POINT_JOB_SIZE FXS_POINT_JOB_SIZE_32
#define FXS_IMAGE_JOB_SIZE FXS_IMAGE_JOB_SIZE_32
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
/* gradient: magnitude, direction, angle (kernel ids gradient.*)          */
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
/* Orientation atan2(gy, gx) folded to [0, 180) degrees as a binary angle
 * (65536 = 180 degrees; 0 when gx = gy = 0), 15 shift-and-add steps, within
 * 0.004881 degrees of the exact value. Integer model: kernels/src/gradient.rs,
 * `angle`. */
fxs_status fxs_gradient_angles(const fxs_i16_view *gx, const fxs_i16_view *gy,
                               const fxs_u16_view_mut *angle);

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

/* Whole frame, suppression along the exact gradient direction (kernel id
 * nms.suppress_interpolated; integer model: kernels/src/nms.rs,
 * suppress_interpolated): mag (uint16_t), gx, gy (int16_t, the gradients
 * mag was computed from) and out one size; the inputs may alias each
 * other, out may overlap none of them.
 * Errors: the image checks, FXS_E_SIZE_MISMATCH, FXS_E_OVERLAP. */
fxs_status fxs_nms_suppress_interpolated(const fxs_u16_view *mag, const fxs_i16_view *gx,
                                         const fxs_i16_view *gy, const fxs_u16_view_mut *out);

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

/* A grid fed one source row at a time (kernel id warp.grid_stream),
 * bit-identical to fxs_warp_control_grid_rows on the whole frame. Holds a
 * copy of the checked grid (the fxs_control_grid itself may go; its points
 * or blob stay borrowed) and borrows the ring; FXS_GRID_STREAM_SIZE
 * bytes, aligned to FXS_OBJECT_ALIGN. */
typedef union fxs_grid_stream {
    uint8_t bytes[FXS_GRID_STREAM_SIZE];
    uint64_t align_;
} fxs_grid_stream;

/* Bytes of the smallest ring for strips of strip_rows (>= 1) output rows
 * with `channels` (1..4): band_rows(strip_rows) * src_width * channels,
 * where band_rows is the most source rows one strip reads (kernels/src/warp.rs,
 * ControlGrid::band_rows), into *ring_len.
 * Errors: FXS_E_UNSUPPORTED_CHANNELS, FXS_E_NEGATIVE, FXS_E_BAD_PARAMETER
 * (strip_rows 0), FXS_E_LAYOUT_OVERFLOW, FXS_E_NULL_POINTER,
 * FXS_E_NOT_INITIALISED, FXS_E_OVERLAP. */
fxs_status fxs_warp_grid_stream_ring_len(const fxs_control_grid *grid, int32_t channels,
                                         int32_t strip_rows, uintptr_t *ring_len);

/* A stream over grid: source rows of src_width * channels bytes go into
 * ring[ring_len] (source row y in ring row y % ring_rows, ring_rows =
 * min(ring_len / (src_width * channels), src_height), at least
 * band_rows(strip_rows); only those whole rows are borrowed), output in
 * strips of strip_rows rows (a strip taller than the output is the whole
 * output) with border_rule. ring may overlap neither the stream, the grid
 * nor its points or blob. On an error *stream is unchanged.
 * Errors: FXS_E_BUFFER_TOO_SHORT (ring), FXS_E_UNSUPPORTED_CHANNELS,
 * FXS_E_BAD_PARAMETER (strip_rows 0, border), FXS_E_NEGATIVE,
 * FXS_E_NULL_POINTER, FXS_E_MISALIGNED, FXS_E_NOT_INITIALISED (grid),
 * FXS_E_OVERLAP. */
fxs_status fxs_warp_grid_stream_init(fxs_grid_stream *stream, const fxs_control_grid *grid,
                                     uint8_t *ring, uintptr_t ring_len, int32_t channels,
                                     int32_t strip_rows, int32_t border_rule);

/* Copies the next source row (row_len == src_width * channels bytes) into
 * the ring; *rows_pushed (may be NULL): source rows of this frame so far.
 * A strip that is ready must be taken (fxs_warp_grid_stream_next_strip)
 * before the next row goes in. row may overlap neither the stream nor the
 * ring, rows_pushed neither these nor the grid's points or blob. On an
 * error nothing changes.
 * Errors: FXS_E_ROW_LENGTH, FXS_E_STREAM_ORDER (a strip is ready, or all
 * src_height rows are in), FXS_E_NULL_POINTER, FXS_E_NOT_INITIALISED,
 * FXS_E_OVERLAP. */
fxs_status fxs_warp_grid_stream_push_row(fxs_grid_stream *stream, const uint8_t *row,
                                         uintptr_t row_len, int32_t *rows_pushed);

/* When every source row the next strip reads is in: writes the strip into
 * rows 0 .. *rows - 1 of dst (width out_width, the stream's channels,
 * height at least the strip's rows: strip_rows, fewer for the last) and
 * sets *first_row to its first output row. Otherwise (rows missing, or the
 * frame is finished) *rows = 0, *first_row = -1 and dst is not written.
 * Strips come in order; once every source row is in, every remaining strip
 * is ready. dst may overlap neither the stream, the ring nor the grid's
 * points or blob.
 * Errors: the image checks, FXS_E_SIZE_MISMATCH (width, or too few rows),
 * FXS_E_NULL_POINTER, FXS_E_NOT_INITIALISED, FXS_E_OVERLAP. */
fxs_status fxs_warp_grid_stream_next_strip(fxs_grid_stream *stream, const fxs_u8_view_mut *dst,
                                           int32_t *first_row, int32_t *rows);

/* *finished = 1 once every output row of the frame was written, else 0. */
fxs_status fxs_warp_grid_stream_finished(const fxs_grid_stream *stream, int32_t *finished);

/* Starts the next frame (no rows in, output from row 0), also after a
 * short or dropped one; the ring keeps its bytes until overwritten. */
fxs_status fxs_warp_grid_stream_reset(fxs_grid_stream *stream);

/* ======================================================================== */
/* lines: line voting, peaks, segments (kernel ids lines.*)                */
/* Integer model: README.md "Lines"; kernels/src/lines.rs module docs      */
/* (units: rho in Q4 pixels from the origin, the centre of pixel           */
/* (W >> 1, H >> 1); theta 65536 = 180 degrees; column angles 131072 =     */
/* 360 degrees).                                                           */
/* NOT A SAFETY FUNCTION: lines found here may steer a vehicle; see the    */
/* note at the top of this file.                                           */
/* ======================================================================== */

/* Most peaks or segments one call writes (out_len 1..FXS_LINES_MAX_OUT). */
#define FXS_LINES_MAX_OUT 32

/* Accumulator geometry: T = theta_bins columns from theta_start (binary
 * angle 360, 0..131071) in steps of 2^theta_step_log2 (4..14), T * 2^step
 * <= 65536; R = rho_bins rows (odd, 1..4095) of 2^rho_step_log2 Q4 units
 * (0..8); trig_frac_bits 8..14; frame 1..4096 each way; gate 0 (none) or
 * 1..32767; weight_shift -1 (unit votes) or 0..15. */
typedef struct fxs_vote_params {
    int32_t width;
    int32_t height;
    int32_t theta_start;
    int32_t theta_step_log2;
    int32_t theta_bins;
    int32_t rho_step_log2;
    int32_t rho_bins;
    int32_t trig_frac_bits;
    int32_t gate;
    int32_t weight_shift;
} fxs_vote_params;

typedef struct fxs_line {
    int32_t rho;    /* Q4 pixels, signed */
    uint16_t theta; /* [0, 180) degrees, 65536 = 180 */
    uint16_t votes; /* count of the peak cell */
} fxs_line;

typedef struct fxs_line_peak {
    uint16_t theta_bin; /* column t */
    uint16_t rho_bin;   /* row b */
    uint16_t votes;     /* count of cell (t, b) */
    uint16_t reserved;  /* 0 */
    fxs_line line;      /* refined line */
} fxs_line_peak;

typedef struct fxs_peak_params {
    int32_t threshold;    /* 1..65535: smallest count of a peak */
    int32_t radius_theta; /* 0..theta_bins: suppression half-width in columns */
    int32_t radius_rho;   /* 0..rho_bins: suppression half-width in rows */
} fxs_peak_params;

typedef struct fxs_segment_params {
    int32_t min_length; /* 1..65535 walk steps */
    int32_t max_gap;    /* 0..65535 walk steps */
    int32_t tolerance;  /* 0..3 pixels on each side across the walk */
} fxs_segment_params;

typedef struct fxs_segment {
    int32_t x0; /* endpoints, Q4 pixels from the centre of the top-left pixel */
    int32_t y0;
    int32_t x1;
    int32_t y1;
    uint32_t hits; /* walk steps that found an edge pixel */
} fxs_segment;

typedef struct fxs_vote_counts {
    uint32_t points;   /* points that voted */
    uint32_t columns;  /* column votes cast */
    uint32_t skipped;  /* corrected points outside the frame */
    uint32_t next_row; /* the row the next row call expects */
} fxs_vote_counts;

/* An accumulator: borrows its cells and table. */
typedef union fxs_lines_accumulator {
    uint8_t bytes[FXS_LINES_ACCUMULATOR_SIZE];
    uint64_t align_;
} fxs_lines_accumulator;

/* (cos a, sin a) in Q frac_bits (8..14) of binary angle a (131072 = 360
 * degrees, modulo a turn); shift-and-add, within 0.5 + 2^(q-22) LSB.
 * Errors: FXS_E_NULL_POINTER, FXS_E_MISALIGNED, FXS_E_OVERLAP (both outputs
 * one int16_t), FXS_E_NEGATIVE, FXS_E_BAD_PARAMETER (frac_bits). */
fxs_status fxs_lines_cos_sin(uint32_t angle, int32_t frac_bits, int16_t *cos_out,
                             int16_t *sin_out);

/* Checks params, zeroes cells[cells_len] (cells_len >= T * R; cell (t, b)
 * is cells[t * R + b], saturating counts) and fills trig[trig_len]
 * (trig_len >= 2 * T int16_t: cos, sin per column). The accumulator
 * borrows cells and trig until its last use; you may read the cells
 * between calls, not write them. cells, trig and acc may not overlap.
 * Errors: FXS_E_NULL_POINTER, FXS_E_MISALIGNED, FXS_E_NEGATIVE,
 * FXS_E_ZERO_SIZE, FXS_E_TOO_LARGE, FXS_E_BAD_PARAMETER (a field out of
 * range), FXS_E_BUFFER_TOO_SHORT (cells or trig), FXS_E_OVERLAP. */
fxs_status fxs_lines_accumulator_init(fxs_lines_accumulator *acc, const fxs_vote_params *params,
                                      uint16_t *cells, uintptr_t cells_len, int16_t *trig,
                                      uintptr_t trig_len);

/* Zeroes the cells and counters for a new frame (the table stays). */
fxs_status fxs_lines_accumulator_reset(fxs_lines_accumulator *acc);

/* The counters since init or reset. */
fxs_status fxs_lines_accumulator_counts(const fxs_lines_accumulator *acc,
                                        fxs_vote_counts *counts);

/* Votes edge row y (rows 0, 1, ... in order after init or reset; nonzero
 * edges[x] is an edge point). gx, gy: needed when the params gate, else
 * may be NULL; weights: needed when they weight, else may be NULL. Every
 * length >= width. No input may overlap the accumulator or its memory.
 * Errors: FXS_E_NULL_POINTER (edges, acc), FXS_E_NEGATIVE (y),
 * FXS_E_ROW_RANGE (y >= height), FXS_E_STREAM_ORDER (y not the next row),
 * FXS_E_BUFFER_TOO_SHORT (a row shorter than width, or a needed row
 * NULL), FXS_E_NOT_INITIALISED, FXS_E_OVERLAP. */
fxs_status fxs_lines_vote_row(fxs_lines_accumulator *acc, int32_t y, const uint8_t *edges,
                              uintptr_t edges_len, const int16_t *gx, uintptr_t gx_len,
                              const int16_t *gy, uintptr_t gy_len, const uint16_t *weights,
                              uintptr_t weights_len);

/* As fxs_lines_vote_row for row y of a raw (distorted) edge map: each
 * edge pixel goes through grid (output size = the raw frame, row lengths
 * and y range; source size = the accumulator's frame); corrected points
 * outside the frame are counted as skipped.
 * Errors: as fxs_lines_vote_row, FXS_E_SIZE_MISMATCH (grid source size). */
fxs_status fxs_lines_vote_row_corrected(fxs_lines_accumulator *acc, int32_t y,
                                        const uint8_t *edges, uintptr_t edges_len,
                                        const int16_t *gx, uintptr_t gx_len, const int16_t *gy,
                                        uintptr_t gy_len, const uint16_t *weights,
                                        uintptr_t weights_len, const fxs_control_grid *grid);

/* Votes a whole W x H edge map (single channel) as rows 0..H-1; gx and gy
 * both or neither (needed when gating), weights when weighting. Call on a
 * fresh or reset accumulator.
 * Errors: the image checks, FXS_E_SIZE_MISMATCH, FXS_E_NULL_POINTER (one
 * of gx, gy NULL), and as fxs_lines_vote_row. */
fxs_status fxs_lines_vote_frame(fxs_lines_accumulator *acc, const fxs_u8_view *edges,
                                const fxs_i16_view *gx, const fxs_i16_view *gy,
                                const fxs_u16_view *weights);

/* One point (x_q4, y_q4), Q4 pixels from the centre of the top-left pixel,
 * inside 0..16 (W-1) x 0..16 (H-1); angle 0..65535 (gradient angle, as
 * fxs_gradient_angles) or -1 (none; not allowed when gating); weight
 * 0..65535 (raw, scaled by weight_shift).
 * Errors: FXS_E_POINT_OUTSIDE, FXS_E_BAD_PARAMETER, FXS_E_NOT_INITIALISED. */
fxs_status fxs_lines_vote_point(fxs_lines_accumulator *acc, int32_t x_q4, int32_t y_q4,
                                int32_t angle, int32_t weight);

/* Up to out_len (1..FXS_LINES_MAX_OUT) peaks: cells >= threshold that are
 * the maximum of their (2 radius_theta + 1) x (2 radius_rho + 1)
 * neighbourhood, strongest first, ties in cell order, each refined
 * (module docs); *found is how many were written (the rest of out is
 * untouched). out may not overlap the accumulator or its memory.
 * Errors: FXS_E_BAD_PARAMETER (out_len, threshold 0 or above 65535, a
 * radius above the accumulator's theta_bins or rho_bins), FXS_E_NEGATIVE,
 * FXS_E_NULL_POINTER, FXS_E_NOT_INITIALISED, FXS_E_OVERLAP. */
fxs_status fxs_lines_peaks(const fxs_lines_accumulator *acc, const fxs_peak_params *params,
                           fxs_line_peak *out, uintptr_t out_len, int32_t *found);

/* Raw pixel (x, y) through grid into corrected Q4 coordinates.
 * Errors: FXS_E_POINT_OUTSIDE (pixel outside the grid's output frame),
 * FXS_E_NEGATIVE, FXS_E_NULL_POINTER, FXS_E_NOT_INITIALISED, FXS_E_OVERLAP. */
fxs_status fxs_lines_correct_point(const fxs_control_grid *grid, int32_t x, int32_t y,
                                   int32_t *x_q4, int32_t *y_q4);

/* Walks edges (single channel, origin at pixel (W >> 1, H >> 1)) along
 * line (its votes ignored) and writes up to out_len (1..FXS_LINES_MAX_OUT)
 * segments in walk order; *found is how many (the walk stops when out is
 * full).
 * Errors: the image checks, FXS_E_BAD_PARAMETER (out_len, min_length 0 or
 * above 65535, max_gap above 65535, tolerance above 3), FXS_E_NEGATIVE,
 * FXS_E_NULL_POINTER, FXS_E_OVERLAP. */
fxs_status fxs_lines_segments(const fxs_u8_view *edges, const fxs_line *line,
                              const fxs_segment_params *params, fxs_segment *out,
                              uintptr_t out_len, int32_t *found);

/* ======================================================================== */
/* marking: the two edges of a floor tape (kernel id marking.select)       */
/* Rules and integer model: README.md "Marking selection"; marking.rs.   */
/* Units: rho Q4 pixels from the image centre ((W-1)/2, (H-1)/2) of the    */
/* corrected view, theta 65536 = 180 degrees, rows/columns Q4.             */
/* NOT A SAFETY FUNCTION: see the note at the top of this file.            */
/* ======================================================================== */

#define FXS_MARKING_MAX_LINES 64 /* most lines one call takes */
#define FXS_CONTRAST_BRIGHTER 0  /* light tape on a darker floor */
#define FXS_CONTRAST_DARKER 1    /* dark tape on a lighter floor */
#define FXS_CONTRAST_EITHER 2    /* contrast rule off */

typedef struct fxs_marking_line {
    int32_t rho_q4;
    uint16_t theta;
    int16_t polarity; /* 1 brighter along the normal, -1 darker, 0 unknown */
    uint32_t votes;
} fxs_marking_line;

/* Checked on every call (MarkingConfig::new in kernels/src/marking.rs):
 * rows within +-MAX_ROW_Q4 with horizon_row < far_row < near_row;
 * near_x_min <= near_x_max, 1 <= near_sep_min <= near_sep_nominal <=
 * near_sep_max, 0 <= converge_tol, each within MAX_SPAN_Q4; max_tilt
 * 0..21845 (60 degrees); contrast FXS_CONTRAST_*. */
typedef struct fxs_marking_limits {
    int32_t near_row_q4;
    int32_t far_row_q4;
    int32_t horizon_row_q4;
    int32_t max_tilt;
    int32_t near_x_min_q4;
    int32_t near_x_max_q4;
    int32_t near_sep_min_q4;
    int32_t near_sep_nominal_q4;
    int32_t near_sep_max_q4;
    int32_t converge_tol_q4;
    int32_t contrast;
} fxs_marking_limits;

/* The kernel's 10-word record. */
typedef struct fxs_marking_result {
    int32_t found;         /* 1 found, 0 not */
    int32_t left;          /* index of the left edge in lines, -1 when not found */
    int32_t right;         /* index of the right edge, -1 when not found */
    int32_t near_left_q4;  /* near-row columns (0 when not found) */
    int32_t near_right_q4;
    int32_t far_left_q4;   /* far-row columns (0 when not found) */
    int32_t far_right_q4;
    uint32_t votes_lo;     /* vote sum of the pair, low and high 32 bits */
    uint32_t votes_hi;
    int32_t candidates;    /* not found: lines that passed tilt and near position; else 0 */
} fxs_marking_result;

/* The tape's two edges among lines[count] (count 0..FXS_MARKING_MAX_LINES;
 * lines may be NULL when count is 0), into *result. result may not overlap
 * lines or limits.
 * Errors: FXS_E_NULL_POINTER, FXS_E_MISALIGNED, FXS_E_NEGATIVE (max_tilt),
 * FXS_E_BAD_PARAMETER (count, a limit, contrast, a polarity other than
 * -1, 0, 1), FXS_E_OVERLAP. */
fxs_status fxs_marking_select(const fxs_marking_line *lines, uintptr_t count,
                              const fxs_marking_limits *limits, fxs_marking_result *result);

/* ======================================================================== */
/* track: line tracker with drift warning (kernel id track.tracker)        */
/* Integer model: README.md "Tracker and drift warning"; track.rs (a     */
/* constant-velocity Kalman filter per axis, gating, births, drops).      */
/* NOT A SAFETY FUNCTION: the drift warning is an aid only; see the note   */
/* at the top of this file.                                                */
/* ======================================================================== */

#define FXS_TRACK_SLOTS 4          /* tracks one fxs_tracker holds */
#define FXS_TRACK_MAX_DETECTIONS 8 /* most detections per update */
#define FXS_TRACK_WORDS 18         /* words of one slot's state */

/* A tracker (Tracker<4, 8>), held by value: FXS_TRACKER_SIZE bytes,
 * aligned to FXS_OBJECT_ALIGN, borrows nothing. */
typedef union fxs_tracker {
    uint8_t bytes[FXS_TRACKER_SIZE];
    uint64_t align_;
} fxs_tracker;

typedef struct fxs_track_axis_noise {
    uint32_t meas_var;         /* measurement variance R, 1..2^24 units^2 */
    uint32_t accel_index_q16;  /* tracking index squared, Q16, 0..2^24 */
    uint32_t init_vel_var_q16; /* new-track velocity variance / R, Q16, 0..2^28 */
} fxs_track_axis_noise;

typedef struct fxs_track_config {
    fxs_track_axis_noise rho;   /* units of 1/16 px */
    fxs_track_axis_noise theta; /* binary-angle units */
    uint32_t gate_q8;           /* gate on the summed normalised innovation squared, Q8, >= 1 */
    int32_t confirm_hits;       /* 1..255 */
    int32_t max_missed;         /* 0..255 */
    uint32_t birth_weight;      /* smallest weight that starts a track */
    int32_t reference_x_q4;     /* reference point, Q4, |.| < 2^17 */
    int32_t reference_y_q4;
    int32_t warn_horizon;       /* 0..1024 frames */
    int32_t warn_min_hits;      /* 0..65535 */
    int32_t warn_raise_frames;  /* 1..255 */
    int32_t warn_clear_frames;  /* 1..255 */
} fxs_track_config;

typedef struct fxs_detection {
    int32_t rho_q4;    /* |rho_q4| < 2^17 */
    uint16_t theta;    /* 65536 = 180 degrees */
    uint16_t reserved; /* ignored */
    uint32_t weight;   /* decides births only */
} fxs_detection;

typedef struct fxs_frame_report {
    uint32_t associated;    /* tracks updated by a detection */
    uint32_t born;          /* tracks started */
    uint32_t dropped;       /* tracks dropped */
    int32_t warning_track;  /* id of the warning track, -1 when none */
    int32_t warning_slot;   /* its slot, -1 when none */
    int32_t warning_frames; /* frames to the predicted crossing, -1 when none */
} fxs_frame_report;

/* A tracker with no tracks after checking config (no allocation, no
 * global state: the whole tracker is in *tracker).
 * Errors: FXS_E_NULL_POINTER, FXS_E_MISALIGNED, FXS_E_NEGATIVE,
 * FXS_E_BAD_PARAMETER (a setting out of range), FXS_E_OVERLAP. */
fxs_status fxs_tracker_init(fxs_tracker *tracker, const fxs_track_config *config);

/* Drops every track and the last frame number (the config stays). */
fxs_status fxs_tracker_reset(fxs_tracker *tracker);

/* One call per frame: frame greater than the last one accepted,
 * dets[count] with count 0..FXS_TRACK_MAX_DETECTIONS (dets may be NULL
 * when count is 0); report may be NULL. On an error the tracker is
 * unchanged.
 * Errors: FXS_E_FRAME_ORDER, FXS_E_BAD_PARAMETER (count, |rho_q4| >= 2^17),
 * FXS_E_NULL_POINTER, FXS_E_NOT_INITIALISED, FXS_E_OVERLAP. */
fxs_status fxs_tracker_update(fxs_tracker *tracker, uint32_t frame, const fxs_detection *dets,
                              uintptr_t count, fxs_frame_report *report);

/* The state of slot 0..FXS_TRACK_SLOTS-1 as FXS_TRACK_WORDS int32_t into
 * words[words_len]: id (-1 for an empty slot, then all 0), confirmed, hits,
 * missed, side, frames to crossing (-1 none), rho pos, vel, p_pos, p_cross,
 * p_vel, the same for theta, warn streak, warning frames (-1 none).
 * Errors: FXS_E_BAD_PARAMETER (slot), FXS_E_NEGATIVE,
 * FXS_E_BUFFER_TOO_SHORT, FXS_E_NULL_POINTER, FXS_E_NOT_INITIALISED,
 * FXS_E_OVERLAP. */
fxs_status fxs_tracker_slot_words(const fxs_tracker *tracker, int32_t slot, int32_t *words,
                                  uintptr_t words_len);

/* ======================================================================== */
/* pipeline: the streamed edge stage (kernel id pipeline.edge_stream)      */
/* Integer model: README.md "Streamed edge stage"; kernels/src/pipeline.rs */
/* (fused smoothing + derivative, magnitude, suppression, hysteresis,      */
/* thinning, one row at a time, bit-identical to the frame kernels).       */
/* ======================================================================== */

/* Capacities of fxs_edge_stream (EdgeStream<320, 4800, 1024, 4096>). */
#define FXS_EDGE_STREAM_MAX_WIDTH 320         /* widest frame */
#define FXS_EDGE_STREAM_MAP_WORDS 4800        /* ceil(width / 16) * height at most this (320 x 240) */
#define FXS_EDGE_STREAM_BINS 1024             /* histogram bins of the automatic rule */
#define FXS_EDGE_STREAM_POINT_GRADIENTS 4096  /* candidate gradients stored per frame */

#define FXS_SMOOTHING_NONE 0      /* [1] */
#define FXS_SMOOTHING_BINOMIAL3 1 /* [1 2 1] / 4 */
#define FXS_SMOOTHING_BINOMIAL5 2 /* [1 4 6 4 1] / 16 */
#define FXS_SMOOTHING_BINOMIAL7 3 /* [1 6 15 20 15 6 1] / 64 */
#define FXS_SMOOTHING_GAUSS7 4    /* [1 14 62 102 62 14 1] / 256 */
#define FXS_OPERATOR_SOBEL 0
#define FXS_OPERATOR_SCHARR 1
#define FXS_MAGNITUDE_L1 0
#define FXS_MAGNITUDE_L2_APPROX 1
#define FXS_MAGNITUDE_L2_ROUND 2
#define FXS_THRESHOLDS_FIXED 0 /* low, high for every frame */
#define FXS_THRESHOLDS_AUTO 1  /* from each frame's histogram, used for the next */
#define FXS_THINNING_OFF 0
#define FXS_THINNING_UNTIL_STABLE 1
#define FXS_THINNING_AT_MOST 2 /* at most thinning_cap iterations */
#define FXS_SUPPRESSION_SECTORS 0      /* the two neighbours of the nearest of 4 directions */
#define FXS_SUPPRESSION_INTERPOLATED 1 /* magnitudes interpolated along the gradient */

/* The whole stream, held by value (FXS_EDGE_STREAM_SIZE bytes, aligned to
 * FXS_OBJECT_ALIGN; a static is the usual place), borrows nothing. */
typedef union fxs_edge_stream {
    uint8_t bytes[FXS_EDGE_STREAM_SIZE];
    uint64_t align_;
} fxs_edge_stream;

typedef struct fxs_edge_config {
    int32_t smoothing;       /* FXS_SMOOTHING_* */
    int32_t gradient_operator; /* FXS_OPERATOR_* */
    int32_t frac_bits;       /* fractional bits of gx, gy; at most twice the smoothing shift */
    int32_t magnitude;       /* FXS_MAGNITUDE_* */
    int32_t threshold_rule;  /* FXS_THRESHOLDS_* */
    int32_t low;             /* fixed low, or the first frame's (auto); 1..65535 */
    int32_t high;            /* fixed high, or the first frame's (auto); low..65535 */
    int32_t shift;           /* auto: bin width 2^shift, 0..15 */
    int32_t high_permille;   /* auto: share below high, 1..999 */
    int32_t low_ratio_u0f16; /* auto: low / high as U0F16 bits, 1..65535 */
    int32_t thinning;        /* FXS_THINNING_* */
    int32_t thinning_cap;    /* FXS_THINNING_AT_MOST: 1..65535 */
    int32_t suppression;     /* FXS_SUPPRESSION_* */
} fxs_edge_config;

typedef struct fxs_edge_report {
    uint32_t width;
    uint32_t height;             /* rows (fewer than declared for a short frame) */
    uint16_t low;                /* thresholds used for this frame */
    uint16_t high;
    uint16_t next_low;           /* thresholds carried to the next frame */
    uint16_t next_high;
    uint32_t threshold_at_limit; /* 1: automatic rule hit a limit */
    uint32_t candidates;         /* suppressed magnitudes >= low */
    uint32_t edge_points;        /* after hysteresis and thinning */
    uint32_t gradients_dropped;  /* candidates beyond FXS_EDGE_STREAM_POINT_GRADIENTS */
    uint32_t link_edges;         /* hysteresis statistics (fxs_link_stats) */
    uint32_t link_passes;
    uint32_t link_deferred;
    uint32_t link_peak_stack;
    uint32_t thin_iterations;    /* thinning statistics */
    uint32_t thin_deleted;
    uint32_t thin_capped;
} fxs_edge_report;

typedef struct fxs_edge_point {
    uint16_t x;
    uint16_t y;
    int16_t gx;            /* gradient times 2^frac_bits (0 when not stored) */
    int16_t gy;
    uint32_t has_gradient; /* 0 when the frame had more candidates than stored */
} fxs_edge_point;

/* The demo configuration (fixsight::pipeline::DEMO) into *config. */
fxs_status fxs_edge_stream_demo_config(fxs_edge_config *config);

/* A stream for width x height frames (width 4..FXS_EDGE_STREAM_MAX_WIDTH,
 * ceil(width / 16) * height <= FXS_EDGE_STREAM_MAP_WORDS, bins needed by
 * config <= FXS_EDGE_STREAM_BINS). On an error *stream is left not
 * initialised.
 * Errors: FXS_E_NULL_POINTER, FXS_E_MISALIGNED, FXS_E_NEGATIVE,
 * FXS_E_ZERO_SIZE, FXS_E_TOO_LARGE, FXS_E_BAD_PARAMETER (a setting),
 * FXS_E_BAD_TAPS, FXS_E_THRESHOLD_ORDER, FXS_E_BUFFER_TOO_SHORT (a
 * capacity), FXS_E_OVERLAP. */
fxs_status fxs_edge_stream_init(fxs_edge_stream *stream, const fxs_edge_config *config,
                                int32_t width, int32_t height);

/* Drops the frame in progress (carried thresholds stay). */
fxs_status fxs_edge_stream_reset(fxs_edge_stream *stream);

/* Candidate budget of the automatic thresholds (0: none, the state after
 * init; reset keeps it). From the end of the frame in progress on,
 * the low threshold carried to the next frame is raised, when needed, to
 * the smallest histogram bin edge with at most budget magnitudes at or
 * above it (step 5 of the rule, kernels/src/hysteresis.rs), so that the
 * finished frame would have had at most budget candidates. With budget
 * FXS_EDGE_STREAM_POINT_GRADIENTS every candidate of a frame like the last
 * one keeps its gradient. Fixed thresholds ignore it.
 * Errors: FXS_E_NULL_POINTER, FXS_E_MISALIGNED, FXS_E_NOT_INITIALISED. */
fxs_status fxs_edge_stream_set_candidate_budget(fxs_edge_stream *stream, uint32_t budget);

/* Pushes the next camera row: row_len == width bytes of 8-bit luma.
 * *rows_pushed (may be NULL): rows of this frame so far. A push after
 * finish starts the next frame.
 * Errors: FXS_E_ROW_LENGTH, FXS_E_STREAM_ORDER (all declared rows came),
 * FXS_E_NULL_POINTER, FXS_E_NOT_INITIALISED, FXS_E_OVERLAP. */
fxs_status fxs_edge_stream_push_row(fxs_edge_stream *stream, const uint8_t *row,
                                    uintptr_t row_len, int32_t *rows_pushed);

/* Ends a frame after all `height` rows; report may be NULL. Points and
 * edge rows can then be read until the next push.
 * Errors: FXS_E_ROW_COUNT, FXS_E_STREAM_ORDER, FXS_E_NOT_INITIALISED. */
fxs_status fxs_edge_stream_finish(fxs_edge_stream *stream, fxs_edge_report *report);

/* Ends a frame after fewer rows (at least 1) than declared. */
fxs_status fxs_edge_stream_finish_short(fxs_edge_stream *stream, fxs_edge_report *report);

/* The finished frame's edge points in raster order, skipping the first
 * `first`, up to out_len into out; *written is how many.
 * Errors: FXS_E_STREAM_ORDER (frame not finished), FXS_E_NULL_POINTER,
 * FXS_E_NOT_INITIALISED, FXS_E_OVERLAP. */
fxs_status fxs_edge_stream_points(const fxs_edge_stream *stream, uintptr_t first,
                                  fxs_edge_point *out, uintptr_t out_len, uintptr_t *written);

/* Row y of the finished frame's edge map (255 edge, 0 not) into
 * out[out_len], out_len >= width.
 * Errors: FXS_E_STREAM_ORDER, FXS_E_ROW_RANGE, FXS_E_BUFFER_TOO_SHORT,
 * FXS_E_NEGATIVE, FXS_E_NULL_POINTER, FXS_E_NOT_INITIALISED. */
fxs_status fxs_edge_stream_edge_row(const fxs_edge_stream *stream, int32_t y, uint8_t *out,
                                    uintptr_t out_len);

/* ======================================================================== */
/* pipeline: the whole job in point mode (kernel id pipeline.point_job)    */
/* What a frame computes, bit for bit: kernels/src/pipeline.rs, PointJob   */
/* (the edge stage above; each edge point corrected through an optional   */
/* control grid and voted, gated by a one-byte code of its gradient angle; */
/* peaks; their lines moved to the image centre; the marking selection;   */
/* the tracker fed the tape's left then right edge).                       */
/* NOT A SAFETY FUNCTION: the drift warning is an aid only; see the note   */
/* at the top of this file.                                                */
/* ======================================================================== */

/* Capacities of fxs_point_job (PointJob<320, 4800, 1024, 4096, 32, 255, 8, 4>). */
#define FXS_POINT_JOB_MAX_WIDTH 320   /* widest raw frame */
#define FXS_POINT_JOB_MAP_WORDS 4800  /* ceil(width / 16) * height at most this (320 x 240) */
#define FXS_POINT_JOB_BINS 1024       /* histogram bins of the automatic rule */
#define FXS_POINT_JOB_GATE_BYTES 4096 /* candidates per frame whose gate byte is kept */
#define FXS_POINT_JOB_THETA_BINS 32   /* most vote columns */
#define FXS_POINT_JOB_RHO_BINS 255    /* vote cells: theta_bins * rho_bins <= 32 * 255 */
#define FXS_POINT_JOB_PEAKS 8         /* peaks (lines) kept per frame */
#define FXS_POINT_JOB_TRACKS 4        /* track slots */
/* With gated votes and automatic thresholds, FXS_POINT_JOB_GATE_BYTES is
 * also the edge stage's candidate budget: a frame with more candidates
 * raises the low threshold carried to the next frame to the smallest
 * histogram bin edge with at most that many magnitudes at or above it
 * (Thresholds::within_budget, kernels/src/hysteresis.rs, step 5). */

/* The whole job, held by value (FXS_POINT_JOB_SIZE bytes, aligned to
 * FXS_OBJECT_ALIGN; a static is the usual place), borrows nothing between
 * calls. */
typedef union fxs_point_job {
    uint8_t bytes[FXS_POINT_JOB_SIZE];
    uint64_t align_;
} fxs_point_job;

/* Every setting, one part per stage, each as its own functions check it.
 * The job adds: vote.weight_shift -1 (unit votes); vote.theta_step_log2
 * >= 9 when vote.gate is nonzero (the gate code fits a byte);
 * peaks.threshold >= 1. marking.contrast is not used (no polarity is
 * known in point mode). */
typedef struct fxs_point_job_config {
    fxs_edge_config edges;     /* the edge stage */
    fxs_vote_params vote;      /* its frame is the corrected view */
    fxs_peak_params peaks;     /* peak selection */
    fxs_marking_limits marking; /* marking selection, centre origin of the vote frame */
    fxs_track_config track;    /* tracker and drift warning */
} fxs_point_job_config;

typedef struct fxs_point_job_report {
    uint32_t frame;              /* frame number given to the tracker */
    uint32_t voted;              /* edge points that cast votes */
    uint32_t outside;            /* edge points corrected outside the vote frame */
    uint32_t ungated;            /* edge points past FXS_POINT_JOB_GATE_BYTES candidates (no vote) */
    uint32_t peaks;              /* peaks found, 0..FXS_POINT_JOB_PEAKS */
    fxs_edge_report edges;       /* the edge stage; gradients_dropped: candidates without a gate byte */
    fxs_marking_result marking;  /* indices into fxs_point_job_lines */
    fxs_frame_report track;      /* the tracker's update, with the drift warning */
} fxs_point_job_report;

/* The demo configuration at 320 x 240 (PointJobConfig::DEMO_QVGA) into
 * *config. */
fxs_status fxs_point_job_demo_config(fxs_point_job_config *config);

/* A job for raw width x height frames (width 4..FXS_POINT_JOB_MAX_WIDTH,
 * ceil(width / 16) * height <= FXS_POINT_JOB_MAP_WORDS, the capacities
 * above), frame numbers from 0, no tracks. On an error *job is left not
 * initialised. Stack: *job is set to a fresh job in place (zero bytes,
 * then the fresh state), no job is built on the stack: 800 bytes on a
 * Cortex-M4 with the configuration it calls (frames read from the
 * library's code at 9b39bcf); a finish goes deeper (high-water mark of
 * the whole job 2 588 bytes over the golden vectors through C).
 * Errors: as fxs_edge_stream_init, fxs_lines_accumulator_init (vote),
 * fxs_marking_select (marking), fxs_tracker_init (track);
 * FXS_E_BAD_PARAMETER (weight_shift, gate with theta_step_log2 < 9, peak
 * threshold 0); FXS_E_BUFFER_TOO_SHORT (theta_bins above
 * FXS_POINT_JOB_THETA_BINS, more vote cells than 32 * 255). */
fxs_status fxs_point_job_init(fxs_point_job *job, const fxs_point_job_config *config,
                              int32_t width, int32_t height);

/* Pushes the next camera row: row_len == width bytes of 8-bit luma;
 * *rows_pushed (may be NULL): rows of this frame so far. A push after
 * finish starts the next frame. On an error nothing changes.
 * Errors: FXS_E_ROW_LENGTH, FXS_E_STREAM_ORDER (all declared rows came),
 * FXS_E_NULL_POINTER, FXS_E_NOT_INITIALISED, FXS_E_OVERLAP. */
fxs_status fxs_point_job_push_row(fxs_point_job *job, const uint8_t *row, uintptr_t row_len,
                                  int32_t *rows_pushed);

/* Ends a frame after all `height` rows and runs the rest of the job. grid
 * (may be NULL: the raw frame is the vote frame) corrects the edge points:
 * its output size must be the raw frame and its source size the vote frame
 * (vote.width x vote.height). report may be NULL. Peaks, lines and tracks
 * can then be read until the next finish.
 * Errors (the job unchanged): FXS_E_SIZE_MISMATCH (grid sizes, or no grid
 * and a vote frame other than the raw frame), FXS_E_ROW_COUNT,
 * FXS_E_STREAM_ORDER, FXS_E_NOT_INITIALISED (job or grid), FXS_E_OVERLAP
 * (report with the job, the grid or its memory); after the frame was used:
 * FXS_E_FRAME_ORDER (frame number past 2^32 - 1). */
fxs_status fxs_point_job_finish(fxs_point_job *job, const fxs_control_grid *grid,
                                fxs_point_job_report *report);

/* As fxs_point_job_finish after fewer rows (at least 1) than declared;
 * the vote frame stays the declared one. */
fxs_status fxs_point_job_finish_short(fxs_point_job *job, const fxs_control_grid *grid,
                                      fxs_point_job_report *report);

/* Drops the frame in progress and counts it as a frame without a
 * measurement (the next frame number is skipped: the tracks coast). */
fxs_status fxs_point_job_drop_frame(fxs_point_job *job);

/* Starts over with the same configuration: frame in progress dropped,
 * tracks forgotten, frame numbers from 0; the automatic thresholds carried
 * to the next frame stay. */
fxs_status fxs_point_job_reset(fxs_point_job *job);

/* The last finished frame's peaks (vote-frame lines, strongest first), up
 * to out_len (1..FXS_LINES_MAX_OUT) into out; *found is how many.
 * Errors: FXS_E_BAD_PARAMETER (out_len), FXS_E_NULL_POINTER,
 * FXS_E_NOT_INITIALISED, FXS_E_OVERLAP. */
fxs_status fxs_point_job_peaks(const fxs_point_job *job, fxs_line_peak *out, uintptr_t out_len,
                               int32_t *found);

/* The peaks' lines about the image centre ((W-1)/2, (H-1)/2 of the vote
 * frame), in peak order, as the marking selection took them (polarity 0),
 * up to out_len (1..FXS_LINES_MAX_OUT); *found is how many.
 * Errors: as fxs_point_job_peaks. */
fxs_status fxs_point_job_lines(const fxs_point_job *job, fxs_marking_line *out, uintptr_t out_len,
                               int32_t *found);

/* Track slot 0..FXS_POINT_JOB_TRACKS-1 after the last finished frame as
 * FXS_TRACK_WORDS int32_t (layout of fxs_tracker_slot_words).
 * Errors: as fxs_tracker_slot_words. */
fxs_status fxs_point_job_track_words(const fxs_point_job *job, int32_t slot, int32_t *words,
                                     uintptr_t words_len);

/* ======================================================================== */
/* pipeline: the whole job in image mode (kernel id pipeline.image_job)    */
/* What a frame computes, bit for bit: kernels/src/pipeline/image_job.rs, */
/* ImageJob: fxs_warp_control_grid_rows of the whole camera frame with    */
/* the configured border, then the point job above on the corrected       */
/* frame finished without a grid (votes at the points' own positions).    */
/* Each corrected row goes through the edge stage as soon as the camera   */
/* rows it reads are in (row by row, as fxs_grid_stream with strips of    */
/* one row); the result is the same bits as the whole-frame order.         */
/* NOT A SAFETY FUNCTION: the drift warning is an aid only; see the note   */
/* at the top of this file.                                                */
/* ======================================================================== */

/* The whole job, held by value (FXS_IMAGE_JOB_SIZE bytes, aligned to
 * FXS_OBJECT_ALIGN; a static is the usual place). Capacities of the
 * corrected (vote) frame: the FXS_POINT_JOB_* ones above
 * (ImageJob<320, 4800, 1024, 4096, 32, 255, 8, 4>). It keeps a copy of the
 * checked grid (the fxs_control_grid may go; its points or blob stay
 * borrowed, valid and unchanged) and borrows the ring of camera rows
 * (written by every push; nothing else may touch it) until it is
 * initialised again or no longer used. */
typedef union fxs_image_job {
    uint8_t bytes[FXS_IMAGE_JOB_SIZE];
    uint64_t align_;
} fxs_image_job;

/* Every setting: the point job's (its vote frame, vote.width x
 * vote.height, must be the grid's output frame) and the border rule of the
 * warp. */
typedef struct fxs_image_job_config {
    fxs_point_job_config job; /* the stages after the warp */
    int32_t border;           /* camera pixels outside the frame: FXS_BORDER_CLAMP or 0..255 */
} fxs_image_job_config;

/* The demo configuration at 320 x 240 (ImageJobConfig::DEMO_QVGA: that of
 * fxs_point_job_demo_config, border FXS_BORDER_CLAMP) into *config. */
fxs_status fxs_image_job_demo_config(fxs_image_job_config *config);

/* Bytes of the smallest ring of camera rows for a job over grid:
 * band_rows(1) * src_width (the most camera rows one corrected row reads,
 * as fxs_warp_grid_stream_ring_len with 1 channel and strips of 1 row),
 * into *ring_len. ring_len may overlap neither the grid nor its points or
 * blob.
 * Errors: FXS_E_NULL_POINTER, FXS_E_MISALIGNED, FXS_E_NOT_INITIALISED
 * (grid), FXS_E_OVERLAP. */
fxs_status fxs_image_job_ring_len(const fxs_control_grid *grid, uintptr_t *ring_len);

/* A job whose camera frame is the grid's source (src_width x src_height
 * bytes of 8-bit luma) and whose corrected frame is the grid's output,
 * with camera rows kept in ring[ring_len] (camera row y in ring row
 * y % ring_rows, ring_rows = min(ring_len / src_width, src_height), at
 * least the band of fxs_image_job_ring_len; only those whole rows are
 * borrowed); frame numbers from 0, no tracks. config, the ring, the grid
 * and its points or blob may not overlap *job; the ring may overlap none
 * of the others. An error of a pointer, of the border or of a part of
 * config as its own functions check it leaves *job unchanged; an error of
 * the job's own checks (the sizes, the ring, the rules the point job
 * adds) leaves it not initialised. Stack: as fxs_point_job_init (*job
 * set in place, no job on the stack): 1 280 bytes on a Cortex-M4 with the
 * configuration it calls (frames read from the library's code at 9b39bcf;
 * high-water mark of the whole job 3 084 bytes over the golden vectors
 * through C).
 * Errors: as fxs_point_job_init for config->job and the corrected frame
 * (wider than FXS_POINT_JOB_MAX_WIDTH, more than FXS_POINT_JOB_MAP_WORDS
 * -> FXS_E_BUFFER_TOO_SHORT); FXS_E_SIZE_MISMATCH (vote frame other than
 * the grid's output); FXS_E_BUFFER_TOO_SHORT (ring shorter than
 * fxs_image_job_ring_len); FXS_E_BAD_PARAMETER (border);
 * FXS_E_NULL_POINTER, FXS_E_MISALIGNED, FXS_E_NOT_INITIALISED (grid),
 * FXS_E_OVERLAP. */
fxs_status fxs_image_job_init(fxs_image_job *job, const fxs_image_job_config *config,
                              const fxs_control_grid *grid, uint8_t *ring, uintptr_t ring_len);

/* Pushes the next camera row: row_len == src_width bytes; it is copied
 * into the ring and every corrected row that becomes ready goes through
 * the edge stage. *rows_pushed (may be NULL): camera rows of this frame
 * so far. A push after finish starts the next frame. row may overlap
 * neither the job nor the ring, rows_pushed none of these nor the grid's
 * points or blob. On an error nothing changes.
 * Errors: FXS_E_ROW_LENGTH, FXS_E_STREAM_ORDER (all src_height rows came),
 * FXS_E_NULL_POINTER, FXS_E_NOT_INITIALISED, FXS_E_OVERLAP. */
fxs_status fxs_image_job_push_row(fxs_image_job *job, const uint8_t *row, uintptr_t row_len,
                                  int32_t *rows_pushed);

/* Ends a frame after all src_height camera rows and runs the line stage
 * (votes at the corrected points' own positions: report->outside is
 * always 0). report (may be NULL; the point job's report) may overlap
 * neither the job, the ring nor the grid's points or blob. Peaks, lines
 * and tracks can then be read until the next finish.
 * Errors (the job unchanged): FXS_E_ROW_COUNT (fewer than src_height
 * camera rows in; none since the last finish), FXS_E_NOT_INITIALISED,
 * FXS_E_NULL_POINTER (job), FXS_E_MISALIGNED, FXS_E_OVERLAP; after the
 * frame was used:
 * FXS_E_FRAME_ORDER (frame number past 2^32 - 1). */
fxs_status fxs_image_job_finish(fxs_image_job *job, fxs_point_job_report *report);

/* As fxs_image_job_finish for a camera frame that ended early: the
 * corrected rows made so far are the frame (the vote frame stays the
 * declared one). FXS_E_STREAM_ORDER when no corrected row was made yet
 * (the first one needs the first band of camera rows). */
fxs_status fxs_image_job_finish_short(fxs_image_job *job, fxs_point_job_report *report);

/* Drops the frame in progress and counts it as a frame without a
 * measurement (the next frame number is skipped: the tracks coast). */
fxs_status fxs_image_job_drop_frame(fxs_image_job *job);

/* Starts over with the same configuration, grid and ring: frame in
 * progress dropped, tracks forgotten, frame numbers from 0; the automatic
 * thresholds carried to the next frame stay. */
fxs_status fxs_image_job_reset(fxs_image_job *job);

/* As fxs_point_job_peaks (lines of the corrected frame); out and found
 * may also overlap neither the ring nor the grid's points or blob. */
fxs_status fxs_image_job_peaks(const fxs_image_job *job, fxs_line_peak *out, uintptr_t out_len,
                               int32_t *found);

/* As fxs_point_job_lines, with the overlap rule of fxs_image_job_peaks. */
fxs_status fxs_image_job_lines(const fxs_image_job *job, fxs_marking_line *out, uintptr_t out_len,
                               int32_t *found);

/* As fxs_point_job_track_words; words may also overlap neither the ring
 * nor the grid's points or blob. */
fxs_status fxs_image_job_track_words(const fxs_image_job *job, int32_t slot, int32_t *words,
                                     uintptr_t words_len);

#ifdef __cplusplus
}
#endif

#endif /* FIXSIGHT_H */
