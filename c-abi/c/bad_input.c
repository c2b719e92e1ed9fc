/*
 * Bad input through the C API: every case must return its documented
 * status (fixsight.h) and must not crash. Prints one "bad" line per case.
 */
#include "fixsight.h"
#include "golden.h"

#include <stddef.h>
#include <stdint.h>
#include <string.h>

static int32_t cases, failed;

static void expect(const char *name, fxs_status got, fxs_status want) {
    cases++;
    golden_platform_write("bad ");
    golden_platform_write(name);
    if (got == want) {
        golden_platform_write(" pass\n");
        return;
    }
    failed++;
    golden_platform_write(" FAIL got ");
    golden_print_int(got);
    golden_platform_write(" want ");
    golden_print_int(want);
    golden_platform_write(" (");
    golden_platform_write(fxs_status_message(got));
    golden_platform_write(")\n");
}

/* Storage alignment as the compiler lays it out. */
#define ALIGN_OF(T) offsetof(struct { char c; T t; }, t)

/* Byte images in word arrays, so that casts to wider types stay aligned. */
static uint32_t a8w[1024], b8w[1024];
#define a8 ((uint8_t *)(void *)a8w)
#define b8 ((uint8_t *)(void *)b8w)
static int16_t a16[64 * 64], b16[64 * 64];
static uint16_t u16a[64 * 64], u16b[64 * 64];
static int32_t scratch[256];
static uint32_t words[1024];

static void statuses(void) {
    static const fxs_status codes[] = {
        FXS_OK, FXS_E_ZERO_SIZE, FXS_E_TOO_LARGE, FXS_E_STRIDE_TOO_SMALL, FXS_E_LAYOUT_OVERFLOW,
        FXS_E_BUFFER_TOO_SHORT, FXS_E_SIZE_MISMATCH, FXS_E_UNSUPPORTED_CHANNELS, FXS_E_BAD_TAPS,
        FXS_E_ACCUMULATOR_OVERFLOW, FXS_E_BAD_PARAMETER, FXS_E_STREAM_ORDER, FXS_E_MAP_OUT_OF_RANGE,
        FXS_E_GRID_CELL_OVERFLOW, FXS_E_GRID_COVERAGE, FXS_E_BLOB_SIZE, FXS_E_BLOB_MAGIC,
        FXS_E_BLOB_VERSION, FXS_E_BLOB_FIELD, FXS_E_BLOB_CRC, FXS_E_ROW_RANGE,
        FXS_E_THRESHOLD_ORDER, FXS_E_BAD_EDGE_CODE, FXS_E_ROW_LENGTH, FXS_E_ROW_COUNT,
        FXS_E_FRAME_ORDER, FXS_E_POINT_OUTSIDE, FXS_E_BAND_ROWS, FXS_E_KERNEL_OTHER, FXS_E_NULL_POINTER,
        FXS_E_NEGATIVE, FXS_E_MISALIGNED, FXS_E_OVERLAP, FXS_E_NOT_INITIALISED,
        FXS_E_ADDRESS_RANGE};
    const char *unknown = fxs_status_message(12345);
    int distinct = 1;
    for (uint32_t i = 0; i < sizeof codes / sizeof codes[0]; i++) {
        const char *m = fxs_status_message(codes[i]);
        if (!m || !m[0] || strcmp(m, unknown) == 0) distinct = 0;
        for (uint32_t k = 0; k < i; k++)
            if (strcmp(m, fxs_status_message(codes[k])) == 0) distinct = 0;
    }
    expect("status.messages_distinct", distinct ? FXS_OK : -1, FXS_OK);
    expect("status.unknown_code_has_message", unknown && unknown[0] ? FXS_OK : -1, FXS_OK);
    expect("storage.sizes",
           (sizeof(fxs_filter) == FXS_FILTER_SIZE && sizeof(fxs_filter_stream) == FXS_FILTER_STREAM_SIZE &&
            sizeof(fxs_nms_stream) == FXS_NMS_STREAM_SIZE && sizeof(fxs_pixel_map) == FXS_PIXEL_MAP_SIZE &&
            sizeof(fxs_control_grid) == FXS_CONTROL_GRID_SIZE)
               ? FXS_OK
               : -1,
           FXS_OK);
    expect("storage.alignment",
           (ALIGN_OF(fxs_filter) == FXS_OBJECT_ALIGN && ALIGN_OF(fxs_filter_stream) == FXS_OBJECT_ALIGN &&
            ALIGN_OF(fxs_nms_stream) == FXS_OBJECT_ALIGN && ALIGN_OF(fxs_pixel_map) == FXS_OBJECT_ALIGN &&
            ALIGN_OF(fxs_control_grid) == FXS_OBJECT_ALIGN)
               ? FXS_OK
               : -1,
           FXS_OK);
}

