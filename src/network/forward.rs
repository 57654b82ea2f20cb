//! The forward pass over a flat parameter vector, generic over the float
//! type: what prediction needs and what training builds on.
//!
//! Layout of the flat vector (part of the value-stability contract): for
//! each layer from the input side, its weights in row-major order
//! (`inputs x outputs`), then its biases. Gradients and optimiser state use
//! the same layout, so an update is one pass over a slice.
//!
//! Every layer's work is one matrix product (see [`kernels`](super::kernels)):
//! buffers are plain row-major vectors sized once for the largest batch and
//! reused, so no memory is allocated per mini-batch.

use super::kernels::{self, Operands};
use super::{Activation, Arithmetic, Head, Layer, Real};
use ndarray::{s, Array2, ArrayView2};

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
    pub fn from_layers(layers: &[Layer]) -> Params<F> {
        let mut data = Vec::with_capacity(
            layers
                .iter()
                .map(|l| l.weights.len() + l.biases.len())
                .sum(),
        );
        let mut shapes = Vec::new();
        let mut offsets = Vec::new();
        for layer in layers {
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
    pub fn write_to(&self, layers: &mut [Layer]) {
        for (l, layer) in layers.iter_mut().enumerate() {
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

    /// Outputs (after the head) for all rows of `x`, in chunks. Prediction
    /// always uses the portable kernel, so a model predicts the same bits on
    /// every machine.
    pub fn predict(
        &self,
        x: ArrayView2<'_, f64>,
        activation: Activation,
        head: Head,
    ) -> Array2<f64> {
        let n_out = self.shapes.last().expect("layers").1;
        let mut out = Array2::zeros((x.nrows(), n_out));
        let chunk = EVAL_CHUNK.min(x.nrows().max(1));
        let mut ws = Forward::<F>::new(self, chunk, Arithmetic::Portable);
        for start in (0..x.nrows()).step_by(chunk) {
            let end = (start + chunk).min(x.nrows());
            let m = end - start;
            ws.load(x.slice(s![start..end, ..]));
            ws.run(self, m, activation, self.n_layers());
            let z = &mut ws.acts.last_mut().expect("layers")[..m * n_out];
            head.apply_block(z, n_out);
            let dst = &mut out.as_slice_mut().expect("a new array is contiguous")
                [start * n_out..end * n_out];
            dst.iter_mut()
                .zip(z.iter())
                .for_each(|(d, v)| *d = v.as_f64());
        }
        out
    }

    /// Activations of hidden layer `layer` (1-based).
    pub fn hidden(
        &self,
        x: ArrayView2<'_, f64>,
        activation: Activation,
        layer: usize,
    ) -> Array2<f64> {
        let width = self.shapes[layer - 1].1;
        let mut out = Array2::zeros((x.nrows(), width));
        let chunk = EVAL_CHUNK.min(x.nrows().max(1));
        let mut ws = Forward::<F>::new(self, chunk, Arithmetic::Portable);
        for start in (0..x.nrows()).step_by(chunk) {
            let end = (start + chunk).min(x.nrows());
            let m = end - start;
            ws.load(x.slice(s![start..end, ..]));
            ws.run(self, m, activation, layer);
            let a = &ws.acts[layer - 1];
            for i in 0..m {
                for k in 0..width {
                    out[[start + i, k]] = a[i * width + k].as_f64();
                }
            }
        }
        out
    }
}

/// Rows evaluated at once outside training (bounds memory for big tables).
pub(crate) const EVAL_CHUNK: usize = 1024;

/// Buffers for forward passes of up to `capacity` rows, each a row-major
/// `capacity x width` block (only the first `m` rows are used by a pass).
pub(crate) struct Forward<F: Real> {
    pub input: Vec<F>,
    /// Per layer: output sums, turned into activations in place (the last
    /// layer keeps its sums until the loss or head is applied).
    pub acts: Vec<Vec<F>>,
    /// Rows the buffers hold.
    pub capacity: usize,
    /// Which kernels compute the products.
    pub arithmetic: Arithmetic,
}

impl<F: Real> Forward<F> {
    pub fn new(params: &Params<F>, capacity: usize, arithmetic: Arithmetic) -> Forward<F> {
        Forward {
            input: vec![F::zero(); capacity * params.shapes[0].0],
            acts: params
                .shapes
                .iter()
                .map(|&(_, o)| vec![F::zero(); capacity * o])
                .collect(),
            capacity,
            arithmetic,
        }
    }

    /// Copies rows of `x` into the input buffer.
    pub fn load(&mut self, x: ArrayView2<'_, f64>) {
        let width = x.ncols();
        for (dst, src) in self.input.chunks_exact_mut(width).zip(x.rows()) {
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
            let (n_in, n_out) = params.shapes[l];
            let (done, rest) = self.acts.split_at_mut(l);
            let input: &[F] = if l == 0 { &self.input } else { &done[l - 1] };
            let out = &mut rest[0][..m * n_out];
            let (wr, br) = params.ranges(l);
            // Bias added in the kernel's write-back; the activation follows
            // in one pass over the block, which is still in cache.
            kernels::product(
                self.arithmetic,
                (m, n_out, n_in),
                Operands {
                    lhs: input,
                    lrs: n_in,
                    lcs: 1,
                    rhs: &params.data[wr],
                    rrs: n_out,
                    rcs: 1,
                },
                out,
                Some(&params.data[br]),
            );
            if l != last {
                activate(out, activation);
            }
        }
    }
}

/// Applies a hidden activation in place (the match is outside the loop;
/// the logistic function and tanh run on the CPU's widest vectors, with the
/// same bits as one value at a time).
fn activate<F: Real>(out: &mut [F], activation: Activation) {
    match activation {
        Activation::Identity => {}
        Activation::Relu => out.iter_mut().for_each(|v| {
            *v = if *v > F::zero() { *v } else { F::zero() };
        }),
        Activation::Sigmoid => F::logistic_slice(out),
        Activation::Tanh => F::tanh_slice(out),
        act @ Activation::LeakyRelu(_) => out.iter_mut().for_each(|v| *v = act.value(*v)),
    }
}
