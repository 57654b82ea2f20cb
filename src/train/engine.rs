//! The numerical core: batched forward and backward passes over a flat
//! parameter vector, generic over the float type.
//!
//! Layout of the flat vector (part of the value-stability contract): for
//! each layer from the input side, its weights in row-major order
//! (`inputs x outputs`), then its biases. Gradients and optimiser state use
//! the same layout, so an update is one pass over a slice.
//!
//! Backpropagation (Rumelhart, Hinton & Williams, Nature 1986), for a batch
//! of `m` rows held as matrices:
//!
//! ```text
//! delta_L = dE/dz_L                                  (see train::loss)
//! dJ/dW_l = a_{l-1}^T delta_l,   dJ/db_l = column sums of delta_l
//! delta_{l-1} = (delta_l W_l^T) * f'(a_{l-1})        (element-wise product)
//! ```
//! Every layer's work is a matrix product (`ndarray::linalg::general_mat_mul`);
//! buffers are sized once for the largest batch and reused, so no memory is
//! allocated per mini-batch.

use crate::network::{Activation, Head, Network, Real};
use crate::train::Loss;
use ndarray::linalg::general_mat_mul;
use ndarray::{s, Array2, ArrayView2, ArrayViewMut2};

/// A network's parameters as one flat vector in float type `F`.
#[derive(Clone, Debug)]
pub(crate) struct Params<F: Real> {
    pub data: Vec<F>,
    /// (inputs, outputs) of each layer.
    pub shapes: Vec<(usize, usize)>,
    /// Offset of each layer's weights; its biases follow them.
    pub offsets: Vec<usize>,
}

impl<F: Real> Params<F> {
    pub fn from_network(net: &Network) -> Params<F> {
        let mut data = Vec::with_capacity(net.n_parameters());
        let mut shapes = Vec::new();
        let mut offsets = Vec::new();
        for layer in net.layers() {
            offsets.push(data.len());
            shapes.push(layer.weights.dim());
            data.extend(layer.weights.iter().map(|&v| F::from_f64(v)));
            data.extend(layer.biases.iter().map(|&v| F::from_f64(v)));
        }
        Params {
            data,
            shapes,
            offsets,
        }
    }

    /// Writes the parameters back into the network's layers.
    pub fn write_to(&self, net: &mut Network) {
        for (l, layer) in net.layers_mut().iter_mut().enumerate() {
            let (wr, br) = self.ranges(l);
            for (dst, src) in layer.weights.iter_mut().zip(&self.data[wr]) {
                *dst = src.as_f64();
            }
            for (dst, src) in layer.biases.iter_mut().zip(&self.data[br]) {
                *dst = src.as_f64();
            }
        }
    }

    pub fn n_layers(&self) -> usize {
        self.shapes.len()
    }

    /// Index ranges of layer `l`'s weights and biases.
    pub fn ranges(&self, l: usize) -> (std::ops::Range<usize>, std::ops::Range<usize>) {
        let (i, o) = self.shapes[l];
        let w = self.offsets[l];
        (w..w + i * o, w + i * o..w + i * o + o)
    }

    pub fn weights(&self, l: usize) -> ArrayView2<'_, F> {
        let (wr, _) = self.ranges(l);
        ArrayView2::from_shape(self.shapes[l], &self.data[wr]).expect("layout")
    }

    pub fn biases(&self, l: usize) -> &[F] {
        let (_, br) = self.ranges(l);
        &self.data[br]
    }

    /// Outputs (after the head) for all rows of `x`, in chunks.
    pub fn predict(&self, x: ArrayView2<'_, f64>, net: &Network) -> Array2<f64> {
        let n_out = self.shapes.last().expect("layers").1;
        let mut out = Array2::zeros((x.nrows(), n_out));
        let chunk = EVAL_CHUNK.min(x.nrows().max(1));
        let mut ws = Forward::<F>::new(self, chunk);
        for start in (0..x.nrows()).step_by(chunk) {
            let end = (start + chunk).min(x.nrows());
            let m = end - start;
            ws.load(x.slice(s![start..end, ..]));
            ws.run(self, m, net.activation(), self.n_layers());
            let z = ws.acts.last_mut().expect("layers");
            for (i, mut row) in z.slice_mut(s![..m, ..]).rows_mut().into_iter().enumerate() {
                let row = row.as_slice_mut().expect("contiguous");
                net.head().apply_row(row);
                for (k, v) in row.iter().enumerate() {
                    out[[start + i, k]] = v.as_f64();
                }
            }
        }
        out
    }

    /// Activations of hidden layer `layer` (1-based).
    pub fn hidden(&self, x: ArrayView2<'_, f64>, net: &Network, layer: usize) -> Array2<f64> {
        let width = self.shapes[layer - 1].1;
        let mut out = Array2::zeros((x.nrows(), width));
        let chunk = EVAL_CHUNK.min(x.nrows().max(1));
        let mut ws = Forward::<F>::new(self, chunk);
        for start in (0..x.nrows()).step_by(chunk) {
            let end = (start + chunk).min(x.nrows());
            let m = end - start;
            ws.load(x.slice(s![start..end, ..]));
            ws.run(self, m, net.activation(), layer);
            let a = &ws.acts[layer - 1];
            for i in 0..m {
                for k in 0..width {
                    out[[start + i, k]] = a[[i, k]].as_f64();
                }
            }
        }
        out
    }
}

