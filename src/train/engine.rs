//! The backward pass: batched backpropagation over the flat parameter
//! vector of [`forward`](crate::network) (same layout for gradients and
//! optimiser state), and the loss of a whole table evaluated in chunks.
//!
//! Backpropagation (Rumelhart, Hinton & Williams, Nature 1986), for a batch
//! of `m` rows held as matrices:
//!
//! ```text
//! delta_L = dE/dz_L                                  (see Loss)
//! dJ/dW_l = a_{l-1}^T delta_l,   dJ/db_l = column sums of delta_l
//! delta_{l-1} = (delta_l W_l^T) * f'(a_{l-1})        (element-wise product)
//! ```
//! Every product goes through the network's kernels (a fixed-order kernel of
//! our own, or `matrixmultiply` for wide layers in the fast mode).

use crate::network::kernels::{self, Operands};
use crate::network::{Activation, Arithmetic, Forward, Head, Params, Real};
use crate::train::Loss;

/// Multiplies deltas by the activation's derivative, from the outputs `a`.
fn times_derivative<F: Real>(d: &mut [F], a: &[F], activation: Activation) {
    match activation {
        Activation::Identity => {}
        Activation::Relu => d.iter_mut().zip(a).for_each(|(d, &av)| {
            *d = if av > F::zero() { *d } else { F::zero() };
        }),
        Activation::Sigmoid => d
            .iter_mut()
            .zip(a)
            .for_each(|(d, &av)| *d = *d * (av * (F::one() - av))),
        Activation::Tanh => d
            .iter_mut()
            .zip(a)
            .for_each(|(d, &av)| *d = *d * (F::one() - av * av)),
        act @ Activation::LeakyRelu(_) => d
            .iter_mut()
            .zip(a)
            .for_each(|(d, &av)| *d = *d * act.derivative_from_output(av)),
    }
}

/// Buffers for training: a forward workspace plus deltas and gradients.
pub(crate) struct Backprop<F: Real> {
    pub fwd: Forward<F>,
    pub targets: Vec<F>,
    pub deltas: Vec<Vec<F>>,
    pub grad: Vec<F>,
    /// Each gathered row's loss weight, when rows are weighted.
    pub row_weights: Option<Vec<F>>,
    /// Transposed weights of one layer (for the fixed-order kernel).
    wt: Vec<F>,
}

impl<F: Real> Backprop<F> {
    pub fn new(params: &Params<F>, capacity: usize, arithmetic: Arithmetic) -> Backprop<F> {
        let n_out = params.shapes.last().expect("layers").1;
        let widest = params.shapes.iter().map(|&(i, o)| i * o).max().unwrap_or(0);
        Backprop {
            fwd: Forward::new(params, capacity, arithmetic),
            targets: vec![F::zero(); capacity * n_out],
            deltas: params
                .shapes
                .iter()
                .map(|&(_, o)| vec![F::zero(); capacity * o])
                .collect(),
            grad: vec![F::zero(); params.data.len()],
            row_weights: None,
            wt: vec![F::zero(); widest],
        }
    }

    /// Gathers rows `rows` of `x` and `y` (row-major, already in `F`), and
    /// their loss weights when rows are weighted, into the buffers.
    pub fn gather(&mut self, x: &[F], y: &[F], w: Option<&[F]>, rows: &[usize]) {
        if let Some(w) = w {
            let buf = self
                .row_weights
                .get_or_insert_with(|| vec![F::zero(); self.fwd.capacity]);
            for (i, &r) in rows.iter().enumerate() {
                buf[i] = w[r];
            }
        }
        let (d, k) = (
            self.fwd.input.len() / self.fwd.capacity,
            self.targets.len() / self.fwd.capacity,
        );
        for (i, &r) in rows.iter().enumerate() {
            self.fwd.input[i * d..(i + 1) * d].copy_from_slice(&x[r * d..(r + 1) * d]);
            self.targets[i * k..(i + 1) * k].copy_from_slice(&y[r * k..(r + 1) * k]);
        }
    }

