//! Status codes: `FXS_OK`, one negative code per `fixsight::Error` variant
//! (`-1 ..`), and the errors found at the C boundary itself (`-101 ..`).
//!
//! A new kernel error variant gets the next free code in the first range, a
//! row in [`STATUSES`] and an arm in [`status_of`]; the header test fails
//! until it has one (it reads the variants from `kernels/src/error.rs`).

use core::ffi::{c_char, CStr};
use fixsight::Error;

/// Return type of every function but `fxs_status_message`.
pub type FxsStatus = i32;

/// Success.
pub const FXS_OK: FxsStatus = 0;

// --- one code per `fixsight::Error` variant ---
/// `Error::ZeroSize`.
pub const FXS_E_ZERO_SIZE: FxsStatus = -1;
/// `Error::TooLarge`.
pub const FXS_E_TOO_LARGE: FxsStatus = -2;
/// `Error::StrideTooSmall`.
pub const FXS_E_STRIDE_TOO_SMALL: FxsStatus = -3;
/// `Error::LayoutOverflow`.
pub const FXS_E_LAYOUT_OVERFLOW: FxsStatus = -4;
/// `Error::BufferTooShort`.
pub const FXS_E_BUFFER_TOO_SHORT: FxsStatus = -5;
/// `Error::SizeMismatch`.
pub const FXS_E_SIZE_MISMATCH: FxsStatus = -6;
/// `Error::UnsupportedChannels`.
pub const FXS_E_UNSUPPORTED_CHANNELS: FxsStatus = -7;
/// `Error::BadTaps`.
pub const FXS_E_BAD_TAPS: FxsStatus = -8;
/// `Error::AccumulatorOverflow`.
pub const FXS_E_ACCUMULATOR_OVERFLOW: FxsStatus = -9;
/// `Error::BadParameter`.
pub const FXS_E_BAD_PARAMETER: FxsStatus = -10;
/// `Error::StreamOrder`.
pub const FXS_E_STREAM_ORDER: FxsStatus = -11;
/// `Error::MapOutOfRange`.
pub const FXS_E_MAP_OUT_OF_RANGE: FxsStatus = -12;
/// `Error::GridCellOverflow`.
pub const FXS_E_GRID_CELL_OVERFLOW: FxsStatus = -13;
/// `Error::GridCoverage`.
pub const FXS_E_GRID_COVERAGE: FxsStatus = -14;
/// `Error::BlobSize`.
pub const FXS_E_BLOB_SIZE: FxsStatus = -15;
/// `Error::BlobMagic`.
pub const FXS_E_BLOB_MAGIC: FxsStatus = -16;
/// `Error::BlobVersion`.
pub const FXS_E_BLOB_VERSION: FxsStatus = -17;
/// `Error::BlobField`.
pub const FXS_E_BLOB_FIELD: FxsStatus = -18;
/// `Error::BlobCrc`.
pub const FXS_E_BLOB_CRC: FxsStatus = -19;
/// `Error::RowRange`.
pub const FXS_E_ROW_RANGE: FxsStatus = -20;
/// `Error::ThresholdOrder`.
pub const FXS_E_THRESHOLD_ORDER: FxsStatus = -21;
/// `Error::BadEdgeCode`.
pub const FXS_E_BAD_EDGE_CODE: FxsStatus = -22;
/// `Error::RowLength`.
pub const FXS_E_ROW_LENGTH: FxsStatus = -23;
/// `Error::RowCount`.
pub const FXS_E_ROW_COUNT: FxsStatus = -24;
/// `Error::FrameOrder`.
pub const FXS_E_FRAME_ORDER: FxsStatus = -25;
/// `Error::PointOutside`.
pub const FXS_E_POINT_OUTSIDE: FxsStatus = -26;
/// `Error::BandRows`.
pub const FXS_E_BAND_ROWS: FxsStatus = -27;
/// A kernel error this build of the C ABI has no code for (a newer kernel
/// crate); never returned while the header test passes.
pub const FXS_E_KERNEL_OTHER: FxsStatus = -99;

// --- found at the C boundary, before any kernel runs ---
/// A pointer argument that must not be NULL is NULL.
pub const FXS_E_NULL_POINTER: FxsStatus = -101;
/// A size, stride, length, count or row index argument is negative.
pub const FXS_E_NEGATIVE: FxsStatus = -102;
/// A pointer is not aligned for its element or object type.
pub const FXS_E_MISALIGNED: FxsStatus = -103;
/// Two buffers overlap where one of them is written.
pub const FXS_E_OVERLAP: FxsStatus = -104;
/// An object (`fxs_filter`, a stream, a map, a grid) was not set up by its
/// init function, or is of another kind.
pub const FXS_E_NOT_INITIALISED: FxsStatus = -105;
/// A buffer as stated (pointer plus length) would run past the end of the
/// address space.
pub const FXS_E_ADDRESS_RANGE: FxsStatus = -106;

