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
            sizeof(fxs_control_grid) == FXS_CONTROL_GRID_SIZE &&
            sizeof(fxs_lines_accumulator) == FXS_LINES_ACCUMULATOR_SIZE &&
            sizeof(fxs_tracker) == FXS_TRACKER_SIZE && sizeof(fxs_edge_stream) == FXS_EDGE_STREAM_SIZE &&
            sizeof(fxs_grid_stream) == FXS_GRID_STREAM_SIZE && sizeof(fxs_point_job) == FXS_POINT_JOB_SIZE &&
            sizeof(fxs_image_job) == FXS_IMAGE_JOB_SIZE)
               ? FXS_OK
               : -1,
           FXS_OK);
    expect("storage.alignment",
           (ALIGN_OF(fxs_filter) == FXS_OBJECT_ALIGN && ALIGN_OF(fxs_filter_stream) == FXS_OBJECT_ALIGN &&
            ALIGN_OF(fxs_nms_stream) == FXS_OBJECT_ALIGN && ALIGN_OF(fxs_pixel_map) == FXS_OBJECT_ALIGN &&
            ALIGN_OF(fxs_control_grid) == FXS_OBJECT_ALIGN &&
            ALIGN_OF(fxs_lines_accumulator) == FXS_OBJECT_ALIGN &&
            ALIGN_OF(fxs_tracker) == FXS_OBJECT_ALIGN && ALIGN_OF(fxs_edge_stream) == FXS_OBJECT_ALIGN &&
            ALIGN_OF(fxs_grid_stream) == FXS_OBJECT_ALIGN && ALIGN_OF(fxs_point_job) == FXS_OBJECT_ALIGN &&
            ALIGN_OF(fxs_image_job) == FXS_OBJECT_ALIGN)
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
    expect("gradient.angles_ok", fxs_gradient_angles(&gx, &gy, &m), FXS_OK);
    expect("gradient.angles_size_mismatch", fxs_gradient_angles(&gx, &gy3, &m), FXS_E_SIZE_MISMATCH);
    {
        fxs_u16_view_mut bad = m;
        bad.data = (uint16_t *)(void *)b16;
        expect("gradient.angles_output_over_gy", fxs_gradient_angles(&gx, &gy, &bad), FXS_E_OVERLAP);
        bad = m;
        bad.len = 15;
        expect("gradient.angles_output_short", fxs_gradient_angles(&gx, &gy, &bad), FXS_E_BUFFER_TOO_SHORT);
    }
    a8[5] = 4;
    expect("nms.sector_out_of_range", fxs_nms_suppress(&mv, &dv, &nm), FXS_E_BAD_PARAMETER);
    a8[5] = 0;
    expect("nms.ok", fxs_nms_suppress(&mv, &dv, &nm), FXS_OK);
    expect("nms.interpolated_ok", fxs_nms_suppress_interpolated(&mv, &gx, &gy, &nm), FXS_OK);
    expect("nms.interpolated_inputs_may_share", fxs_nms_suppress_interpolated(&mv, &gx, &gx, &nm), FXS_OK);
    expect("nms.interpolated_size_mismatch", fxs_nms_suppress_interpolated(&mv, &gx, &gy3, &nm),
           FXS_E_SIZE_MISMATCH);
    expect("nms.interpolated_null_gradient", fxs_nms_suppress_interpolated(&mv, 0, &gy, &nm), FXS_E_NULL_POINTER);
    {
        fxs_u16_view_mut bad = nm;
        bad.data = u16b;
        expect("nms.interpolated_output_over_mag", fxs_nms_suppress_interpolated(&mv, &gx, &gy, &bad),
               FXS_E_OVERLAP);
        bad = nm;
        bad.data = (uint16_t *)(void *)a16;
        expect("nms.interpolated_output_over_gx", fxs_nms_suppress_interpolated(&mv, &gx, &gy, &bad),
               FXS_E_OVERLAP);
    }
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

/* fxs_lines_accumulator_init of the lines cases with cells and table long enough. */
static fxs_status init_acc(fxs_lines_accumulator *acc, const fxs_vote_params *q) {
    static int16_t trig[16];
    return fxs_lines_accumulator_init(acc, q, u16a, 32, trig, 16);
}

static void lines_cases(void) {
    /* 8 x 6 frame, 4 columns of 16384 units from 0 (0..90 degrees), 5 rows of 1 px. */
    fxs_vote_params p = {8, 6, 0, 14, 4, 4, 5, 14, 0, -1}, q;
    fxs_lines_accumulator acc, zero;
    fxs_vote_counts n;
    fxs_peak_params pp = {1, 1, 1};
    fxs_line_peak pk[4];
    fxs_segment seg[4];
    fxs_segment_params sp = {1, 0, 0};
    fxs_line line = {-16, 32768, 0}; /* the row y = 2, one pixel above the origin row */
    fxs_u8_view e = {a8, 48, 8, 6, 8};
    fxs_i16_view gx = {a16, 48, 8, 6, 8}, gy = {b16, 48, 8, 6, 8};
    fxs_control_grid grid;
    fxs_warp_geometry g = {8, 8, 8, 6, 4};
    static const int32_t ident[18] = {0, 0, 64, 0, 128, 0, 0, 64, 64, 64, 128, 64, 0, 128, 64, 128, 128, 128};
    uint16_t *cells = u16a;
    int16_t c, sn, trig[8];
    int32_t found, xq, yq;
    memset(a8w, 0, sizeof a8w);
    a8[2 * 8 + 3] = 1;
    expect("lines.cos_sin_ok", fxs_lines_cos_sin(32768, 14, &c, &sn) == FXS_OK && c == 0 && sn == 16384 ? FXS_OK : -1,
           FXS_OK);
    expect("lines.cos_sin_frac_7", fxs_lines_cos_sin(0, 7, &c, &sn), FXS_E_BAD_PARAMETER);
    expect("lines.cos_sin_frac_15", fxs_lines_cos_sin(0, 15, &c, &sn), FXS_E_BAD_PARAMETER);
    expect("lines.cos_sin_null", fxs_lines_cos_sin(0, 14, 0, &sn), FXS_E_NULL_POINTER);
    expect("lines.cos_sin_same_output", fxs_lines_cos_sin(0, 14, &c, &c), FXS_E_OVERLAP);
    expect("lines.init_ok", fxs_lines_accumulator_init(&acc, &p, cells, 20, trig, 8), FXS_OK);
    expect("lines.init_cells_short", fxs_lines_accumulator_init(&acc, &p, cells, 19, trig, 8), FXS_E_BUFFER_TOO_SHORT);
    expect("lines.init_trig_short", fxs_lines_accumulator_init(&acc, &p, cells, 20, trig, 7), FXS_E_BUFFER_TOO_SHORT);
    expect("lines.init_null_params", fxs_lines_accumulator_init(&acc, 0, cells, 20, trig, 8), FXS_E_NULL_POINTER);
    expect("lines.init_trig_in_cells",
           fxs_lines_accumulator_init(&acc, &p, cells, 20, (int16_t *)(void *)(cells + 4), 8), FXS_E_OVERLAP);
    q = p;
    q.rho_bins = 4;
    expect("lines.init_rho_bins_even", init_acc(&acc, &q), FXS_E_BAD_PARAMETER);
    q = p;
    q.width = 0;
    expect("lines.init_zero_width", init_acc(&acc, &q), FXS_E_ZERO_SIZE);
    q = p;
    q.height = 5000;
    expect("lines.init_height_5000", init_acc(&acc, &q), FXS_E_TOO_LARGE);
    q = p;
    q.theta_step_log2 = 3;
    expect("lines.init_theta_step_3", init_acc(&acc, &q), FXS_E_BAD_PARAMETER);
    q = p;
    q.theta_bins = 5;
    expect("lines.init_window_above_180", fxs_lines_accumulator_init(&acc, &q, cells, 25, trig, 10),
           FXS_E_BAD_PARAMETER);
    q = p;
    q.gate = 40000;
    expect("lines.init_gate_40000", init_acc(&acc, &q), FXS_E_BAD_PARAMETER);
    q = p;
    q.weight_shift = -2;
    expect("lines.init_weight_shift_-2", fxs_lines_accumulator_init(&acc, &q, cells, 20, trig, 8),
           FXS_E_BAD_PARAMETER);
    q = p;
    q.theta_start = -1;
    expect("lines.init_negative_theta_start", init_acc(&acc, &q), FXS_E_NEGATIVE);
    expect("lines.init_again", fxs_lines_accumulator_init(&acc, &p, cells, 20, trig, 8), FXS_OK);
    expect("lines.row_out_of_order", fxs_lines_vote_row(&acc, 1, a8, 8, 0, 0, 0, 0, 0, 0), FXS_E_STREAM_ORDER);
    expect("lines.row_short", fxs_lines_vote_row(&acc, 0, a8, 7, 0, 0, 0, 0, 0, 0), FXS_E_BUFFER_TOO_SHORT);
    expect("lines.row_negative", fxs_lines_vote_row(&acc, -1, a8, 8, 0, 0, 0, 0, 0, 0), FXS_E_NEGATIVE);
    expect("lines.row_null_edges", fxs_lines_vote_row(&acc, 0, 0, 8, 0, 0, 0, 0, 0, 0), FXS_E_NULL_POINTER);
    expect("lines.row_in_cells",
           fxs_lines_vote_row(&acc, 0, (const uint8_t *)(void *)cells, 8, 0, 0, 0, 0, 0, 0), FXS_E_OVERLAP);
    expect("lines.frame_ok", fxs_lines_vote_frame(&acc, &e, 0, 0, 0), FXS_OK);
    expect("lines.counts",
           fxs_lines_accumulator_counts(&acc, &n) == FXS_OK && n.points == 1 && n.next_row == 6 ? FXS_OK : -1,
           FXS_OK);
    expect("lines.row_past_height", fxs_lines_vote_row(&acc, 6, a8, 8, 0, 0, 0, 0, 0, 0), FXS_E_ROW_RANGE);
    expect("lines.frame_twice", fxs_lines_vote_frame(&acc, &e, 0, 0, 0), FXS_E_STREAM_ORDER);
    expect("lines.reset", fxs_lines_accumulator_reset(&acc), FXS_OK);
    expect("lines.frame_one_gradient", fxs_lines_vote_frame(&acc, &e, &gx, 0, 0), FXS_E_NULL_POINTER);
    {
        fxs_u8_view e2 = e;
        e2.width = 7;
        e2.stride = 7;
        expect("lines.frame_size_mismatch", fxs_lines_vote_frame(&acc, &e2, 0, 0, 0), FXS_E_SIZE_MISMATCH);
    }
    expect("lines.point_outside", fxs_lines_vote_point(&acc, 8 * 16, 0, -1, 1), FXS_E_POINT_OUTSIDE);
    expect("lines.point_angle_65536", fxs_lines_vote_point(&acc, 0, 0, 65536, 1), FXS_E_BAD_PARAMETER);
    expect("lines.point_ok", fxs_lines_vote_point(&acc, 3 * 16, 2 * 16, -1, 1), FXS_OK);
    expect("lines.peaks_ok", fxs_lines_peaks(&acc, &pp, pk, 4, &found) == FXS_OK && found >= 1 ? FXS_OK : -1,
           FXS_OK);
    expect("lines.peaks_none_wanted", fxs_lines_peaks(&acc, &pp, pk, 0, &found), FXS_E_BAD_PARAMETER);
    expect("lines.peaks_too_many", fxs_lines_peaks(&acc, &pp, pk, FXS_LINES_MAX_OUT + 1, &found),
           FXS_E_BAD_PARAMETER);
    pp.threshold = 0;
    expect("lines.peaks_threshold_0", fxs_lines_peaks(&acc, &pp, pk, 4, &found), FXS_E_BAD_PARAMETER);
    pp.threshold = 1;
    pp.radius_theta = 1000000000;
    expect("lines.peaks_radius_wider_than_accumulator", fxs_lines_peaks(&acc, &pp, pk, 4, &found),
           FXS_E_BAD_PARAMETER);
    pp.radius_theta = 1;
    pp.radius_rho = -1;
    expect("lines.peaks_negative_radius", fxs_lines_peaks(&acc, &pp, pk, 4, &found), FXS_E_NEGATIVE);
    pp.radius_rho = 1;
    expect("lines.peaks_into_cells", fxs_lines_peaks(&acc, &pp, (fxs_line_peak *)(void *)cells, 2, &found),
           FXS_E_OVERLAP);
    memset(&zero, 0, sizeof zero);
    expect("lines.peaks_not_initialised", fxs_lines_peaks(&zero, &pp, pk, 4, &found), FXS_E_NOT_INITIALISED);
    expect("lines.grid_init", fxs_warp_control_grid_init(&grid, ident, 18, &g, 2), FXS_OK);
    expect("lines.correct_point_ok",
           fxs_lines_correct_point(&grid, 3, 2, &xq, &yq) == FXS_OK && xq == 48 && yq == 32 ? FXS_OK : -1, FXS_OK);
    expect("lines.correct_point_outside", fxs_lines_correct_point(&grid, 8, 0, &xq, &yq), FXS_E_POINT_OUTSIDE);
    expect("lines.correct_point_negative", fxs_lines_correct_point(&grid, -1, 0, &xq, &yq), FXS_E_NEGATIVE);
    expect("lines.reset_again", fxs_lines_accumulator_reset(&acc), FXS_OK);
    expect("lines.corrected_row_ok", fxs_lines_vote_row_corrected(&acc, 0, a8, 8, 0, 0, 0, 0, 0, 0, &grid), FXS_OK);
    expect("lines.corrected_row_grid_zeroed",
           fxs_lines_vote_row_corrected(&acc, 1, a8, 8, 0, 0, 0, 0, 0, 0, (const fxs_control_grid *)(void *)&zero),
           FXS_E_NOT_INITIALISED);
    g.src_height = 8;
    expect("lines.grid_init_8x8", fxs_warp_control_grid_init(&grid, ident, 18, &g, 2), FXS_OK);
    expect("lines.corrected_grid_size_mismatch",
           fxs_lines_vote_row_corrected(&acc, 1, a8, 8, 0, 0, 0, 0, 0, 0, &grid), FXS_E_SIZE_MISMATCH);
    q = p;
    q.gate = 100;
    expect("lines.init_gated", fxs_lines_accumulator_init(&acc, &q, cells, 20, trig, 8), FXS_OK);
    expect("lines.gated_row_without_gradient", fxs_lines_vote_row(&acc, 0, a8, 8, 0, 0, 0, 0, 0, 0),
           FXS_E_BUFFER_TOO_SHORT);
    expect("lines.gated_frame_ok", fxs_lines_vote_frame(&acc, &e, &gx, &gy, 0), FXS_OK);
    expect("lines.point_gated_without_angle", fxs_lines_vote_point(&acc, 0, 0, -1, 1), FXS_E_BAD_PARAMETER);
    expect("lines.segments_ok", fxs_lines_segments(&e, &line, &sp, seg, 4, &found) == FXS_OK && found == 1 ? FXS_OK : -1,
           FXS_OK);
    sp.tolerance = 4;
    expect("lines.segments_tolerance_4", fxs_lines_segments(&e, &line, &sp, seg, 4, &found), FXS_E_BAD_PARAMETER);
    sp.tolerance = 0;
    sp.min_length = 0;
    expect("lines.segments_min_length_0", fxs_lines_segments(&e, &line, &sp, seg, 4, &found), FXS_E_BAD_PARAMETER);
    sp.min_length = 1;
    expect("lines.segments_null_line", fxs_lines_segments(&e, 0, &sp, seg, 4, &found), FXS_E_NULL_POINTER);
    expect("lines.segments_into_edges",
           fxs_lines_segments(&e, &line, &sp, (fxs_segment *)(void *)a8w, 2, &found), FXS_E_OVERLAP);
    expect("lines.segments_none_wanted", fxs_lines_segments(&e, &line, &sp, seg, 0, &found), FXS_E_BAD_PARAMETER);
}

static void marking_cases(void) {
    /* The aisle camera's limits of the golden vectors. */
    const fxs_marking_limits ok = {1912, 461, -990, 10901, -1110, 1110, 114, 279, 459, 45, FXS_CONTRAST_BRIGHTER};
    fxs_marking_limits l;
    fxs_marking_line lines[FXS_MARKING_MAX_LINES + 1];
    fxs_marking_result r;
    memset(lines, 0, sizeof lines);
    expect("marking.none_offered",
           fxs_marking_select(0, 0, &ok, &r) == FXS_OK && r.found == 0 && r.left == -1 && r.candidates == 0 ? FXS_OK
                                                                                                            : -1,
           FXS_OK);
    expect("marking.null_lines", fxs_marking_select(0, 2, &ok, &r), FXS_E_NULL_POINTER);
    expect("marking.null_limits", fxs_marking_select(lines, 2, 0, &r), FXS_E_NULL_POINTER);
    expect("marking.null_result", fxs_marking_select(lines, 2, &ok, 0), FXS_E_NULL_POINTER);
    expect("marking.too_many_lines", fxs_marking_select(lines, FXS_MARKING_MAX_LINES + 1, &ok, &r),
           FXS_E_BAD_PARAMETER);
    expect("marking.result_over_lines", fxs_marking_select(lines, 4, &ok, (fxs_marking_result *)(void *)lines),
           FXS_E_OVERLAP);
    lines[1].polarity = 2;
    expect("marking.polarity_2", fxs_marking_select(lines, 2, &ok, &r), FXS_E_BAD_PARAMETER);
    lines[1].polarity = -1;
    expect("marking.two_lines_ok", fxs_marking_select(lines, 2, &ok, &r), FXS_OK);
    l = ok;
    l.contrast = 3;
    expect("marking.contrast_3", fxs_marking_select(lines, 2, &l, &r), FXS_E_BAD_PARAMETER);
    l = ok;
    l.max_tilt = 21846;
    expect("marking.max_tilt_above_60_degrees", fxs_marking_select(lines, 2, &l, &r), FXS_E_BAD_PARAMETER);
    l.max_tilt = -1;
    expect("marking.negative_max_tilt", fxs_marking_select(lines, 2, &l, &r), FXS_E_NEGATIVE);
    l = ok;
    l.far_row_q4 = l.near_row_q4;
    expect("marking.far_row_not_above_near", fxs_marking_select(lines, 2, &l, &r), FXS_E_BAD_PARAMETER);
    l = ok;
    l.near_sep_min_q4 = 0;
    expect("marking.near_sep_min_0", fxs_marking_select(lines, 2, &l, &r), FXS_E_BAD_PARAMETER);
    l = ok;
    l.converge_tol_q4 = -1;
    expect("marking.negative_tolerance", fxs_marking_select(lines, 2, &l, &r), FXS_E_BAD_PARAMETER);
}

static void tracker_cases(void) {
    const fxs_track_config ok = {{64, 66, 262144}, {11881, 66, 65536}, 2358, 3, 5, 40, 0, 1912, 90, 15, 8, 24};
    fxs_track_config c;
    fxs_tracker t, zero;
    fxs_detection d[FXS_TRACK_MAX_DETECTIONS + 1];
    fxs_frame_report r;
    int32_t w[FXS_TRACK_WORDS];
    memset(d, 0, sizeof d);
    memset(&zero, 0, sizeof zero);
    d[0].rho_q4 = 160;
    d[0].weight = 100;
    expect("track.init_ok", fxs_tracker_init(&t, &ok), FXS_OK);
    expect("track.init_null_config", fxs_tracker_init(&t, 0), FXS_E_NULL_POINTER);
    expect("track.init_null_tracker", fxs_tracker_init(0, &ok), FXS_E_NULL_POINTER);
    expect("track.init_misaligned", fxs_tracker_init((fxs_tracker *)(void *)(a8 + 4), &ok), FXS_E_MISALIGNED);
    c = ok;
    c.confirm_hits = 0;
    expect("track.confirm_hits_0", fxs_tracker_init(&t, &c), FXS_E_BAD_PARAMETER);
    c.confirm_hits = 256;
    expect("track.confirm_hits_256", fxs_tracker_init(&t, &c), FXS_E_BAD_PARAMETER);
    c = ok;
    c.max_missed = -1;
    expect("track.negative_max_missed", fxs_tracker_init(&t, &c), FXS_E_NEGATIVE);
    c = ok;
    c.warn_horizon = 1025;
    expect("track.warn_horizon_1025", fxs_tracker_init(&t, &c), FXS_E_BAD_PARAMETER);
    c = ok;
    c.rho.meas_var = 0;
    expect("track.meas_var_0", fxs_tracker_init(&t, &c), FXS_E_BAD_PARAMETER);
    c = ok;
    c.gate_q8 = 0;
    expect("track.gate_0", fxs_tracker_init(&t, &c), FXS_E_BAD_PARAMETER);
    c = ok;
    c.reference_x_q4 = 1 << 17;
    expect("track.reference_outside", fxs_tracker_init(&t, &c), FXS_E_BAD_PARAMETER);
    expect("track.init_again", fxs_tracker_init(&t, &ok), FXS_OK);
    expect("track.update_ok", fxs_tracker_update(&t, 5, d, 1, &r) == FXS_OK && r.born == 1 ? FXS_OK : -1, FXS_OK);
    expect("track.slot_words", /* the new track: id 0, one hit, rho 160 (state scaled by 256) */
           fxs_tracker_slot_words(&t, 0, w, FXS_TRACK_WORDS) == FXS_OK && w[0] == 0 && w[2] == 1 && w[6] == 160 * 256
               ? FXS_OK
               : -1,
           FXS_OK);
    expect("track.frame_not_increasing", fxs_tracker_update(&t, 5, d, 1, &r), FXS_E_FRAME_ORDER);
    expect("track.too_many_detections", fxs_tracker_update(&t, 6, d, FXS_TRACK_MAX_DETECTIONS + 1, &r),
           FXS_E_BAD_PARAMETER);
    d[1].rho_q4 = 1 << 17;
    expect("track.rho_outside", fxs_tracker_update(&t, 6, d, 2, &r), FXS_E_BAD_PARAMETER);
    d[1].rho_q4 = 0;
    expect("track.null_detections", fxs_tracker_update(&t, 6, 0, 1, &r), FXS_E_NULL_POINTER);
    expect("track.no_detections_no_report", fxs_tracker_update(&t, 6, 0, 0, 0), FXS_OK);
    expect("track.report_over_detections", fxs_tracker_update(&t, 7, d, 2, (fxs_frame_report *)(void *)d),
           FXS_E_OVERLAP);
    expect("track.report_over_tracker", fxs_tracker_update(&t, 7, d, 1, (fxs_frame_report *)(void *)&t),
           FXS_E_OVERLAP);
    expect("track.empty_slot", fxs_tracker_slot_words(&t, 3, w, FXS_TRACK_WORDS) == FXS_OK && w[0] == -1 ? FXS_OK : -1,
           FXS_OK);
    expect("track.slot_4", fxs_tracker_slot_words(&t, FXS_TRACK_SLOTS, w, FXS_TRACK_WORDS), FXS_E_BAD_PARAMETER);
    expect("track.negative_slot", fxs_tracker_slot_words(&t, -1, w, FXS_TRACK_WORDS), FXS_E_NEGATIVE);
    expect("track.words_short", fxs_tracker_slot_words(&t, 0, w, FXS_TRACK_WORDS - 1), FXS_E_BUFFER_TOO_SHORT);
    expect("track.not_initialised", fxs_tracker_update(&zero, 1, d, 1, &r), FXS_E_NOT_INITIALISED);
    expect("track.reset", fxs_tracker_reset(&t), FXS_OK);
    expect("track.after_reset_any_frame", fxs_tracker_update(&t, 1, d, 1, &r), FXS_OK);
}

static fxs_edge_stream es, es_zero;

static void edge_stream_cases(void) {
    fxs_edge_config demo, c;
    fxs_edge_report r;
    fxs_edge_point pts[4];
    uintptr_t got;
    int32_t n;
    uint8_t row[16];
    memset(row, 0, sizeof row);
    expect("edge_stream.demo_config", fxs_edge_stream_demo_config(&demo), FXS_OK);
    expect("edge_stream.demo_config_null", fxs_edge_stream_demo_config(0), FXS_E_NULL_POINTER);
    expect("edge_stream.init_ok", fxs_edge_stream_init(&es, &demo, 16, 2), FXS_OK);
    expect("edge_stream.points_before_finish", fxs_edge_stream_points(&es, 0, pts, 4, &got), FXS_E_STREAM_ORDER);
    expect("edge_stream.finish_before_rows", fxs_edge_stream_finish(&es, &r), FXS_E_ROW_COUNT);
    expect("edge_stream.finish_short_without_rows", fxs_edge_stream_finish_short(&es, &r), FXS_E_STREAM_ORDER);
    expect("edge_stream.row_too_short", fxs_edge_stream_push_row(&es, row, 15, &n), FXS_E_ROW_LENGTH);
    expect("edge_stream.first_row_no_count", fxs_edge_stream_push_row(&es, row, 16, 0),
           FXS_OK);
    expect("edge_stream.row_null", fxs_edge_stream_push_row(&es, 0, 16, &n), FXS_E_NULL_POINTER);
    expect("edge_stream.count_over_row", fxs_edge_stream_push_row(&es, row, 16, (int32_t *)(void *)row),
           FXS_E_OVERLAP);
    expect("edge_stream.second_row",
           fxs_edge_stream_push_row(&es, row, 16, &n) == FXS_OK && n == 2 ? FXS_OK : -1, FXS_OK);
    expect("edge_stream.row_past_height", fxs_edge_stream_push_row(&es, row, 16, &n), FXS_E_STREAM_ORDER);
    expect("edge_stream.finish",
           fxs_edge_stream_finish(&es, &r) == FXS_OK && r.width == 16 && r.height == 2 && r.edge_points == 0 ? FXS_OK
                                                                                                               : -1,
           FXS_OK);
    expect("edge_stream.points_none",
           fxs_edge_stream_points(&es, 0, pts, 4, &got) == FXS_OK && got == 0 ? FXS_OK : -1, FXS_OK);
    expect("edge_stream.edge_row_short", fxs_edge_stream_edge_row(&es, 0, row, 15), FXS_E_BUFFER_TOO_SHORT);
    expect("edge_stream.edge_row_past_height", fxs_edge_stream_edge_row(&es, 2, row, 16), FXS_E_ROW_RANGE);
    expect("edge_stream.edge_row_negative", fxs_edge_stream_edge_row(&es, -1, row, 16), FXS_E_NEGATIVE);
    expect("edge_stream.edge_row_into_stream", fxs_edge_stream_edge_row(&es, 0, es.bytes + 64, 16), FXS_E_OVERLAP);
    expect("edge_stream.reset", fxs_edge_stream_reset(&es), FXS_OK);
    expect("edge_stream.candidate_budget", fxs_edge_stream_set_candidate_budget(&es, 4096), FXS_OK);
    expect("edge_stream.candidate_budget_null", fxs_edge_stream_set_candidate_budget(NULL, 4096),
           FXS_E_NULL_POINTER);
    expect("edge_stream.candidate_budget_not_initialised",
           fxs_edge_stream_set_candidate_budget(&es_zero, 4096), FXS_E_NOT_INITIALISED);
    expect("edge_stream.not_initialised", fxs_edge_stream_push_row(&es_zero, row, 16, &n), FXS_E_NOT_INITIALISED);
    expect("edge_stream.width_above_capacity", fxs_edge_stream_init(&es, &demo, FXS_EDGE_STREAM_MAX_WIDTH + 1, 2),
           FXS_E_BUFFER_TOO_SHORT);
    expect("edge_stream.failed_init_leaves_uninitialised", fxs_edge_stream_reset(&es), FXS_E_NOT_INITIALISED);
    expect("edge_stream.map_above_capacity", fxs_edge_stream_init(&es, &demo, 320, 241), FXS_E_BUFFER_TOO_SHORT);
    expect("edge_stream.zero_height", fxs_edge_stream_init(&es, &demo, 16, 0), FXS_E_ZERO_SIZE);
    expect("edge_stream.negative_width", fxs_edge_stream_init(&es, &demo, -16, 2), FXS_E_NEGATIVE);
    expect("edge_stream.null_config", fxs_edge_stream_init(&es, 0, 16, 2), FXS_E_NULL_POINTER);
    c = demo;
    c.smoothing = 5;
    expect("edge_stream.smoothing_5", fxs_edge_stream_init(&es, &c, 16, 2), FXS_E_BAD_PARAMETER);
    c = demo;
    c.gradient_operator = 2;
    expect("edge_stream.operator_2", fxs_edge_stream_init(&es, &c, 16, 2), FXS_E_BAD_PARAMETER);
    c = demo;
    c.magnitude = -1;
    expect("edge_stream.magnitude_-1", fxs_edge_stream_init(&es, &c, 16, 2), FXS_E_BAD_PARAMETER);
    c = demo;
    c.frac_bits = 17;
    expect("edge_stream.frac_bits_above_twice_shift", fxs_edge_stream_init(&es, &c, 16, 2), FXS_E_BAD_PARAMETER);
    c = demo;
    c.low = 200;
    c.high = 100;
    expect("edge_stream.low_above_high", fxs_edge_stream_init(&es, &c, 16, 2), FXS_E_THRESHOLD_ORDER);
    c = demo;
    c.high_permille = 1000;
    expect("edge_stream.permille_1000", fxs_edge_stream_init(&es, &c, 16, 2), FXS_E_BAD_PARAMETER);
    c = demo;
    c.thinning = FXS_THINNING_AT_MOST;
    c.thinning_cap = 0;
    expect("edge_stream.thinning_cap_0", fxs_edge_stream_init(&es, &c, 16, 2), FXS_E_BAD_PARAMETER);
    c.thinning_cap = 65536;
    expect("edge_stream.thinning_cap_65536", fxs_edge_stream_init(&es, &c, 16, 2), FXS_E_BAD_PARAMETER);
    c = demo;
    c.suppression = 2;
    expect("edge_stream.suppression_2", fxs_edge_stream_init(&es, &c, 16, 2), FXS_E_BAD_PARAMETER);
    c.suppression = -1;
    expect("edge_stream.suppression_-1", fxs_edge_stream_init(&es, &c, 16, 2), FXS_E_BAD_PARAMETER);
    c.suppression = FXS_SUPPRESSION_INTERPOLATED;
    expect("edge_stream.suppression_interpolated", fxs_edge_stream_init(&es, &c, 16, 2), FXS_OK);
    c = demo;
    c.threshold_rule = 2;
    expect("edge_stream.rule_2", fxs_edge_stream_init(&es, &c, 16, 2), FXS_E_BAD_PARAMETER);
    c.threshold_rule = FXS_THRESHOLDS_FIXED;
    expect("edge_stream.fixed_ok", fxs_edge_stream_init(&es, &c, 16, 2), FXS_OK);
}

/* An 8 x 8 identity grid, step 4, F = 2 (3 x 3 points), for the grid
 * stream and the point job. */
static const int32_t identity8[18] = {0, 0, 16, 0, 32, 0, 0, 16, 16, 16, 32, 16, 0, 32, 16, 32, 32, 32};

static void grid_stream_cases(void) {
    fxs_warp_geometry g = {8, 8, 8, 8, 2};
    fxs_control_grid grid, grid_zero;
    fxs_grid_stream st, st_zero;
    uintptr_t len = 0;
    int32_t n = 0, first = 0, rows = 0, fin = -1, done = 0, same = 1;
    uint8_t ring[64], src[64], out[64];
    fxs_u8_view_mut one = {out, 8, 8, 1, 8};
    memset(&grid_zero, 0, sizeof grid_zero);
    memset(&st_zero, 0, sizeof st_zero);
    for (int32_t i = 0; i < 64; i++) src[i] = (uint8_t)(3 * i + 1);
    expect("grid_stream.grid", fxs_warp_control_grid_init(&grid, identity8, 18, &g, 2), FXS_OK);
    expect("grid_stream.ring_len",
           fxs_warp_grid_stream_ring_len(&grid, 1, 1, &len) == FXS_OK && len == 16 ? FXS_OK : -1, FXS_OK);
    expect("grid_stream.ring_len_strip4",
           fxs_warp_grid_stream_ring_len(&grid, 2, 4, &len) == FXS_OK && len == 80 ? FXS_OK : -1, FXS_OK);
    expect("grid_stream.ring_len_channels_5", fxs_warp_grid_stream_ring_len(&grid, 5, 1, &len),
           FXS_E_UNSUPPORTED_CHANNELS);
    expect("grid_stream.ring_len_negative_channels", fxs_warp_grid_stream_ring_len(&grid, -1, 1, &len), FXS_E_NEGATIVE);
    expect("grid_stream.ring_len_strip_0", fxs_warp_grid_stream_ring_len(&grid, 1, 0, &len), FXS_E_BAD_PARAMETER);
    expect("grid_stream.ring_len_null", fxs_warp_grid_stream_ring_len(&grid, 1, 1, 0), FXS_E_NULL_POINTER);
    expect("grid_stream.ring_len_grid_not_initialised", fxs_warp_grid_stream_ring_len(&grid_zero, 1, 1, &len),
           FXS_E_NOT_INITIALISED);
    expect("grid_stream.init_null_stream", fxs_warp_grid_stream_init(0, &grid, ring, 16, 1, 1, 0), FXS_E_NULL_POINTER);
    expect("grid_stream.init_misaligned",
           fxs_warp_grid_stream_init((fxs_grid_stream *)(void *)(a8 + 4), &grid, ring, 16, 1, 1, 0), FXS_E_MISALIGNED);
    expect("grid_stream.init_null_grid", fxs_warp_grid_stream_init(&st, 0, ring, 16, 1, 1, 0), FXS_E_NULL_POINTER);
    expect("grid_stream.init_grid_not_initialised", fxs_warp_grid_stream_init(&st, &grid_zero, ring, 16, 1, 1, 0),
           FXS_E_NOT_INITIALISED);
    expect("grid_stream.init_null_ring", fxs_warp_grid_stream_init(&st, &grid, 0, 16, 1, 1, 0), FXS_E_NULL_POINTER);
    expect("grid_stream.ring_too_short", fxs_warp_grid_stream_init(&st, &grid, ring, 15, 1, 1, 0),
           FXS_E_BUFFER_TOO_SHORT);
    expect("grid_stream.ring_too_short_for_strips", fxs_warp_grid_stream_init(&st, &grid, ring, 32, 1, 4, 0),
           FXS_E_BUFFER_TOO_SHORT);
    expect("grid_stream.channels_0", fxs_warp_grid_stream_init(&st, &grid, ring, 16, 0, 1, 0),
           FXS_E_UNSUPPORTED_CHANNELS);
    expect("grid_stream.channels_5", fxs_warp_grid_stream_init(&st, &grid, ring, 64, 5, 1, 0),
           FXS_E_UNSUPPORTED_CHANNELS);
    expect("grid_stream.strip_0", fxs_warp_grid_stream_init(&st, &grid, ring, 16, 1, 0, 0), FXS_E_BAD_PARAMETER);
    expect("grid_stream.negative_strip", fxs_warp_grid_stream_init(&st, &grid, ring, 16, 1, -1, 0), FXS_E_NEGATIVE);
    expect("grid_stream.border_300", fxs_warp_grid_stream_init(&st, &grid, ring, 16, 1, 1, 300), FXS_E_BAD_PARAMETER);
    expect("grid_stream.ring_over_points",
           fxs_warp_grid_stream_init(&st, &grid, (uint8_t *)(uintptr_t)identity8, 16, 1, 1, 0), FXS_E_OVERLAP);
    expect("grid_stream.ring_over_stream", fxs_warp_grid_stream_init(&st, &grid, st.bytes, 16, 1, 1, 0),
           FXS_E_OVERLAP);
    expect("grid_stream.ring_over_grid", fxs_warp_grid_stream_init(&st, &grid, grid.bytes, 16, 1, 1, 0),
           FXS_E_OVERLAP);
    expect("grid_stream.init", fxs_warp_grid_stream_init(&st, &grid, ring, 16, 1, 1, FXS_BORDER_CLAMP), FXS_OK);
    expect("grid_stream.failed_init_keeps_stream",
           fxs_warp_grid_stream_init(&st, &grid, ring, 15, 1, 1, 0) == FXS_E_BUFFER_TOO_SHORT &&
                   fxs_warp_grid_stream_finished(&st, &fin) == FXS_OK && fin == 0
               ? FXS_OK
               : -1,
           FXS_OK);
    expect("grid_stream.strip_before_rows",
           fxs_warp_grid_stream_next_strip(&st, &one, &first, &rows) == FXS_OK && rows == 0 && first == -1 ? FXS_OK : -1,
           FXS_OK);
    expect("grid_stream.row_too_short", fxs_warp_grid_stream_push_row(&st, src, 7, &n), FXS_E_ROW_LENGTH);
    expect("grid_stream.row_too_long", fxs_warp_grid_stream_push_row(&st, src, 9, &n), FXS_E_ROW_LENGTH);
    expect("grid_stream.row_null", fxs_warp_grid_stream_push_row(&st, 0, 8, &n), FXS_E_NULL_POINTER);
    expect("grid_stream.row_over_ring", fxs_warp_grid_stream_push_row(&st, ring + 4, 8, &n), FXS_E_OVERLAP);
    expect("grid_stream.row_over_stream", fxs_warp_grid_stream_push_row(&st, st.bytes, 8, &n), FXS_E_OVERLAP);
    expect("grid_stream.count_over_row", fxs_warp_grid_stream_push_row(&st, src, 8, (int32_t *)(void *)src),
           FXS_E_OVERLAP);
    expect("grid_stream.count_over_points",
           fxs_warp_grid_stream_push_row(&st, src, 8, (int32_t *)(uintptr_t)identity8), FXS_E_OVERLAP);
    expect("grid_stream.row_0", fxs_warp_grid_stream_push_row(&st, src, 8, &n) == FXS_OK && n == 1 ? FXS_OK : -1,
           FXS_OK);
    expect("grid_stream.row_1_no_count", fxs_warp_grid_stream_push_row(&st, src + 8, 8, 0), FXS_OK);
    expect("grid_stream.row_while_strip_ready", fxs_warp_grid_stream_push_row(&st, src + 16, 8, &n),
           FXS_E_STREAM_ORDER);
    {
        fxs_u8_view_mut narrow = {out, 8, 7, 1, 8}, tall = {out, 8, 8, 2, 8}, huge = {out, 8, 8, 2, 1 << 30};
        fxs_u8_view_mut neg = {out, 8, 8, -1, 8}, over_ring = {ring, 8, 8, 1, 8}, over_stream = {st.bytes, 8, 8, 1, 8};
        fxs_u8_view_mut over_points = {(uint8_t *)(uintptr_t)identity8, 8, 8, 1, 8};
        expect("grid_stream.strip_wrong_width", fxs_warp_grid_stream_next_strip(&st, &narrow, &first, &rows),
               FXS_E_SIZE_MISMATCH);
        expect("grid_stream.strip_short_buffer", fxs_warp_grid_stream_next_strip(&st, &tall, &first, &rows),
               FXS_E_BUFFER_TOO_SHORT);
        expect("grid_stream.strip_layout_overflow", fxs_warp_grid_stream_next_strip(&st, &huge, &first, &rows),
               FXS_E_LAYOUT_OVERFLOW);
        expect("grid_stream.strip_negative_height", fxs_warp_grid_stream_next_strip(&st, &neg, &first, &rows),
               FXS_E_NEGATIVE);
        expect("grid_stream.strip_null", fxs_warp_grid_stream_next_strip(&st, 0, &first, &rows), FXS_E_NULL_POINTER);
        expect("grid_stream.strip_null_first_row", fxs_warp_grid_stream_next_strip(&st, &one, 0, &rows),
               FXS_E_NULL_POINTER);
        expect("grid_stream.strip_null_rows", fxs_warp_grid_stream_next_strip(&st, &one, &first, 0), FXS_E_NULL_POINTER);
        expect("grid_stream.strip_over_ring", fxs_warp_grid_stream_next_strip(&st, &over_ring, &first, &rows),
               FXS_E_OVERLAP);
        expect("grid_stream.strip_over_stream", fxs_warp_grid_stream_next_strip(&st, &over_stream, &first, &rows),
               FXS_E_OVERLAP);
        expect("grid_stream.strip_over_points", fxs_warp_grid_stream_next_strip(&st, &over_points, &first, &rows),
               FXS_E_OVERLAP);
        expect("grid_stream.rows_over_first_row",
               fxs_warp_grid_stream_next_strip(&st, &one, &first, &first), FXS_E_OVERLAP);
    }
    /* The rest of the frame: an identity grid gives the source back. */
    for (int32_t y = 2; y <= 8 && same; y++) {
        for (;;) {
            fxs_u8_view_mut d = {out + 8 * done, 8, 8, 1, 8};
            if (done == 8 || fxs_warp_grid_stream_next_strip(&st, &d, &first, &rows) != FXS_OK) break;
            if (rows == 0) break;
            same = same && first == done && rows == 1;
            done += rows;
        }
        if (y < 8) same = same && fxs_warp_grid_stream_push_row(&st, src + 8 * y, 8, &n) == FXS_OK && n == y + 1;
    }
    expect("grid_stream.identity_frame",
           same && done == 8 && memcmp(out, src, 64) == 0 && fxs_warp_grid_stream_finished(&st, &fin) == FXS_OK &&
                   fin == 1
               ? FXS_OK
               : -1,
           FXS_OK);
    expect("grid_stream.strip_after_frame",
           fxs_warp_grid_stream_next_strip(&st, &one, &first, &rows) == FXS_OK && rows == 0 ? FXS_OK : -1, FXS_OK);
    expect("grid_stream.row_past_height", fxs_warp_grid_stream_push_row(&st, src, 8, &n), FXS_E_STREAM_ORDER);
    expect("grid_stream.finished_null", fxs_warp_grid_stream_finished(&st, 0), FXS_E_NULL_POINTER);
    expect("grid_stream.reset", fxs_warp_grid_stream_reset(&st), FXS_OK);
    expect("grid_stream.row_after_reset", fxs_warp_grid_stream_push_row(&st, src, 8, &n) == FXS_OK && n == 1 ? FXS_OK : -1,
           FXS_OK);
    expect("grid_stream.not_initialised", fxs_warp_grid_stream_push_row(&st_zero, src, 8, &n), FXS_E_NOT_INITIALISED);
    expect("grid_stream.reset_not_initialised", fxs_warp_grid_stream_reset(&st_zero), FXS_E_NOT_INITIALISED);
    expect("grid_stream.strip_not_initialised", fxs_warp_grid_stream_next_strip(&st_zero, &one, &first, &rows),
           FXS_E_NOT_INITIALISED);
    expect("grid_stream.finished_not_initialised", fxs_warp_grid_stream_finished(&st_zero, &fin),
           FXS_E_NOT_INITIALISED);
}

static fxs_point_job pj, pj_zero;

/* fxs_point_job_init of pj for a 16 x 12 frame with one field of `demo` changed. */
#define JOB_INIT(name, field, value, want)                                                                            \
    do {                                                                                                          \
        c = demo;                                                                                                 \
        c.field = (value);                                                                                        \
        expect("point_job." name, fxs_point_job_init(&pj, &c, 16, 12), want);                                     \
    } while (0)

static void point_job_cases(void) {
    fxs_point_job_config demo, c;
    fxs_point_job_report r;
    fxs_warp_geometry g = {8, 8, 8, 8, 2};
    fxs_control_grid grid, grid_zero;
    fxs_line_peak pk[FXS_POINT_JOB_PEAKS];
    fxs_marking_line ln[FXS_POINT_JOB_PEAKS];
    int32_t n = 0, found = -1, w[FXS_TRACK_WORDS];
    uint8_t row[16];
    memset(row, 40, sizeof row);
    memset(&grid_zero, 0, sizeof grid_zero);
    expect("point_job.demo_config",
           fxs_point_job_demo_config(&demo) == FXS_OK && demo.vote.width == 320 && demo.vote.height == 240 &&
                   demo.vote.weight_shift == -1
               ? FXS_OK
               : -1,
           FXS_OK);
    expect("point_job.demo_config_null", fxs_point_job_demo_config(0), FXS_E_NULL_POINTER);
    expect("point_job.demo_is_qvga", fxs_point_job_init(&pj, &demo, 320, 240), FXS_OK);
    demo.vote.width = 16;
    demo.vote.height = 12;
    expect("point_job.init", fxs_point_job_init(&pj, &demo, 16, 12), FXS_OK);
    expect("point_job.init_null_job", fxs_point_job_init(0, &demo, 16, 12), FXS_E_NULL_POINTER);
    expect("point_job.init_misaligned", fxs_point_job_init((fxs_point_job *)(void *)(a8 + 4), &demo, 16, 12),
           FXS_E_MISALIGNED);
    expect("point_job.init_null_config", fxs_point_job_init(&pj, 0, 16, 12), FXS_E_NULL_POINTER);
    expect("point_job.init_config_in_job", fxs_point_job_init(&pj, (const fxs_point_job_config *)(void *)pj.bytes, 16, 12),
           FXS_E_OVERLAP);
    expect("point_job.width_above_capacity", fxs_point_job_init(&pj, &demo, FXS_POINT_JOB_MAX_WIDTH + 1, 12),
           FXS_E_BUFFER_TOO_SHORT);
    expect("point_job.failed_init_leaves_uninitialised", fxs_point_job_reset(&pj), FXS_E_NOT_INITIALISED);
    expect("point_job.map_above_capacity", fxs_point_job_init(&pj, &demo, 320, 241), FXS_E_BUFFER_TOO_SHORT);
    expect("point_job.zero_height", fxs_point_job_init(&pj, &demo, 16, 0), FXS_E_ZERO_SIZE);
    expect("point_job.negative_width", fxs_point_job_init(&pj, &demo, -16, 12), FXS_E_NEGATIVE);
    JOB_INIT("weighted_votes", vote.weight_shift, 2, FXS_E_BAD_PARAMETER);
    JOB_INIT("gate_with_coarse_step", vote.theta_step_log2, 8, FXS_E_BAD_PARAMETER);
    JOB_INIT("theta_bins_above_capacity", vote.theta_bins, FXS_POINT_JOB_THETA_BINS + 1, FXS_E_BUFFER_TOO_SHORT);
    JOB_INIT("vote_cells_above_capacity", vote.rho_bins, FXS_POINT_JOB_RHO_BINS + 2, FXS_E_BUFFER_TOO_SHORT);
    JOB_INIT("rho_bins_even", vote.rho_bins, 200, FXS_E_BAD_PARAMETER);
    JOB_INIT("negative_gate", vote.gate, -1, FXS_E_NEGATIVE);
    JOB_INIT("vote_width_0", vote.width, 0, FXS_E_ZERO_SIZE);
    JOB_INIT("peak_threshold_0", peaks.threshold, 0, FXS_E_BAD_PARAMETER);
    JOB_INIT("peak_threshold_65536", peaks.threshold, 65536, FXS_E_BAD_PARAMETER);
    JOB_INIT("negative_peak_radius", peaks.radius_rho, -1, FXS_E_NEGATIVE);
    JOB_INIT("peak_radius_wider_than_accumulator", peaks.radius_theta, 1000000000, FXS_E_BAD_PARAMETER);
    JOB_INIT("far_row_below_near_row", marking.far_row_q4, demo.marking.near_row_q4 + 16, FXS_E_BAD_PARAMETER);
    JOB_INIT("contrast_3", marking.contrast, 3, FXS_E_BAD_PARAMETER);
    JOB_INIT("confirm_hits_0", track.confirm_hits, 0, FXS_E_BAD_PARAMETER);
    JOB_INIT("meas_var_0", track.rho.meas_var, 0, FXS_E_BAD_PARAMETER);
    JOB_INIT("smoothing_5", edges.smoothing, 5, FXS_E_BAD_PARAMETER);
    JOB_INIT("low_above_high", edges.low, demo.edges.high + 1, FXS_E_THRESHOLD_ORDER);
    expect("point_job.init_again", fxs_point_job_init(&pj, &demo, 16, 12), FXS_OK);
    expect("point_job.finish_before_rows", fxs_point_job_finish(&pj, 0, &r), FXS_E_ROW_COUNT);
    expect("point_job.finish_short_without_rows", fxs_point_job_finish_short(&pj, 0, &r), FXS_E_STREAM_ORDER);
    expect("point_job.row_too_short", fxs_point_job_push_row(&pj, row, 15, &n), FXS_E_ROW_LENGTH);
    expect("point_job.row_null", fxs_point_job_push_row(&pj, 0, 16, &n), FXS_E_NULL_POINTER);
    expect("point_job.row_in_job", fxs_point_job_push_row(&pj, pj.bytes + 64, 16, &n), FXS_E_OVERLAP);
    expect("point_job.count_over_row", fxs_point_job_push_row(&pj, row, 16, (int32_t *)(void *)row), FXS_E_OVERLAP);
    for (int32_t y = 0; y < 12; y++) fxs_point_job_push_row(&pj, row, 16, &n);
    expect("point_job.rows_pushed", n == 12 ? FXS_OK : -1, FXS_OK);
    expect("point_job.row_past_height", fxs_point_job_push_row(&pj, row, 16, &n), FXS_E_STREAM_ORDER);
    expect("point_job.grid_init", fxs_warp_control_grid_init(&grid, identity8, 18, &g, 2), FXS_OK);
    expect("point_job.grid_of_other_size", fxs_point_job_finish(&pj, &grid, &r), FXS_E_SIZE_MISMATCH);
    expect("point_job.grid_not_initialised", fxs_point_job_finish(&pj, &grid_zero, &r), FXS_E_NOT_INITIALISED);
    expect("point_job.report_over_job", fxs_point_job_finish(&pj, 0, (fxs_point_job_report *)(void *)pj.bytes),
           FXS_E_OVERLAP);
    expect("point_job.report_over_grid", fxs_point_job_finish(&pj, &grid, (fxs_point_job_report *)(void *)grid.bytes),
           FXS_E_OVERLAP);
    expect("point_job.finish_flat_frame",
           fxs_point_job_finish(&pj, 0, &r) == FXS_OK && r.frame == 0 && r.peaks == 0 && r.voted == 0 &&
                   r.edges.width == 16 && r.edges.height == 12 && r.marking.found == 0 && r.track.warning_track == -1
               ? FXS_OK
               : -1,
           FXS_OK);
    expect("point_job.finish_twice", fxs_point_job_finish(&pj, 0, 0), FXS_E_STREAM_ORDER);
    expect("point_job.peaks_none",
           fxs_point_job_peaks(&pj, pk, FXS_POINT_JOB_PEAKS, &found) == FXS_OK && found == 0 ? FXS_OK : -1, FXS_OK);
    expect("point_job.peaks_out_len_0", fxs_point_job_peaks(&pj, pk, 0, &found), FXS_E_BAD_PARAMETER);
    expect("point_job.peaks_out_len_33", fxs_point_job_peaks(&pj, pk, FXS_LINES_MAX_OUT + 1, &found),
           FXS_E_BAD_PARAMETER);
    expect("point_job.peaks_null_found", fxs_point_job_peaks(&pj, pk, FXS_POINT_JOB_PEAKS, 0), FXS_E_NULL_POINTER);
    expect("point_job.peaks_into_job",
           fxs_point_job_peaks(&pj, (fxs_line_peak *)(void *)pj.bytes, FXS_POINT_JOB_PEAKS, &found), FXS_E_OVERLAP);
    expect("point_job.lines_none",
           fxs_point_job_lines(&pj, ln, FXS_POINT_JOB_PEAKS, &found) == FXS_OK && found == 0 ? FXS_OK : -1, FXS_OK);
    expect("point_job.lines_null", fxs_point_job_lines(&pj, 0, FXS_POINT_JOB_PEAKS, &found), FXS_E_NULL_POINTER);
    expect("point_job.found_over_lines", fxs_point_job_lines(&pj, ln, FXS_POINT_JOB_PEAKS, (int32_t *)(void *)ln),
           FXS_E_OVERLAP);
    expect("point_job.track_words_empty",
           fxs_point_job_track_words(&pj, 0, w, FXS_TRACK_WORDS) == FXS_OK && w[0] == -1 ? FXS_OK : -1, FXS_OK);
    expect("point_job.track_slot_4", fxs_point_job_track_words(&pj, FXS_POINT_JOB_TRACKS, w, FXS_TRACK_WORDS),
           FXS_E_BAD_PARAMETER);
    expect("point_job.track_negative_slot", fxs_point_job_track_words(&pj, -1, w, FXS_TRACK_WORDS), FXS_E_NEGATIVE);
    expect("point_job.track_words_short", fxs_point_job_track_words(&pj, 0, w, FXS_TRACK_WORDS - 1),
           FXS_E_BUFFER_TOO_SHORT);
    expect("point_job.track_words_into_job",
           fxs_point_job_track_words(&pj, 0, (int32_t *)(void *)pj.bytes, FXS_TRACK_WORDS), FXS_E_OVERLAP);
    fxs_point_job_push_row(&pj, row, 16, &n);
    expect("point_job.drop_frame", fxs_point_job_drop_frame(&pj), FXS_OK);
    for (int32_t y = 0; y < 5; y++) fxs_point_job_push_row(&pj, row, 16, &n);
    expect("point_job.short_frame_after_drop",
           fxs_point_job_finish_short(&pj, 0, &r) == FXS_OK && r.frame == 2 && r.edges.height == 5 ? FXS_OK : -1,
           FXS_OK);
    expect("point_job.reset", fxs_point_job_reset(&pj), FXS_OK);
    for (int32_t y = 0; y < 12; y++) fxs_point_job_push_row(&pj, row, 16, &n);
    expect("point_job.frame_0_after_reset", fxs_point_job_finish(&pj, 0, &r) == FXS_OK && r.frame == 0 ? FXS_OK : -1,
           FXS_OK);
    expect("point_job.not_initialised", fxs_point_job_push_row(&pj_zero, row, 16, &n), FXS_E_NOT_INITIALISED);
    expect("point_job.finish_not_initialised", fxs_point_job_finish(&pj_zero, 0, &r), FXS_E_NOT_INITIALISED);
    expect("point_job.drop_not_initialised", fxs_point_job_drop_frame(&pj_zero), FXS_E_NOT_INITIALISED);
    expect("point_job.peaks_not_initialised", fxs_point_job_peaks(&pj_zero, pk, 1, &found), FXS_E_NOT_INITIALISED);
    expect("point_job.storage_of_an_edge_stream", fxs_point_job_reset((fxs_point_job *)(void *)&es),
           FXS_E_NOT_INITIALISED);
}

static fxs_image_job ij, ij_zero;

/* fxs_image_job_init of ij over `grid` (16 x 12) with one field of `demo` changed. */
#define IMAGE_INIT(name, field, value, want)                                                                          \
    do {                                                                                                          \
        c = demo;                                                                                                 \
        c.field = (value);                                                                                        \
        expect("image_job." name, fxs_image_job_init(&ij, &c, &grid, ring, sizeof ringw), want);                 \
    } while (0)

/* A 16 x 12 camera frame with a bright right half. */
static void step_row(uint8_t *row) {
    for (int32_t x = 0; x < 16; x++) row[x] = x < 9 ? 30 : 220;
}

static void image_job_cases(void) {
    fxs_image_job_config demo, c;
    fxs_point_job_config pc;
    fxs_point_job_report r, rp;
    fxs_warp_geometry g = {16, 12, 16, 12, 2}, g8 = {8, 8, 8, 8, 2};
    fxs_control_grid grid, grid8, grid_zero;
    fxs_line_peak pk[FXS_POINT_JOB_PEAKS], pkp[FXS_POINT_JOB_PEAKS];
    fxs_marking_line ln[FXS_POINT_JOB_PEAKS], lnp[FXS_POINT_JOB_PEAKS];
    int32_t pts[40], n = 0, found = -1, foundp = -1, nl = -1, nlp = -1, w[FXS_TRACK_WORDS], same = 1;
    uint32_t ringw[8]; /* 32 bytes: two camera rows, word-aligned for the overlap cases */
    uint8_t *ring = (uint8_t *)(void *)ringw, row[16];
    uintptr_t len = 0;
    /* The identity grid of a 16 x 12 frame, step 4, F = 2 (5 x 4 points). */
    for (int32_t k = 0; k < 20; k++) {
        pts[2 * k] = 16 * (k % 5);
        pts[2 * k + 1] = 16 * (k / 5);
    }
    memset(row, 40, sizeof row);
    memset(&grid_zero, 0, sizeof grid_zero);
    expect("image_job.demo_config",
           fxs_image_job_demo_config(&demo) == FXS_OK && demo.border == FXS_BORDER_CLAMP &&
                   demo.job.vote.width == 320 && demo.job.vote.height == 240 && demo.job.vote.weight_shift == -1
               ? FXS_OK
               : -1,
           FXS_OK);
    expect("image_job.demo_config_null", fxs_image_job_demo_config(0), FXS_E_NULL_POINTER);
    demo.job.vote.width = 16;
    demo.job.vote.height = 12;
    expect("image_job.grid", fxs_warp_control_grid_init(&grid, pts, 40, &g, 2), FXS_OK);
    expect("image_job.grid8", fxs_warp_control_grid_init(&grid8, identity8, 18, &g8, 2), FXS_OK);
    expect("image_job.ring_len", fxs_image_job_ring_len(&grid, &len) == FXS_OK && len == 32 ? FXS_OK : -1, FXS_OK);
    expect("image_job.ring_len_null", fxs_image_job_ring_len(&grid, 0), FXS_E_NULL_POINTER);
    expect("image_job.ring_len_null_grid", fxs_image_job_ring_len(0, &len), FXS_E_NULL_POINTER);
    expect("image_job.ring_len_grid_not_initialised", fxs_image_job_ring_len(&grid_zero, &len), FXS_E_NOT_INITIALISED);
    expect("image_job.ring_len_into_grid", fxs_image_job_ring_len(&grid, (uintptr_t *)(void *)grid.bytes),
           FXS_E_OVERLAP);
    expect("image_job.init_null_job", fxs_image_job_init(0, &demo, &grid, ring, 32), FXS_E_NULL_POINTER);
    expect("image_job.init_misaligned",
           fxs_image_job_init((fxs_image_job *)(void *)(a8 + 4), &demo, &grid, ring, 32), FXS_E_MISALIGNED);
    expect("image_job.init_null_config", fxs_image_job_init(&ij, 0, &grid, ring, 32), FXS_E_NULL_POINTER);
    expect("image_job.init_null_grid", fxs_image_job_init(&ij, &demo, 0, ring, 32), FXS_E_NULL_POINTER);
    expect("image_job.init_grid_not_initialised", fxs_image_job_init(&ij, &demo, &grid_zero, ring, 32),
           FXS_E_NOT_INITIALISED);
    expect("image_job.init_null_ring", fxs_image_job_init(&ij, &demo, &grid, 0, 32), FXS_E_NULL_POINTER);
    expect("image_job.init_config_in_job",
           fxs_image_job_init(&ij, (const fxs_image_job_config *)(void *)ij.bytes, &grid, ring, 32), FXS_E_OVERLAP);
    expect("image_job.ring_over_job", fxs_image_job_init(&ij, &demo, &grid, ij.bytes + 64, 32), FXS_E_OVERLAP);
    expect("image_job.ring_over_grid", fxs_image_job_init(&ij, &demo, &grid, grid.bytes, 32), FXS_E_OVERLAP);
    expect("image_job.ring_over_points", fxs_image_job_init(&ij, &demo, &grid, (uint8_t *)(void *)pts, 32),
           FXS_E_OVERLAP);
    expect("image_job.ring_over_config", fxs_image_job_init(&ij, &demo, &grid, (uint8_t *)(void *)&demo, 32),
           FXS_E_OVERLAP);
    expect("image_job.border_300", (c = demo, c.border = 300, fxs_image_job_init(&ij, &c, &grid, ring, 32)),
           FXS_E_BAD_PARAMETER);
    expect("image_job.border_minus_2", (c = demo, c.border = -2, fxs_image_job_init(&ij, &c, &grid, ring, 32)),
           FXS_E_BAD_PARAMETER);
    expect("image_job.ring_one_byte_short", fxs_image_job_init(&ij, &demo, &grid, ring, 31), FXS_E_BUFFER_TOO_SHORT);
    expect("image_job.failed_init_leaves_uninitialised", fxs_image_job_reset(&ij), FXS_E_NOT_INITIALISED);
    expect("image_job.grid_of_other_size", fxs_image_job_init(&ij, &demo, &grid8, ring, 32), FXS_E_SIZE_MISMATCH);
    IMAGE_INIT("weighted_votes", job.vote.weight_shift, 2, FXS_E_BAD_PARAMETER);
    IMAGE_INIT("theta_bins_above_capacity", job.vote.theta_bins, FXS_POINT_JOB_THETA_BINS + 1, FXS_E_BUFFER_TOO_SHORT);
    IMAGE_INIT("vote_frame_other_than_grid", job.vote.height, 11, FXS_E_SIZE_MISMATCH);
    IMAGE_INIT("peak_threshold_0", job.peaks.threshold, 0, FXS_E_BAD_PARAMETER);
    IMAGE_INIT("meas_var_0", job.track.rho.meas_var, 0, FXS_E_BAD_PARAMETER);
    IMAGE_INIT("low_above_high", job.edges.low, demo.job.edges.high + 1, FXS_E_THRESHOLD_ORDER);
    expect("image_job.init", fxs_image_job_init(&ij, &demo, &grid, ring, 32), FXS_OK);
    expect("image_job.bad_pointer_keeps_job",
           fxs_image_job_init(&ij, &demo, &grid, 0, 32) == FXS_E_NULL_POINTER && fxs_image_job_reset(&ij) == FXS_OK
               ? FXS_OK
               : -1,
           FXS_OK);
    expect("image_job.finish_before_rows", fxs_image_job_finish(&ij, &r), FXS_E_ROW_COUNT);
    expect("image_job.finish_short_without_rows", fxs_image_job_finish_short(&ij, &r), FXS_E_STREAM_ORDER);
    expect("image_job.row_too_short", fxs_image_job_push_row(&ij, row, 15, &n), FXS_E_ROW_LENGTH);
    expect("image_job.row_too_long", fxs_image_job_push_row(&ij, a8, 17, &n), FXS_E_ROW_LENGTH);
    expect("image_job.row_null", fxs_image_job_push_row(&ij, 0, 16, &n), FXS_E_NULL_POINTER);
    expect("image_job.row_in_job", fxs_image_job_push_row(&ij, ij.bytes + 64, 16, &n), FXS_E_OVERLAP);
    expect("image_job.row_over_ring", fxs_image_job_push_row(&ij, ring + 8, 16, &n), FXS_E_OVERLAP);
    expect("image_job.count_over_ring", fxs_image_job_push_row(&ij, row, 16, (int32_t *)(void *)ringw), FXS_E_OVERLAP);
    expect("image_job.count_over_points", fxs_image_job_push_row(&ij, row, 16, pts + 4), FXS_E_OVERLAP);
    expect("image_job.finish_short_before_a_corrected_row",
           fxs_image_job_push_row(&ij, row, 16, &n) == FXS_OK && n == 1 ? fxs_image_job_finish_short(&ij, &r) : -1,
           FXS_E_STREAM_ORDER);
    /* Inputs may share memory: a row read from the grid's points. */
    expect("image_job.row_from_the_points", fxs_image_job_push_row(&ij, (const uint8_t *)(void *)pts, 16, &n) == FXS_OK
                                                    && n == 2 ? FXS_OK : -1, FXS_OK);
    for (int32_t y = 2; y < 12; y++) fxs_image_job_push_row(&ij, row, 16, &n);
    expect("image_job.rows_pushed", n == 12 ? FXS_OK : -1, FXS_OK);
    expect("image_job.row_past_height", fxs_image_job_push_row(&ij, row, 16, &n), FXS_E_STREAM_ORDER);
    expect("image_job.report_over_job", fxs_image_job_finish(&ij, (fxs_point_job_report *)(void *)ij.bytes),
           FXS_E_OVERLAP);
    expect("image_job.report_over_ring", fxs_image_job_finish(&ij, (fxs_point_job_report *)(void *)ringw),
           FXS_E_OVERLAP);
    expect("image_job.report_over_points", fxs_image_job_finish(&ij, (fxs_point_job_report *)(void *)pts),
           FXS_E_OVERLAP);
    expect("image_job.finish_frame",
           fxs_image_job_finish(&ij, &r) == FXS_OK && r.frame == 0 && r.outside == 0 && r.edges.width == 16 &&
                   r.edges.height == 12
               ? FXS_OK
               : -1,
           FXS_OK);
    expect("image_job.finish_twice", fxs_image_job_finish(&ij, 0), FXS_E_ROW_COUNT);
    expect("image_job.peaks_out_len_0", fxs_image_job_peaks(&ij, pk, 0, &found), FXS_E_BAD_PARAMETER);
    expect("image_job.peaks_null_found", fxs_image_job_peaks(&ij, pk, FXS_POINT_JOB_PEAKS, 0), FXS_E_NULL_POINTER);
    expect("image_job.peaks_into_job",
           fxs_image_job_peaks(&ij, (fxs_line_peak *)(void *)ij.bytes, FXS_POINT_JOB_PEAKS, &found), FXS_E_OVERLAP);
    expect("image_job.peaks_into_ring", fxs_image_job_peaks(&ij, (fxs_line_peak *)(void *)ringw, 1, &found),
           FXS_E_OVERLAP);
    expect("image_job.found_into_points", fxs_image_job_peaks(&ij, pk, 1, pts), FXS_E_OVERLAP);
    expect("image_job.lines_null", fxs_image_job_lines(&ij, 0, FXS_POINT_JOB_PEAKS, &found), FXS_E_NULL_POINTER);
    expect("image_job.lines_out_len_33", fxs_image_job_lines(&ij, ln, FXS_LINES_MAX_OUT + 1, &found),
           FXS_E_BAD_PARAMETER);
    expect("image_job.lines_into_points", fxs_image_job_lines(&ij, (fxs_marking_line *)(void *)pts, 1, &found),
           FXS_E_OVERLAP);
    expect("image_job.track_slot_4", fxs_image_job_track_words(&ij, FXS_POINT_JOB_TRACKS, w, FXS_TRACK_WORDS),
           FXS_E_BAD_PARAMETER);
    expect("image_job.track_negative_slot", fxs_image_job_track_words(&ij, -1, w, FXS_TRACK_WORDS), FXS_E_NEGATIVE);
    expect("image_job.track_words_short", fxs_image_job_track_words(&ij, 0, w, FXS_TRACK_WORDS - 1),
           FXS_E_BUFFER_TOO_SHORT);
    expect("image_job.track_words_into_ring", fxs_image_job_track_words(&ij, 0, (int32_t *)(void *)ringw, 8),
           FXS_E_OVERLAP);
    expect("image_job.track_words_into_points", fxs_image_job_track_words(&ij, 0, pts, FXS_TRACK_WORDS),
           FXS_E_OVERLAP);
    expect("image_job.track_words_into_job",
           fxs_image_job_track_words(&ij, 0, (int32_t *)(void *)ij.bytes, FXS_TRACK_WORDS), FXS_E_OVERLAP);
    fxs_image_job_push_row(&ij, row, 16, &n);
    expect("image_job.drop_frame", fxs_image_job_drop_frame(&ij), FXS_OK);
    for (int32_t y = 0; y < 5; y++) fxs_image_job_push_row(&ij, row, 16, &n);
    /* Five camera rows make four corrected rows: row y reads y and y + 1. */
    expect("image_job.short_frame_after_drop",
           fxs_image_job_finish_short(&ij, &r) == FXS_OK && r.frame == 2 && r.edges.height == 4 ? FXS_OK : -1,
           FXS_OK);
    expect("image_job.reset", fxs_image_job_reset(&ij), FXS_OK);
    for (int32_t y = 0; y < 12; y++) fxs_image_job_push_row(&ij, row, 16, &n);
    expect("image_job.frame_0_after_reset", fxs_image_job_finish(&ij, &r) == FXS_OK && r.frame == 0 ? FXS_OK : -1,
           FXS_OK);
    /* Through the identity grid the job is the point job on the same
     * frame: same report, peaks and track slots, frame after frame (a
     * peak threshold a 12-row frame can reach). */
    c = demo;
    c.job.peaks.threshold = 4;
    pc = c.job;
    expect("image_job.init_for_comparison",
           fxs_image_job_init(&ij, &c, &grid, ring, 32) == FXS_OK ? fxs_point_job_init(&pj, &pc, 16, 12) : -1, FXS_OK);
    step_row(row);
    for (int32_t f = 0; f < 3 && same; f++) {
        for (int32_t y = 0; y < 12; y++)
            same = same && fxs_image_job_push_row(&ij, row, 16, 0) == FXS_OK &&
                   fxs_point_job_push_row(&pj, row, 16, 0) == FXS_OK;
        same = same && fxs_image_job_finish(&ij, &r) == FXS_OK && fxs_point_job_finish(&pj, 0, &rp) == FXS_OK &&
               fxs_image_job_peaks(&ij, pk, FXS_POINT_JOB_PEAKS, &found) == FXS_OK &&
               fxs_point_job_peaks(&pj, pkp, FXS_POINT_JOB_PEAKS, &foundp) == FXS_OK;
        /* The step gives votes and a peak in frame 0; the automatic
         * thresholds it carries over find no edge in the next ones. */
        same = same && r.frame == (uint32_t)f && r.frame == rp.frame && r.voted == rp.voted &&
               (f > 0 || (r.voted == 12 && r.peaks == 1)) && r.peaks == rp.peaks && found == foundp && r.edges.edge_points == rp.edges.edge_points &&
               r.marking.found == rp.marking.found && r.track.born == rp.track.born &&
               memcmp(pk, pkp, (size_t)found * sizeof pk[0]) == 0 &&
               fxs_image_job_lines(&ij, ln, FXS_POINT_JOB_PEAKS, &nl) == FXS_OK &&
               fxs_point_job_lines(&pj, lnp, FXS_POINT_JOB_PEAKS, &nlp) == FXS_OK && nl == found && nlp == nl;
        for (int32_t i = 0; i < nl && same; i++)
            same = ln[i].rho_q4 == lnp[i].rho_q4 && ln[i].theta == lnp[i].theta && ln[i].votes == lnp[i].votes;
        for (int32_t s = 0; s < FXS_POINT_JOB_TRACKS && same; s++) {
            int32_t wp[FXS_TRACK_WORDS];
            same = fxs_image_job_track_words(&ij, s, w, FXS_TRACK_WORDS) == FXS_OK &&
                   fxs_point_job_track_words(&pj, s, wp, FXS_TRACK_WORDS) == FXS_OK && memcmp(w, wp, sizeof w) == 0;
        }
    }
    expect("image_job.identity_grid_is_the_point_job", same ? FXS_OK : -1, FXS_OK);

    expect("image_job.not_initialised", fxs_image_job_push_row(&ij_zero, row, 16, &n), FXS_E_NOT_INITIALISED);
    expect("image_job.finish_not_initialised", fxs_image_job_finish(&ij_zero, &r), FXS_E_NOT_INITIALISED);
    expect("image_job.finish_short_not_initialised", fxs_image_job_finish_short(&ij_zero, &r), FXS_E_NOT_INITIALISED);
    expect("image_job.drop_not_initialised", fxs_image_job_drop_frame(&ij_zero), FXS_E_NOT_INITIALISED);
    expect("image_job.reset_not_initialised", fxs_image_job_reset(&ij_zero), FXS_E_NOT_INITIALISED);
    expect("image_job.peaks_not_initialised", fxs_image_job_peaks(&ij_zero, pk, 1, &found), FXS_E_NOT_INITIALISED);
    expect("image_job.lines_not_initialised", fxs_image_job_lines(&ij_zero, ln, 1, &found), FXS_E_NOT_INITIALISED);
    expect("image_job.track_words_not_initialised", fxs_image_job_track_words(&ij_zero, 0, w, FXS_TRACK_WORDS),
           FXS_E_NOT_INITIALISED);
    expect("image_job.storage_of_a_point_job", fxs_image_job_reset((fxs_image_job *)(void *)&pj), FXS_E_NOT_INITIALISED);
}

int golden_bad_inputs(int32_t *n) {
    cases = failed = 0;
    statuses();
    images();
    filters();
    filter_streams();
    gradients_and_edges();
    warps();
    lines_cases();
    marking_cases();
    tracker_cases();
    edge_stream_cases();
    grid_stream_cases();
    point_job_cases();
    image_job_cases();
    *n = cases;
    return failed;
}