static void images(void) {
    fxs_filter f;
    fxs_u8_view s = {a8, 16 * 8, 16, 8, 16};
    fxs_u8_view_mut d = {b8, 16 * 8, 16, 8, 16};
    fxs_u8_view s2;
    fxs_u8_view_mut d2;
    fxs_i16_view_mut d16 = {b16, 16 * 8, 16, 8, 16};
    fxs_filter_preset(&f, FXS_FILTER_BINOMIAL3, FXS_BORDER_CLAMP);
    expect("filter.frame.ok", fxs_filter_frame_u8(&f, &s, &d, scratch, 16), FXS_OK);
    expect("image.null_descriptor", fxs_filter_frame_u8(&f, 0, &d, scratch, 16), FXS_E_NULL_POINTER);
    expect("image.null_output_descriptor", fxs_filter_frame_u8(&f, &s, 0, scratch, 16), FXS_E_NULL_POINTER);
    s2 = s;
    s2.data = 0;
    expect("image.null_data", fxs_filter_frame_u8(&f, &s2, &d, scratch, 16), FXS_E_NULL_POINTER);
    expect("image.null_scratch", fxs_filter_frame_u8(&f, &s, &d, 0, 16), FXS_E_NULL_POINTER);
    expect("filter.null_object", fxs_filter_frame_u8(0, &s, &d, scratch, 16), FXS_E_NULL_POINTER);
    s2 = s;
    s2.width = -1;
    expect("image.negative_width", fxs_filter_frame_u8(&f, &s2, &d, scratch, 16), FXS_E_NEGATIVE);
    s2 = s;
    s2.height = -3;
    expect("image.negative_height", fxs_filter_frame_u8(&f, &s2, &d, scratch, 16), FXS_E_NEGATIVE);
    s2 = s;
    s2.stride = -16;
    expect("image.negative_stride", fxs_filter_frame_u8(&f, &s2, &d, scratch, 16), FXS_E_NEGATIVE);
    s2 = s;
    s2.width = 0;
    expect("image.zero_width", fxs_filter_frame_u8(&f, &s2, &d, scratch, 16), FXS_E_ZERO_SIZE);
    s2 = s;
    s2.height = 0;
    expect("image.zero_height", fxs_filter_frame_u8(&f, &s2, &d, scratch, 16), FXS_E_ZERO_SIZE);
    s2 = s;
    s2.width = 40000;
    s2.stride = 40000;
    expect("image.too_large", fxs_filter_frame_u8(&f, &s2, &d, scratch, 16), FXS_E_TOO_LARGE);
    s2 = s;
    s2.stride = 15;
    expect("image.stride_below_width", fxs_filter_frame_u8(&f, &s2, &d, scratch, 16), FXS_E_STRIDE_TOO_SMALL);
    s2 = s;
    s2.height = 32767;
    s2.stride = 70000;
    expect("image.stride_times_height_overflow", fxs_filter_frame_u8(&f, &s2, &d, scratch, 16),
           FXS_E_LAYOUT_OVERFLOW);
    s2 = s;
    s2.len = 16 * 8 - 1;
    expect("image.buffer_too_short", fxs_filter_frame_u8(&f, &s2, &d, scratch, 16), FXS_E_BUFFER_TOO_SHORT);
    d2 = d;
    d2.len = 16 * 7;
    expect("image.output_too_short", fxs_filter_frame_u8(&f, &s, &d2, scratch, 16), FXS_E_BUFFER_TOO_SHORT);
    expect("filter.scratch_too_short", fxs_filter_frame_u8(&f, &s, &d, scratch, 15), FXS_E_BUFFER_TOO_SHORT);
    d2 = d;
    d2.height = 7;
    expect("filter.size_mismatch", fxs_filter_frame_u8(&f, &s, &d2, scratch, 16), FXS_E_SIZE_MISMATCH);
    d2 = d;
    d2.data = (uint8_t *)a8;
    expect("filter.output_is_input", fxs_filter_frame_u8(&f, &s, &d2, scratch, 16), FXS_E_OVERLAP);
    d2 = d;
    d2.data = (uint8_t *)a8 + 100;
    expect("filter.output_overlaps_input", fxs_filter_frame_u8(&f, &s, &d2, scratch, 16), FXS_E_OVERLAP);
    d2 = d;
    d2.data = (uint8_t *)a8 + 16 * 8;
    expect("filter.output_next_to_input", fxs_filter_frame_u8(&f, &s, &d2, scratch, 16), FXS_OK);
    expect("filter.scratch_overlaps_output",
           fxs_filter_frame_u8(&f, &s, &d, (int32_t *)(void *)b8, 16), FXS_E_OVERLAP);
    {
        fxs_i16_view_mut m = d16;
        m.data = (int16_t *)(void *)((uint8_t *)(void *)b16 + 1);
        expect("image.misaligned_i16", fxs_filter_frame_i16(&f, &s, &m, scratch, 16), FXS_E_MISALIGNED);
    }
    {
        fxs_filter zero;
        memset(&zero, 0, sizeof zero);
        expect("filter.not_initialised", fxs_filter_frame_u8(&zero, &s, &d, scratch, 16),
               FXS_E_NOT_INITIALISED);
    }
}

