//! Matrix products for the engine: one kernel of our own that sums every
//! output element in a fixed order, for both arithmetic modes, split across
//! threads on wide layers.
//!
//! Every product here is `out (m x n) = lhs (m x p) . rhs (p x n)`, with
//! `out` row-major and contiguous, and `lhs` and `rhs` each given by a row
//! and a column stride (so a transposed operand costs no copy).
//!
//! **The order of every sum.** Each output element is
//!
//! ```text
//! acc = 0;  for q in 0..p (ascending) { acc = acc + lhs[r][q] * rhs[q][j] };  out[r][j] = acc (+ bias[j])
//! ```
//! in the portable mode, each `*` and `+` a correctly rounded IEEE 754
//! operation, and `acc = fma(lhs[r][q], rhs[q][j], acc)` (one rounding) in
//! the fast mode when the CPU has fused multiply-add. The kernel is
//! organised as in Goto & van de Geijn, "Anatomy of high-performance matrix
//! multiplication", ACM TOMS 34(3), 2008: the inner dimension is cut into
//! blocks of at most [`KC`], a block of `rhs` columns is copied into a
//! contiguous panel, and a register tile of `MR x NR` outputs is
//! accumulated over the block. None of that changes a sum: the tile is
//! vectorised *across output columns* (never across `q`), each block starts
//! from the partial sum the previous block stored (stored exactly, as the
//! same float type), the first block from zero, and the bias is added after
//! the last. So the tile shape, which differs between instruction sets, and
//! the block size change no bit.
//!
//! **Instruction sets.** The same source is compiled for baseline x86-64
//! (SSE2), for AVX2 and for AVX-512F, and the widest the CPU has is picked
//! at run time (`is_x86_feature_detected!`, which caches its answer).
//! Without fused multiply-add, an IEEE operation gives the same result in
//! any lane of any register width, so the portable mode gives the same bits
//! on every x86-64 CPU (and any IEEE 754 target).
//!
//! **Threads.** A product of at least [`PARALLEL`] multiply-adds is split
//! across rayon's threads by output columns (whole panels), or by output
//! rows when it has too few panels. Each output element is still computed
//! by one thread in the order above, so the thread count changes no bit.
//!
//! **Narrow outputs.** When `n` is narrower than one tile and `m` is
//! wider, the kernel computes the transposed product `out^T = rhs^T lhs^T`
//! instead, with the same sums: IEEE multiplication is commutative, and
//! each element is still summed over `q` ascending from zero.

use num_traits::Float;
use rayon::prelude::*;
use std::mem::MaybeUninit;

/// How the engine's sums are computed.
///
/// Both modes sum every element of every matrix product in one fixed order
/// (see below) and give the same bits for any number of threads. They
/// differ in how each multiply-add is rounded:
///
/// - `Portable` (the default) rounds the product and then the sum (no fused
///   multiply-add), so a seed gives the same bits on every x86-64 machine
///   (and any IEEE 754 target), with SSE2, AVX2 or AVX-512.
/// - `Fast` fuses each multiply-add (one rounding) where the CPU has fused
///   multiply-add, and is otherwise the same as `Portable`. Its last bits
///   can differ between a CPU with fused multiply-add and one without. It
///   is faster on CPUs whose adders share execution ports with their
///   multipliers (a fused operation is one instruction instead of two); on
///   CPUs with separate adders the two modes run at about the same speed.
///   A model file records the mode it was trained in.
///
/// Each product is the naive loop
///
/// ```text
/// z[i][j]  = (sum over k ascending, from 0, of x[i][k] * w[k][j]) + b[j]
/// gw[k][j] =  sum over rows i ascending, from 0, of a[i][k] * d[i][j]
/// gb[j]    =  sum over rows i ascending, from 0, of d[i][j]
/// p[i][k]  =  sum over j ascending, from 0, of d[i][j] * w[k][j]
/// ```
/// (vectorised across the output's columns, and split across threads by
/// output columns or rows, which changes no sum). `exp`, `tanh` and the
/// logistic function come from the engine's own fixed sequences of IEEE
/// operations in both modes (the same bits on every machine, see the
/// network module); `ln` and `ln(1 + x)` from the pure-Rust `libm` crate,
/// never from the platform's C library. Prediction, hidden activations and
/// the loss of a finished network always use the portable mode.
///
/// Text form: `portable`, `fast`.
#[derive(Clone, Copy, Debug, Default, PartialEq, Eq)]
pub enum Arithmetic {
    /// Fixed-order sums without fused multiply-add: bit-identical across
    /// machines (the default).
    #[default]
    Portable,
    /// Fused multiply-add where the CPU has it.
    Fast,
}

crate::error::text_forms!(Arithmetic, "arithmetic", {
    Arithmetic::Fast => "fast",
    Arithmetic::Portable => "portable",
});

impl Arithmetic {
    /// Is this the fast mode?
    pub fn is_fast(&self) -> bool {
        *self == Arithmetic::Fast
    }
}

/// The most `q` steps summed per block (the panel of `rhs` a block uses,
/// `KC x NR`, stays in the first-level cache).
pub(crate) const KC: usize = 128;

/// The widest tile's columns (f32 on AVX-512: two 16-lane registers).
const NR_MAX: usize = 16;

