//! Matrix products for the engine: a fixed-order kernel of our own, and
//! `matrixmultiply` for wide layers in [`Arithmetic::Fast`].
//!
//! Every product here is `out (m x n) = lhs (m x p) . rhs (p x n)`, with
//! `out` row-major and contiguous, `rhs` row-major with contiguous rows, and
//! `lhs` given by two strides (so a transposed operand costs no copy).
//!
//! **The fixed-order kernel.** Each output element is summed as
//!
//! ```text
//! acc = 0;  for q in 0..p (ascending) { acc = acc + lhs[r][q] * rhs[q][j] };  out[r][j] = acc (+ bias[j])
//! ```
//! The loops are tiled (up to 8 rows by 16 columns kept in registers) and
//! vectorised *across columns*, never across `q`, so the order of every sum
//! is the one above whatever the vector width. Without fused multiply-add
//! (Rust never fuses `a * b + c` on its own) every operation is a correctly
//! rounded IEEE-754 multiply or add, so the bits are the same on every CPU:
//! this is the portable mode. The same source compiled with AVX2 or AVX-512
//! enabled (picked at run time) only runs it faster. In the fast mode the
//! kernel uses fused multiply-add where the CPU has it, and products with
//! at least [`WIDE`] multiply-adds go to `matrixmultiply` (packed panels,
//! AVX-512 kernels with its `avx512` feature), whose rounding depends on the
//! kernel it picks for the CPU.
//!
//! Neither path splits a product across threads: results never depend on
//! the thread count.

use super::Real;

/// How the engine's sums are computed.
///
/// Both modes are deterministic on one machine for any number of threads
/// (no product inside one network is split across threads). They differ
/// across machines:
///
/// - `Fast` lets wide layers use `matrixmultiply`'s kernels, which it picks
///   at run time from the CPU (AVX-512, AVX2 with fused multiply-add, or
///   SSE2); the last bits of a result can differ between CPUs.
/// - `Portable` computes every sum with the engine's own loops in a fixed
///   order, without fused multiply-add, so a seed gives the same bits on any
///   x86-64 machine (and any IEEE-754 target). Each product is the naive
///   loop
///
///   ```text
///   z[i][j]  = (sum over k ascending, from 0, of x[i][k] * w[k][j]) + b[j]
///   gw[k][j] =  sum over rows i ascending, from 0, of a[i][k] * d[i][j]
///   gb[j]    =  sum over rows i ascending, from 0, of d[i][j]
///   p[i][k]  =  sum over j ascending, from 0, of d[i][j] * w[k][j]
///   ```
///   (vectorised across `j` or `k`, which changes no sum). Transcendental
///   functions (`exp`, `tanh`, `ln`, `ln_1p`) come from the pure-Rust `libm`
///   crate in both modes, never from the platform's C library.
///
/// Text form: `fast`, `portable`.
#[derive(Clone, Copy, Debug, Default, PartialEq, Eq)]
pub enum Arithmetic {
    /// The fastest kernels for this CPU (the default).
    #[default]
    Fast,
    /// Fixed-order sums, bit-identical across machines.
    Portable,
}

crate::error::text_forms!(Arithmetic, "arithmetic", {
    Arithmetic::Fast => "fast",
    Arithmetic::Portable => "portable",
});

impl Arithmetic {
    /// Is this the fast mode (the default)?
    pub fn is_fast(&self) -> bool {
        *self == Arithmetic::Fast
    }
}

/// Columns of a register tile (one AVX-512 register of f32, two of f64).
const NR: usize = 16;

/// Products with at least this many multiply-adds go to `matrixmultiply` in
/// the fast mode. Below it, packing the operands costs more than it saves
/// (measured on W2-sized layers, 32 x 30 x 64, where the own kernel was
/// faster; W3's 128 x 784 x 256 products are far above it).
pub(crate) const WIDE: usize = 1 << 20;

/// Products with at most this many multiply-adds take the plain loop.
const TINY: usize = 64;