/// Rows evaluated at once outside training (bounds memory for big tables).
pub(crate) const EVAL_CHUNK: usize = 1024;

/// Buffers for forward passes of up to `capacity` rows.
pub(crate) struct Forward<F: Real> {
    pub input: Array2<F>,
    /// Per layer: output sums, turned into activations in place (the last
    /// layer keeps its sums until the loss or head is applied).
    pub acts: Vec<Array2<F>>,
}

impl<F: Real> Forward<F> {
    pub fn new(params: &Params<F>, capacity: usize) -> Forward<F> {
        Forward {
            input: Array2::zeros((capacity, params.shapes[0].0)),
            acts: params
                .shapes
                .iter()
                .map(|&(_, o)| Array2::zeros((capacity, o)))
                .collect(),
        }
    }

    /// Copies rows of `x` into the input buffer.
    pub fn load(&mut self, x: ArrayView2<'_, f64>) {
        for (mut dst, src) in self.input.rows_mut().into_iter().zip(x.rows()) {
            for (d, s) in dst.iter_mut().zip(src) {
                *d = F::from_f64(*s);
            }
        }
    }

    /// Runs layers `0..upto` on the first `m` input rows. Hidden layers get
    /// their activation; the output layer (when reached) holds raw sums.
    pub fn run(&mut self, params: &Params<F>, m: usize, activation: Activation, upto: usize) {
        let last = params.n_layers() - 1;
        for l in 0..upto {
            let (done, rest) = self.acts.split_at_mut(l);
            let input = if l == 0 {
                self.input.slice(s![..m, ..])
            } else {
                done[l - 1].slice(s![..m, ..])
            };
            let mut out = rest[0].slice_mut(s![..m, ..]);
            general_mat_mul(F::one(), &input, &params.weights(l), F::zero(), &mut out);
            bias_and_activate(
                &mut out,
                params.biases(l),
                if l == last { None } else { Some(activation) },
            );
        }
    }
}

/// Adds the bias row to every row and applies the activation, in one pass.
fn bias_and_activate<F: Real>(
    out: &mut ArrayViewMut2<'_, F>,
    b: &[F],
    activation: Option<Activation>,
) {
    for mut row in out.rows_mut() {
        let row = row
            .as_slice_mut()
            .expect("rows of a standard-layout buffer are contiguous");
        match activation {
            None | Some(Activation::Identity) => {
                row.iter_mut().zip(b).for_each(|(v, &bk)| *v = *v + bk)
            }
            Some(act) => row
                .iter_mut()
                .zip(b)
                .for_each(|(v, &bk)| *v = act.value(*v + bk)),
        }
    }
}

/// Buffers for training: a forward workspace plus deltas and gradients.
pub(crate) struct Backprop<F: Real> {
    pub fwd: Forward<F>,
    pub targets: Array2<F>,
    pub deltas: Vec<Array2<F>>,
    pub grad: Vec<F>,
}

impl<F: Real> Backprop<F> {
    pub fn new(params: &Params<F>, capacity: usize) -> Backprop<F> {
        let n_out = params.shapes.last().expect("layers").1;
        Backprop {
            fwd: Forward::new(params, capacity),
            targets: Array2::zeros((capacity, n_out)),
            deltas: params
                .shapes
                .iter()
                .map(|&(_, o)| Array2::zeros((capacity, o)))
                .collect(),
            grad: vec![F::zero(); params.data.len()],
        }
    }