/// Products with at most this many multiply-adds take the plain loop.
const TINY: usize = 64;

/// Products with at least this many multiply-adds are split across threads
/// (below it, handing work to another thread costs more than it saves).
pub(crate) const PARALLEL: usize = 1 << 20;

/// One register tile's work: `rows x cols` outputs (at most `MR x NR`)
/// accumulated over `kc` steps of one block.
struct Tile<F> {
    kc: usize,
    /// `lhs[r0][k0]`; row `r` at `a + r * ars`, step `q` at `+ q * acs`.
    a: *const F,
    ars: usize,
    acs: usize,
    rows: usize,
    /// The packed panel: `kc` rows of `NR` values (zero past `cols`).
    b: *const F,
    /// `out[r0][j0]`, with its strides.
    c: *mut F,
    crs: usize,
    ccs: usize,
    cols: usize,
    /// The first block starts from zero; later ones from `c`.
    first: bool,
    /// `bias[j0]` on the last block when there is a bias, else null.
    bias: *const F,
}

/// A compiled tile for one float type, instruction set and mode.
pub(crate) struct Kernel<F> {
    mr: usize,
    nr: usize,
    /// Tiles of `mr` rows (fewer valid rows are computed but not stored).
    full: unsafe fn(&Tile<F>),
    /// Tiles of one row (the rows left over).
    one: unsafe fn(&Tile<F>),
}

impl<F> Clone for Kernel<F> {
    fn clone(&self) -> Self {
        *self
    }
}
impl<F> Copy for Kernel<F> {}

/// A float type the kernels are compiled for.
pub(crate) trait Element: Float + Send + Sync + 'static {
    /// The kernel for an instruction set (which the CPU must have) and mode.
    fn kernel_for(isa: Isa, fast: bool) -> Kernel<Self>;
}

/// The instruction sets the kernel is compiled for.
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
pub(crate) enum Isa {
    /// The baseline (SSE2 on x86-64).
    Base,
    /// AVX2, and whether the CPU has fused multiply-add.
    #[cfg(target_arch = "x86_64")]
    Avx2 { fma: bool },
    /// AVX-512F (which includes fused multiply-add).
    #[cfg(target_arch = "x86_64")]
    Avx512,
}

impl Isa {
    /// Does the CPU have fused multiply-add?
    fn has_fma(self) -> bool {
        match self {
            Isa::Base => false,
            #[cfg(target_arch = "x86_64")]
            Isa::Avx2 { fma } => fma,
            #[cfg(target_arch = "x86_64")]
            Isa::Avx512 => true,
        }
    }
}

/// The widest instruction set this CPU has: detected on the first call and
/// kept in an atomic (later calls cost one relaxed load).
#[inline]
pub(crate) fn isa() -> Isa {
    use std::sync::atomic::{AtomicU8, Ordering};
    static DETECTED: AtomicU8 = AtomicU8::new(0);
    let code = match DETECTED.load(Ordering::Relaxed) {
        0 => {
            let code = match *available().last().expect("the baseline") {
                Isa::Base => 1,
                #[cfg(target_arch = "x86_64")]
                Isa::Avx2 { fma: false } => 2,
                #[cfg(target_arch = "x86_64")]
                Isa::Avx2 { fma: true } => 3,
                #[cfg(target_arch = "x86_64")]
                Isa::Avx512 => 4,
            };
            DETECTED.store(code, Ordering::Relaxed);
            code
        }
        code => code,
    };
    match code {
        #[cfg(target_arch = "x86_64")]
        2 => Isa::Avx2 { fma: false },
        #[cfg(target_arch = "x86_64")]
        3 => Isa::Avx2 { fma: true },
        #[cfg(target_arch = "x86_64")]
        4 => Isa::Avx512,
        _ => Isa::Base,
    }
}

/// Every instruction set this CPU has, narrowest first.
pub(crate) fn available() -> Vec<Isa> {
    let mut out = vec![Isa::Base];
    #[cfg(target_arch = "x86_64")]
    {
        // `is_x86_feature_detected!` caches its answer: an atomic load.
        if is_x86_feature_detected!("avx2") {
            out.push(Isa::Avx2 {
                fma: is_x86_feature_detected!("fma"),
            });
        }
        if is_x86_feature_detected!("avx512f") {
            out.push(Isa::Avx512);
        }
    }
    out
}

/// Does the fast mode fuse multiply-adds on this CPU? The fast mode's bits
/// depend on this alone (see [`Arithmetic`]); the portable mode's on nothing
/// about the CPU.
pub fn fast_mode_fuses() -> bool {
    isa().has_fma()
}

/// The instruction set the kernels run on with this CPU (`avx512`,
/// `avx2+fma`, `avx2` or `sse2`), for benchmarks and the cross-CPU check.
/// The portable mode gives the same bits on each; the fast mode fuses
/// multiply-adds on `avx512` and `avx2+fma`.
pub fn kernel_name() -> &'static str {
    match isa() {
        Isa::Base => "sse2",
        #[cfg(target_arch = "x86_64")]
        Isa::Avx2 { fma: true } => "avx2+fma",
        #[cfg(target_arch = "x86_64")]
        Isa::Avx2 { fma: false } => "avx2",
        #[cfg(target_arch = "x86_64")]
        Isa::Avx512 => "avx512",
    }
}

