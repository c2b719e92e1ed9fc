//! The typed error every fallible kernel call returns.
//!
//! Messages name what was wrong and the numbers involved, so that a firmware
//! log line (or `defmt` frame) is enough to find the bad call.
//!
//! ```
//! use fixsight::{Error, ImageView};
//! let buf = [0u8; 10];
//! let err = ImageView::new(&buf, 4, 4, 4).unwrap_err();
//! assert_eq!(err, Error::BufferTooShort { what: "image", needed: 16, got: 10 });
//! ```

use core::fmt;

/// Result alias used across the crate.
///
/// ```
/// fn f() -> fixsight::Result<u8> { Ok(1) }
/// assert_eq!(f(), Ok(1));
/// ```
pub type Result<T> = core::result::Result<T, Error>;

/// Everything a kernel can reject. Every variant carries the numbers needed to
/// see what was wrong.
///
/// ```
/// use fixsight::Error;
/// let e = Error::ZeroSize { width: 0, height: 3 };
/// assert_eq!(e.to_string(), "image size 0x3 has a zero dimension");
/// ```
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
#[cfg_attr(feature = "defmt", derive(defmt::Format))]
#[non_exhaustive]
pub enum Error {
    /// Width or height is zero.
    ZeroSize {
        /// Width given.
        width: usize,
        /// Height given.
        height: usize,
    },
    /// Width or height is above [`crate::image::MAX_DIM`].
    TooLarge {
        /// Width given.
        width: usize,
        /// Height given.
        height: usize,
        /// Largest accepted width or height.
        limit: usize,
    },
    /// Row stride (in elements) is shorter than a row of pixels.
    StrideTooSmall {
        /// Stride given, in elements.
        stride: usize,
        /// Elements one row needs (width x channels).
        row_len: usize,
    },
    /// The index arithmetic for this layout would not fit in 31 bits, so it
    /// could overflow on a 32-bit target.
    LayoutOverflow {
        /// Stride in elements.
        stride: usize,
        /// Height in rows.
        height: usize,
    },
    /// A caller buffer is shorter than the layout or kernel needs.
    BufferTooShort {
        /// Which buffer.
        what: &'static str,
        /// Elements needed.
        needed: usize,
        /// Elements given.
        got: usize,
    },
    /// Two images that must have the same size do not.
    SizeMismatch {
        /// Which pair of images.
        what: &'static str,
        /// Expected width and height.
        expected: (usize, usize),
        /// Width and height given.
        got: (usize, usize),
    },
    /// The number of interleaved channels is not one this kernel handles.
    UnsupportedChannels {
        /// Channels given.
        channels: usize,
        /// What the kernel accepts, in words.
        accepted: &'static str,
    },
    /// A tap set is not usable (even length, empty, too long, bad shift).
    BadTaps {
        /// What is wrong with it.
        reason: &'static str,
        /// The offending number (length or shift).
        value: usize,
    },
    /// The worst-case accumulator value of this filter over the full input
    /// range would not fit the 32-bit accumulator.
    AccumulatorOverflow {
        /// Worst-case magnitude of the accumulator (including the rounding
        /// offset).
        worst_case: u64,
        /// The largest magnitude that fits (`i32::MAX`).
        limit: u64,
    },
    /// A scalar parameter is out of its documented range.
    BadParameter {
        /// Parameter name.
        name: &'static str,
        /// What range it must be in, in words.
        expected: &'static str,
        /// Value given (widened).
        got: i64,
    },
    /// A streaming call came in an order the stream cannot accept.
    StreamOrder {
        /// What happened.
        reason: &'static str,
    },