static void filters(void) {
    static const int16_t odd3[3] = {1, 2, 1}, even2[2] = {1, 1};
    static const int16_t big[12] = {32767, 32767, 32767, 32767, 32767, 32767,
                                    32767, 32767, 32767, 32767, 32767, 32767};
    fxs_filter f;
    int32_t rows = 0;
    expect("filter.preset_unknown", fxs_filter_preset(&f, 99, FXS_BORDER_CLAMP), FXS_E_BAD_PARAMETER);
    expect("filter.border_out_of_range", fxs_filter_preset(&f, FXS_FILTER_SOBEL_X, 256), FXS_E_BAD_PARAMETER);
    expect("filter.border_negative", fxs_filter_preset(&f, FXS_FILTER_SOBEL_X, -2), FXS_E_BAD_PARAMETER);
    expect("filter.null_storage", fxs_filter_preset(0, FXS_FILTER_SOBEL_X, 0), FXS_E_NULL_POINTER);
    expect("filter.custom_ok", fxs_filter_separable(&f, odd3, 3, 2, odd3, 3, 2, 7), FXS_OK);
    expect("filter.ring_rows", fxs_filter_ring_rows(&f, &rows) == FXS_OK && rows == 3 ? FXS_OK : -1, FXS_OK);
    expect("filter.ring_rows_null", fxs_filter_ring_rows(&f, 0), FXS_E_NULL_POINTER);
    expect("filter.taps_even", fxs_filter_separable(&f, even2, 2, 1, odd3, 3, 2, 0), FXS_E_BAD_TAPS);
    expect("filter.taps_empty", fxs_filter_separable(&f, odd3, 0, 0, odd3, 3, 2, 0), FXS_E_BAD_TAPS);
    expect("filter.taps_too_many", fxs_filter_separable(&f, big, 11, 0, odd3, 3, 2, 0), FXS_E_BAD_TAPS);
    expect("filter.taps_negative_length", fxs_filter_separable(&f, odd3, -3, 0, odd3, 3, 2, 0), FXS_E_NEGATIVE);
    expect("filter.taps_negative_shift", fxs_filter_separable(&f, odd3, 3, -1, odd3, 3, 2, 0), FXS_E_NEGATIVE);
    expect("filter.tap_shift_17", fxs_filter_separable(&f, odd3, 3, 17, odd3, 3, 2, 0), FXS_E_BAD_TAPS);
    expect("filter.taps_null", fxs_filter_separable(&f, 0, 3, 2, odd3, 3, 2, 0), FXS_E_NULL_POINTER);
    expect("filter.accumulator_overflow", fxs_filter_separable(&f, big, 9, 0, big, 9, 0, 0),
           FXS_E_ACCUMULATOR_OVERFLOW);
}