macro_rules! compiled_for {
    ($name:ident, $features:literal) => {
        #[cfg(target_arch = "x86_64")]
        #[target_feature(enable = $features)]
        unsafe fn $name<F: Float, const MR: usize, const NR: usize, const FMA: bool>(t: &Tile<F>) {
            // SAFETY: as for `micro`; the caller checked the features.
            unsafe { micro::<F, MR, NR, FMA>(t) }
        }
    };
}
compiled_for!(micro_avx512, "avx512f");
compiled_for!(micro_avx2, "avx2");
compiled_for!(micro_avx2_fma, "avx2,fma");

/// The baseline build (SSE2 on x86-64).
unsafe fn micro_base<F: Float, const MR: usize, const NR: usize>(t: &Tile<F>) {
    // SAFETY: as for `micro`.
    unsafe { micro::<F, MR, NR, false>(t) }
}

/// A whole tile written with explicit vector intrinsics, one accumulator
/// register per `(row, vector)` of the tile: `fused` for the fast mode,
/// `rounded` (the product rounded, then the sum) for the portable mode.
///
/// The generic tile above, compiled with fused multiply-add, ran at a fifth
/// of the portable tile's speed on an AVX2 CPU (AMD family 25: 13 against
/// 60 GFLOP/s on a 128 x 256 x 784 f32 product), and the generic f64 tile
/// at half the speed of this one: the compiler kept part of the
/// accumulators on the stack. This tile does the same arithmetic in the
/// same order (for each output element, over `q` ascending,
/// `acc = fma(lhs[r][q], rhs[q][j], acc)` or `acc = acc + lhs[r][q] * rhs[q][j]`,
/// then the bias added with one rounding), so it gives the generic tile's
/// bits; the generic tile still does the one-row tiles and the baseline.
#[cfg(target_arch = "x86_64")]
macro_rules! fused_tile {
    (@madd fused, $fmadd:ident, $add:ident, $av:expr, $x:expr, $acc:expr) => {
        $fmadd($av, $x, $acc)
    };
    (@madd rounded, $mul:ident, $add:ident, $av:expr, $x:expr, $acc:expr) => {
        $add($acc, $mul($av, $x))
    };
    ($name:ident, $t:ty, $features:literal, $vec:ty, lanes: $lanes:literal, mr: $mr:literal, vectors: $vpr:literal,
     $zero:ident, $load:ident, $store:ident, $splat:ident, $kind:ident $madd:ident, $add:ident) => {
        #[target_feature(enable = $features)]
        unsafe fn $name(t: &Tile<$t>) {
            use std::arch::x86_64::*;
            const NR: usize = $lanes * $vpr;
            // SAFETY: as for `micro`: the caller checked the CPU's features,
            // and the tile's pointers address its rows, panel and outputs.
            unsafe {
                let full = t.rows == $mr && t.cols == NR && t.ccs == 1;
                let mut arow = [t.a; $mr];
                for (r, p) in arow.iter_mut().enumerate() {
                    *p = t.a.add(r.min(t.rows - 1) * t.ars);
                }
                let mut acc: [[$vec; $vpr]; $mr] = [[$zero(); $vpr]; $mr];
                if !t.first {
                    let mut part = [[0.0 as $t; NR]; $mr];
                    for (r, pr) in part.iter_mut().enumerate().take(t.rows) {
                        if full {
                            std::ptr::copy_nonoverlapping(t.c.add(r * t.crs), pr.as_mut_ptr(), NR);
                        } else {
                            for (j, v) in pr.iter_mut().enumerate().take(t.cols) {
                                *v = *t.c.add(r * t.crs + j * t.ccs);
                            }
                        }
                    }
                    for (accr, pr) in acc.iter_mut().zip(&part) {
                        for (v, a) in accr.iter_mut().enumerate() {
                            *a = $load(pr.as_ptr().add(v * $lanes));
                        }
                    }
                }
                let mut b = t.b;
                for q in 0..t.kc {
                    let mut bq = [$zero(); $vpr];
                    for (v, x) in bq.iter_mut().enumerate() {
                        *x = $load(b.add(v * $lanes));
                    }
                    for (accr, ar) in acc.iter_mut().zip(&arow) {
                        let av = $splat(*ar.add(q * t.acs));
                        for (a, &x) in accr.iter_mut().zip(&bq) {
                            *a = fused_tile!(@madd $kind, $madd, $add, av, x, *a);
                        }
                    }
                    b = b.add(NR);
                }
                if !t.bias.is_null() {
                    let mut bias = [0.0 as $t; NR];
                    for (j, v) in bias.iter_mut().enumerate().take(t.cols) {
                        *v = *t.bias.add(j);
                    }
                    for accr in acc.iter_mut() {
                        for (v, a) in accr.iter_mut().enumerate() {
                            *a = $add(*a, $load(bias.as_ptr().add(v * $lanes)));
                        }
                    }
                }
                let mut part = [[0.0 as $t; NR]; $mr];
                for (pr, accr) in part.iter_mut().zip(&acc) {
                    for (v, &a) in accr.iter().enumerate() {
                        $store(pr.as_mut_ptr().add(v * $lanes), a);
                    }
                }
                for (r, pr) in part.iter().enumerate().take(t.rows) {
                    if full {
                        std::ptr::copy_nonoverlapping(pr.as_ptr(), t.c.add(r * t.crs), NR);
                    } else {
                        for (j, &v) in pr.iter().enumerate().take(t.cols) {
                            *t.c.add(r * t.crs + j * t.ccs) = v;
                        }
                    }
                }
            }
        }
    };
}
#[cfg(target_arch = "x86_64")]
fused_tile!(fused_f32_avx2, f32, "avx2,fma", __m256, lanes: 8, mr: 6, vectors: 2,
    _mm256_setzero_ps, _mm256_loadu_ps, _mm256_storeu_ps, _mm256_set1_ps, fused _mm256_fmadd_ps, _mm256_add_ps);
