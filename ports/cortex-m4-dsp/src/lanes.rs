//! Two 16-bit lanes in one 32-bit word, and the Armv7E-M DSP instructions
//! the port needs that a compiler does not produce from plain Rust.
//!
//! A *lane pair* `(lo, hi)` is the word `lo | hi << 16`: `lo` in bits 0..16,
//! `hi` in bits 16..32. Plain 32-bit additions and left shifts act on both
//! lanes at once as long as no lane leaves `0..=0xFFFF` (the carry of the low
//! lane would otherwise enter the high lane); every use in this crate states
//! the bound that rules this out. Signed differences can borrow across the
//! lanes, so they go through [`ssub16`].
//!
//! Each function is one instruction on a core with the DSP extension
//! (`cfg(packed_dsp)`, set by `build.rs` for `thumbv7em-*`), as inline
//! assembly or as a pattern the compiler maps to that instruction, and a
//! Rust model of the instruction elsewhere. The models follow the
//! pseudo-code of the Armv7-M Architecture Reference Manual (Arm DDI 0403E,
//! section A7.7, instructions UXTB16, SSUB16, PKHBT and PKHTB; section
//! numbers from memory), so the host tests of the port exercise the same
//! lane arithmetic the core runs.

/// `UXTB16 Rd, Rm`: bytes 0 and 2 of `x`, zero-extended, as a lane pair.
///
/// The compiler emits `UXTB16` for this mask on a core with the extension
/// (checked in the disassembly, `README.md`).
///
/// ```
/// use fixsight_port_cortex_m4_dsp::lanes::even_bytes;
/// assert_eq!(even_bytes(0x4433_2211), 0x0033_0011);
/// ```
#[inline(always)]
pub const fn even_bytes(x: u32) -> u32 {
    x & 0x00FF_00FF
}

/// `UXTB16 Rd, Rm, ROR #8`: bytes 1 and 3 of `x`, zero-extended, as a
/// lane pair.
///
/// ```
/// use fixsight_port_cortex_m4_dsp::lanes::odd_bytes;
/// assert_eq!(odd_bytes(0x4433_2211), 0x0044_0022);
/// ```
#[inline(always)]
pub const fn odd_bytes(x: u32) -> u32 {
    (x >> 8) & 0x00FF_00FF
}

/// `(hi lane of a, lo lane of b)`: the pair that straddles two consecutive
/// words of a lane array (`PKHBT`-like; two instructions, `LSR` and `ORR`
/// with a shifted operand).
///
/// ```
/// use fixsight_port_cortex_m4_dsp::lanes::straddle;
/// assert_eq!(straddle(0x0002_0001, 0x0004_0003), 0x0003_0002);
/// ```
#[inline(always)]
pub const fn straddle(a: u32, b: u32) -> u32 {
    (a >> 16) | (b << 16)
}

/// `PKHBT Rd, Rn, Rm, LSL #16`: `(lo lane of a, lo lane of b)`.
///
/// ```
/// use fixsight_port_cortex_m4_dsp::lanes::low_lanes;
/// assert_eq!(low_lanes(0x0002_0001, 0x0004_0003), 0x0003_0001);
/// ```
#[inline(always)]
pub const fn low_lanes(a: u32, b: u32) -> u32 {
    (a & 0xFFFF) | (b << 16)
}

/// `PKHTB Rd, Rn, Rm, ASR #16`: `(hi lane of a, hi lane of b)`.
///
/// ```
/// use fixsight_port_cortex_m4_dsp::lanes::high_lanes;
/// assert_eq!(high_lanes(0x0002_0001, 0x0004_0003), 0x0004_0002);
/// ```
#[inline(always)]
pub const fn high_lanes(a: u32, b: u32) -> u32 {
    (a >> 16) | (b & 0xFFFF_0000)
}

/// `SSUB16 Rd, Rn, Rm`: lane-wise `a - b` of signed 16-bit lanes, each
/// result wrapped to 16 bits (no borrow between the lanes). The GE flags
/// the instruction also sets are not used.
///
/// ```
/// use fixsight_port_cortex_m4_dsp::lanes::ssub16;
/// // (5 - 7, 1 - 0) = (-2, 1)
/// assert_eq!(ssub16(0x0001_0005, 0x0000_0007), 0x0001_FFFE);
/// ```
#[inline(always)]
pub fn ssub16(a: u32, b: u32) -> u32 {
    #[cfg(packed_dsp)]
    {
        let d: u32;
        // SAFETY: SSUB16 reads the two input registers and writes the
        // output register and the APSR.GE flags. It reads and writes no
        // memory and does not touch the stack (`nomem`, `nostack`); the
        // flags are not declared preserved, so the compiler assumes them
        // clobbered. It cannot fault: the DSP extension is part of every
        // Armv7E-M core, which `cfg(packed_dsp)` (build.rs) guarantees.
        #[allow(unsafe_code)]
        unsafe {
            core::arch::asm!(
                "ssub16 {d}, {a}, {b}",
                d = lateout(reg) d,
                a = in(reg) a,
                b = in(reg) b,
                options(pure, nomem, nostack),
            );
        }
        d
    }
    #[cfg(not(packed_dsp))]
    {
        let lo = (a as u16).wrapping_sub(b as u16) as u32;
        let hi = ((a >> 16) as u16).wrapping_sub((b >> 16) as u16) as u32;
        lo | hi << 16
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    /// Lane-wise model check of SSUB16 on its extremes: each lane wraps on
    /// its own and no borrow crosses from the low lane into the high one
    /// (Arm DDI 0403E, SSUB16 pseudo-code: `diff1 = SInt(R[n]<15:0>) -
    /// SInt(R[m]<15:0>)`, `R[d]<15:0> = diff1<15:0>`, likewise the top
    /// halves; from memory).
    #[test]
    fn ssub16_lanes_do_not_borrow() {
        assert_eq!(ssub16(0x0000_0000, 0x0000_0001), 0x0000_FFFF);
        assert_eq!(ssub16(0x8000_7FFF, 0x0001_FFFF), 0x7FFF_8000);
        assert_eq!(ssub16(0x0003_03FC, 0x0001_0000), 0x0002_03FC);
        for (a, b) in [(1020i16, -1020i16), (-1020, 1020), (0, 1020), (1020, 0)] {
            let w = ssub16(
                (a as u16 as u32) | (b as u16 as u32) << 16,
                (b as u16 as u32) | (a as u16 as u32) << 16,
            );
            assert_eq!((w as u16 as i16, (w >> 16) as u16 as i16), (a - b, b - a));
        }
    }

    #[test]
    fn packing_round_trips() {
        let (e, o) = (0x0022_0011u32, 0x0044_0033u32);
        assert_eq!(low_lanes(e, o), 0x0033_0011);
        assert_eq!(high_lanes(e, o), 0x0044_0022);
        assert_eq!(straddle(e, o), 0x0033_0022);
        assert_eq!(
            even_bytes(0xDDCC_BBAA) | odd_bytes(0xDDCC_BBAA) << 8,
            0xDDCC_BBAA
        );
    }
}