static void filter_streams(void) {
    fxs_filter f;
    fxs_filter_stream st, zero;
    fxs_nms_stream other;
    uint8_t ring[3 * 8], out[8], row[8] = {1, 2, 3, 4, 5, 6, 7, 8};
    int32_t acc[8], at = 0, y;
    fxs_filter_preset(&f, FXS_FILTER_BINOMIAL3, FXS_BORDER_CLAMP);
    memset(&zero, 0, sizeof zero);
    expect("stream.not_initialised", fxs_filter_stream_push_u8(&zero, row, 8, out, 8, &at), FXS_E_NOT_INITIALISED);
    expect("stream.ring_too_short", fxs_filter_stream_init(&st, &f, 8, 2, ring, 3 * 8 - 1, acc, 8),
           FXS_E_BUFFER_TOO_SHORT);
    expect("stream.acc_too_short", fxs_filter_stream_init(&st, &f, 8, 2, ring, 3 * 8, acc, 7),
           FXS_E_BUFFER_TOO_SHORT);
    expect("stream.zero_height", fxs_filter_stream_init(&st, &f, 8, 0, ring, 3 * 8, acc, 8), FXS_E_ZERO_SIZE);
    expect("stream.ring_overlaps_acc",
           fxs_filter_stream_init(&st, &f, 8, 2, ring, 3 * 8, (int32_t *)(void *)words, 8) == FXS_OK &&
                   fxs_filter_stream_init(&st, &f, 2, 2, (uint8_t *)(void *)words, 6, (int32_t *)(void *)words, 2) ==
                       FXS_E_OVERLAP
               ? FXS_OK
               : -1,
           FXS_OK);
    expect("stream.init", fxs_filter_stream_init(&st, &f, 8, 2, ring, 3 * 8, acc, 8), FXS_OK);
    expect("stream.flush_before_last_row", fxs_filter_stream_flush_u8(&st, out, 8, &at), FXS_E_STREAM_ORDER);
    expect("stream.row_too_short", fxs_filter_stream_push_u8(&st, row, 7, out, 8, &at), FXS_E_BUFFER_TOO_SHORT);
    expect("stream.out_null", fxs_filter_stream_push_u8(&st, row, 8, 0, 8, &at), FXS_E_NULL_POINTER);
    expect("stream.out_row_null", fxs_filter_stream_push_u8(&st, row, 8, out, 8, 0), FXS_E_NULL_POINTER);
    expect("stream.out_in_ring", fxs_filter_stream_push_u8(&st, row, 8, ring + 8, 8, &at), FXS_E_OVERLAP);
    expect("stream.row_is_out", fxs_filter_stream_push_u8(&st, out, 8, out, 8, &at), FXS_E_OVERLAP);
    for (y = 0; y < 2; y++) expect("stream.push", fxs_filter_stream_push_u8(&st, row, 8, out, 8, &at), FXS_OK);
    expect("stream.push_past_height", fxs_filter_stream_push_u8(&st, row, 8, out, 8, &at), FXS_E_STREAM_ORDER);
    expect("stream.flush", fxs_filter_stream_flush_u8(&st, out, 8, &at) == FXS_OK && at == 1 ? FXS_OK : -1, FXS_OK);
    expect("stream.flush_done", fxs_filter_stream_flush_u8(&st, out, 8, &at) == FXS_OK && at == -1 ? FXS_OK : -1,
           FXS_OK);
    {
        uint16_t mr[3 * 8];
        uint8_t dr[3 * 8];
        fxs_nms_stream_init(&other, 8, 2, mr, 3 * 8, dr, 3 * 8);
        expect("stream.wrong_kind", fxs_filter_stream_push_u8((fxs_filter_stream *)(void *)&other, row, 8, out, 8, &at),
               FXS_E_NOT_INITIALISED);
    }
}