    /// Gathers rows `rows` of `x` and `y` (already in `F`) into the buffers.
    pub fn gather(&mut self, x: &Array2<F>, y: &Array2<F>, rows: &[usize]) {
        for (i, &r) in rows.iter().enumerate() {
            self.fwd.input.row_mut(i).assign(&x.row(r));
            self.targets.row_mut(i).assign(&y.row(r));
        }
    }

    /// Forward and backward pass over the first `m` gathered rows: fills
    /// `grad` with the gradient of the batch's mean loss (no penalties) and
    /// returns the summed loss of the rows.
    pub fn pass(
        &mut self,
        params: &Params<F>,
        m: usize,
        activation: Activation,
        head: Head,
        loss: Loss,
    ) -> F {
        let n_layers = params.n_layers();
        self.fwd.run(params, m, activation, n_layers);
        let last = n_layers - 1;
        let scale = F::one() / F::from_f64(m as f64);
        let mut total = F::zero();
        {
            let z = &mut self.fwd.acts[last];
            let d = &mut self.deltas[last];
            for i in 0..m {
                let zr = z.row_mut(i).into_slice().expect("contiguous");
                let yr = self.targets.row(i);
                let yr = yr.as_slice().expect("contiguous");
                let dr = d.row_mut(i).into_slice().expect("contiguous");
                total =
                    total + crate::train::loss::row_loss_delta(head, loss, zr, yr, Some(dr), scale);
            }
        }
        for l in (0..n_layers).rev() {
            let (wr, br) = params.ranges(l);
            let (n_in, n_out) = params.shapes[l];
            let delta = self.deltas[l].slice(s![..m, ..]);
            let input = if l == 0 {
                self.fwd.input.slice(s![..m, ..])
            } else {
                self.fwd.acts[l - 1].slice(s![..m, ..])
            };
            {
                let mut gw =
                    ArrayViewMut2::from_shape((n_in, n_out), &mut self.grad[wr]).expect("layout");
                general_mat_mul(F::one(), &input.t(), &delta, F::zero(), &mut gw);
            }
            let gb = &mut self.grad[br];
            gb.iter_mut().for_each(|g| *g = F::zero());
            for row in delta.rows() {
                for (g, &d) in gb.iter_mut().zip(row) {
                    *g = *g + d;
                }
            }
            if l > 0 {
                let (before, after) = self.deltas.split_at_mut(l);
                let delta = after[0].slice(s![..m, ..]);
                let mut prev = before[l - 1].slice_mut(s![..m, ..]);
                general_mat_mul(
                    F::one(),
                    &delta,
                    &params.weights(l).t(),
                    F::zero(),
                    &mut prev,
                );
                let a = self.fwd.acts[l - 1].slice(s![..m, ..]);
                match activation {
                    Activation::Identity => {}
                    act => prev
                        .iter_mut()
                        .zip(a.iter())
                        .for_each(|(d, &av)| *d = *d * act.derivative_from_output(av)),
                }
            }
        }
        total
    }
}

/// Summed loss over all rows of `x` (targets `y`), evaluated in chunks, and
/// the number of rows whose predicted class matches the target's (when
/// `classify`).
#[allow(clippy::too_many_arguments)]
pub(crate) fn evaluate<F: Real>(
    params: &Params<F>,
    ws: &mut Forward<F>,
    x: &Array2<F>,
    y: &Array2<F>,
    activation: Activation,
    head: Head,
    loss: Loss,
    classify: bool,
) -> (f64, usize) {
    let capacity = ws.input.nrows();
    let mut total = 0.0;
    let mut correct = 0;
    let n_layers = params.n_layers();
    for start in (0..x.nrows()).step_by(capacity) {
        let end = (start + capacity).min(x.nrows());
        let m = end - start;
        ws.input
            .slice_mut(s![..m, ..])
            .assign(&x.slice(s![start..end, ..]));
        ws.run(params, m, activation, n_layers);
        let z = ws.acts.last_mut().expect("layers");
        let mut chunk_total = F::zero();
        for i in 0..m {
            let zr = z.row_mut(i).into_slice().expect("contiguous");
            let yr = y.row(start + i);
            let yr = yr.as_slice().expect("contiguous");
            chunk_total = chunk_total
                + crate::train::loss::row_loss_delta(head, loss, zr, yr, None, F::one());
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
