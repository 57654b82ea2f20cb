//! Portable, vectorisable `exp`, `tanh` and the logistic function
//! `1 / (1 + e^-x)` in `f64` and `f32`, giving the same bits on every CPU.
//!
//! # The contract
//!
//! Every function here is a fixed sequence of IEEE 754 basic operations
//! (`+`, `-`, `*`, `/` and the conversions between `f32` and `f64`, each
//! correctly rounded to nearest-even as IEEE 754-2019 section 5.4 requires),
//! comparisons with selects, and integer bit manipulation of the float
//! encodings. There is no fused multiply-add (`mul_add` is never called,
//! and Rust never contracts `a * b + c` into one), no call into `libm`
//! or the C library, no table and no branch on the data. An element-wise
//! IEEE operation gives the same result whether the compiler issues it one
//! lane at a time (SSE2 `mulsd`) or eight at a time (AVX-512 `vmulpd zmm`),
//! so
//!
//! * the scalar function (`tanh_f64`) and the slice function
//!   (`tanh_slice_f64`) give identical bits for every input, and
//! * the slice functions give identical bits on every [`VectorPath`]
//!   (baseline SSE2, AVX2, AVX-512), which the tests check on two million
//!   inputs per function.
//!
//! This assumes the default floating-point environment (round to nearest,
//! subnormals neither flushed to zero nor read as zero), which is what Rust
//! programs run with. A NaN input gives a quiet NaN output, namely `x + x`
//! (the input with its quiet bit set).
//!
//! # Dispatch
//!
//! Each slice function is the same inlined scalar body in a plain loop,
//! compiled three times: for the crate's own target (SSE2 on baseline
//! x86-64), under `#[target_feature(enable = "avx2")]` and under
//! `#[target_feature(enable = "avx512f")]`, all without FMA. LLVM
//! vectorises each loop (packed `mulpd`/`addpd`/`divpd` on `xmm`, `ymm` and
//! `zmm` registers). The CPU is asked once, by `is_x86_feature_detected!`,
//! and the answer is kept in an atomic, so after the first call dispatch
//! costs one relaxed load and a match. Callers simply call
//! [`tanh_slice_f64`] and friends on as long a slice as they have (a whole
//! layer's matrix rather than a row at a time); the `_with` variants take an
//! explicit [`VectorPath`] (from [`VectorPath::available`]) for tests and
//! benchmarks. On other architectures only the baseline loop exists; it
//! gives the same bits.
//!
//! The vector loops are only vectorised in optimised builds; stratanet's
//! test profile is optimised (`opt-level = 2`), so `cargo test` tests the
//! vector code.
//!
//! # Accuracy
//!
//! Errors are in ulps of the exact value (ulp(y) = 2^(e - p + 1) for
//! 2^e <= |y| < 2^(e + 1), and the subnormal spacing below the normal
//! range; J.-M. Muller, "Elementary Functions: Algorithms and
//! Implementation", 3rd ed., Birkhäuser 2016, chapter 2). *Bound* is what
//! the error analysis in each function's documentation supports and what the
//! tests enforce; *measured* is the largest error seen when the module was
//! written: for f64, over the reference sets in `tests/data/vecmath/`
//! (about 3,000 inputs per function, dense at the edges and thresholds,
//! correctly rounded by mpmath at 256 bits; `tools/vecmath/make_reference.py`
//! writes them) and over 2^20 further random inputs per function compared
//! against mpmath; for f32, over all 2^32 inputs of each function compared
//! against f64 evaluations. The tests check the f32 functions on about a
//! million inputs per run against f64 evaluations (whose own error, below
//! 2^-50 relative, is below 2^-26 of an f32 ulp).
//!
//! | function   | f64 bound | f64 measured | f32 bound | f32 measured |
//! |------------|-----------|--------------|-----------|--------------|
//! | `exp`      | 1 ulp     | 0.65 ulp     | 1 ulp     | 0.5001 ulp   |
//! | `tanh`     | 1.5 ulp   | 1.25 ulp     | 1 ulp     | 0.5002 ulp   |
//! | `logistic` | 1.5 ulp   | 1.04 ulp     | 1 ulp     | 0.5001 ulp   |
//!
//! The f32 functions compute in f64 and round once at the end, so they are
//! correctly rounded except within about 2^-13 ulp of a rounding tie.
//!
//! # Sources
//!
//! * W. J. Cody and W. Waite, "Software Manual for the Elementary
//!   Functions", Prentice-Hall, 1980: range reduction `r = x - n ln 2` with
//!   `ln 2` split into a short high part (so that `n * hi` is exact) and a
//!   low part.
//! * E. Remez, "Sur le calcul effectif des polynômes d'approximation de
//!   Tchebichef", C. R. Acad. Sci. Paris 199 (1934), as presented in Muller
//!   (2016), chapter 3: the minimax polynomials below were fitted with it
//!   (`tools/vecmath/fit_coefficients.py`).
//! * G. Estrin, "Organization of computer systems: the fixed plus variable
//!   structure computer", Proc. Western Joint Computer Conference, 1960:
//!   the evaluation scheme of the polynomials (pairs, then pairs of pairs),
//!   which shortens the chain of dependent operations compared with Horner's
//!   rule (recalled from memory).
//! * T. J. Dekker, "A floating-point technique for extending the available
//!   precision", Numerische Mathematik 18 (1971) 224-242: Fast2Sum, the
//!   exact rounding error of `a + b` when `|a| >= |b|`, used throughout to
//!   carry rounding errors as a second, small term.
//! * Rounding to an integer by adding and subtracting 1.5 * 2^52 (the
//!   "shifter"): J.-M. Muller et al., "Handbook of Floating-Point
//!   Arithmetic", 2nd ed., Birkhäuser 2018 (recalled from memory; also common
//!   practice).
//! * tanh x = (e^(2x) - 1) / (e^(2x) + 1) = 1 - 2 / (e^(2x) + 1) and
//!   1 / (1 + e^-x) = e^x / (1 + e^x) follow from the definitions
//!   (M. Abramowitz and I. Stegun, "Handbook of Mathematical Functions",
//!   1964, 4.5.5 for tanh; recalled from memory).

use std::sync::atomic::{AtomicU8, Ordering};

// ---------------------------------------------------------------------------
// Run-time choice of the vector path
// ---------------------------------------------------------------------------

#[derive(Clone, Copy, Debug, PartialEq, Eq, PartialOrd, Ord, Hash)]
enum PathKind {
    Baseline = 1,
    Avx2 = 2,
    Avx512 = 3,
}

/// A compiled copy of the slice loops, and proof that this CPU can run it.
///
/// A value of this type can only be obtained for a path the running CPU
/// supports, so the `_with` functions never execute an unsupported
/// instruction. All paths give identical bits; they differ only in speed.
#[derive(Clone, Copy, Debug, PartialEq, Eq, PartialOrd, Ord, Hash)]
pub struct VectorPath(PathKind);

/// The detected path: 0 = not yet detected, else a `PathKind` discriminant.
static DETECTED: AtomicU8 = AtomicU8::new(0);

impl VectorPath {
    /// The loop compiled for the crate's own target (SSE2 on baseline
    /// x86-64); always available.
    pub const BASELINE: VectorPath = VectorPath(PathKind::Baseline);

    /// The widest path this CPU supports, detected on the first call and
    /// cached in an atomic (later calls cost one relaxed load).
    #[inline]
    pub fn detect() -> VectorPath {
        match DETECTED.load(Ordering::Relaxed) {
            1 => VectorPath(PathKind::Baseline),
            2 => VectorPath(PathKind::Avx2),
            3 => VectorPath(PathKind::Avx512),
            _ => {
                let best = Self::available()
                    .into_iter()
                    .max()
                    .unwrap_or(Self::BASELINE);
                DETECTED.store(best.0 as u8, Ordering::Relaxed);
                best
            }
        }
    }