static void gradients_and_edges(void) {
    fxs_i16_view gx = {a16, 16, 4, 4, 4}, gy = {b16, 16, 4, 4, 4}, gy3 = {b16, 12, 4, 3, 4};
    fxs_u16_view_mut m = {u16a, 16, 4, 4, 4};
    fxs_u8_view_mut dir = {b8, 16, 4, 4, 4}, codes = {b8, 16, 4, 4, 4};
    fxs_u16_view mv = {u16b, 16, 4, 4, 4};
    fxs_u8_view dv = {a8, 16, 4, 4, 4};
    fxs_u16_view_mut nm = {u16a, 16, 4, 4, 4};
    uint16_t low, high;
    memset(a16, 0, sizeof a16);
    memset(u16b, 0, sizeof u16b);
    memset(a8w, 0, sizeof a8w);
    expect("gradient.ok", fxs_gradient_magnitude_l1(&gx, &gy, &m), FXS_OK);
    expect("gradient.size_mismatch", fxs_gradient_magnitude_l2_round(&gx, &gy3, &m), FXS_E_SIZE_MISMATCH);
    expect("gradient.inputs_may_share", fxs_gradient_magnitude_l2_approx(&gx, &gx, &m), FXS_OK);
    {
        fxs_u16_view_mut bad = m;
        bad.data = (uint16_t *)(void *)a16;
        expect("gradient.output_over_input", fxs_gradient_magnitude_l1(&gx, &gy, &bad), FXS_E_OVERLAP);
    }
    expect("gradient.direction_null_output", fxs_gradient_direction(&gx, &gy, 0), FXS_E_NULL_POINTER);
    expect("gradient.direction_ok", fxs_gradient_direction(&gx, &gy, &dir), FXS_OK);
    a8[5] = 4;
    expect("nms.sector_out_of_range", fxs_nms_suppress(&mv, &dv, &nm), FXS_E_BAD_PARAMETER);
    a8[5] = 0;
    expect("nms.ok", fxs_nms_suppress(&mv, &dv, &nm), FXS_OK);
    {
        fxs_nms_stream st;
        uint16_t mr[12], o[4];
        uint8_t dr[12];
        int32_t at;
        expect("nms.stream_ring_short", fxs_nms_stream_init(&st, 4, 2, mr, 11, dr, 12), FXS_E_BUFFER_TOO_SHORT);
        expect("nms.stream_negative_width", fxs_nms_stream_init(&st, -4, 2, mr, 12, dr, 12), FXS_E_NEGATIVE);
        expect("nms.stream_init", fxs_nms_stream_init(&st, 4, 1, mr, 12, dr, 12), FXS_OK);
        expect("nms.stream_push", fxs_nms_stream_push(&st, u16b, 4, a8, 4, o, 4, &at), FXS_OK);
        expect("nms.stream_push_past_height", fxs_nms_stream_push(&st, u16b, 4, a8, 4, o, 4, &at),
               FXS_E_STREAM_ORDER);
        expect("nms.stream_out_in_ring", fxs_nms_stream_flush(&st, mr, 4, &at), FXS_E_OVERLAP);
    }
    expect("thresholds.bins_zero", fxs_hysteresis_thresholds(&mv, words, 0, 0, 900, 30000, &low, &high),
           FXS_E_BUFFER_TOO_SHORT);
    expect("thresholds.shift_16", fxs_hysteresis_thresholds(&mv, words, 64, 16, 900, 30000, &low, &high),
           FXS_E_BAD_PARAMETER);
    expect("thresholds.permille_0", fxs_hysteresis_thresholds(&mv, words, 64, 0, 0, 30000, &low, &high),
           FXS_E_BAD_PARAMETER);
    expect("thresholds.permille_1000", fxs_hysteresis_thresholds(&mv, words, 64, 0, 1000, 30000, &low, &high),
           FXS_E_BAD_PARAMETER);
    expect("thresholds.ratio_0", fxs_hysteresis_thresholds(&mv, words, 64, 0, 900, 0, &low, &high),
           FXS_E_BAD_PARAMETER);
    expect("thresholds.ratio_65536", fxs_hysteresis_thresholds(&mv, words, 64, 0, 900, 65536, &low, &high),
           FXS_E_BAD_PARAMETER);
    expect("thresholds.negative_shift", fxs_hysteresis_thresholds(&mv, words, 64, -1, 900, 30000, &low, &high),
           FXS_E_NEGATIVE);
    expect("thresholds.null_low", fxs_hysteresis_thresholds(&mv, words, 64, 0, 900, 30000, 0, &high),
           FXS_E_NULL_POINTER);
    expect("thresholds.none_nonzero",
           fxs_hysteresis_thresholds(&mv, words, 64, 0, 900, 30000, &low, &high) == FXS_OK && low == 65535 &&
                   high == 65535
               ? FXS_OK
               : -1,
           FXS_OK);
    expect("classify.low_zero", fxs_hysteresis_classify(&mv, 0, 10, &codes), FXS_E_BAD_PARAMETER);
    expect("classify.low_above_high", fxs_hysteresis_classify(&mv, 20, 10, &codes), FXS_E_THRESHOLD_ORDER);
    expect("classify.high_65536", fxs_hysteresis_classify(&mv, 1, 65536, &codes), FXS_E_BAD_PARAMETER);
    expect("classify.negative_low", fxs_hysteresis_classify(&mv, -1, 10, &codes), FXS_E_NEGATIVE);
    expect("classify.ok", fxs_hysteresis_classify(&mv, 1, 10, &codes), FXS_OK);
    expect("link.stack_7", fxs_hysteresis_link(&codes, words, 7, 0), FXS_E_BUFFER_TOO_SHORT);
    b8[3] = 3;
    expect("link.bad_edge_code", fxs_hysteresis_link(&codes, words, 8, 0), FXS_E_BAD_EDGE_CODE);
    b8[3] = 2;
    {
        fxs_link_stats st;
        expect("link.stats", fxs_hysteresis_link(&codes, words, 8, &st) == FXS_OK && st.edges == 1 ? FXS_OK : -1,
               FXS_OK);
    }
    expect("link.stack_in_map", fxs_hysteresis_link(&codes, (uint32_t *)(void *)b8, 8, 0), FXS_E_OVERLAP);
    expect("thin.scratch_short", fxs_thinning_thin(&codes, a8, 11, 0), FXS_E_BUFFER_TOO_SHORT);
    expect("thin.scratch_null", fxs_thinning_thin(&codes, 0, 12, 0), FXS_E_NULL_POINTER);
    {
        fxs_thin_stats st;
        expect("thin.ok", fxs_thinning_thin(&codes, a8, 12, &st), FXS_OK);
    }
}