    // --- warp (kernels/src/warp.rs) ---
    /// A map or grid coordinate lies outside the accepted source range
    /// (one source width / height beyond each edge).
    MapOutOfRange {
        /// `"x"` or `"y"`.
        axis: &'static str,
        /// Index of the coordinate pair (pixel map: `y * width + x`; grid:
        /// `row * cols + col`).
        index: usize,
        /// Raw fixed-point value found.
        value: i32,
        /// Smallest accepted raw value.
        min: i32,
        /// Largest accepted raw value.
        max: i32,
    },
    /// The incremental grid accumulator of one cell could exceed `i32`:
    /// the control points of that cell are too far apart for this step and
    /// number of fractional bits.
    GridCellOverflow {
        /// Cell column.
        col: usize,
        /// Cell row.
        row: usize,
        /// Worst-case accumulator magnitude of the cell.
        worst_case: u64,
        /// Largest accepted magnitude (`i32::MAX`).
        limit: u64,
    },
    /// A control grid does not have the control points needed to cover the
    /// output image.
    GridCoverage {
        /// Output width and height.
        output: (usize, usize),
        /// Grid columns and rows given.
        grid: (usize, usize),
        /// Grid columns and rows needed.
        needed: (usize, usize),
    },
    /// A blob is not exactly the size its header announces (or shorter than
    /// a header).
    BlobSize {
        /// Bytes expected.
        expected: usize,
        /// Bytes given.
        got: usize,
    },
    /// A blob does not start with the expected magic bytes.
    BlobMagic {
        /// The four bytes found.
        got: [u8; 4],
    },
    /// A blob has a format version this build does not read.
    BlobVersion {
        /// Version found.
        got: u16,
        /// Version this build reads.
        supported: u16,
    },
    /// A blob header field is inconsistent or out of range.
    BlobField {
        /// Field name.
        field: &'static str,
        /// Value found.
        got: u32,
        /// What was expected, in words.
        expected: &'static str,
    },
    /// The CRC-32 stored in a blob does not match its contents.
    BlobCrc {
        /// CRC stored in the header.
        stored: u32,
        /// CRC computed over the header and payload.
        computed: u32,
    },
    /// A strip of output rows does not fit the output height.
    RowRange {
        /// First output row requested.
        first_row: usize,
        /// Rows requested.
        rows: usize,
        /// Output height.
        height: usize,
    },
    /// A band of source rows does not hold every source row an output strip
    /// reads (`warp::ControlGrid::source_rows`).
    BandRows {
        /// First source row the strip reads.
        needed_first: usize,
        /// Last source row the strip reads.
        needed_last: usize,
        /// First source row the band holds.
        held_first: usize,
        /// Last source row the band holds.
        held_last: usize,
    },
    // --- edges (kernels/src/nms.rs, hysteresis.rs, thinning.rs) ---
    /// The low hysteresis threshold is above the high one.
    ThresholdOrder {
        /// Low threshold given.
        low: u16,
        /// High threshold given.
        high: u16,
    },
    /// An edge-code map holds a code other than 0 (none), 1 (weak) or
    /// 2 (strong).
    BadEdgeCode {
        /// Column of the first bad code in raster order.
        x: usize,
        /// Row of that code.
        y: usize,
        /// The code found.
        value: u8,
    },
    // --- pipeline (kernels/src/pipeline.rs) ---
    /// A camera row does not have the length the stream was configured for.
    RowLength {
        /// Which row form (luma, YUYV, RGB565, ...).
        what: &'static str,
        /// Elements expected.
        expected: usize,
        /// Elements given.
        got: usize,
    },
    /// A frame ended with a number of rows other than the declared height.
    RowCount {
        /// Rows declared.
        expected: usize,
        /// Rows pushed.
        got: usize,
    },
    // --- track (kernels/src/track.rs) ---
    /// A tracker was given a frame number not greater than the last one.
    FrameOrder {
        /// Last frame number accepted.
        last: u32,
        /// Frame number given.
        got: u32,
    },
    // --- lines (kernels/src/lines.rs) ---
    /// A point to vote lies outside the voting frame.
    PointOutside {
        /// x in Q4 pixels from the top-left pixel centre.
        x_q4: i32,
        /// y in Q4 pixels from the top-left pixel centre.
        y_q4: i32,
        /// Frame width.
        width: usize,
        /// Frame height.
        height: usize,
    },
}

