//! The multi-layer perceptron: [`Network`], its [`Layer`]s and the float
//! type it computes in ([`Precision`]).

use super::{Activation, Head, Init, Layer, Params, Real};
use crate::error::{Error, Result};
use crate::rng;
use ndarray::{Array1, Array2, ArrayView2, Axis};
use rand::RngCore;

/// The float type a network trains and predicts in.
///
/// Text form: `f64`, `f32`.
#[derive(Clone, Copy, Debug, Default, PartialEq, Eq)]
pub enum Precision {
    /// 64-bit floats (the default; used for all exact checks).
    #[default]
    F64,
    /// 32-bit floats (faster on wide layers). Weights are stored as the f64
    /// values of the f32 numbers, so they survive a round trip exactly.
    F32,
}

crate::error::text_forms!(Precision, "precision", {
    Precision::F64 => "f64",
    Precision::F32 => "f32",
});

/// A multi-layer perceptron.
#[derive(Clone, PartialEq)]
pub struct Network {
    layers: Vec<Layer>,
    activation: Activation,
    head: Head,
    precision: Precision,
}

impl std::fmt::Debug for Network {
    fn fmt(&self, f: &mut std::fmt::Formatter<'_>) -> std::fmt::Result {
        write!(
            f,
            "Network {{ sizes: {:?}, activation: {}, head: {}, parameters: {}, precision: {:?} }}",
            self.sizes(),
            self.activation.name(),
            self.head.name(),
            self.n_parameters(),
            self.precision
        )
    }
}

impl Network {
    /// A network with layer sizes `sizes` (inputs, hidden..., outputs), the
    /// given hidden activation and head, and weights drawn by `init`.
    ///
    /// # Errors
    /// Fewer than two sizes, a zero size, a softmax head with fewer than two
    /// outputs, or an invalid initialisation range.
    ///
    /// # Example
    /// ```
    /// use stratanet::network::{Activation, Head, Init, Network};
    /// let mut rng = stratanet::seeded_rng(1);
    /// let net = Network::new(&[4, 8, 3], Activation::Tanh, Head::Softmax, Init::Auto, &mut rng)?;
    /// assert_eq!(net.n_parameters(), 4 * 8 + 8 + 8 * 3 + 3);
    /// # Ok::<(), stratanet::Error>(())
    /// ```
    pub fn new<R: RngCore + ?Sized>(
        sizes: &[usize],
        activation: Activation,
        head: Head,
        init: Init,
        rng: &mut R,
    ) -> Result<Network> {
        check_architecture(sizes, activation, head)?;
        init.check()?;
        let mut layers = Vec::with_capacity(sizes.len() - 1);
        for (l, pair) in sizes.windows(2).enumerate() {
            let (n_in, n_out) = (pair[0], pair[1]);
            let hidden_act = if l + 2 < sizes.len() {
                Some(activation)
            } else {
                None
            };
            let (limit, draw_biases) = init.limit(n_in, n_out, hidden_act);
            let weights =
                Array2::from_shape_fn((n_in, n_out), |_| rng::uniform(rng, -limit, limit));
            let biases = if draw_biases {
                Array1::from_shape_fn(n_out, |_| rng::uniform(rng, -limit, limit))
            } else {
                Array1::zeros(n_out)
            };
            layers.push(Layer { weights, biases });
        }
        Ok(Network {
            layers,
            activation,
            head,
            precision: Precision::F64,
        })
    }

    /// A network from given layers (e.g. published weights).
    ///
    /// # Errors
    /// When consecutive layers do not fit together, or a weight is not finite.
    pub fn from_layers(layers: Vec<Layer>, activation: Activation, head: Head) -> Result<Network> {
        if layers.is_empty() {
            return Err(Error::input("network", "needs at least one layer"));
        }
        let mut sizes = vec![layers[0].inputs()];
        for (i, layer) in layers.iter().enumerate() {
            if layer.inputs() != *sizes.last().expect("non-empty") {
                return Err(Error::shape(
                    format!("weights of layer {}", i + 1),
                    (*sizes.last().expect("non-empty"), layer.outputs()),
                    layer.weights.dim(),
                ));
            }
            if layer.biases.len() != layer.outputs() {
                return Err(Error::shape(
                    format!("biases of layer {}", i + 1),
                    (1, layer.outputs()),
                    (1, layer.biases.len()),
                ));
            }
            if layer
                .weights
                .iter()
                .chain(layer.biases.iter())
                .any(|v| !v.is_finite())
            {
                return Err(Error::input(
                    format!("layer {}", i + 1),
                    "holds a weight or bias that is not a finite number",
                ));
            }
            sizes.push(layer.outputs());
        }
        check_architecture(&sizes, activation, head)?;
        Ok(Network {
            layers,
            activation,
            head,
            precision: Precision::F64,
        })
    }