    /// Every path this CPU supports, narrowest first (always starts with
    /// [`VectorPath::BASELINE`]).
    pub fn available() -> Vec<VectorPath> {
        let mut paths = vec![Self::BASELINE];
        #[cfg(target_arch = "x86_64")]
        {
            if std::arch::is_x86_feature_detected!("avx2") {
                paths.push(VectorPath(PathKind::Avx2));
            }
            if std::arch::is_x86_feature_detected!("avx512f") {
                paths.push(VectorPath(PathKind::Avx512));
            }
        }
        paths
    }

    /// A short name: `baseline`, `avx2` or `avx512`.
    #[cfg_attr(not(test), allow(dead_code))]
    pub fn name(self) -> &'static str {
        match self.0 {
            PathKind::Baseline => "baseline",
            PathKind::Avx2 => "avx2",
            PathKind::Avx512 => "avx512",
        }
    }
}

// ---------------------------------------------------------------------------
// Constants
// ---------------------------------------------------------------------------

/// 1 / ln 2 rounded to f64.
const LOG2E: f64 = std::f64::consts::LOG2_E;
/// 1.5 * 2^52: adding it to |v| < 2^51 rounds v to an integer held in the
/// low mantissa bits.
const SHIFTER: f64 = 6755399441055744.0;
/// ln 2 rounded to 42 significant bits (0x3fe62e42fefa3800): n * hi is exact
/// for |n| < 2^11.
const LN2_HI: f64 = 0.6931471805598903;
/// ln 2 - LN2_HI rounded to f64 (0x3d2ef35793c76730; residual 2^-102).
const LN2_LO: f64 = 5.497923018708371e-14;
/// ln 2 rounded to f64 (0x3fe62e42fefa39ef), for the short reduction.
const LN2: f64 = std::f64::consts::LN_2;
const SIGN_F64: u64 = 1 << 63;
/// Below this, a^2/3 < 2^-54 (sqrt(3) 2^-27 = 1.2905e-8), so tanh a rounds
/// to a.
const TANH_TINY: f64 = 1.29e-8;
const SIGN_F32: u32 = 1 << 31;

/// Q(r) ~ (e^r - 1 - r) / r^2 on [-0.3466, 0.3466]: degree-10 minimax
/// polynomial for relative error (Remez), coefficients rounded to nearest;
/// measured relative error of the rounded polynomial 2^-57.2.
const EXP_Q: [f64; 11] = [
    0.5,                    // 0x3fe0000000000000
    0.1666666666666667,     // 0x3fc5555555555557
    0.041666666666666616,   // 0x3fa555555555554e
    0.008333333333326164,   // 0x3f811111111100ec
    0.0013888888888917974,  // 0x3f56c16c16c1a07c
    0.00019841269874736113, // 0x3f2a01a01abe0615
    2.4801587245719377e-05, // 0x3efa01a0190604c5
    2.755725549479546e-06,  // 0x3ec71de0246e2be8
    2.7557349626590297e-07, // 0x3e927e510dc629de
    2.510518172061611e-08,  // 0x3e5af4dc1c2b0b4d
    2.0889376507186583e-09, // 0x3e21f19f5a697c80
];

/// The same on the same interval at degree 6, for the f32 functions (which
/// compute in f64): measured relative error 2^-34.2, so r^2 Q(r) is within
/// 2^-38 of e^r - 1 - r relative to e^r.
const EXP_Q_SHORT: [f64; 7] = [
    0.500000000002089,      // 0x3fe0000000004980
    0.1666666671879379,     // 0x3fc555555673e7bd
    0.041666666405309784,   // 0x3fa5555553169a7d
    0.008333298548993952,   // 0x3f81110c65e2c821
    0.001388892374866927,   // 0x3f56c16fd4f951aa
    0.00019899232262715524, // 0x3f2a1513092227de
    2.482087655168725e-05,  // 0x3efa06cda6153012
];

// ---------------------------------------------------------------------------
// f64 building blocks
// ---------------------------------------------------------------------------

/// e^x = 2^n (1 + hi + t), with |hi + t| <= 0.42, hi exact and t within
/// about 2^-55.7 absolute (the roundings of r2, Q, r2 Q and t; measured
/// through `exp_f64`); `u` = n + 2048 (as the low bits of an integer). For x in
/// [-746, 710] or NaN (garbage, harmlessly, for NaN). Operation order:
///
/// ```text
/// k  = x * LOG2E + SHIFTER            (n in the low bits of k)
/// nf = k - SHIFTER                    (= n exactly)
/// hi = x - nf * LN2_HI                (exact: Cody & Waite)
/// lo = nf * LN2_LO
/// r  = hi - lo;  rl = (hi - r) - lo   (rounding error of r; Fast2Sum)
/// r2 = r * r;  r4 = r2 * r2;  r8 = r4 * r4
/// Q  = ((c0 + c1 r) + (c2 + c3 r) r2) + ((c4 + c5 r) + (c6 + c7 r) r2) r4
///      + ((c8 + c9 r) + c10 r2) r8    (Estrin's scheme)
/// t  = r2 * Q + (r * rl - lo)         (= e^(hi - lo) - 1 - hi)
/// ```
#[derive(Clone, Copy)]
struct Reduced {
    hi: f64,
    t: f64,
    u: u64,
}

#[inline(always)]
fn reduce(x: f64) -> Reduced {
    let k = x * LOG2E + SHIFTER;
    let nf = k - SHIFTER;
    let hi = x - nf * LN2_HI;
    let lo = nf * LN2_LO;
    let r = hi - lo;
    // When |hi| < |lo| this is not exact, but then |r| < 2^-42 and rl does
    // not matter.
    let rl = (hi - r) - lo;
    let r2 = r * r;
    let r4 = r2 * r2;
    let r8 = r4 * r4;
    let c = &EXP_Q;
    let q = ((c[0] + c[1] * r) + (c[2] + c[3] * r) * r2)
        + ((c[4] + c[5] * r) + (c[6] + c[7] * r) * r2) * r4
        + ((c[8] + c[9] * r) + c[10] * r2) * r8;
    let t = r2 * q + (r * rl - lo);
    let u = k
        .to_bits()
        .wrapping_sub(SHIFTER.to_bits())
        .wrapping_add(2048);
    Reduced { hi, t, u }
}

impl Reduced {
    /// 1 + hi + t as ph + pl, |pl| <= ulp(ph)/2:
    /// `s = 1 + hi; e = (1 - s) + hi; w = e + t; ph = s + w; pl = (s - ph) + w`
    /// (Fast2Sum twice; s + e = 1 + hi exactly).
    #[inline(always)]
    fn pair(self) -> (f64, f64) {
        let s = 1.0 + self.hi;
        let e = (1.0 - s) + self.hi;
        let w = e + self.t;
        let ph = s + w;
        let pl = (s - ph) + w;
        (ph, pl)
    }

    /// 2^n for -1022 <= n <= 1023: `(n + 1023) << 52` as bits.
    #[inline(always)]
    fn pow2(self) -> f64 {
        f64::from_bits(self.u.wrapping_sub(1025) << 52)
    }