/// Every status: code, name in the header, message.
pub const STATUSES: &[(FxsStatus, &str, &CStr)] = &[
    (FXS_OK, "FXS_OK", c"success"),
    (
        FXS_E_ZERO_SIZE,
        "FXS_E_ZERO_SIZE",
        c"image width or height is zero",
    ),
    (
        FXS_E_TOO_LARGE,
        "FXS_E_TOO_LARGE",
        c"image width or height is above 32767",
    ),
    (
        FXS_E_STRIDE_TOO_SMALL,
        "FXS_E_STRIDE_TOO_SMALL",
        c"row stride is smaller than width x channels",
    ),
    (
        FXS_E_LAYOUT_OVERFLOW,
        "FXS_E_LAYOUT_OVERFLOW",
        c"stride x height does not fit 31-bit index arithmetic",
    ),
    (
        FXS_E_BUFFER_TOO_SHORT,
        "FXS_E_BUFFER_TOO_SHORT",
        c"a buffer holds fewer elements than the layout or kernel needs",
    ),
    (
        FXS_E_SIZE_MISMATCH,
        "FXS_E_SIZE_MISMATCH",
        c"two images that must have one size do not",
    ),
    (
        FXS_E_UNSUPPORTED_CHANNELS,
        "FXS_E_UNSUPPORTED_CHANNELS",
        c"channel count not accepted by this kernel",
    ),
    (
        FXS_E_BAD_TAPS,
        "FXS_E_BAD_TAPS",
        c"tap set unusable: empty, even, longer than 9, or shift out of range",
    ),
    (
        FXS_E_ACCUMULATOR_OVERFLOW,
        "FXS_E_ACCUMULATOR_OVERFLOW",
        c"worst-case filter accumulator does not fit 32 bits",
    ),
    (
        FXS_E_BAD_PARAMETER,
        "FXS_E_BAD_PARAMETER",
        c"a scalar parameter is out of its documented range",
    ),
    (
        FXS_E_STREAM_ORDER,
        "FXS_E_STREAM_ORDER",
        c"stream call out of order: too many rows, or flush before the last row",
    ),
    (
        FXS_E_MAP_OUT_OF_RANGE,
        "FXS_E_MAP_OUT_OF_RANGE",
        c"a map or grid coordinate lies outside the accepted source range",
    ),
    (
        FXS_E_GRID_CELL_OVERFLOW,
        "FXS_E_GRID_CELL_OVERFLOW",
        c"control points of a grid cell are too far apart for its step",
    ),
    (
        FXS_E_GRID_COVERAGE,
        "FXS_E_GRID_COVERAGE",
        c"control grid does not cover the output image",
    ),
    (
        FXS_E_BLOB_SIZE,
        "FXS_E_BLOB_SIZE",
        c"grid blob length differs from the length its header announces",
    ),
    (
        FXS_E_BLOB_MAGIC,
        "FXS_E_BLOB_MAGIC",
        c"grid blob does not start with the magic bytes FSMT",
    ),
    (
        FXS_E_BLOB_VERSION,
        "FXS_E_BLOB_VERSION",
        c"grid blob format version not supported",
    ),
    (
        FXS_E_BLOB_FIELD,
        "FXS_E_BLOB_FIELD",
        c"grid blob header field inconsistent or out of range",
    ),
    (
        FXS_E_BLOB_CRC,
        "FXS_E_BLOB_CRC",
        c"grid blob CRC-32 does not match its contents",
    ),
    (
        FXS_E_ROW_RANGE,
        "FXS_E_ROW_RANGE",
        c"strip of output rows does not fit the output height",
    ),
    (
        FXS_E_THRESHOLD_ORDER,
        "FXS_E_THRESHOLD_ORDER",
        c"low threshold is above the high threshold",
    ),
    (
        FXS_E_BAD_EDGE_CODE,
        "FXS_E_BAD_EDGE_CODE",
        c"edge-code map holds a value other than 0, 1 or 2",
    ),
    (
        FXS_E_ROW_LENGTH,
        "FXS_E_ROW_LENGTH",
        c"a camera row does not have the length the stream was set up for",
    ),
    (
        FXS_E_ROW_COUNT,
        "FXS_E_ROW_COUNT",
        c"a frame ended with a row count other than the declared height",
    ),
    (
        FXS_E_FRAME_ORDER,
        "FXS_E_FRAME_ORDER",
        c"frame number not greater than the last one accepted",
    ),
    (
        FXS_E_POINT_OUTSIDE,
        "FXS_E_POINT_OUTSIDE",
        c"a point lies outside the area the kernel accepts",
    ),
    (
        FXS_E_BAND_ROWS,
        "FXS_E_BAND_ROWS",
        c"a band of source rows lacks a row the output strip reads",
    ),
    (
        FXS_E_KERNEL_OTHER,
        "FXS_E_KERNEL_OTHER",
        c"kernel error without a C status code in this build",
    ),
    (
        FXS_E_NULL_POINTER,
        "FXS_E_NULL_POINTER",
        c"a required pointer argument is NULL",
    ),
    (
        FXS_E_NEGATIVE,
        "FXS_E_NEGATIVE",
        c"a size, stride, length or row argument is negative",
    ),
    (
        FXS_E_MISALIGNED,
        "FXS_E_MISALIGNED",
        c"a pointer is not aligned for its element or object type",
    ),
    (
        FXS_E_OVERLAP,
        "FXS_E_OVERLAP",
        c"two buffers overlap where one of them is written",
    ),
    (
        FXS_E_NOT_INITIALISED,
        "FXS_E_NOT_INITIALISED",
        c"object not set up by its init function, or of another kind",
    ),
    (
        FXS_E_ADDRESS_RANGE,
        "FXS_E_ADDRESS_RANGE",
        c"buffer would run past the end of the address space",
    ),
];