static void warps(void) {
    fxs_warp_geometry g = {4, 4, 4, 4, 2};
    fxs_pixel_map map, zero;
    fxs_control_grid grid;
    int32_t coords[2 * 16], cols, rows;
    static const int32_t identity[8] = {0, 0, 16, 0, 0, 16, 16, 16};
    uint8_t blob[64], out[16];
    uintptr_t n = 0;
    fxs_u8_view src = {a8, 16, 4, 4, 4};
    fxs_u8_view_mut dst = {b8, 16, 4, 4, 4}, strip = {b8, 4, 4, 1, 4};
    for (int32_t i = 0; i < 16; i++) {
        coords[2 * i] = (i % 4) * 4;
        coords[2 * i + 1] = (i / 4) * 4;
    }
    expect("warp.pixel_map_ok", fxs_warp_pixel_map_init(&map, coords, 32, &g), FXS_OK);
    expect("warp.rows_ok", fxs_warp_pixel_map_rows(&map, &src, 1, &dst, 0, FXS_BORDER_CLAMP), FXS_OK);
    expect("warp.strip_past_bottom", fxs_warp_pixel_map_rows(&map, &src, 1, &strip, 4, 0), FXS_E_ROW_RANGE);
    expect("warp.negative_first_row", fxs_warp_pixel_map_rows(&map, &src, 1, &strip, -1, 0), FXS_E_NEGATIVE);
    expect("warp.channels_5", fxs_warp_pixel_map_rows(&map, &src, 5, &strip, 0, 0), FXS_E_UNSUPPORTED_CHANNELS);
    expect("warp.channels_0", fxs_warp_pixel_map_rows(&map, &src, 0, &strip, 0, 0), FXS_E_UNSUPPORTED_CHANNELS);
    expect("warp.border_300", fxs_warp_pixel_map_rows(&map, &src, 1, &dst, 0, 300), FXS_E_BAD_PARAMETER);
    memset(&zero, 0, sizeof zero);
    expect("warp.map_not_initialised", fxs_warp_pixel_map_rows(&zero, &src, 1, &dst, 0, 0), FXS_E_NOT_INITIALISED);
    {
        fxs_u8_view_mut over = {(uint8_t *)(void *)coords, 16, 4, 4, 4};
        expect("warp.output_over_map", fxs_warp_pixel_map_rows(&map, &src, 1, &over, 0, 0), FXS_E_OVERLAP);
    }
    expect("warp.map_too_short", fxs_warp_pixel_map_init(&map, coords, 31, &g), FXS_E_BUFFER_TOO_SHORT);
    g.frac_bits = 1;
    expect("warp.frac_bits_1", fxs_warp_pixel_map_init(&map, coords, 32, &g), FXS_E_BAD_PARAMETER);
    g.frac_bits = 11;
    expect("warp.frac_bits_11", fxs_warp_pixel_map_init(&map, coords, 32, &g), FXS_E_BAD_PARAMETER);
    g.frac_bits = 2;
    g.out_width = -4;
    expect("warp.negative_size", fxs_warp_pixel_map_init(&map, coords, 32, &g), FXS_E_NEGATIVE);
    g.out_width = 4;
    expect("warp.null_geometry", fxs_warp_pixel_map_init(&map, coords, 32, 0), FXS_E_NULL_POINTER);
    coords[5] = 1000;
    expect("warp.map_out_of_range", fxs_warp_pixel_map_init(&map, coords, 32, &g), FXS_E_MAP_OUT_OF_RANGE);
    expect("grid.size", fxs_warp_control_grid_size(&g, 2, &cols, &rows) == FXS_OK && cols == 2 && rows == 2
                            ? FXS_OK
                            : -1,
           FXS_OK);
    expect("grid.log2_7", fxs_warp_control_grid_size(&g, 7, &cols, &rows), FXS_E_BAD_PARAMETER);
    expect("grid.points_short", fxs_warp_control_grid_init(&grid, identity, 7, &g, 2), FXS_E_BUFFER_TOO_SHORT);
    expect("grid.init", fxs_warp_control_grid_init(&grid, identity, 8, &g, 2), FXS_OK);
    expect("grid.blob_short", fxs_warp_control_grid_write_blob(&grid, blob, 63, &n), FXS_E_BUFFER_TOO_SHORT);
    expect("grid.write_blob", fxs_warp_control_grid_write_blob(&grid, blob, 64, &n) == FXS_OK && n == 64 ? FXS_OK : -1,
           FXS_OK);
    expect("grid.from_blob", fxs_warp_control_grid_from_blob(&grid, blob, 64), FXS_OK);
    expect("grid.blob_over_itself", fxs_warp_control_grid_write_blob(&grid, blob, 64, &n), FXS_E_OVERLAP);
    expect("grid.blob_length", fxs_warp_control_grid_from_blob(&grid, blob, 50), FXS_E_BLOB_SIZE);
    blob[40] ^= 1;
    expect("grid.blob_crc", fxs_warp_control_grid_from_blob(&grid, blob, 64), FXS_E_BLOB_CRC);
    blob[40] ^= 1;
    blob[0] = 'X';
    expect("grid.blob_magic", fxs_warp_control_grid_from_blob(&grid, blob, 64), FXS_E_BLOB_MAGIC);
    blob[0] = 'F';
    blob[4] = 9;
    expect("grid.blob_version", fxs_warp_control_grid_from_blob(&grid, blob, 64), FXS_E_BLOB_VERSION);
    blob[4] = 1;
    expect("grid.blob_null", fxs_warp_control_grid_from_blob(&grid, 0, 64), FXS_E_NULL_POINTER);
    expect("grid.from_blob_again", fxs_warp_control_grid_from_blob(&grid, blob, 64), FXS_OK);
    {
        fxs_u8_view_mut o = {out, 16, 4, 4, 4};
        expect("grid.rows", fxs_warp_control_grid_rows(&grid, &src, 1, &o, 0, FXS_BORDER_CLAMP), FXS_OK);
        fxs_u8_view_mut over = {blob + 8, 16, 4, 4, 4};
        expect("grid.output_over_blob", fxs_warp_control_grid_rows(&grid, &src, 1, &over, 0, 0), FXS_E_OVERLAP);
    }
}

int golden_bad_inputs(int32_t *n) {
    cases = failed = 0;
    statuses();
    images();
    filters();
    filter_streams();
    gradients_and_edges();
    warps();
    *n = cases;
    return failed;
}