#[cfg(target_arch = "x86_64")]
fused_tile!(fused_f64_avx2, f64, "avx2,fma", __m256d, lanes: 4, mr: 6, vectors: 2,
    _mm256_setzero_pd, _mm256_loadu_pd, _mm256_storeu_pd, _mm256_set1_pd, fused _mm256_fmadd_pd, _mm256_add_pd);
#[cfg(target_arch = "x86_64")]
fused_tile!(fused_f32_avx512, f32, "avx512f", __m512, lanes: 16, mr: 8, vectors: 1,
    _mm512_setzero_ps, _mm512_loadu_ps, _mm512_storeu_ps, _mm512_set1_ps, fused _mm512_fmadd_ps, _mm512_add_ps);
#[cfg(target_arch = "x86_64")]
fused_tile!(fused_f64_avx512, f64, "avx512f", __m512d, lanes: 8, mr: 8, vectors: 1,
    _mm512_setzero_pd, _mm512_loadu_pd, _mm512_storeu_pd, _mm512_set1_pd, fused _mm512_fmadd_pd, _mm512_add_pd);
// The portable mode's tiles: the product rounded, then the sum.
#[cfg(target_arch = "x86_64")]
fused_tile!(rounded_f32_avx2, f32, "avx2", __m256, lanes: 8, mr: 6, vectors: 2,
    _mm256_setzero_ps, _mm256_loadu_ps, _mm256_storeu_ps, _mm256_set1_ps, rounded _mm256_mul_ps, _mm256_add_ps);
#[cfg(target_arch = "x86_64")]
fused_tile!(rounded_f64_avx2, f64, "avx2", __m256d, lanes: 4, mr: 6, vectors: 2,
    _mm256_setzero_pd, _mm256_loadu_pd, _mm256_storeu_pd, _mm256_set1_pd, rounded _mm256_mul_pd, _mm256_add_pd);
#[cfg(target_arch = "x86_64")]
fused_tile!(rounded_f32_avx512, f32, "avx512f", __m512, lanes: 16, mr: 8, vectors: 1,
    _mm512_setzero_ps, _mm512_loadu_ps, _mm512_storeu_ps, _mm512_set1_ps, rounded _mm512_mul_ps, _mm512_add_ps);
#[cfg(target_arch = "x86_64")]
fused_tile!(rounded_f64_avx512, f64, "avx512f", __m512d, lanes: 8, mr: 8, vectors: 1,
    _mm512_setzero_pd, _mm512_loadu_pd, _mm512_storeu_pd, _mm512_set1_pd, rounded _mm512_mul_pd, _mm512_add_pd);

// Tile shapes, (MR rows, NR columns) for each instruction set: NR a whole
// number of vector registers. AVX-512: 8 accumulator registers, which
// measured fastest there (more, e.g. 8 x 32 f32, ran at 60% of 8 x 16 on an
// AVX-512 machine). AVX2: 6 rows of 2 registers, 12 accumulators, which
// leaves 4 of the 16 registers for the panel's two vectors, the broadcast
// and the rounded product; on an AVX2 machine (AMD family 25), in two
// alternated pairs of runs, W3 trained 11% and 34% faster in the portable
// mode and 10% and 2% faster in the fast mode than with 4 rows (8
// accumulators), whose 4 broadcasts and 2 loads per 8 multiply-adds left
// the arithmetic units waiting. The shape changes no bit.
macro_rules! element {
    ($t:ty, avx512: ($mr512:literal, $nr512:literal, $fused512:ident, $rounded512:ident), avx2: ($mr256:literal, $nr256:literal, $fused256:ident, $rounded256:ident), base: ($mr128:literal, $nr128:literal)) => {
        impl Element for $t {
            fn kernel_for(isa: Isa, fast: bool) -> Kernel<$t> {
                match isa {
                    #[cfg(target_arch = "x86_64")]
                    Isa::Avx512 if fast => Kernel {
                        mr: $mr512,
                        nr: $nr512,
                        full: $fused512,
                        one: micro_avx512::<$t, 1, $nr512, true>,
                    },
                    #[cfg(target_arch = "x86_64")]
                    Isa::Avx512 => Kernel {
                        mr: $mr512,
                        nr: $nr512,
                        full: $rounded512,
                        one: micro_avx512::<$t, 1, $nr512, false>,
                    },
                    #[cfg(target_arch = "x86_64")]
                    Isa::Avx2 { fma: true } if fast => Kernel {
                        mr: $mr256,
                        nr: $nr256,
                        full: $fused256,
                        one: micro_avx2_fma::<$t, 1, $nr256, true>,
                    },
                    #[cfg(target_arch = "x86_64")]
                    Isa::Avx2 { .. } => Kernel {
                        mr: $mr256,
                        nr: $nr256,
                        full: $rounded256,
                        one: micro_avx2::<$t, 1, $nr256, false>,
                    },
                    // Without hardware fused multiply-add a fused operation
                    // is a slow library call, so the baseline never fuses.
                    Isa::Base => Kernel {
                        mr: $mr128,
                        nr: $nr128,
                        full: micro_base::<$t, $mr128, $nr128>,
                        one: micro_base::<$t, 1, $nr128>,
                    },
                }
            }
        }
    };
}
element!(f32, avx512: (8, 16, fused_f32_avx512, rounded_f32_avx512), avx2: (6, 16, fused_f32_avx2, rounded_f32_avx2), base: (4, 8));
element!(f64, avx512: (8, 8, fused_f64_avx512, rounded_f64_avx512), avx2: (6, 8, fused_f64_avx2, rounded_f64_avx2), base: (4, 4));