/// The instruction sets the kernel can be compiled for.
#[derive(Clone, Copy, PartialEq, Eq)]
enum Isa {
    Base,
    #[cfg(target_arch = "x86_64")]
    Avx2Fma,
    #[cfg(target_arch = "x86_64")]
    Avx512,
}

#[inline]
fn isa() -> Isa {
    #[cfg(target_arch = "x86_64")]
    {
        // `is_x86_feature_detected!` caches its answer: an atomic load.
        if is_x86_feature_detected!("avx512f") {
            return Isa::Avx512;
        }
        if is_x86_feature_detected!("avx2") && is_x86_feature_detected!("fma") {
            return Isa::Avx2Fma;
        }
    }
    Isa::Base
}

/// Where the operands are. `lhs[r][q]` is `lhs[r * lrs + q * lcs]`; `rhs`
/// has row stride `ldr` and contiguous rows.
#[derive(Clone, Copy)]
pub(crate) struct Operands<'a, F> {
    pub lhs: &'a [F],
    pub lrs: usize,
    pub lcs: usize,
    pub rhs: &'a [F],
    pub ldr: usize,
}

/// `out = lhs . rhs (+ bias)` for an `m x n` output with inner size `p`.
pub(crate) fn product<F: Real>(
    arithmetic: Arithmetic,
    (m, n, p): (usize, usize, usize),
    ops: Operands<'_, F>,
    out: &mut [F],
    bias: Option<&[F]>,
) {
    if m == 0 || n == 0 {
        return;
    }
    // One check of every index the kernel touches, so that its inner loops
    // can read without bounds checks.
    assert!(p > 0, "empty inner dimension");
    assert!(out.len() >= m * n);
    assert!(ops.lhs.len() > (m - 1) * ops.lrs + (p - 1) * ops.lcs);
    assert!(ops.rhs.len() >= (p - 1) * ops.ldr + n && ops.ldr >= n);
    assert!(bias.is_none_or(|b| b.len() >= n));
    let fast = arithmetic == Arithmetic::Fast;
    if m * n * p <= TINY {
        // Tiny products (W1's 2-2-1 network, one row per update): the
        // naive loop itself, without the tile set-up. Same order, same bits.
        for r in 0..m {
            for j in 0..n {
                let mut acc = F::zero();
                for q in 0..p {
                    acc = acc + ops.lhs[r * ops.lrs + q * ops.lcs] * ops.rhs[q * ops.ldr + j];
                }
                out[r * n + j] = match bias {
                    Some(b) => acc + b[j],
                    None => acc,
                };
            }
        }
        return;
    }
    if fast && m * n * p >= WIDE {
        // SAFETY: the strides and lengths were checked above.
        unsafe {
            F::gemm(
                m,
                p,
                n,
                ops.lhs.as_ptr(),
                ops.lrs as isize,
                ops.lcs as isize,
                ops.rhs.as_ptr(),
                ops.ldr as isize,
                1,
                out.as_mut_ptr(),
                n as isize,
                1,
            );
        }
        if let Some(b) = bias {
            for row in out[..m * n].chunks_exact_mut(n) {
                row.iter_mut().zip(b).for_each(|(v, &bk)| *v = *v + bk);
            }
        }
        return;
    }
    // Row-tile heights that keep 8 to 16 vector accumulators live for each
    // instruction set and float size (f32 rows of 16 fill one AVX-512
    // register, f64 rows two), enough to hide the multiply-add latency
    // without spilling. The height changes no sum.
    let small = std::mem::size_of::<F>() == 4;
    // SAFETY (all arms): bounds checked above; the target features are
    // present (detected at run time).
    match isa() {
        #[cfg(target_arch = "x86_64")]
        Isa::Avx512 => unsafe {
            match (fast, small) {
                (true, true) => kernel_avx512::<F, 8, true>(m, n, p, ops, out, bias),
                (true, false) => kernel_avx512::<F, 4, true>(m, n, p, ops, out, bias),
                (false, true) => kernel_avx512::<F, 8, false>(m, n, p, ops, out, bias),
                (false, false) => kernel_avx512::<F, 4, false>(m, n, p, ops, out, bias),
            }
        },
        #[cfg(target_arch = "x86_64")]
        Isa::Avx2Fma => unsafe {
            match (fast, small) {
                (true, true) => kernel_avx2::<F, 4, true>(m, n, p, ops, out, bias),
                (true, false) => kernel_avx2::<F, 2, true>(m, n, p, ops, out, bias),
                (false, true) => kernel_avx2::<F, 4, false>(m, n, p, ops, out, bias),
                (false, false) => kernel_avx2::<F, 2, false>(m, n, p, ops, out, bias),
            }
        },
        // Without hardware FMA a fused multiply-add is a slow library
        // call, so the base build never fuses.
        Isa::Base => unsafe {
            if small {
                kernel::<F, 2, false>(m, n, p, ops, out, bias)
            } else {
                kernel::<F, 1, false>(m, n, p, ops, out, bias)
            }
        },
    }
}

