//! Operation counting by category.
//!
//! The categories follow the weighted-operation counting used to rate
//! fixed-point speech codecs (ITU-T G.191 Software Tool Library basic
//! operators; 3GPP TS 26.258): add/sub, multiply, multiply-accumulate, shift,
//! logic/compare, load, store, branch, table look-up and divide. The weights
//! that turn counts into a single figure are data kept by the host tool
//! (`host-verify/data/op-weights.json`), not here.
//!
//! Kernels call [`tally`] from the very loops that run on the target. With the
//! `count-ops` feature off (the default, and always on a target) `tally` is an
//! empty `#[inline(always)]` function and costs nothing. With it on (host
//! only: the counters are per thread and need `std`) [`take`] returns and
//! clears the counts of the calling thread.
//!
//! ```
//! use fixsight::ops::{self, Op};
//! ops::tally(Op::Mac, 3);
//! let counts = ops::take();
//! # #[cfg(feature = "count-ops")]
//! assert_eq!(counts.get(Op::Mac), 3);
//! # #[cfg(not(feature = "count-ops"))]
//! assert_eq!(counts.total(), 0);
//! ```

/// An operation category.
///
/// ```
/// assert_eq!(fixsight::ops::Op::Mac.name(), "mac");
/// ```
#[derive(Debug, Clone, Copy, PartialEq, Eq, PartialOrd, Ord, Hash)]
#[cfg_attr(feature = "defmt", derive(defmt::Format))]
#[repr(u8)]
pub enum Op {
    /// Addition or subtraction (including the add of a rounding offset).
    AddSub = 0,
    /// Multiplication without accumulation.
    Mul = 1,
    /// Multiply-accumulate (`acc += a * b`).
    Mac = 2,
    /// Shift.
    Shift = 3,
    /// Logic operation or comparison (including min/max and clamps).
    Logic = 4,
    /// Load from memory.
    Load = 5,
    /// Store to memory.
    Store = 6,
    /// Taken-or-not conditional branch, including loop back-edges.
    Branch = 7,
    /// Table look-up.
    Table = 8,
    /// Division.
    Div = 9,
}

/// Number of categories.
pub const OP_KINDS: usize = 10;

impl Op {
    /// Every category in index order.
    ///
    /// ```
    /// assert_eq!(fixsight::ops::Op::ALL.len(), fixsight::ops::OP_KINDS);
    /// ```
    pub const ALL: [Op; OP_KINDS] = [
        Op::AddSub,
        Op::Mul,
        Op::Mac,
        Op::Shift,
        Op::Logic,
        Op::Load,
        Op::Store,
        Op::Branch,
        Op::Table,
        Op::Div,
    ];

    /// Short lower-case name used in reports (`add_sub`, `mul`, `mac`, ...).
    ///
    /// ```
    /// assert_eq!(fixsight::ops::Op::AddSub.name(), "add_sub");
    /// ```
    pub const fn name(self) -> &'static str {
        match self {
            Op::AddSub => "add_sub",
            Op::Mul => "mul",
            Op::Mac => "mac",
            Op::Shift => "shift",
            Op::Logic => "logic",
            Op::Load => "load",
            Op::Store => "store",
            Op::Branch => "branch",
            Op::Table => "table",
            Op::Div => "div",
        }
    }
}

/// Counts per category.
///
/// ```
/// use fixsight::ops::{Op, OpCounts};
/// let mut c = OpCounts::default();
/// c.add(Op::Load, 2);
/// c.add(Op::Store, 1);
/// assert_eq!(c.total(), 3);
/// ```
#[derive(Debug, Clone, Copy, Default, PartialEq, Eq)]
pub struct OpCounts {
    /// Count per category, indexed by `Op as usize`.
    pub counts: [u64; OP_KINDS],
}

impl OpCounts {
    /// Count of one category.
    ///
    /// ```
    /// let c = fixsight::ops::OpCounts::default();
    /// assert_eq!(c.get(fixsight::ops::Op::Div), 0);
    /// ```
    pub fn get(&self, op: Op) -> u64 {
        self.counts[op as usize]
    }