    /// Forward and backward pass over the first `m` gathered rows: fills
    /// `grad` with the gradient of the batch's mean loss (no penalties) and
    /// returns the summed loss of the rows. With row weights `w_i` the loss
    /// is `(1/m) sum_i w_i E_i` and the sum returned is `sum_i w_i E_i`.
    pub fn pass(
        &mut self,
        params: &Params<F>,
        m: usize,
        activation: Activation,
        head: Head,
        loss: Loss,
    ) -> F {
        let n_layers = params.n_layers();
        let arithmetic = self.fwd.arithmetic;
        self.fwd.run(params, m, activation, n_layers);
        let last = n_layers - 1;
        let scale = F::one() / F::from_f64(m as f64);
        let mut total = F::zero();
        {
            let k = params.shapes[last].1;
            let z = &mut self.fwd.acts[last][..m * k];
            let d = &mut self.deltas[last][..m * k];
            match &self.row_weights {
                None => {
                    for ((zr, yr), dr) in z
                        .chunks_exact_mut(k)
                        .zip(self.targets.chunks_exact(k))
                        .zip(d.chunks_exact_mut(k))
                    {
                        total = total
                            + crate::train::loss::row_loss_delta(
                                head,
                                loss,
                                zr,
                                yr,
                                Some(dr),
                                scale,
                            );
                    }
                }
                Some(w) => {
                    for (((zr, yr), dr), &wi) in z
                        .chunks_exact_mut(k)
                        .zip(self.targets.chunks_exact(k))
                        .zip(d.chunks_exact_mut(k))
                        .zip(w.iter())
                    {
                        total = total
                            + wi * crate::train::loss::row_loss_delta(
                                head,
                                loss,
                                zr,
                                yr,
                                Some(dr),
                                scale * wi,
                            );
                    }
                }
            }
        }
        for l in (0..n_layers).rev() {
            let (wr, br) = params.ranges(l);
            let (n_in, n_out) = params.shapes[l];
            let (before, after) = self.deltas.split_at_mut(l);
            let delta = &after[0][..m * n_out];
            let input: &[F] = if l == 0 {
                &self.fwd.input
            } else {
                &self.fwd.acts[l - 1]
            };
            // dJ/dW = a^T delta: the lhs is the input block read transposed.
            kernels::product(
                arithmetic,
                (n_in, n_out, m),
                Operands {
                    lhs: input,
                    lrs: 1,
                    lcs: n_in,
                    rhs: delta,
                    ldr: n_out,
                },
                &mut self.grad[wr.clone()],
                None,
            );
            let gb = &mut self.grad[br];
            gb.iter_mut().for_each(|g| *g = F::zero());
            for row in delta.chunks_exact(n_out) {
                for (g, &d) in gb.iter_mut().zip(row) {
                    *g = *g + d;
                }
            }
            if l > 0 {
                // delta_{l-1} = delta_l W^T (no input gradient for layer 0).
                let prev = &mut before[l - 1][..m * n_in];
                let w = &params.data[wr];
                if arithmetic == Arithmetic::Fast && m * n_in * n_out >= kernels::WIDE {
                    // SAFETY: delta is m x n_out, W^T is read through
                    // strides (n_out x n_in view of the n_in x n_out block),
                    // prev is m x n_in; all lengths hold by construction.
                    unsafe {
                        F::gemm(
                            m,
                            n_out,
                            n_in,
                            delta.as_ptr(),
                            n_out as isize,
                            1,
                            w.as_ptr(),
                            1,
                            n_out as isize,
                            prev.as_mut_ptr(),
                            n_in as isize,
                            1,
                        );
                    }
                } else {
                    kernels::transpose(w, n_in, n_out, &mut self.wt);
                    kernels::product(
                        arithmetic,
                        (m, n_in, n_out),
                        Operands {
                            lhs: delta,
                            lrs: n_out,
                            lcs: 1,
                            rhs: &self.wt,
                            ldr: n_in,
                        },
                        prev,
                        None,
                    );
                }
                times_derivative(prev, &self.fwd.acts[l - 1][..m * n_in], activation);
            }
        }
        total
    }
}

/// Summed loss over all rows of `x` (targets `y`; each row's loss times its
/// weight in `w` when given), evaluated in chunks, and the number of rows
/// whose predicted class matches the target's (when `classify`; unweighted).
#[allow(clippy::too_many_arguments)]
pub(crate) fn evaluate<F: Real>(
    params: &Params<F>,
    ws: &mut Forward<F>,
    x: &[F],
    y: &[F],
    w: Option<&[F]>,
    activation: Activation,
    head: Head,
    loss: Loss,
    classify: bool,
) -> (f64, usize) {
    let capacity = ws.capacity;
    let (d, k) = (params.shapes[0].0, params.shapes.last().expect("layers").1);
    let rows = x.len() / d;
    let mut total = 0.0;
    let mut correct = 0;
    let n_layers = params.n_layers();
    for start in (0..rows).step_by(capacity) {
        let end = (start + capacity).min(rows);
        let m = end - start;
        ws.input[..m * d].copy_from_slice(&x[start * d..end * d]);
        ws.run(params, m, activation, n_layers);
        let z = ws.acts.last_mut().expect("layers");
        let mut chunk_total = F::zero();
        for (i, (zr, yr)) in z[..m * k]
            .chunks_exact_mut(k)
            .zip(y[start * k..end * k].chunks_exact(k))
            .enumerate()
        {
            let e = crate::train::loss::row_loss_delta(head, loss, zr, yr, None, F::one());
            chunk_total = chunk_total
                + match w {
                    Some(w) => w[start + i] * e,
                    None => e,
                };
            if classify {
                let hit = if zr.len() == 1 {
                    (zr[0] >= F::from_f64(0.5)) == (yr[0] >= F::from_f64(0.5))
                } else {
                    crate::network::argmax(zr) == crate::network::argmax(yr)
                };
                correct += usize::from(hit);
            }
        }
        total += chunk_total.as_f64();
    }
    (total, correct)
}