    /// The same network computing in `precision`. Switching to f32 rounds
    /// every weight to the nearest f32 value.
    pub fn with_precision(mut self, precision: Precision) -> Network {
        if precision == Precision::F32 {
            for layer in &mut self.layers {
                layer.weights.mapv_inplace(|v| v as f32 as f64);
                layer.biases.mapv_inplace(|v| v as f32 as f64);
            }
        }
        self.precision = precision;
        self
    }

    /// Layer sizes: inputs, hidden..., outputs.
    pub fn sizes(&self) -> Vec<usize> {
        let mut s = vec![self.layers[0].inputs()];
        s.extend(self.layers.iter().map(Layer::outputs));
        s
    }

    /// The layers, input side first.
    pub fn layers(&self) -> &[Layer] {
        &self.layers
    }

    /// The hidden activation.
    pub fn activation(&self) -> Activation {
        self.activation
    }

    /// The output head.
    pub fn head(&self) -> Head {
        self.head
    }

    /// The float type.
    pub fn precision(&self) -> Precision {
        self.precision
    }

    /// Number of inputs.
    pub fn n_inputs(&self) -> usize {
        self.layers[0].inputs()
    }

    /// Number of outputs.
    pub fn n_outputs(&self) -> usize {
        self.layers.last().expect("at least one layer").outputs()
    }

    /// Number of hidden layers.
    pub fn n_hidden_layers(&self) -> usize {
        self.layers.len() - 1
    }

    /// Weights and biases in all.
    pub fn n_parameters(&self) -> usize {
        self.layers
            .iter()
            .map(|l| l.weights.len() + l.biases.len())
            .sum()
    }

    /// The outputs for each row of `x`: probabilities for logistic and
    /// softmax heads, values for the identity head.
    ///
    /// # Errors
    /// When `x` has the wrong number of columns.
    pub fn predict(&self, x: ArrayView2<'_, f64>) -> Result<Array2<f64>> {
        self.outputs_through(x, self.head)
    }

    /// The output layer's sums for each row of `x`, before the head (the
    /// logits of a classifier; the same as [`Network::predict`] for the
    /// identity head).
    ///
    /// # Errors
    /// As [`Network::predict`].
    pub fn output_sums(&self, x: ArrayView2<'_, f64>) -> Result<Array2<f64>> {
        self.outputs_through(x, Head::Identity)
    }

    fn outputs_through(&self, x: ArrayView2<'_, f64>, head: Head) -> Result<Array2<f64>> {
        self.check_inputs(x)?;
        let out = match self.precision {
            Precision::F64 => {
                Params::<f64>::from_layers(&self.layers).predict(x, self.activation, head)
            }
            Precision::F32 => {
                Params::<f32>::from_layers(&self.layers).predict(x, self.activation, head)
            }
        };
        // A finite input can still overflow a layer (a value far outside
        // the training range): say so rather than return NaN or infinity.
        if let Some((row, _)) = out
            .rows()
            .into_iter()
            .enumerate()
            .find(|(_, r)| r.iter().any(|v| !v.is_finite()))
        {
            let largest = x.row(row).iter().fold(0.0f64, |m, v| m.max(v.abs()));
            return Err(Error::input(
                format!("predicting row {} (counting from 1)", row + 1),
                format!(
                    "the network's output overflowed ({precision} arithmetic); the row's largest input in magnitude is {largest:e} after scaling, far outside the range the model was fitted on; check the row's values and units",
                    precision = match self.precision {
                        Precision::F64 => "f64",
                        Precision::F32 => "f32",
                    }
                ),
            ));
        }
        Ok(out)
    }

    /// The predicted class of each row: the arg-max output for softmax, and
    /// `p >= 0.5` for a single logistic output (class 1 is the second class).
    ///
    /// # Errors
    /// When `x` has the wrong number of columns, or the head is not a classifier.
    pub fn predict_classes(&self, x: ArrayView2<'_, f64>) -> Result<Vec<usize>> {
        let out = self.predict(x)?;
        classes_from_outputs(out.view(), self.head)
    }

    /// Class probabilities, one column per class: for a single logistic
    /// output the columns are `1 - p` and `p`.
    ///
    /// # Errors
    /// When `x` has the wrong number of columns, or the head is not a classifier.
    pub fn predict_probabilities(&self, x: ArrayView2<'_, f64>) -> Result<Array2<f64>> {
        let out = self.predict(x)?;
        probabilities_from_outputs(out, self.head)
    }