impl fmt::Display for Error {
    fn fmt(&self, f: &mut fmt::Formatter<'_>) -> fmt::Result {
        match *self {
            Error::ZeroSize { width, height } => {
                write!(f, "image size {width}x{height} has a zero dimension")
            }
            Error::TooLarge {
                width,
                height,
                limit,
            } => write!(
                f,
                "image size {width}x{height} exceeds the largest supported dimension {limit}"
            ),
            Error::StrideTooSmall { stride, row_len } => write!(
                f,
                "row stride {stride} is smaller than the {row_len} elements of one row"
            ),
            Error::LayoutOverflow { stride, height } => write!(
                f,
                "stride {stride} x height {height} does not fit 31-bit index arithmetic"
            ),
            Error::BufferTooShort { what, needed, got } => write!(
                f,
                "{what} buffer holds {got} elements but {needed} are needed"
            ),
            Error::SizeMismatch {
                what,
                expected,
                got,
            } => write!(
                f,
                "{what}: expected {}x{}, got {}x{}",
                expected.0, expected.1, got.0, got.1
            ),
            Error::UnsupportedChannels { channels, accepted } => {
                write!(f, "{channels} channels given; this kernel accepts {accepted}")
            }
            Error::BadTaps { reason, value } => write!(f, "invalid taps: {reason} (got {value})"),
            Error::AccumulatorOverflow { worst_case, limit } => write!(
                f,
                "worst-case accumulator magnitude {worst_case} exceeds the 32-bit limit {limit}; \
                 use smaller taps or fewer of them"
            ),
            Error::BadParameter {
                name,
                expected,
                got,
            } => write!(f, "parameter `{name}` = {got} is out of range: expected {expected}"),
            Error::StreamOrder { reason } => write!(f, "stream misuse: {reason}"),
            Error::MapOutOfRange {
                axis,
                index,
                value,
                min,
                max,
            } => write!(
                f,
                "map coordinate {axis} of pair {index} is {value} (raw), outside the accepted range {min}..={max}"
            ),
            Error::GridCellOverflow {
                col,
                row,
                worst_case,
                limit,
            } => write!(
                f,
                "grid cell (col {col}, row {row}): worst-case step accumulator {worst_case} exceeds {limit}; \
                 use a smaller step or fewer fractional bits"
            ),
            Error::GridCoverage {
                output,
                grid,
                needed,
            } => write!(
                f,
                "control grid {}x{} does not cover a {}x{} output: {}x{} control points needed",
                grid.0, grid.1, output.0, output.1, needed.0, needed.1
            ),
            Error::BlobSize { expected, got } => {
                write!(f, "blob is {got} bytes but {expected} are expected")
            }
            Error::BlobMagic { got } => write!(
                f,
                "blob magic is {:02x} {:02x} {:02x} {:02x}, not a fixsight control grid",
                got[0], got[1], got[2], got[3]
            ),
            Error::BlobVersion { got, supported } => write!(
                f,
                "blob format version {got} is not supported (this build reads version {supported})"
            ),
            Error::BlobField {
                field,
                got,
                expected,
            } => write!(f, "blob header field `{field}` = {got}: expected {expected}"),
            Error::BlobCrc { stored, computed } => write!(
                f,
                "blob CRC-32 mismatch: stored {stored:#010x}, computed {computed:#010x}"
            ),
            Error::RowRange {
                first_row,
                rows,
                height,
            } => write!(
                f,
                "output rows {first_row}..{} do not fit an output of height {height}",
                first_row.saturating_add(rows)
            ),
            Error::BandRows {
                needed_first,
                needed_last,
                held_first,
                held_last,
            } => write!(
                f,
                "the strip reads source rows {needed_first}..={needed_last} but the band holds \
                 rows {held_first}..={held_last}"
            ),
            Error::ThresholdOrder { low, high } => write!(
                f,
                "low threshold {low} is above high threshold {high}; need low <= high"
            ),
            Error::BadEdgeCode { x, y, value } => write!(
                f,
                "edge code {value} at ({x}, {y}) is not 0 (none), 1 (weak) or 2 (strong)"
            ),
            Error::RowLength {
                what,
                expected,
                got,
            } => write!(f, "{what} row has {got} elements but {expected} are expected"),
            Error::RowCount { expected, got } => write!(
                f,
                "frame ended after {got} rows but {expected} were declared; \
                 end it early on purpose with the short-frame call"
            ),
            Error::FrameOrder { last, got } => write!(
                f,
                "frame number {got} does not follow the last frame {last}; frame numbers must increase"
            ),
            Error::PointOutside {
                x_q4,
                y_q4,
                width,
                height,
            } => write!(
                f,
                "point ({x_q4}, {y_q4}) (Q4 pixels) lies outside the {width}x{height} voting frame"
            ),
        }
    }
}

impl core::error::Error for Error {}
