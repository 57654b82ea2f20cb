//! The matrix products checked by value on both sides of the size where a
//! product is split across threads ([`PARALLEL`](super::kernels::PARALLEL)
//! multiply-adds),
//! in both float types, against a slow compensated reference (issue 19).
//!
//! The reference sums in f64 with Neumaier's compensation (Neumaier,
//! "Rundungsfehleranalyse einiger Verfahren zur Summation endlicher
//! Summen", ZAMM 54, 1974), accurate to about one rounding of the result.
//! Any order of summing `p` products, with or without fused multiply-add,
//! is within
//!
//! ```text
//! |computed - exact| <= gamma_p sum_q |a_q b_q|,   gamma_p = p u / (1 - p u)
//! ```
//! of the exact sum, `u` the unit roundoff (2^-53 for f64, 2^-24 for f32)
//! (Higham, "Accuracy and Stability of Numerical Algorithms", 2nd ed. 2002,
//! eq. 3.5). The checks allow that bound plus one rounding of the bias
//! addition and of the inputs to f32; a sign error, a dropped row or
//! a transposed operand is off by far more.

use super::kernels::{product, Arithmetic, Operands, PARALLEL as WIDE};
use super::Real;

/// `(sum, sum of |terms|)` of `lhs[r] . rhs[:, j] + bias[j]` in compensated f64.
fn reference(
    (m, n, p): (usize, usize, usize),
    lhs: impl Fn(usize, usize) -> f64,
    rhs: &[f64],
    bias: &[f64],
) -> Vec<(f64, f64)> {
    let mut out = Vec::with_capacity(m * n);
    for r in 0..m {
        for j in 0..n {
            let (mut sum, mut carry, mut size) = (0.0f64, 0.0f64, 0.0f64);
            for q in 0..=p {
                let term = if q < p {
                    lhs(r, q) * rhs[q * n + j]
                } else {
                    bias[j]
                };
                // The product of two f64 values is not exact: add its
                // error too (Dekker's two-product via fused multiply-add).
                let error = if q < p {
                    lhs(r, q).mul_add(rhs[q * n + j], -term)
                } else {
                    0.0
                };
                for t in [term, error] {
                    let s = sum + t;
                    carry += if sum.abs() >= t.abs() {
                        (sum - s) + t
                    } else {
                        (t - s) + sum
                    };
                    sum = s;
                }
                size += term.abs();
            }
            out.push((sum + carry, size));
        }
    }
    out
}

fn uniform_vec(rng: &mut impl rand::RngCore, len: usize) -> Vec<f64> {
    (0..len)
        .map(|_| crate::rng::uniform(rng, -1.0, 1.0))
        .collect()
}

/// Checks `product` in both modes for `F`, with the left operand plain
/// (row-major) and transposed (column-major, as the weight gradient reads
/// it), against the reference.
fn check<F: Real>(m: usize, n: usize, p: usize, unit_roundoff: f64) -> usize {
    let mut rng = crate::seeded_rng((m * 31 + n * 7 + p) as u64);
    // Inputs rounded to F first, so that the reference sees the same values.
    let round = |v: Vec<f64>| -> Vec<f64> { v.iter().map(|&x| F::from_f64(x).as_f64()).collect() };
    let a = round(uniform_vec(&mut rng, m * p));
    let b = round(uniform_vec(&mut rng, p * n));
    let bias = round(uniform_vec(&mut rng, n));
    let to_f = |v: &[f64]| -> Vec<F> { v.iter().map(|&x| F::from_f64(x)).collect() };
    let (af, bf, biasf) = (to_f(&a), to_f(&b), to_f(&bias));
    // The same matrix stored column-major: a_t[q * m + r] = a[r * p + q].
    let mut at = vec![0.0; m * p];
    for r in 0..m {
        for q in 0..p {
            at[q * m + r] = a[r * p + q];
        }
    }
    let atf = to_f(&at);
    let expected = reference((m, n, p), |r, q| a[r * p + q], &b, &bias);
    let gamma = p as f64 * unit_roundoff / (1.0 - p as f64 * unit_roundoff);
    let mut checked = 0;
    for arithmetic in [Arithmetic::Portable, Arithmetic::Fast] {
        for (lhs, lrs, lcs) in [(&af, p, 1), (&atf, 1, m)] {
            let mut out = vec![F::zero(); m * n];
            let ops = Operands {
                lhs,
                lrs,
                lcs,
                rhs: &bf,
                rrs: n,
                rcs: 1,
            };
            product(arithmetic, (m, n, p), ops, &mut out, Some(&biasf));
            for (i, (v, (exact, size))) in out.iter().zip(&expected).enumerate() {
                // gamma_p for the sum, one more rounding for the bias and
                // one for the result.
                let bound = gamma * size + 2.0 * unit_roundoff * (size + exact.abs());
                let error = (v.as_f64() - exact).abs();
                assert!(
                    error <= bound,
                    "{arithmetic}, {m}x{n}x{p}, lhs strides ({lrs}, {lcs}), element {i}: \
                     {} against {exact} (error {error:e}, bound {bound:e})",
                    v.as_f64()
                );
                checked += 1;
            }
        }
    }
    checked
}

// Sizes on both sides of the switch, with edges that are not multiples of
// the register tiles (8 or 16 columns, 4, 6 or 8 rows).
const SIZES: [(usize, usize, usize); 4] = [
    (7, 19, 5),     // tiny and odd
    (33, 45, 29),   // below the split: one thread
    (128, 64, 128), // exactly at the split: across threads
    (131, 67, 123), // above it, ragged edges
];

#[test]
fn the_sizes_cross_the_switch() {
    assert!(SIZES[1].0 * SIZES[1].1 * SIZES[1].2 < WIDE);
    assert_eq!(SIZES[2].0 * SIZES[2].1 * SIZES[2].2, WIDE);
    assert!(SIZES[3].0 * SIZES[3].1 * SIZES[3].2 > WIDE);
}

#[test]
fn f64_products_match_the_reference_in_both_modes() {
    for (m, n, p) in SIZES {
        assert_eq!(check::<f64>(m, n, p, f64::EPSILON / 2.0), 4 * m * n);
    }
}

#[test]
fn f32_products_match_the_reference_in_both_modes() {
    for (m, n, p) in SIZES {
        assert_eq!(
            check::<f32>(m, n, p, f64::from(f32::EPSILON) / 2.0),
            4 * m * n
        );
    }
}

// Without a bias, and with an output buffer holding stale values: the
// product must overwrite, not accumulate.
#[test]
fn products_overwrite_their_output() {
    let (m, n, p) = (128, 64, 128);
    let mut rng = crate::seeded_rng(8);
    let a = uniform_vec(&mut rng, m * p);
    let b = uniform_vec(&mut rng, p * n);
    let zero = vec![0.0; n];
    let expected = reference((m, n, p), |r, q| a[r * p + q], &b, &zero);
    for arithmetic in [Arithmetic::Portable, Arithmetic::Fast] {
        let mut out = vec![1e6; m * n];
        let ops = Operands {
            lhs: &a,
            lrs: p,
            lcs: 1,
            rhs: &b,
            rrs: n,
            rcs: 1,
        };
        product(arithmetic, (m, n, p), ops, &mut out, None);
        for (v, (exact, size)) in out.iter().zip(&expected) {
            assert!((v - exact).abs() <= 1e-13 * size.max(1.0), "{arithmetic}");
        }
    }
}