#[inline(always)]
fn madd<F: Float, const FMA: bool>(acc: F, a: F, b: F) -> F {
    if FMA {
        a.mul_add(b, acc)
    } else {
        acc + a * b
    }
}

/// One tile. The accumulators are indexed only by constants (the loops over
/// `r` and `j` unroll), so they live in registers; partial tiles go through
/// separate copies.
///
/// # Safety
/// `a` must address `MR` rows (row `rows - 1` is read again for the rows
/// past it) of `kc` steps, `b` `kc x NR` values, `c` (and `bias`, when not
/// null) the `rows x cols` outputs.
#[inline(always)]
unsafe fn micro<F: Float, const MR: usize, const NR: usize, const FMA: bool>(t: &Tile<F>) {
    unsafe {
        let full = t.rows == MR && t.cols == NR && t.ccs == 1;
        let mut arow = [t.a; MR];
        for (r, p) in arow.iter_mut().enumerate() {
            *p = t.a.add(r.min(t.rows - 1) * t.ars);
        }
        let mut acc = [[F::zero(); NR]; MR];
        if !t.first {
            if full {
                for (r, accr) in acc.iter_mut().enumerate() {
                    *accr = std::ptr::read_unaligned(t.c.add(r * t.crs) as *const [F; NR]);
                }
            } else {
                let mut part = [[F::zero(); NR]; MR];
                for (r, pr) in part.iter_mut().enumerate().take(t.rows) {
                    for (j, v) in pr.iter_mut().enumerate().take(t.cols) {
                        *v = *t.c.add(r * t.crs + j * t.ccs);
                    }
                }
                acc = part;
            }
        }
        let mut b = t.b;
        for q in 0..t.kc {
            let bq: [F; NR] = std::ptr::read(b as *const [F; NR]);
            for (accr, ar) in acc.iter_mut().zip(&arow) {
                let av = *ar.add(q * t.acs);
                for (v, &bv) in accr.iter_mut().zip(&bq) {
                    *v = madd::<F, FMA>(*v, av, bv);
                }
            }
            b = b.add(NR);
        }
        if !t.bias.is_null() {
            let mut bias = [F::zero(); NR];
            for (j, v) in bias.iter_mut().enumerate().take(t.cols) {
                *v = *t.bias.add(j);
            }
            for accr in acc.iter_mut() {
                for (v, &bv) in accr.iter_mut().zip(&bias) {
                    *v = *v + bv;
                }
            }
        }
        if full {
            for (r, accr) in acc.iter().enumerate() {
                std::ptr::write_unaligned(t.c.add(r * t.crs) as *mut [F; NR], *accr);
            }
        } else {
            let part = acc;
            for (r, pr) in part.iter().enumerate().take(t.rows) {
                for (j, &v) in pr.iter().enumerate().take(t.cols) {
                    *t.c.add(r * t.crs + j * t.ccs) = v;
                }
            }
        }
    }
}

/// The packing buffer: one panel of at most `KC x NR_MAX` values, aligned
/// to a cache line.
#[repr(C, align(64))]
struct Panel<F>([MaybeUninit<F>; KC * NR_MAX]);

/// Copies `rhs[k0..k0 + kc][j0..j0 + cols]` (strides `rrs`, `rcs`) into
/// `buf` as `kc` rows of `nr`, zero past `cols`.
///
/// # Safety
/// The source must be readable; `buf` holds `kc * nr` values.
unsafe fn pack<F: Float>(
    src: *const F,
    (rrs, rcs): (usize, usize),
    (kc, cols, nr): (usize, usize, usize),
    buf: *mut F,
) {
    unsafe {
        if rcs == 1 {
            // Rows of a few cache lines: a plain loop (a `memcpy` call per
            // row cost more than the copy).
            for q in 0..kc {
                let (s, dst) = (src.add(q * rrs), buf.add(q * nr));
                for j in 0..cols {
                    *dst.add(j) = *s.add(j);
                }
                for j in cols..nr {
                    *dst.add(j) = F::zero();
                }
            }
        } else {
            // Columns of a transposed operand: read each one along q.
            for j in 0..cols {
                let s = src.add(j * rcs);
                for q in 0..kc {
                    *buf.add(q * nr + j) = *s.add(q * rrs);
                }
            }
            for q in 0..kc {
                for j in cols..nr {
                    *buf.add(q * nr + j) = F::zero();
                }
            }
        }
    }
}