/// Message of an unknown code.
const UNKNOWN: &CStr = c"unknown fixsight status code";

/// The status code of a kernel error.
pub(crate) fn status_of(e: Error) -> FxsStatus {
    match e {
        Error::ZeroSize { .. } => FXS_E_ZERO_SIZE,
        Error::TooLarge { .. } => FXS_E_TOO_LARGE,
        Error::StrideTooSmall { .. } => FXS_E_STRIDE_TOO_SMALL,
        Error::LayoutOverflow { .. } => FXS_E_LAYOUT_OVERFLOW,
        Error::BufferTooShort { .. } => FXS_E_BUFFER_TOO_SHORT,
        Error::SizeMismatch { .. } => FXS_E_SIZE_MISMATCH,
        Error::UnsupportedChannels { .. } => FXS_E_UNSUPPORTED_CHANNELS,
        Error::BadTaps { .. } => FXS_E_BAD_TAPS,
        Error::AccumulatorOverflow { .. } => FXS_E_ACCUMULATOR_OVERFLOW,
        Error::BadParameter { .. } => FXS_E_BAD_PARAMETER,
        Error::StreamOrder { .. } => FXS_E_STREAM_ORDER,
        Error::MapOutOfRange { .. } => FXS_E_MAP_OUT_OF_RANGE,
        Error::GridCellOverflow { .. } => FXS_E_GRID_CELL_OVERFLOW,
        Error::GridCoverage { .. } => FXS_E_GRID_COVERAGE,
        Error::BlobSize { .. } => FXS_E_BLOB_SIZE,
        Error::BlobMagic { .. } => FXS_E_BLOB_MAGIC,
        Error::BlobVersion { .. } => FXS_E_BLOB_VERSION,
        Error::BlobField { .. } => FXS_E_BLOB_FIELD,
        Error::BlobCrc { .. } => FXS_E_BLOB_CRC,
        Error::RowRange { .. } => FXS_E_ROW_RANGE,
        Error::ThresholdOrder { .. } => FXS_E_THRESHOLD_ORDER,
        Error::BadEdgeCode { .. } => FXS_E_BAD_EDGE_CODE,
        Error::RowLength { .. } => FXS_E_ROW_LENGTH,
        Error::RowCount { .. } => FXS_E_ROW_COUNT,
        Error::FrameOrder { .. } => FXS_E_FRAME_ORDER,
        Error::PointOutside { .. } => FXS_E_POINT_OUTSIDE,
        Error::BandRows { .. } => FXS_E_BAND_ROWS,
        _ => FXS_E_KERNEL_OTHER,
    }
}

/// Runs a checked call and folds its outcome into one status.
pub(crate) fn finish(r: Result<(), FxsStatus>) -> FxsStatus {
    match r {
        Ok(()) => FXS_OK,
        Err(s) => s,
    }
}

/// Kernel result to boundary result.
pub(crate) fn kernel<T>(r: fixsight::Result<T>) -> Result<T, FxsStatus> {
    r.map_err(status_of)
}

/// `const char *fxs_status_message(int32_t status)`: a static,
/// NUL-terminated English message for any code (unknown codes get a
/// message too). Never NULL.
#[no_mangle]
pub extern "C" fn fxs_status_message(status: i32) -> *const c_char {
    STATUSES
        .iter()
        .find(|(c, _, _)| *c == status)
        .map_or(UNKNOWN, |(_, _, m)| *m)
        .as_ptr()
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn codes_are_unique_and_messages_found() {
        for (i, (c, name, m)) in STATUSES.iter().enumerate() {
            assert!(
                STATUSES[i + 1..]
                    .iter()
                    .all(|(d, n, _)| d != c && n != name),
                "{name} listed twice"
            );
            assert_eq!(fxs_status_message(*c), m.as_ptr());
            assert!(!m.to_bytes().is_empty());
        }
        // SAFETY: the returned pointer is a static NUL-terminated string.
        let unknown = unsafe { CStr::from_ptr(fxs_status_message(12345)) };
        assert_eq!(unknown, UNKNOWN);
    }

    #[test]
    fn kernel_errors_map_to_their_codes() {
        assert_eq!(
            status_of(Error::BlobCrc {
                stored: 1,
                computed: 2
            }),
            FXS_E_BLOB_CRC
        );
        assert_eq!(
            status_of(Error::ThresholdOrder { low: 3, high: 1 }),
            FXS_E_THRESHOLD_ORDER
        );
    }
}