#[cfg(target_arch = "x86_64")]
#[target_feature(enable = "avx512f,avx2,fma")]
unsafe fn kernel_avx512<F: Real, const MR: usize, const FMA: bool>(
    m: usize,
    n: usize,
    p: usize,
    ops: Operands<'_, F>,
    out: &mut [F],
    bias: Option<&[F]>,
) {
    kernel::<F, MR, FMA>(m, n, p, ops, out, bias)
}

#[cfg(target_arch = "x86_64")]
#[target_feature(enable = "avx2,fma")]
unsafe fn kernel_avx2<F: Real, const MR: usize, const FMA: bool>(
    m: usize,
    n: usize,
    p: usize,
    ops: Operands<'_, F>,
    out: &mut [F],
    bias: Option<&[F]>,
) {
    kernel::<F, MR, FMA>(m, n, p, ops, out, bias)
}

#[inline(always)]
unsafe fn kernel<F: Real, const MR: usize, const FMA: bool>(
    m: usize,
    n: usize,
    p: usize,
    ops: Operands<'_, F>,
    out: &mut [F],
    bias: Option<&[F]>,
) {
    let mut r0 = 0;
    while r0 + MR <= m {
        columns::<F, MR, FMA>(r0, n, p, ops, out, bias);
        r0 += MR;
    }
    while r0 < m {
        columns::<F, 1, FMA>(r0, n, p, ops, out, bias);
        r0 += 1;
    }
}

/// All column tiles of `R` rows from row `r0`.
#[inline(always)]
unsafe fn columns<F: Real, const R: usize, const FMA: bool>(
    r0: usize,
    n: usize,
    p: usize,
    ops: Operands<'_, F>,
    out: &mut [F],
    bias: Option<&[F]>,
) {
    let mut j0 = 0;
    while j0 + NR <= n {
        tile::<F, R, NR, FMA>(r0, j0, NR, p, ops, out, n, bias);
        j0 += NR;
    }
    if j0 < n {
        tile::<F, R, NR, FMA>(r0, j0, n - j0, p, ops, out, n, bias);
    }
}

#[inline(always)]
fn madd<F: Real, const FMA: bool>(acc: F, a: F, b: F) -> F {
    if FMA {
        a.mul_add(b, acc)
    } else {
        acc + a * b
    }
}