/// A product in the kernel's orientation (possibly transposed).
#[derive(Clone, Copy)]
struct Job<F> {
    m: usize,
    n: usize,
    p: usize,
    a: *const F,
    ars: usize,
    acs: usize,
    b: *const F,
    brs: usize,
    bcs: usize,
    c: *mut F,
    crs: usize,
    ccs: usize,
    bias: *const F,
}

// SAFETY: a job is only shared among the tasks of one `product` call, which
// write disjoint outputs and read the operands, all of which outlive the
// call (rayon's `for_each` returns when every task has finished).
unsafe impl<F> Send for Job<F> {}
unsafe impl<F> Sync for Job<F> {}

/// Rows `rows` and column panels `panels` of the job.
///
/// # Safety
/// The job's pointers address its matrices; no other task writes these
/// outputs.
unsafe fn run<F: Float>(
    k: Kernel<F>,
    job: &Job<F>,
    rows: std::ops::Range<usize>,
    panels: std::ops::Range<usize>,
) {
    let mut panel = Panel::<F>([MaybeUninit::uninit(); KC * NR_MAX]);
    let buf = panel.0.as_mut_ptr() as *mut F;
    // Blocks of equal size, at most KC steps each.
    let blocks = job.p.div_ceil(KC);
    let step = job.p.div_ceil(blocks);
    unsafe {
        // Blocks of the inner dimension outermost: the block of `lhs` the
        // tiles read (rows x kc) stays in the second-level cache while every
        // panel passes over it. Each output element still sums its blocks
        // in ascending order.
        let mut k0 = 0;
        while k0 < job.p {
            let kc = step.min(job.p - k0);
            let last = k0 + kc == job.p;
            for pj in panels.clone() {
                let j0 = pj * k.nr;
                let cols = k.nr.min(job.n - j0);
                pack(
                    job.b.add(k0 * job.brs + j0 * job.bcs),
                    (job.brs, job.bcs),
                    (kc, cols, k.nr),
                    buf,
                );
                let mut tile = Tile {
                    kc,
                    a: job.a,
                    ars: job.ars,
                    acs: job.acs,
                    rows: k.mr,
                    b: buf,
                    c: job.c,
                    crs: job.crs,
                    ccs: job.ccs,
                    cols,
                    first: k0 == 0,
                    bias: if last && !job.bias.is_null() {
                        job.bias.add(j0)
                    } else {
                        std::ptr::null()
                    },
                };
                let mut r0 = rows.start;
                while r0 < rows.end {
                    tile.a = job.a.add(r0 * job.ars + k0 * job.acs);
                    tile.c = job.c.add(r0 * job.crs + j0 * job.ccs);
                    if r0 + k.mr <= rows.end {
                        tile.rows = k.mr;
                        (k.full)(&tile);
                        r0 += k.mr;
                    } else {
                        tile.rows = 1;
                        (k.one)(&tile);
                        r0 += 1;
                    }
                }
            }
            k0 += kc;
        }
    }
}

/// The naive loop itself, for products too small for tiles.
#[inline(always)]
fn tiny<F: Float, const FMA: bool>(
    (m, n, p): (usize, usize, usize),
    ops: Operands<'_, F>,
    out: &mut [F],
    bias: Option<&[F]>,
) {
    for r in 0..m {
        for j in 0..n {
            let mut acc = F::zero();
            for q in 0..p {
                let (a, b) = (
                    ops.lhs[r * ops.lrs + q * ops.lcs],
                    ops.rhs[q * ops.rrs + j * ops.rcs],
                );
                acc = madd::<F, FMA>(acc, a, b);
            }
            out[r * n + j] = match bias {
                Some(b) => acc + b[j],
                None => acc,
            };
        }
    }
}

/// [`tiny`] with fused multiply-add, compiled for CPUs that have it (so
/// that `mul_add` is one instruction, not a library call).
#[cfg(target_arch = "x86_64")]
#[target_feature(enable = "fma")]
unsafe fn tiny_fma<F: Float>(
    shape: (usize, usize, usize),
    ops: Operands<'_, F>,
    out: &mut [F],
    bias: Option<&[F]>,
) {
    tiny::<F, true>(shape, ops, out, bias)
}

/// Where the operands are: `lhs[r][q]` is `lhs[r * lrs + q * lcs]` and
/// `rhs[q][j]` is `rhs[q * rrs + j * rcs]`.
#[derive(Clone, Copy)]
pub(crate) struct Operands<'a, F> {
    pub lhs: &'a [F],
    pub lrs: usize,
    pub lcs: usize,
    pub rhs: &'a [F],
    pub rrs: usize,
    pub rcs: usize,
}