    /// Adds `n` to one category.
    ///
    /// ```
    /// let mut c = fixsight::ops::OpCounts::default();
    /// c.add(fixsight::ops::Op::Mul, 4);
    /// assert_eq!(c.get(fixsight::ops::Op::Mul), 4);
    /// ```
    pub fn add(&mut self, op: Op, n: u64) {
        self.counts[op as usize] = self.counts[op as usize].saturating_add(n);
    }

    /// Sum over all categories.
    ///
    /// ```
    /// assert_eq!(fixsight::ops::OpCounts::default().total(), 0);
    /// ```
    pub fn total(&self) -> u64 {
        self.counts.iter().fold(0u64, |a, &b| a.saturating_add(b))
    }

    /// Sum of `weights[i] * counts[i]`.
    ///
    /// ```
    /// use fixsight::ops::{Op, OpCounts};
    /// let mut c = OpCounts::default();
    /// c.add(Op::Div, 2);
    /// let mut w = [1u32; 10];
    /// w[Op::Div as usize] = 18;
    /// assert_eq!(c.weighted(&w), 36);
    /// ```
    pub fn weighted(&self, weights: &[u32; OP_KINDS]) -> u64 {
        self.counts
            .iter()
            .zip(weights.iter())
            .fold(0u64, |a, (&c, &w)| {
                a.saturating_add(c.saturating_mul(w as u64))
            })
    }
}

#[cfg(feature = "count-ops")]
std::thread_local! {
    static COUNTS: core::cell::Cell<[u64; OP_KINDS]> = const { core::cell::Cell::new([0; OP_KINDS]) };
}

/// Counts `n` operations of kind `op` on the calling thread (feature
/// `count-ops`); compiles to nothing without the feature. For a count that
/// depends on a length use [`tally_per`], which does the multiplication
/// itself in a type that cannot overflow.
///
/// ```
/// fixsight::ops::tally(fixsight::ops::Op::Load, 1);
/// ```
#[inline(always)]
pub fn tally(op: Op, n: u32) {
    tally_per(op, n, 1);
}

/// Counts `per_item * items` operations of kind `op` (feature `count-ops`;
/// nothing without it). The product and the running total are computed
/// here in `u64` with saturation, so a count for any slice length (a row of
/// more than `2^32 / per_item` elements included) neither wraps nor panics;
/// callers pass lengths as they are, never a product of their own.
///
/// ```
/// use fixsight::ops::{self, Op};
/// let _ = ops::take();
/// ops::tally_per(Op::Load, 51, 100_000_000); // 5.1e9: more than a u32 holds
/// # #[cfg(feature = "count-ops")]
/// assert_eq!(ops::take().get(Op::Load), 5_100_000_000);
/// ```
#[inline(always)]
pub fn tally_per(op: Op, per_item: u32, items: usize) {
    #[cfg(feature = "count-ops")]
    COUNTS.with(|c| {
        let mut v = c.get();
        let n = (per_item as u64).saturating_mul(items as u64);
        v[op as usize] = v[op as usize].saturating_add(n);
        c.set(v);
    });
    #[cfg(not(feature = "count-ops"))]
    let _ = (op, per_item, items);
}

/// Returns the counts gathered on this thread since the last call and resets
/// them. Without `count-ops` it returns all zeros.
///
/// ```
/// let _ = fixsight::ops::take();
/// assert_eq!(fixsight::ops::take().total(), 0);
/// ```
pub fn take() -> OpCounts {
    #[cfg(feature = "count-ops")]
    {
        OpCounts {
            counts: COUNTS.with(|c| c.replace([0; OP_KINDS])),
        }
    }
    #[cfg(not(feature = "count-ops"))]
    {
        OpCounts::default()
    }
}

/// `true` when this build counts operations.
///
/// ```
/// let _counting: bool = fixsight::ops::ENABLED;
/// ```
pub const ENABLED: bool = cfg!(feature = "count-ops");