    /// (s1, s2, k): s1 = 2^floor(n/2), s2 = 2^(n - floor(n/2)), both normal
    /// for -2044 <= n <= 2046, and k = MIN_POSITIVE / s2 (meaningful when
    /// n < -1021).
    #[inline(always)]
    fn scales(self) -> (f64, f64, f64) {
        let half = self.u >> 1; // floor(n/2) + 1024
        let s1 = f64::from_bits(half.wrapping_sub(1) << 52);
        let e2 = self.u.wrapping_sub(half).wrapping_sub(1); // exponent field of s2
        let s2 = f64::from_bits(e2 << 52);
        let k = f64::from_bits(1024u64.wrapping_sub(e2) << 52);
        (s1, s2, k)
    }
}

/// (ph + pl) * s1 * s2 rounded once, also where that is subnormal:
///
/// ```text
/// a = ph * s1;  b = pl * s1                       (exact)
/// normal:    a * s2                               (exact unless subnormal)
/// subnormal: h = k + a;  l = (k - h) + a          (Fast2Sum, k > a)
///            ((h + (l + b)) - k) * s2             (one rounding, then exact)
/// ```
/// Adding k = MIN_POSITIVE / s2 makes the spacing of the sum, once scaled by
/// s2, exactly the subnormal spacing, so the one rounding of `h + (l + b)`
/// is the rounding of the subnormal result.
#[inline(always)]
fn scale_once(ph: f64, pl: f64, s1: f64, s2: f64, k: f64) -> f64 {
    let a = ph * s1;
    let b = pl * s1;
    let normal = a * s2;
    let h = k + a;
    let l = (k - h) + a;
    let sub = ((h + (l + b)) - k) * s2;
    if normal < f64::MIN_POSITIVE {
        sub
    } else {
        normal
    }
}

/// `|x|` by clearing the sign bit.
#[inline(always)]
fn abs64(x: f64) -> f64 {
    f64::from_bits(x.to_bits() & !SIGN_F64)
}

// ---------------------------------------------------------------------------
// f64 functions
// ---------------------------------------------------------------------------

/// `e^x` in f64.
///
/// Algorithm: clamp x to [-746, 710] (beyond these e^x rounds to 0 or
/// overflows, as it still does at the clamped value); Cody & Waite (1980)
/// reduction x = n ln 2 + r, |r| <= 0.3466, n found with the 1.5 * 2^52
/// shifter, ln 2 split into a 42-bit head and a tail; e^r = 1 + r + r^2
/// Q(r), Q the degree-10 minimax polynomial `EXP_Q` (Remez), evaluated by
/// Estrin's scheme; the rounding errors of r and of 1 + hi are carried
/// (Fast2Sum), so e^r is formed as a head ph and a tail pl; then the result
/// is (ph + pl) * 2^n with 2^n applied as the two factors 2^floor(n/2) and
/// 2^(n - floor(n/2)) built by shifting n into the exponent bits, rounding
/// a subnormal result once. The exact operation order is that of
/// `reduce`, `Reduced::pair`, `Reduced::scales` and `scale_once` (private,
/// documented in the source). NaN in gives `x + x`.
///
/// Edges: e^0 = e^-0 = 1; +inf for x > 709.782712893384 (and +inf); 0 for
/// x < -745.1332191019412 (and -inf); subnormal between those and
/// -708.3964185322641.
///
/// Accuracy: bound 1 ulp; measured 0.65 ulp. Analysis: 0.5 ulp for the
/// last rounding, plus the roundings of r^2, Q(r), t and w, below 2^-56
/// relative together (about 0.15 ulp at most), plus 2^-61 for the
/// polynomial.
#[inline]
pub fn exp_f64(x: f64) -> f64 {
    exp_core_f64(x)
}

/// The body of [`exp_f64`], always inlined so the slice loops vectorise.
#[inline(always)]
fn exp_core_f64(x: f64) -> f64 {
    let xc = if x > 710.0 { 710.0 } else { x };
    let xc = if xc < -746.0 { -746.0 } else { xc };
    let red = reduce(xc);
    let (ph, pl) = red.pair();
    let (s1, s2, k) = red.scales();
    let y = scale_once(ph, pl, s1, s2, k);
    if x.is_nan() {
        x + x
    } else {
        y
    }
}

/// `tanh(x)` in f64.
///
/// Algorithm, on a = |x| (the sign of x is put back at the end by setting
/// the sign bit, so tanh(-0.0) = -0.0):
/// * a is clamped to 22 (tanh a rounds to 1 beyond 19.06), and e^(2a) =
///   2^n (1 + hi + t), 0 <= n <= 64, comes from the reduction of
///   [`exp_f64`];
/// * em = e^(2a) - 1 = (2^n - 1) + 2^n hi + 2^n t and den = em + 2 =
///   (2^n + 1) + 2^n hi + 2^n t are each formed as a head and a tail with
///   Fast2Sum, so nothing is lost to cancellation (for small a, em is
///   2a (1 + a + ...) to full relative accuracy);
/// * tanh a = em / den while em < 2 (tanh a < 0.5), and 1 - 2 / den
///   beyond; the numerator is min(emh, 2), so there is one division
///   w = num / dh; the tails add the correction (numl - w dl) / den, with
///   1 / den taken as (1 - w) / 2 or w / 2; in the second form 1 - w is
///   split exactly (Fast2Sum) before the correction is subtracted;
/// * for a < 1.29e-8, where tanh a rounds to a, the result is a.
///
/// NaN in gives `x + x`. The exact operation order is in the source.
///
/// Edges: tanh(+-0) = +-0; tanh x = x for |x| < 1.29e-8 (subnormals
/// included); exactly +-1 for |x| > 19.0615 (and +-inf).
///
/// Accuracy: bound 1.5 ulp; measured 1.25 ulp. Analysis: the division
/// and the last operation round once each (0.5 ulp each; where
/// tanh a >= 0.5 the division's error counts at most half), plus the error
/// of em, which is largest where em = 2 e^r - 1 cancels (n = 1, r near
/// -0.35, a near 0.17): there t's 2^-55.7 becomes 2^-53.5 of em, up to
/// about 0.4 ulp of tanh. At most about 1.4 ulp.
#[inline]
pub fn tanh_f64(x: f64) -> f64 {
    tanh_core_f64(x)
}

/// The body of [`tanh_f64`], always inlined so the slice loops vectorise.
#[inline(always)]
fn tanh_core_f64(x: f64) -> f64 {
    let a = abs64(x);
    let ac = if a > 22.0 { 22.0 } else { a };
    let red = reduce(ac + ac); // 0 <= n <= 64
    let p2 = red.pow2();
    // em = e^(2a) - 1 = (2^n - 1) + 2^n hi + 2^n t, as emh + eml
    let b = p2 * red.hi;
    let c = p2 * red.t;
    let am = p2 - 1.0; // exact for n <= 53, else am + aml = 2^n - 1
    let aml = (p2 - am) - 1.0;
    let sm = am + b;
    let em_t = ((am - sm) + b) + (c + aml);
    let emh = sm + em_t;
    let eml = (sm - emh) + em_t;
    // den = em + 2 = (2^n + 1) + 2^n hi + 2^n t, as dh + dl
    let ap = p2 + 1.0; // exact for n <= 52, else ap + apl = 2^n + 1
    let apl = (p2 - ap) + 1.0;
    let sp = ap + b;
    let d_t = ((ap - sp) + b) + (c + apl);
    let dh = sp + d_t;
    let dl = (sp - dh) + d_t;
    // tanh a = em / den for em < 2 (tanh a < 0.5), else 1 - 2 / den: one
    // division, of the numerator min(emh, 2). (A select there would be
    // turned by the compiler into two divisions and a select of quotients.
    // For NaN, the result is replaced below.)
    let large = emh >= 2.0;
    let num = emh.min(2.0);
    let numl = if large { 0.0 } else { eml };
    let w = num / dh;
    // (num + numl) / (dh + dl) = w + rem / den, with 1 / den = w / 2
    // (large) or (1 - tanh a) / 2 = (1 - w) / 2 (small)
    let rem = numl - w * dl;
    let rinv = if large { w } else { 1.0 - w } * 0.5;
    let corr = rem * rinv;
    let h = 1.0 - w;
    let hl = (1.0 - h) - w; // Fast2Sum: h + hl = 1 - w exactly
    let t = if large { h + (hl - corr) } else { w + corr };
    // tanh a = a (1 - a^2/3 + ...) rounds to a itself below TANH_TINY.
    let t = if a < TANH_TINY { a } else { t };
    let t = f64::from_bits(t.to_bits() | (x.to_bits() & SIGN_F64));
    if x.is_nan() {
        x + x
    } else {
        t
    }
}