/// `out = lhs . rhs (+ bias)` for an `m x n` output (row-major, contiguous)
/// with inner size `p`, each element summed as the module documents.
pub(crate) fn product<F: Element>(
    arithmetic: Arithmetic,
    shape: (usize, usize, usize),
    ops: Operands<'_, F>,
    out: &mut [F],
    bias: Option<&[F]>,
) {
    product_on(isa(), arithmetic, shape, ops, out, bias)
}

/// [`product`] on a given instruction set (which the CPU must have; the
/// bits are the same on every one).
pub(crate) fn product_on<F: Element>(
    isa: Isa,
    arithmetic: Arithmetic,
    (m, n, p): (usize, usize, usize),
    ops: Operands<'_, F>,
    out: &mut [F],
    bias: Option<&[F]>,
) {
    if m == 0 || n == 0 {
        return;
    }
    // One check of every index the kernel touches, so that its loops can
    // read without bounds checks.
    assert!(p > 0, "empty inner dimension");
    assert!(out.len() >= m * n);
    assert!(ops.lhs.len() > (m - 1) * ops.lrs + (p - 1) * ops.lcs);
    assert!(ops.rhs.len() > (p - 1) * ops.rrs + (n - 1) * ops.rcs);
    assert!(bias.is_none_or(|b| b.len() >= n));
    let work = m * n * p;
    if work <= TINY {
        // Tiny products (W1's 2-2-1 network, one row per update): the
        // naive loop itself, without the tile set-up. Same order, same bits.
        let fma = arithmetic.is_fast() && isa.has_fma();
        #[cfg(target_arch = "x86_64")]
        if fma {
            // SAFETY: the CPU has fused multiply-add (checked above).
            unsafe { tiny_fma((m, n, p), ops, out, bias) };
            return;
        }
        let _ = fma;
        tiny::<F, false>((m, n, p), ops, out, bias);
        return;
    }
    let k = F::kernel_for(isa, arithmetic.is_fast());
    // A narrow output (say 10 classes) fills a fraction of a tile's
    // columns: compute its transpose, whose rows are that narrow instead.
    let transpose = n < k.nr && m > n;
    let bias_ptr = bias.map_or(std::ptr::null(), |b| b.as_ptr());
    let job = if transpose {
        Job {
            m: n,
            n: m,
            p,
            a: ops.rhs.as_ptr(),
            ars: ops.rcs,
            acs: ops.rrs,
            b: ops.lhs.as_ptr(),
            brs: ops.lcs,
            bcs: ops.lrs,
            c: out.as_mut_ptr(),
            crs: 1,
            ccs: n,
            bias: std::ptr::null(),
        }
    } else {
        Job {
            m,
            n,
            p,
            a: ops.lhs.as_ptr(),
            ars: ops.lrs,
            acs: ops.lcs,
            b: ops.rhs.as_ptr(),
            brs: ops.rrs,
            bcs: ops.rcs,
            c: out.as_mut_ptr(),
            crs: n,
            ccs: 1,
            bias: bias_ptr,
        }
    };
    let panels = job.n.div_ceil(k.nr);
    let threads = if work >= PARALLEL {
        rayon::current_num_threads()
    } else {
        1
    };
    // SAFETY (all calls of `run`): the asserts above cover every index of
    // both orientations; tasks write disjoint panels or row ranges.
    if threads <= 1 {
        unsafe { run(k, &job, 0..job.m, 0..panels) };
    } else if panels >= 2 * threads {
        // Several tasks a thread, so that a thread slowed by other work on
        // the machine does not hold the others up.
        let tasks = panels.min(4 * threads);
        (0..tasks).into_par_iter().for_each(|t| {
            let range = panels * t / tasks..panels * (t + 1) / tasks;
            unsafe { run(k, &job, 0..job.m, range) };
        });
    } else {
        let row_tiles = job.m.div_ceil(k.mr);
        let tasks = row_tiles.min(4 * threads);
        (0..tasks).into_par_iter().for_each(|t| {
            let start = (row_tiles * t / tasks * k.mr).min(job.m);
            let end = (row_tiles * (t + 1) / tasks * k.mr).min(job.m);
            unsafe { run(k, &job, start..end, 0..panels) };
        });
    }
    if transpose {
        if let Some(b) = bias {
            // The same single rounding the tile applies: out = acc + b[j].
            for row in out[..m * n].chunks_exact_mut(n) {
                row.iter_mut().zip(b).for_each(|(v, &bj)| *v = *v + bj);
            }
        }
    }
}

macro_rules! plain_product {
    ($name:ident, $t:ty) => {
        #[doc = concat!("`out = lhs . rhs (+ bias)` in `", stringify!($t), "` as the engine computes it")]
        /// (`lhs` row-major `m x p`, `rhs` row-major `p x n`, `out`
        /// row-major `m x n`), for tests and benchmarks.
        ///
        /// # Panics
        /// When a slice is too short for the sizes, or `p` is 0.
        #[doc(hidden)]
        pub fn $name(
            arithmetic: Arithmetic,
            (m, n, p): (usize, usize, usize),
            lhs: &[$t],
            rhs: &[$t],
            bias: Option<&[$t]>,
            out: &mut [$t],
        ) {
            let ops = Operands {
                lhs,
                lrs: p,
                lcs: 1,
                rhs,
                rrs: n,
                rcs: 1,
            };
            product(arithmetic, (m, n, p), ops, out, bias)
        }
    };
}
plain_product!(matrix_product_f64, f64);
plain_product!(matrix_product_f32, f32);

