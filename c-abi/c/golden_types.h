/*
 * Golden vectors as C data: the types of the tables that
 * `fixsight-verify golden export-c` and the C ABI's tests generate from a
 * golden folder (host-verify/src/golden_c.rs). Images hold their file
 * bytes: little-endian elements, packed rows, channels interleaved
 * (golden/README.md); a vector's row_pad says how a runner lays them out.
 * C99, stdint.h only.
 */
#ifndef FIXSIGHT_GOLDEN_TYPES_H
#define FIXSIGHT_GOLDEN_TYPES_H

#include <stdint.h>

enum { GOLDEN_U8, GOLDEN_I16, GOLDEN_U16, GOLDEN_I32, GOLDEN_U32 };
enum { GOLDEN_INT, GOLDEN_STR, GOLDEN_INTS };

typedef struct golden_param {
    const char *key; /* dotted: "border.fill" */
    int32_t kind;    /* GOLDEN_INT, GOLDEN_STR, GOLDEN_INTS */
    int64_t value;
    const char *str;
    const int64_t *ints;
    int32_t count;
} golden_param;

typedef struct golden_image {
    const char *name;
    int32_t elem; /* GOLDEN_U8 ... */
    int32_t width;
    int32_t height;
    int32_t channels;
    const uint8_t *bytes; /* little-endian elements, packed rows */
    uint32_t nbytes;
} golden_image;

typedef struct golden_vector {
    const char *id;
    const char *kernel;
    const golden_param *params;
    int32_t nparams;
    const golden_image *inputs;
    int32_t ninputs;
    const golden_image *expected;
    int32_t nexpected;
    /* Padded rows (golden/README.md, "Padded rows"): 0 for packed rows;
     * else every image is run with rows of width * channels + row_pad
     * elements, input padding bytes GOLDEN_IN_PAD, output buffers filled
     * with GOLDEN_OUT_PAD before the call and their padding checked after. */
    int32_t row_pad;
} golden_vector;

#define GOLDEN_IN_PAD 0xE7u
#define GOLDEN_OUT_PAD 0x3Cu

extern const golden_vector GOLDEN_VECTORS[];
extern const int32_t GOLDEN_VECTOR_COUNT;

#endif