/// The logistic function `1 / (1 + e^-x)` in f64.
///
/// Algorithm, without overflow for either sign: E = e^-min(|x|, 746)
/// (so E <= 1) from the reduction of [`exp_f64`], as a head eh and a tail
/// el; d + dl = 1 + E (Fast2Sum); the numerator is 1 for x >= 0
/// (1 / (1 + e^-x)) and E for x < 0 (e^x / (1 + e^x)), formed as
/// max(E, 1 or 0) from the sign bit; q = num / d (one division); the result is q + (numl - q dl) * rinv, where
/// rinv = q for x >= 0 and 1 - q for x < 0 are both close to 1 / (1 + E).
/// For x < -600, where logistic(x) = e^x (1 - e^x + ...) rounds as e^x
/// does and may be subnormal, the result is e^x rounded once as in
/// [`exp_f64`]. NaN in gives `x + x`. The exact operation order is in the
/// source.
///
/// Edges: logistic(+-0) = 0.5; exactly 1 for x > 37.43 (and +inf); 0 for
/// x < -745.13 (and -inf); subnormal between -745.13 and -708.40.
///
/// Accuracy: bound 1.5 ulp; measured 1.04 ulp. Analysis: as for
/// [`tanh_f64`], the division and the last operation round once each
/// (0.5 ulp each), plus below 2^-55 relative from E (about 0.15 ulp).
#[inline]
pub fn logistic_f64(x: f64) -> f64 {
    logistic_core_f64(x)
}

/// The body of [`logistic_f64`], always inlined so the slice loops
/// vectorise.
#[inline(always)]
fn logistic_core_f64(x: f64) -> f64 {
    // Below this, e^(2x) < 2^-1731 is far below half an ulp of e^x.
    const TINY: f64 = -600.0;
    let a = abs64(x);
    let ac = if a > 746.0 { 746.0 } else { a };
    let red = reduce(-ac);
    let (ph, pl) = red.pair();
    let (s1, s2, k) = red.scales();
    let eh = (ph * s1) * s2;
    let el = (pl * s1) * s2;
    let d = 1.0 + eh;
    let dl = ((1.0 - d) + eh) + el;
    // x >= 0 by the sign bit (-0.0 counts as negative; both forms give 0.5)
    let pos = x.to_bits() & SIGN_F64 == 0;
    // The numerator, 1 or eh (<= 1), as max(eh, 1 or 0) with the 1 or 0
    // made arithmetically from the sign bit: given a select here, the
    // compiler divides both candidates and selects a quotient, which costs a
    // second division.
    let sgn = f64::from_bits((x.to_bits() & SIGN_F64) | 1f64.to_bits()); // +-1
    let nh = eh.max((1.0 + sgn) * 0.5);
    let nl = if pos { 0.0 } else { el };
    let q = nh / d;
    let rem = nl - q * dl;
    let rinv = if pos { q } else { 1.0 - q };
    let s = q + rem * rinv;
    // Far left, logistic(x) = e^x (1 - e^x + ...) rounds as e^x does, which
    // may be subnormal: use the exponential's own single rounding.
    let s = if x < TINY {
        scale_once(ph, pl, s1, s2, k)
    } else {
        s
    };
    if x.is_nan() {
        x + x
    } else {
        s
    }
}

// ---------------------------------------------------------------------------
// f32 functions, computed in f64
// ---------------------------------------------------------------------------

/// For x in [-105, 90] (or NaN): returns (2^n, m) with e^x = 2^n (1 + m),
/// m = e^r - 1 = r + r^2 Q(r) within about 2^-37 relative, r = x - n ln 2
/// with ln 2 rounded to f64. Operation order:
///
/// ```text
/// k = x * LOG2E + SHIFTER;  nf = k - SHIFTER;  r = x - nf * LN2
/// r2 = r * r;  r4 = r2 * r2
/// Q = ((c0 + c1 r) + (c2 + c3 r) r2) + ((c4 + c5 r) + c6 r2) r4
/// m = r + r2 * Q;  2^n = (bits(k) - bits(SHIFTER) + 1023) << 52
/// ```
#[inline(always)]
fn expm1_short(x: f64) -> (f64, f64) {
    let k = x * LOG2E + SHIFTER;
    let nf = k - SHIFTER;
    let r = x - nf * LN2;
    let r2 = r * r;
    let r4 = r2 * r2;
    let c = &EXP_Q_SHORT;
    let q = ((c[0] + c[1] * r) + (c[2] + c[3] * r) * r2) + ((c[4] + c[5] * r) + c[6] * r2) * r4;
    let m = r + r2 * q; // e^r - 1
    let p2 = f64::from_bits(
        k.to_bits()
            .wrapping_sub(SHIFTER.to_bits())
            .wrapping_add(1023)
            << 52,
    );
    (p2, m)
}

/// `e^x` in f32, computed in f64 and rounded once.
///
/// Algorithm: x is widened to f64 (exactly) and clamped to [-104, 89];
/// n = round(x / ln 2) by the shifter; r = x - n ln 2 with ln 2 rounded to
/// f64; e^r - 1 = r + r^2 Q(r) with Q the degree-6 minimax polynomial
/// `EXP_Q_SHORT` (Remez; Estrin's scheme); e^x = 2^n + 2^n (e^r - 1) in
/// f64, where 2^n is normal; the conversion to f32 rounds once, giving
/// +inf above 88.72284 and subnormal f32 results (below -87.34) or 0
/// (below -103.97) with a single rounding. NaN in gives `x + x`. The exact
/// operation order is that of `expm1_short` and then
/// `(p2 + p2 * m) as f32`.
///
/// Accuracy: bound 1 ulp; measured 0.5001 ulp over all 2^32 inputs. The
/// f64 value is within about 2^-37 of e^x relative, so the result is the
/// correctly rounded one except within about 2^-13 ulp of a tie.
#[inline]
pub fn exp_f32(x: f32) -> f32 {
    exp_core_f32(x)
}

/// The body of [`exp_f32`], always inlined so the slice loops vectorise.
#[inline(always)]
fn exp_core_f32(x: f32) -> f32 {
    let w = x as f64;
    let wc = if w > 89.0 { 89.0 } else { w };
    let wc = if wc < -104.0 { -104.0 } else { wc };
    let (p2, m) = expm1_short(wc);
    let y = (p2 + p2 * m) as f32;
    if x.is_nan() {
        x + x
    } else {
        y
    }
}