/// One `R x width` tile (`width <= W`), accumulated in registers.
#[inline(always)]
#[allow(clippy::too_many_arguments)]
unsafe fn tile<F: Real, const R: usize, const W: usize, const FMA: bool>(
    r0: usize,
    j0: usize,
    width: usize,
    p: usize,
    ops: Operands<'_, F>,
    out: &mut [F],
    ldo: usize,
    bias: Option<&[F]>,
) {
    let mut acc = [[F::zero(); W]; R];
    let lhs = ops.lhs.as_ptr();
    let rhs = ops.rhs.as_ptr();
    if width == W {
        for q in 0..p {
            let b: [F; W] = std::ptr::read_unaligned(rhs.add(q * ops.ldr + j0) as *const [F; W]);
            for (r, accr) in acc.iter_mut().enumerate() {
                let a = *lhs.add((r0 + r) * ops.lrs + q * ops.lcs);
                for jj in 0..W {
                    accr[jj] = madd::<F, FMA>(accr[jj], a, b[jj]);
                }
            }
        }
    } else {
        // A narrow edge (e.g. a 10-class output layer): the same full-width
        // tile on a zero-padded copy of the row, so the accumulators stay
        // in registers; the padded lanes are never written back.
        for q in 0..p {
            let brow = rhs.add(q * ops.ldr + j0);
            let mut b = [F::zero(); W];
            for (jj, bj) in b.iter_mut().enumerate().take(width) {
                *bj = *brow.add(jj);
            }
            for (r, accr) in acc.iter_mut().enumerate() {
                let a = *lhs.add((r0 + r) * ops.lrs + q * ops.lcs);
                for jj in 0..W {
                    accr[jj] = madd::<F, FMA>(accr[jj], a, b[jj]);
                }
            }
        }
    }
    for (r, accr) in acc.iter().enumerate() {
        let o = &mut out[(r0 + r) * ldo + j0..(r0 + r) * ldo + j0 + width];
        match bias {
            Some(b) => {
                for (jj, v) in o.iter_mut().enumerate() {
                    *v = accr[jj] + b[j0 + jj];
                }
            }
            None => o.copy_from_slice(&accr[..width]),
        }
    }
}

/// Writes the transpose of the row-major `rows x cols` matrix `a` into `t`.
pub(crate) fn transpose<F: Real>(a: &[F], rows: usize, cols: usize, t: &mut [F]) {
    for (i, row) in a[..rows * cols].chunks_exact(cols).enumerate() {
        for (j, &v) in row.iter().enumerate() {
            t[j * rows + i] = v;
        }
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    /// The documented naive loop.
    fn naive(m: usize, n: usize, p: usize, a: &[f64], b: &[f64], bias: &[f64]) -> Vec<f64> {
        let mut out = vec![0.0; m * n];
        for r in 0..m {
            for j in 0..n {
                let mut acc = 0.0;
                for q in 0..p {
                    acc += a[r * p + q] * b[q * n + j];
                }
                out[r * n + j] = acc + bias[j];
            }
        }
        out
    }

    #[test]
    fn portable_kernel_equals_the_naive_loop_bit_for_bit() {
        let mut rng = crate::seeded_rng(4);
        for &(m, n, p) in &[
            (1, 1, 1),
            (3, 17, 5),
            (9, 33, 40),
            (4, 16, 3),
            (130, 70, 31),
        ] {
            let a: Vec<f64> = (0..m * p)
                .map(|_| crate::rng::uniform(&mut rng, -1.0, 1.0))
                .collect();
            let b: Vec<f64> = (0..p * n)
                .map(|_| crate::rng::uniform(&mut rng, -1.0, 1.0))
                .collect();
            let bias: Vec<f64> = (0..n)
                .map(|_| crate::rng::uniform(&mut rng, -1.0, 1.0))
                .collect();
            let mut out = vec![0.0; m * n];
            let ops = Operands {
                lhs: &a,
                lrs: p,
                lcs: 1,
                rhs: &b,
                ldr: n,
            };
            product(Arithmetic::Portable, (m, n, p), ops, &mut out, Some(&bias));
            let expected = naive(m, n, p, &a, &b, &bias);
            let bits = |v: &[f64]| v.iter().map(|x| x.to_bits()).collect::<Vec<_>>();
            assert_eq!(bits(&out), bits(&expected), "{m}x{n}x{p}");
            // The fast mode computes the same product up to rounding.
            let mut fast = vec![0.0; m * n];
            product(Arithmetic::Fast, (m, n, p), ops, &mut fast, Some(&bias));
            for (x, y) in fast.iter().zip(&expected) {
                assert!((x - y).abs() < 1e-12);
            }
        }
    }
}