    /// The activations `a_l` of hidden layer `layer` (1-based: 1 is the first
    /// hidden layer) for each row of `x`.
    ///
    /// # Errors
    /// When `x` has the wrong number of columns or there is no such hidden layer.
    pub fn hidden_activations(&self, x: ArrayView2<'_, f64>, layer: usize) -> Result<Array2<f64>> {
        self.check_inputs(x)?;
        if layer == 0 || layer > self.n_hidden_layers() {
            return Err(Error::option(
                "hidden layer",
                layer,
                format!(
                    "must be between 1 and {} (the network's hidden layers)",
                    self.n_hidden_layers()
                ),
            ));
        }
        Ok(match self.precision {
            Precision::F64 => {
                Params::<f64>::from_layers(&self.layers).hidden(x, self.activation, layer)
            }
            Precision::F32 => {
                Params::<f32>::from_layers(&self.layers).hidden(x, self.activation, layer)
            }
        })
    }

    fn check_inputs(&self, x: ArrayView2<'_, f64>) -> Result<()> {
        if x.ncols() != self.n_inputs() {
            return Err(Error::shape(
                "network inputs",
                (x.nrows(), self.n_inputs()),
                x.dim(),
            ));
        }
        if let Some(i) = x.iter().position(|v| !v.is_finite()) {
            let (row, col) = (i / x.ncols().max(1), i % x.ncols().max(1));
            return Err(Error::input(
                format!("network inputs, row {} column {}", row + 1, col + 1),
                format!(
                    "the value {} is not a finite number; remove or fill the row first",
                    x[[row, col]]
                ),
            ));
        }
        Ok(())
    }
}

fn check_architecture(sizes: &[usize], activation: Activation, head: Head) -> Result<()> {
    if sizes.len() < 2 {
        return Err(Error::option(
            "layer sizes",
            format!("{sizes:?}"),
            "need at least an input size and an output size",
        ));
    }
    if let Some(i) = sizes.iter().position(|&s| s == 0) {
        return Err(Error::option(
            "layer sizes",
            format!("{sizes:?}"),
            format!("size {i} is 0; every layer needs at least one unit"),
        ));
    }
    // Guard against absurd sizes (a hostile model file, a typo) before any
    // allocation: 50 million parameters is far beyond a "small network".
    let params: u128 = sizes
        .windows(2)
        .map(|p| (p[0] as u128 + 1) * p[1] as u128)
        .sum();
    if params > MAX_PARAMETERS as u128 {
        return Err(Error::option(
            "layer sizes",
            format!("{sizes:?}"),
            format!("give {params} parameters, more than the limit of {MAX_PARAMETERS}"),
        ));
    }
    activation.check()?;
    if head == Head::Softmax && sizes[sizes.len() - 1] < 2 {
        return Err(Error::option(
            "head",
            "softmax",
            "needs at least two outputs (one per class); use the logistic head for one output",
        ));
    }
    Ok(())
}

/// The most parameters a network may have.
pub const MAX_PARAMETERS: usize = 50_000_000;

/// Classes from network outputs (see [`Network::predict_classes`]).
pub(crate) fn classes_from_outputs(out: ArrayView2<'_, f64>, head: Head) -> Result<Vec<usize>> {
    match (head, out.ncols()) {
        (Head::Logistic, 1) => Ok(out.iter().map(|&p| usize::from(p >= 0.5)).collect()),
        (Head::Softmax, _) => Ok(out
            .axis_iter(Axis(0))
            .map(|row| argmax(row.as_slice().expect("rows are contiguous")))
            .collect()),
        _ => Err(Error::input(
            "predicting classes",
            format!(
                "the {} head with {} outputs does not predict classes",
                head.name(),
                out.ncols()
            ),
        )),
    }
}

/// Probabilities per class from network outputs.
pub(crate) fn probabilities_from_outputs(out: Array2<f64>, head: Head) -> Result<Array2<f64>> {
    match (head, out.ncols()) {
        (Head::Logistic, 1) => {
            let mut p = Array2::zeros((out.nrows(), 2));
            for (i, &v) in out.iter().enumerate() {
                p[[i, 0]] = 1.0 - v;
                p[[i, 1]] = v;
            }
            Ok(p)
        }
        (Head::Softmax, _) => Ok(out),
        _ => Err(Error::input(
            "predicting class probabilities",
            format!(
                "the {} head with {} outputs does not give class probabilities",
                head.name(),
                out.ncols()
            ),
        )),
    }
}

/// Index of the largest value (the first one on ties).
pub(crate) fn argmax<F: PartialOrd + Copy>(row: &[F]) -> usize {
    let mut best = 0;
    for (i, v) in row.iter().enumerate() {
        if *v > row[best] {
            best = i;
        }
    }
    best
}

impl<F: Real> Params<F> {
    /// The network's parameters in the flat layout.
    pub(crate) fn from_network(net: &Network) -> Params<F> {
        Params::from_layers(&net.layers)
    }

    /// Writes the parameters back into the network's layers.
    pub(crate) fn write_to_network(&self, net: &mut Network) {
        self.write_to(&mut net.layers);
    }
}