/// `tanh(x)` in f32, computed in f64 and rounded once.
///
/// Algorithm: a = |x| in f64, clamped to 10 (tanh rounds to 1 beyond
/// 9.011); em = e^(2a) - 1 = (2^n - 1) + 2^n (e^r - 1) from the reduction
/// of [`exp_f32`] (for small a, n = 0 and em = e^r - 1 = r + r^2 Q(r) with
/// r = 2a, so there is no cancellation); tanh a = em / (em + 2) in f64;
/// rounded to f32 and the sign bit of x put back (tanh(-0.0) = -0.0).
/// NaN in gives `x + x`.
///
/// Edges: tanh x = x for tiny x (subnormals included); exactly +-1 for
/// |x| > 9.0109 (and +-inf).
///
/// Accuracy: bound 1 ulp; measured 0.5002 ulp over all 2^32 inputs.
#[inline]
pub fn tanh_f32(x: f32) -> f32 {
    tanh_core_f32(x)
}

/// The body of [`tanh_f32`], always inlined so the slice loops vectorise.
#[inline(always)]
fn tanh_core_f32(x: f32) -> f32 {
    let w = x as f64;
    let a = abs64(w);
    let ac = if a > 10.0 { 10.0 } else { a };
    let (p2, m) = expm1_short(ac + ac);
    let em = (p2 - 1.0) + p2 * m;
    let t = (em / (em + 2.0)) as f32;
    let t = f32::from_bits(t.to_bits() | (x.to_bits() & SIGN_F32));
    if x.is_nan() {
        x + x
    } else {
        t
    }
}

/// The logistic function `1 / (1 + e^-x)` in f32, computed in f64 and
/// rounded once.
///
/// Algorithm: E = e^-min(|x|, 104) = 2^n + 2^n (e^r - 1) in f64 (normal)
/// from the reduction of [`exp_f32`]; the result is num / (1 + E) with
/// num = 1 for x >= 0 and E for x < 0 (chosen by a select), rounded to f32.
/// NaN in gives `x + x`.
///
/// Edges: logistic(+-0) = 0.5; exactly 1 for x > 17.33 (and +inf); 0 below
/// -103.97 (and -inf); subnormal between -103.97 and -87.34.
///
/// Accuracy: bound 1 ulp; measured 0.5001 ulp over all 2^32 inputs.
#[inline]
pub fn logistic_f32(x: f32) -> f32 {
    logistic_core_f32(x)
}

/// The body of [`logistic_f32`], always inlined so the slice loops
/// vectorise.
#[inline(always)]
fn logistic_core_f32(x: f32) -> f32 {
    let w = x as f64;
    let a = abs64(w);
    let ac = if a > 104.0 { 104.0 } else { a };
    let (p2, m) = expm1_short(-ac);
    let e = p2 + p2 * m; // e^-|x|, normal in f64
    let num = if w >= 0.0 { 1.0 } else { e };
    let s = (num / (1.0 + e)) as f32;
    if x.is_nan() {
        x + x
    } else {
        s
    }
}

// ---------------------------------------------------------------------------
// Slice loops, one copy per vector path
// ---------------------------------------------------------------------------