#[cfg(test)]
mod tests {
    use super::*;

    /// The documented naive loop (`lhs` and `rhs` through their strides),
    /// each multiply-add rounded twice, or once (`fused`: IEEE 754-2008's
    /// fusedMultiplyAdd, which `mul_add` computes correctly rounded on any
    /// CPU).
    fn naive<F: Float>(
        (m, n, p): (usize, usize, usize),
        ops: Operands<'_, F>,
        bias: Option<&[F]>,
        fused: bool,
    ) -> Vec<F> {
        let mut out = vec![F::zero(); m * n];
        for r in 0..m {
            for j in 0..n {
                let mut acc = F::zero();
                for q in 0..p {
                    let (x, y) = (
                        ops.lhs[r * ops.lrs + q * ops.lcs],
                        ops.rhs[q * ops.rrs + j * ops.rcs],
                    );
                    acc = if fused {
                        x.mul_add(y, acc)
                    } else {
                        acc + x * y
                    };
                }
                out[r * n + j] = match bias {
                    Some(b) => acc + b[j],
                    None => acc,
                };
            }
        }
        out
    }

    /// Sign, exponent and significand of each value (tells -0 from +0).
    fn bits<F: Float>(v: &[F]) -> Vec<(u64, i16, i8)> {
        v.iter().map(|x| x.integer_decode()).collect()
    }

    fn values<F: Float>(rng: &mut rand_chacha::ChaCha8Rng, len: usize) -> Vec<F> {
        (0..len)
            .map(|_| F::from(crate::rng::uniform(rng, -1.0, 1.0)).expect("in range"))
            .collect()
    }

    /// Shapes that cover the tiny loop, partial tiles in both directions,
    /// the narrow-output transpose, several blocks of KC, and (with
    /// threads) the splits by panels and by rows.
    const SHAPES: [(usize, usize, usize); 13] = [
        (1, 1, 1),
        (3, 17, 5),
        (9, 33, 40),
        (4, 16, 3),
        (6, 16, 3),
        (8, 8, 9),
        (130, 70, 31),
        (37, 5, 300),
        (2, 40, 7),
        (64, 96, 260),
        (300, 10, 129),
        (1200, 20, 130),
        (5000, 7, 40),
    ];

    /// Every instruction set, both operand layouts (plain and transposed),
    /// 1 and 3 threads: the portable mode equals the naive loop bit for bit,
    /// and so does the fast mode (against the fused loop on instruction sets
    /// with fused multiply-add, the plain one elsewhere).
    fn modes_equal_naive<F: Element + std::fmt::Debug>(seed: u64) {
        let mut rng = crate::seeded_rng(seed);
        let pool = rayon::ThreadPoolBuilder::new()
            .num_threads(3)
            .build()
            .unwrap();
        for &(m, n, p) in &SHAPES {
            let a: Vec<F> = values(&mut rng, m * p);
            let b: Vec<F> = values(&mut rng, p * n);
            let bias: Vec<F> = values(&mut rng, n);
            // Plain row-major operands, and the same matrices stored
            // transposed and read through strides.
            let at: Vec<F> = (0..p * m).map(|i| a[(i % m) * p + i / m]).collect();
            let bt: Vec<F> = (0..n * p).map(|i| b[(i % p) * n + i / p]).collect();
            let layouts = [
                Operands {
                    lhs: &a,
                    lrs: p,
                    lcs: 1,
                    rhs: &b,
                    rrs: n,
                    rcs: 1,
                },
                Operands {
                    lhs: &at,
                    lrs: 1,
                    lcs: m,
                    rhs: &bt,
                    rrs: 1,
                    rcs: p,
                },
            ];
            let plain = naive((m, n, p), layouts[0], Some(&bias), false);
            let fused = naive((m, n, p), layouts[0], Some(&bias), true);
            for ops in layouts {
                for (isa, arithmetic) in available()
                    .into_iter()
                    .flat_map(|isa| [(isa, Arithmetic::Portable), (isa, Arithmetic::Fast)])
                {
                    let expected = if arithmetic.is_fast() && isa.has_fma() {
                        &fused
                    } else {
                        &plain
                    };
                    for threads in [1, 3] {
                        // Not a value the product could leave by accident: a
                        // first block that read its output instead of
                        // starting from zero would carry the NaN through.
                        let mut out = vec![F::nan(); m * n];
                        let mut run =
                            || product_on(isa, arithmetic, (m, n, p), ops, &mut out, Some(&bias));
                        if threads == 1 {
                            run()
                        } else {
                            pool.install(run)
                        }
                        assert_eq!(
                            bits(&out),
                            bits(expected),
                            "{m}x{n}x{p} on {isa:?}, {arithmetic}, {threads} threads"
                        );
                    }
                }
            }
        }
    }

    #[test]
    fn both_modes_equal_the_naive_loop_bit_for_bit_on_every_instruction_set() {
        modes_equal_naive::<f64>(4);
        modes_equal_naive::<f32>(5);
    }
}
