#include "fixsight.h"

#define W 64
#define H 48
static uint8_t frame[W * H], ring[5 * W], row[W];
static int32_t acc[W];
static int16_t gx[W * H];

fxs_status readme_example(void) {
    fxs_filter smooth, sobel;
    fxs_filter_stream s;
    int32_t y, got;
    fxs_u8_view src = {frame, sizeof frame, W, H, W};  /* data, len, width, height, stride */
    fxs_i16_view_mut dx = {gx, W * H, W, H, W};
    fxs_status st = fxs_filter_preset(&smooth, FXS_FILTER_BINOMIAL5, FXS_BORDER_CLAMP);
    if (st == FXS_OK) st = fxs_filter_stream_init(&s, &smooth, W, H, ring, sizeof ring, acc, W);
    for (y = 0; st == FXS_OK && y < H; y++) { /* push rows as the camera delivers them */
        st = fxs_filter_stream_push_u8(&s, frame + y * W, W, row, W, &got);
        /* got >= 0: output row `got` is in `row` (2 rows behind the input) */
    }
    while (st == FXS_OK && (st = fxs_filter_stream_flush_u8(&s, row, W, &got)) == FXS_OK && got >= 0) {
        /* the last 2 output rows */
    }
    if (st == FXS_OK) st = fxs_filter_preset(&sobel, FXS_FILTER_SOBEL_X, FXS_BORDER_CLAMP);
    if (st == FXS_OK) st = fxs_filter_frame_i16(&sobel, &src, &dx, acc, W); /* whole frame */
    return st; /* fxs_status_message(st) says what was wrong */
}