macro_rules! slice_function {
    (
        $(#[$doc:meta])*
        $slice:ident, $with:ident, $core:ident, $ty:ty,
        $base:ident, $avx2:ident, $avx512:ident
    ) => {
        fn $base(v: &mut [$ty]) {
            for x in v.iter_mut() {
                *x = $core(*x);
            }
        }

        #[cfg(target_arch = "x86_64")]
        #[target_feature(enable = "avx2")]
        unsafe fn $avx2(v: &mut [$ty]) {
            for x in v.iter_mut() {
                *x = $core(*x);
            }
        }

        #[cfg(target_arch = "x86_64")]
        #[target_feature(enable = "avx512f")]
        unsafe fn $avx512(v: &mut [$ty]) {
            for x in v.iter_mut() {
                *x = $core(*x);
            }
        }

        $(#[$doc])*
        #[inline]
        pub fn $slice(v: &mut [$ty]) {
            $with(VectorPath::detect(), v)
        }

        #[doc = concat!("[`", stringify!($slice), "`] on the given vector path (the same bits on every path).")]
        pub fn $with(path: VectorPath, v: &mut [$ty]) {
            match path.0 {
                PathKind::Baseline => $base(v),
                // SAFETY: a `VectorPath` other than the baseline is only
                // made by `VectorPath::available`, after the CPU reported
                // the feature.
                #[cfg(target_arch = "x86_64")]
                PathKind::Avx2 => unsafe { $avx2(v) },
                #[cfg(target_arch = "x86_64")]
                PathKind::Avx512 => unsafe { $avx512(v) },
                #[cfg(not(target_arch = "x86_64"))]
                _ => $base(v),
            }
        }
    };
}

slice_function!(
    /// [`exp_f64`] on every element, in place (the same bits as the scalar
    /// function), on the widest [`VectorPath`] this CPU supports.
    exp_slice_f64, exp_slice_f64_with, exp_core_f64, f64,
    exp_base_f64, exp_avx2_f64, exp_avx512_f64
);
slice_function!(
    /// [`tanh_f64`] on every element, in place (the same bits as the
    /// scalar function), on the widest [`VectorPath`] this CPU supports.
    tanh_slice_f64, tanh_slice_f64_with, tanh_core_f64, f64,
    tanh_base_f64, tanh_avx2_f64, tanh_avx512_f64
);
slice_function!(
    /// [`logistic_f64`] on every element, in place (the same bits as the
    /// scalar function), on the widest [`VectorPath`] this CPU supports.
    logistic_slice_f64, logistic_slice_f64_with, logistic_core_f64, f64,
    logistic_base_f64, logistic_avx2_f64, logistic_avx512_f64
);
slice_function!(
    /// [`exp_f32`] on every element, in place (the same bits as the scalar
    /// function), on the widest [`VectorPath`] this CPU supports.
    exp_slice_f32, exp_slice_f32_with, exp_core_f32, f32,
    exp_base_f32, exp_avx2_f32, exp_avx512_f32
);
slice_function!(
    /// [`tanh_f32`] on every element, in place (the same bits as the
    /// scalar function), on the widest [`VectorPath`] this CPU supports.
    tanh_slice_f32, tanh_slice_f32_with, tanh_core_f32, f32,
    tanh_base_f32, tanh_avx2_f32, tanh_avx512_f32
);
slice_function!(
    /// [`logistic_f32`] on every element, in place (the same bits as the
    /// scalar function), on the widest [`VectorPath`] this CPU supports.
    logistic_slice_f32, logistic_slice_f32_with, logistic_core_f32, f32,
    logistic_base_f32, logistic_avx2_f32, logistic_avx512_f32
);

#[cfg(test)]
mod tests {
    use super::*;

    // -----------------------------------------------------------------------
    // Accuracy against correctly rounded references
    // -----------------------------------------------------------------------

    // Source: mpmath 1.4.1 (F. Johansson and others, "mpmath: a Python
    // library for arbitrary-precision floating-point arithmetic"), at 256
    // bits, checked at 320 bits, rounded to nearest-even (IEEE 754-2019) by
    // tools/vecmath/make_reference.py; see each file's header. The path is from the
    // crate root, so this module file can live anywhere in the crate.
    macro_rules! reference {
        ($name:literal) => {
            include_str!(concat!(
                env!("CARGO_MANIFEST_DIR"),
                "/tests/data/vecmath/",
                $name,
                ".txt"
            ))
        };
    }

    /// The stated bounds, in ulps (see the module documentation).
    const BOUND_EXP_F64: f64 = 1.0;
    const BOUND_TANH_F64: f64 = 1.5;
    const BOUND_LOGISTIC_F64: f64 = 1.5;
    const BOUND_F32: f64 = 1.0;

    /// One reference line: input bits, rounded result bits, residual
    /// (exact - rounded) / ulp(exact) (`None` for a NaN result).
    struct Case {
        x: u64,
        y: u64,
        residual: Option<f64>,
    }

    fn parse(text: &str) -> Vec<Case> {
        let mut out = Vec::new();
        for (n, line) in text.lines().enumerate() {
            if line.starts_with('#') || line.trim().is_empty() {
                continue;
            }
            let mut f = line.split_whitespace();
            let mut field = || f.next().unwrap_or_else(|| panic!("line {}: short", n + 1));
            let x = u64::from_str_radix(field(), 16).expect("input bits");
            let y = u64::from_str_radix(field(), 16).expect("result bits");
            let r = field();
            let residual = if r == "nan" {
                None
            } else {
                Some(r.parse::<f64>().expect("residual"))
            };
            out.push(Case { x, y, residual });
        }
        out
    }

    /// Error in ulps of the exact value, given the computed value `c`, the
    /// correctly rounded value `r` and the residual, all as f64 (exact for
    /// f32 values). `p` and `emin` describe the format (53/-1022, 24/-126).
    fn ulp_error(c: f64, r: f64, residual: f64, p: i32, emin: i32) -> f64 {
        if r.is_infinite() {
            return if c == r { 0.0 } else { f64::INFINITY };
        }
        if c.is_nan() || c.is_infinite() {
            return f64::INFINITY;
        }
        let min_ulp = pow2(emin - p + 1);
        if r == 0.0 {
            return ((c - r) / min_ulp - residual).abs();
        }
        // e = floor(log2 |r|), from the bits of r as f64 (exact for f32 values)
        let bits = r.abs().to_bits();
        let e = if bits >> 52 == 0 {
            // f64 subnormal
            -1011 - (bits.leading_zeros() as i32)
        } else {
            (bits >> 52) as i32 - 1023
        };
        let mut u = pow2(e.max(emin) - p + 1);
        // rounded up to a power of two: the exact value is in the binade below
        if r.abs() == pow2(e) && e > emin && residual * r.signum() < 0.0 {
            u /= 2.0;
        }
        ((c - r) / u - residual).abs()
    }

    /// 2^e as f64 for -1074 <= e <= 1023, built from the bits.
    fn pow2(e: i32) -> f64 {
        if e >= -1022 {
            f64::from_bits(((e + 1023) as u64) << 52)
        } else {
            f64::from_bits(1u64 << (e + 1074))
        }
    }

    struct Worst {
        err: f64,
        x: f64,
    }

    fn check_f64(
        name: &str,
        text: &str,
        bound: f64,
        scalar: fn(f64) -> f64,
        slice: fn(&mut [f64]),
    ) -> Worst {
        let cases = parse(text);
        assert!(cases.len() >= 2_500, "{name}: only {} cases", cases.len());
        let mut v: Vec<f64> = cases.iter().map(|c| f64::from_bits(c.x)).collect();
        slice(&mut v);
        let mut worst = Worst { err: 0.0, x: 0.0 };
        for (case, &sv) in cases.iter().zip(&v) {
            let x = f64::from_bits(case.x);
            let c = scalar(x);
            assert_eq!(
                c.to_bits(),
                sv.to_bits(),
                "{name}: scalar and slice differ at {x:e}"
            );
            match case.residual {
                None => assert!(c.is_nan(), "{name}({x:e}) = {c:e}, want NaN"),
                Some(res) => {
                    let r = f64::from_bits(case.y);
                    let err = ulp_error(c, r, res, 53, -1022);
                    assert!(
                        err <= bound,
                        "{name}({x:e} = {:#018x}) = {c:e}, correctly rounded {r:e}: {err} ulp",
                        case.x
                    );
                    if c == 0.0 || r == 0.0 {
                        assert_eq!(c.to_bits(), r.to_bits(), "{name}({x:e}): sign of zero");
                    }
                    if err > worst.err {
                        worst = Worst { err, x };
                    }
                }
            }
        }
        println!(
            "{name}: {} cases, max error {:.4} ulp at x = {:e}",
            cases.len(),
            worst.err,
            worst.x
        );
        worst
    }

    #[test]
    fn exp_f64_matches_mpmath() {
        check_f64(
            "exp_f64",
            reference!("exp_f64"),
            BOUND_EXP_F64,
            exp_f64,
            exp_slice_f64,
        );
    }
    #[test]
    fn tanh_f64_matches_mpmath() {
        check_f64(
            "tanh_f64",
            reference!("tanh_f64"),
            BOUND_TANH_F64,
            tanh_f64,
            tanh_slice_f64,
        );
    }
    #[test]
    fn logistic_f64_matches_mpmath() {
        check_f64(
            "logistic_f64",
            reference!("logistic_f64"),
            BOUND_LOGISTIC_F64,
            logistic_f64,
            logistic_slice_f64,
        );
    }
    // -----------------------------------------------------------------------
    // f32 accuracy, checked at test time against f64 evaluations.
    //
    // Reference: the f64 functions of the `libm` crate 0.2, a port of Sun
    // Microsystems' fdlibm 5.3 (1993), whose exp has an error below 1 ulp of
    // f64 (its documented bound); tanh and 1 / (1 + e^-x) formed from them in
    // f64 are within a few f64 ulps. Either way the reference is within
    // 2^-48 relative of the exact value, which is below 2^-24 of an f32 ulp,
    // so measuring the f32 result's distance to it in f32 ulps is exact to
    // that margin. The inputs: a million per function (random bit patterns,
    // uniform over the interesting range, log-uniform magnitudes, and the
    // thousand floats either side of each threshold).
    // -----------------------------------------------------------------------

    /// ulp of an f32 result whose exact value is `y` (as f64): 2^(e - 23)
    /// for 2^e <= |y|, and 2^-149 below the normal range.
    fn ulp32(y: f64) -> f64 {
        let e = ((y.abs().to_bits() >> 52) as i32) - 1023;
        pow2(e.max(-126) - 23)
    }

    /// Error of the f32 result `c` in f32 ulps of the reference `r`
    /// (infinite when an overflow or a NaN is missed).
    fn error_f32(c: f32, r: f64) -> f64 {
        if r.is_nan() {
            return if c.is_nan() { 0.0 } else { f64::INFINITY };
        }
        // At or beyond the midpoint between f32::MAX and 2^128 the correctly
        // rounded result is infinity (IEEE 754-2019 section 4.3.1).
        let top = pow2(127) * (2.0 - pow2(-24));
        if r.abs() >= top {
            let ok = c.is_infinite() && (c > 0.0) == (r > 0.0);
            return if ok { 0.0 } else { f64::INFINITY };
        }
        if !c.is_finite() {
            return f64::INFINITY;
        }
        (c as f64 - r).abs() / ulp32(r)
    }

    fn check_f32(
        name: &str,
        xs: &[f32],
        f: fn(f32) -> f32,
        slice: fn(&mut [f32]),
        reference: fn(f64) -> f64,
    ) {
        let mut v = xs.to_vec();
        slice(&mut v);
        let mut worst = (0.0f64, 0.0f32);
        for (&x, &sv) in xs.iter().zip(&v) {
            let c = f(x);
            assert_eq!(
                c.to_bits(),
                sv.to_bits(),
                "{name}: scalar and slice differ at {x:e}"
            );
            let err = error_f32(c, reference(x as f64));
            // The bound, plus the reference's own error (2^-24 ulp at most).
            assert!(
                err <= BOUND_F32 + 1.0 / (1u64 << 24) as f64,
                "{name}({x:e}) = {c:e}: {err} ulp"
            );
            if err > worst.0 {
                worst = (err, x);
            }
        }
        println!(
            "{name}: {} inputs, max error {:.4} ulp at x = {:e}",
            xs.len(),
            worst.0,
            worst.1
        );
    }

    /// 1 / (1 + e^-x) in f64 from libm's exp.
    fn logistic_reference(x: f64) -> f64 {
        1.0 / (1.0 + libm::exp(-x))
    }

    const ACCURACY_N: usize = 1 << 20;

    #[test]
    fn exp_f32_within_one_ulp() {
        let xs = inputs_f32(
            ACCURACY_N,
            31,
            110.0,
            &[88.72284, -87.33654, -103.97208, 0.346_573_6],
        );
        check_f32("exp_f32", &xs, exp_f32, exp_slice_f32, libm::exp);
    }
    #[test]
    fn tanh_f32_within_one_ulp() {
        let xs = inputs_f32(ACCURACY_N, 32, 12.0, &[0.3, 9.010913, 10.0, 4.2e-4]);
        check_f32("tanh_f32", &xs, tanh_f32, tanh_slice_f32, libm::tanh);
    }
    #[test]
    fn logistic_f32_within_one_ulp() {
        let xs = inputs_f32(
            ACCURACY_N,
            33,
            110.0,
            &[17.32868, -87.33654, -103.97208, 104.0],
        );
        check_f32(
            "logistic_f32",
            &xs,
            logistic_f32,
            logistic_slice_f32,
            logistic_reference,
        );
    }

    // -----------------------------------------------------------------------
    // Edges, spelled out. Expected values: the definitions, IEEE 754-2019
    // (NaN, infinities, signed zero, subnormals), and for the finite values
    // near the thresholds mpmath 1.4.1 correctly rounded (checked when
    // these were written).
    // -----------------------------------------------------------------------

    #[test]
    fn edges_f64() {
        let nans = [
            f64::NAN,
            -f64::NAN,
            f64::from_bits(0x7ff0_0000_0000_0001),
            f64::from_bits(0xfff8_0000_0000_0123),
        ];
        for x in nans {
            for f in [exp_f64, tanh_f64, logistic_f64] {
                let y = f(x);
                assert!(y.is_nan());
                assert_eq!(
                    y.to_bits(),
                    (x + x).to_bits(),
                    "NaN out is the quieted NaN in"
                );
            }
        }
        assert_eq!(exp_f64(0.0), 1.0);
        assert_eq!(exp_f64(-0.0), 1.0);
        assert_eq!(exp_f64(f64::INFINITY), f64::INFINITY);
        assert_eq!(exp_f64(f64::NEG_INFINITY).to_bits(), 0);
        assert_eq!(exp_f64(709.78), 1.7928227943945155e308); // below the overflow threshold
        assert_eq!(exp_f64(709.7827128933841), f64::INFINITY); // first double past ln(MAX)
        assert_eq!(exp_f64(f64::MAX), f64::INFINITY);
        assert_eq!(exp_f64(-745.0), f64::from_bits(1)); // e^-745 = 0.57 * 2^-1074
        assert_eq!(exp_f64(-745.2).to_bits(), 0); // below 2^-1075
        assert_eq!(exp_f64(-f64::MAX).to_bits(), 0);
        assert!(exp_f64(-708.5) < f64::MIN_POSITIVE && exp_f64(-708.5) > 0.0);
        assert_eq!(exp_f64(1e-300), 1.0);
        assert_eq!(exp_f64(1.0), std::f64::consts::E);

        assert_eq!(tanh_f64(0.0).to_bits(), 0);
        assert_eq!(tanh_f64(-0.0).to_bits(), (-0.0f64).to_bits());
        assert_eq!(tanh_f64(f64::INFINITY), 1.0);
        assert_eq!(tanh_f64(f64::NEG_INFINITY), -1.0);
        assert_eq!(tanh_f64(1e300), 1.0);
        assert_eq!(tanh_f64(-1e300), -1.0);
        assert_eq!(tanh_f64(19.07), 1.0);
        assert!(tanh_f64(19.0) < 1.0);
        for x in [
            f64::from_bits(1),
            -f64::from_bits(1),
            f64::MIN_POSITIVE,
            1e-300,
            1e-10,
            -1e-9,
            1.28e-8,
        ] {
            assert_eq!(tanh_f64(x), x, "tanh x = x for tiny x");
        }
        assert_eq!(tanh_f64(-1.0), -tanh_f64(1.0));

        assert_eq!(logistic_f64(0.0), 0.5);
        assert_eq!(logistic_f64(-0.0), 0.5);
        assert_eq!(logistic_f64(f64::INFINITY), 1.0);
        assert_eq!(logistic_f64(f64::NEG_INFINITY).to_bits(), 0);
        assert_eq!(logistic_f64(1000.0), 1.0);
        assert_eq!(logistic_f64(37.5), 1.0);
        assert!(logistic_f64(37.0) < 1.0);
        assert_eq!(logistic_f64(-1000.0).to_bits(), 0);
        assert_eq!(logistic_f64(-745.0), f64::from_bits(1));
        assert!(logistic_f64(-720.0) > 0.0 && logistic_f64(-720.0) < f64::MIN_POSITIVE);
    }

    #[test]
    fn edges_f32() {
        let nans = [
            f32::NAN,
            -f32::NAN,
            f32::from_bits(0x7f80_0001),
            f32::from_bits(0xffc0_0123),
        ];
        for x in nans {
            for f in [exp_f32, tanh_f32, logistic_f32] {
                let y = f(x);
                assert!(y.is_nan());
                assert_eq!(
                    y.to_bits(),
                    (x + x).to_bits(),
                    "NaN out is the quieted NaN in"
                );
            }
        }
        assert_eq!(exp_f32(0.0), 1.0);
        assert_eq!(exp_f32(-0.0), 1.0);
        assert_eq!(exp_f32(f32::INFINITY), f32::INFINITY);
        assert_eq!(exp_f32(f32::NEG_INFINITY).to_bits(), 0);
        assert_eq!(exp_f32(88.73), f32::INFINITY);
        assert!(exp_f32(88.72).is_finite());
        assert_eq!(exp_f32(-104.0).to_bits(), 0);
        assert_eq!(exp_f32(-103.5), f32::from_bits(1)); // e^-103.5 = 0.8 * 2^-149
        assert!(exp_f32(-88.0) < f32::MIN_POSITIVE && exp_f32(-88.0) > 0.0);
        assert_eq!(exp_f32(1.0), std::f32::consts::E);

        assert_eq!(tanh_f32(-0.0).to_bits(), (-0.0f32).to_bits());
        assert_eq!(tanh_f32(f32::INFINITY), 1.0);
        assert_eq!(tanh_f32(f32::NEG_INFINITY), -1.0);
        assert_eq!(tanh_f32(9.02), 1.0);
        assert!(tanh_f32(9.0) < 1.0);
        assert_eq!(tanh_f32(f32::MAX), 1.0);
        for x in [f32::from_bits(1), f32::MIN_POSITIVE, 1e-10, -1e-5, 2e-4] {
            assert_eq!(tanh_f32(x), x, "tanh x = x for tiny x");
        }

        assert_eq!(logistic_f32(0.0), 0.5);
        assert_eq!(logistic_f32(-0.0), 0.5);
        assert_eq!(logistic_f32(f32::INFINITY), 1.0);
        assert_eq!(logistic_f32(f32::NEG_INFINITY).to_bits(), 0);
        assert_eq!(logistic_f32(17.5), 1.0);
        assert!(logistic_f32(17.0) < 1.0);
        assert_eq!(logistic_f32(-200.0).to_bits(), 0);
        assert!(logistic_f32(-90.0) > 0.0 && logistic_f32(-90.0) < f32::MIN_POSITIVE);
    }

    // -----------------------------------------------------------------------
    // Bit identity across the scalar function and every vector path.
    // Source of the expectation: IEEE 754-2019 section 5.4, every basic
    // operation is correctly rounded, so lane count cannot change a result.
    // -----------------------------------------------------------------------

    /// SplitMix64 (G. Steele, D. Lea, C. Flood, "Fast splittable
    /// pseudorandom number generators", OOPSLA 2014); constants recalled from
    /// memory, which does not matter for a seeded test input generator.
    fn splitmix64(state: &mut u64) -> u64 {
        *state = state.wrapping_add(0x9e37_79b9_7f4a_7c15);
        let mut z = *state;
        z = (z ^ (z >> 30)).wrapping_mul(0xbf58_476d_1ce4_e5b9);
        z = (z ^ (z >> 27)).wrapping_mul(0x94d0_49bb_1331_11eb);
        z ^ (z >> 31)
    }

    /// Uniform in [0, 1).
    fn unit(state: &mut u64) -> f64 {
        (splitmix64(state) >> 11) as f64 * (1.0 / (1u64 << 53) as f64)
    }

    /// A mix of inputs: raw bit patterns (every class: NaN, infinities,
    /// subnormals), uniform over `[-span, span]`, log-uniform magnitudes,
    /// and values within a few ulps of the given thresholds.
    fn inputs_f64(n: usize, seed: u64, span: f64, thresholds: &[f64]) -> Vec<f64> {
        let mut s = seed;
        (0..n)
            .map(|_| {
                let kind = splitmix64(&mut s) % 4;
                match kind {
                    0 => f64::from_bits(splitmix64(&mut s)),
                    1 => span * (2.0 * unit(&mut s) - 1.0),
                    2 => {
                        // random sign and significand, exponent 2^-70..2^9
                        let r = splitmix64(&mut s);
                        let e = 1023 - 70 + (r >> 52) % 80;
                        f64::from_bits((r & (SIGN_F64 | ((1 << 52) - 1))) | (e << 52))
                    }
                    _ => {
                        let t = thresholds[(splitmix64(&mut s) % thresholds.len() as u64) as usize];
                        let d = (splitmix64(&mut s) % 2001) as i64 - 1000;
                        f64::from_bits((t.to_bits() as i64 + d) as u64)
                    }
                }
            })
            .collect()
    }

    fn inputs_f32(n: usize, seed: u64, span: f32, thresholds: &[f32]) -> Vec<f32> {
        let mut s = seed;
        (0..n)
            .map(|_| {
                let kind = splitmix64(&mut s) % 4;
                match kind {
                    0 => f32::from_bits(splitmix64(&mut s) as u32),
                    1 => span * (2.0 * unit(&mut s) as f32 - 1.0),
                    2 => {
                        // random sign and significand, exponent 2^-40..2^7
                        let r = splitmix64(&mut s) as u32;
                        let e = 127 - 40 + (r >> 23) % 48;
                        f32::from_bits((r & (SIGN_F32 | ((1 << 23) - 1))) | (e << 23))
                    }
                    _ => {
                        let t = thresholds[(splitmix64(&mut s) % thresholds.len() as u64) as usize];
                        let d = (splitmix64(&mut s) % 2001) as i32 - 1000;
                        f32::from_bits((t.to_bits() as i32 + d) as u32)
                    }
                }
            })
            .collect()
    }

    /// How many random inputs each function gets.
    const IDENTITY_N: usize = 1 << 21;

    macro_rules! identity_test {
        ($test:ident, $ty:ty, $inputs:ident, $scalar:ident, $with:ident, $seed:expr, $span:expr, $thr:expr) => {
            #[test]
            fn $test() {
                let xs: Vec<$ty> = $inputs(IDENTITY_N, $seed, $span, &$thr);
                let want: Vec<$ty> = xs.iter().map(|&x| $scalar(x)).collect();
                let paths = VectorPath::available();
                for &path in &paths {
                    // whole slice
                    let mut v = xs.clone();
                    $with(path, &mut v);
                    for (i, (a, b)) in v.iter().zip(&want).enumerate() {
                        assert_eq!(
                            a.to_bits(),
                            b.to_bits(),
                            "{}: path {} differs from the scalar function at x = {:e}",
                            stringify!($scalar),
                            path.name(),
                            xs[i]
                        );
                    }
                    // short and misaligned slices: vector bodies and their tails
                    for start in 0..8 {
                        for len in 0..70 {
                            let mut v = xs[start..start + len].to_vec();
                            $with(path, &mut v);
                            for (a, b) in v.iter().zip(&want[start..start + len]) {
                                assert_eq!(a.to_bits(), b.to_bits(), "path {} tail", path.name());
                            }
                        }
                    }
                }
                println!(
                    "{}: {} inputs, scalar = {} (bit for bit); output hash {:016x}",
                    stringify!($scalar),
                    xs.len(),
                    paths
                        .iter()
                        .map(|p| p.name())
                        .collect::<Vec<_>>()
                        .join(" = "),
                    // FNV-1a over the output bits, to compare builds made
                    // with different compiler flags.
                    want.iter().fold(0xcbf2_9ce4_8422_2325u64, |h, y| {
                        (h ^ y.to_bits() as u64).wrapping_mul(0x0100_0000_01b3)
                    })
                );
            }
        };
    }

    identity_test!(
        exp_f64_same_bits_on_every_path,
        f64,
        inputs_f64,
        exp_f64,
        exp_slice_f64_with,
        11,
        760.0,
        [
            709.782712893384,
            -708.3964185322641,
            -745.1332191019412,
            0.3465735902799727
        ]
    );
    identity_test!(
        tanh_f64_same_bits_on_every_path,
        f64,
        inputs_f64,
        tanh_f64,
        tanh_slice_f64_with,
        12,
        25.0,
        [0.3, 19.061547465398496, 22.0, 1.8e-8]
    );
    identity_test!(
        logistic_f64_same_bits_on_every_path,
        f64,
        inputs_f64,
        logistic_f64,
        logistic_slice_f64_with,
        13,
        760.0,
        [
            37.42994775023705,
            -708.3964185322641,
            -745.1332191019412,
            746.0
        ]
    );
    identity_test!(
        exp_f32_same_bits_on_every_path,
        f32,
        inputs_f32,
        exp_f32,
        exp_slice_f32_with,
        21,
        110.0,
        [88.72284, -87.33654, -103.97208, 0.346_573_6]
    );
    identity_test!(
        tanh_f32_same_bits_on_every_path,
        f32,
        inputs_f32,
        tanh_f32,
        tanh_slice_f32_with,
        22,
        12.0,
        [0.3, 9.010913, 10.0, 4.2e-4]
    );
    identity_test!(
        logistic_f32_same_bits_on_every_path,
        f32,
        inputs_f32,
        logistic_f32,
        logistic_slice_f32_with,
        23,
        110.0,
        [17.32868, -87.33654, -103.97208, 104.0]
    );

    #[test]
    fn detection_is_cached_and_available() {
        let paths = VectorPath::available();
        assert_eq!(paths[0], VectorPath::BASELINE);
        let best = VectorPath::detect();
        assert_eq!(Some(&best), paths.last());
        assert_eq!(VectorPath::detect(), best);
        println!(
            "vector paths on this CPU: {:?}",
            paths.iter().map(|p| p.name()).collect::<Vec<_>>()
        );
    }
}
