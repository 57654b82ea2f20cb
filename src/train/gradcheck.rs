//! Gradient checking: backpropagated gradients against finite differences
//! (the method is documented on [`check_gradients`]).

use super::engine::Backprop;
use super::Loss;
use crate::error::{Error, Result};
use crate::network::{Activation, Head, Network};
use crate::network::{Arithmetic, Params};
use ndarray::ArrayView2;

/// The outcome of [`check_gradients`].
#[derive(Clone, Debug, PartialEq)]
pub struct GradientCheck {
    /// The largest relative error over all parameters.
    pub max_relative_error: f64,
    /// Where it occurred: (layer from 1, is it a bias, flat index in the layer).
    pub worst: (usize, bool, usize),
    /// Parameters in the network.
    pub parameters: usize,
    /// Parameters left out because a step of up to `2h` switched a rectifier
    /// unit on or off for some row (a kink, where the loss has no derivative
    /// and differences are meaningless).
    pub at_kinks: usize,
}

/// Compares backpropagated gradients of the mean `loss` over rows `x`
/// (targets `y` in output encoding) with central differences of step `h`:
///
/// ```text
/// numeric_i  = (8 [J(w + h e_i) - J(w - h e_i)] - [J(w + 2h e_i) - J(w - 2h e_i)]) / (12 h)
/// rel_err_i  = |analytic_i - numeric_i| / max(|analytic_i|, |numeric_i|)
/// ```
/// with `J` the mean loss over the given rows (no penalties): the
/// fourth-order central difference (five-point stencil; Abramowitz & Stegun,
/// "Handbook of Mathematical Functions", 1964, formula 25.3.6), whose
/// truncation error is O(h^4) rather than the O(h^2) of the two-point form.
/// Pairs count as agreeing when both values are below `1e-10` in size, or
/// when they differ by no more than the stencil's rounding noise,
/// `64 eps max(|J|, 1) / h` (each loss is exact to a few ulps of |J|, and the
/// stencil divides their differences by 12h): below that noise no
/// finite-difference check can see an error. A step near 1e-3 balances
/// truncation and rounding; a relative error below 1e-7 is good in double
/// precision (common practice, no source). A parameter whose steps switch a
/// rectifier unit on or off for some row sits at a kink, where the loss has
/// no derivative: it is left out and counted in [`GradientCheck::at_kinks`].
/// Always computed in f64.
///
/// # Errors
/// Mismatched shapes, `h` not positive, cross-entropy with the identity head.
///
/// # Example
/// ```
/// use stratanet::prelude::*;
/// use stratanet::network::{Head, Init, Network};
/// use stratanet::train::{check_gradients, Loss};
/// use stratanet::ndarray::array;
/// let mut rng = seeded_rng(5);
/// let net = Network::new(&[2, 3, 1], Activation::Tanh, Head::Logistic, Init::Auto, &mut rng)?;
/// let x = array![[0.1, -0.4], [0.7, 0.2]];
/// let y = array![[0.0], [1.0]];
/// let check = check_gradients(&net, x.view(), y.view(), Loss::CrossEntropy, 1e-3)?;
/// assert!(check.max_relative_error < 1e-7);
/// # Ok::<(), stratanet::Error>(())
/// ```
pub fn check_gradients(
    network: &Network,
    x: ArrayView2<'_, f64>,
    y: ArrayView2<'_, f64>,
    loss: Loss,
    h: f64,
) -> Result<GradientCheck> {
    check_gradients_in(network, x, y, loss, h, Arithmetic::Portable)
}

/// [`check_gradients`] with every pass (the backpropagated gradients and
/// the losses of the finite differences) computed in the given arithmetic
/// mode, for tests of the fast mode.
///
/// # Errors
/// As [`check_gradients`].
#[doc(hidden)]
pub fn check_gradients_in(
    network: &Network,
    x: ArrayView2<'_, f64>,
    y: ArrayView2<'_, f64>,
    loss: Loss,
    h: f64,
    arithmetic: Arithmetic,
) -> Result<GradientCheck> {
    check_altered(network, x, y, loss, h, arithmetic, |_| {})
}

/// The check, with `alter` applied to the backpropagated gradient before it
/// is compared (the identity but in tests, which corrupt it to show that
/// the check fails).
fn check_altered(
    network: &Network,
    x: ArrayView2<'_, f64>,
    y: ArrayView2<'_, f64>,
    loss: Loss,
    h: f64,
    arithmetic: Arithmetic,
    alter: impl FnOnce(&mut [f64]),
) -> Result<GradientCheck> {
    if !(h > 0.0 && h.is_finite()) {
        return Err(Error::option(
            "h",
            h,
            "must be a finite number greater than 0",
        ));
    }
    if loss == Loss::CrossEntropy && network.head() == Head::Identity {
        return Err(Error::option(
            "loss",
            "cross_entropy",
            "needs a logistic or softmax head",
        ));
    }
    if x.ncols() != network.n_inputs()
        || y.dim() != (x.nrows(), network.n_outputs())
        || x.nrows() == 0
    {
        return Err(Error::shape(
            "gradient check rows",
            (x.nrows().max(1), network.n_inputs()),
            x.dim(),
        ));
    }
    let (act, head) = (network.activation(), network.head());
    let m = x.nrows();
    let mut params = Params::<f64>::from_network(network);
    let mut bp = Backprop::new(&params, m, arithmetic);
    let rows: Vec<usize> = (0..m).collect();
    let xf: Vec<f64> = x.iter().copied().collect();
    let yf: Vec<f64> = y.iter().copied().collect();
    bp.gather(&xf, &yf, None, &rows);
    bp.pass(&params, m, act, head, loss);
    let mut analytic = bp.grad.clone();
    alter(&mut analytic);
    let bp_widths: Vec<usize> = params.shapes.iter().map(|&(_, o)| o).collect();
    let rectifier = matches!(act, Activation::Relu | Activation::LeakyRelu(_));
    // Which rectifier units are on, over all rows: a perturbation that
    // changes this pattern straddles a kink, where differences say nothing.
    let pattern = |bp: &Backprop<f64>| -> Vec<bool> {
        if !rectifier {
            return Vec::new();
        }
        bp.fwd.acts[..bp.fwd.acts.len() - 1]
            .iter()
            .zip(&bp_widths)
            .flat_map(|(a, &w)| a[..m * w].iter().map(|&v| v > 0.0).collect::<Vec<_>>())
            .collect()
    };
    let base_pattern = pattern(&bp);
    let mut kinks = 0;
    let objective = |p: &Params<f64>, bp: &mut Backprop<f64>| -> (f64, bool) {
        bp.gather(&xf, &yf, None, &rows);
        let j = bp.pass(p, m, act, head, loss) / m as f64;
        (j, pattern(bp) != base_pattern)
    };
    // The stencil's rounding noise: each loss carries a few ulps of |J|,
    // and the stencil divides their differences by 12h (weights 8, 8, 1, 1).
    let j0 = objective(&params, &mut bp).0;
    let noise = 64.0 * f64::EPSILON * j0.abs().max(1.0) / h;
    let mut worst = (0.0f64, (1, false, 0));
    for (i, &a) in analytic.iter().enumerate() {
        let saved = params.data[i];
        let mut crossed = false;
        let mut at = |step: f64| {
            params.data[i] = saved + step;
            let (v, kink) = objective(&params, &mut bp);
            params.data[i] = saved;
            crossed |= kink;
            v
        };
        let near = at(h) - at(-h);
        let far = at(2.0 * h) - at(-2.0 * h);
        if crossed {
            kinks += 1;
            continue;
        }
        let numeric = (8.0 * near - far) / (12.0 * h);
        let size = a.abs().max(numeric.abs());
        let rel = if size < 1e-10 || (a - numeric).abs() <= noise {
            0.0
        } else {
            (a - numeric).abs() / size
        };
        if rel > worst.0 || rel.is_nan() {
            let layer = (0..params.n_layers())
                .rev()
                .find(|&l| params.offsets[l] <= i)
                .expect("offset 0 exists");
            let (wr, br) = params.ranges(layer);
            let is_bias = br.contains(&i);
            let index = if is_bias { i - br.start } else { i - wr.start };
            worst = (
                if rel.is_nan() { f64::INFINITY } else { rel },
                (layer + 1, is_bias, index),
            );
        }
    }
    Ok(GradientCheck {
        max_relative_error: worst.0,
        worst: worst.1,
        parameters: params.data.len(),
        at_kinks: kinks,
    })
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::network::Init;
    use crate::rng::{below, seeded_rng, uniform};
    use ndarray::Array2;

    /// A 2-3-1 tanh network with a logistic output and five random rows.
    fn case() -> (Network, Array2<f64>, Array2<f64>) {
        let mut rng = seeded_rng(4);
        let net = Network::new(
            &[2, 3, 1],
            Activation::Tanh,
            Head::Logistic,
            Init::Auto,
            &mut rng,
        )
        .unwrap();
        let x = Array2::from_shape_fn((5, 2), |_| uniform(&mut rng, -1.0, 1.0));
        let y = Array2::from_shape_fn((5, 1), |_| below(&mut rng, 2) as f64);
        (net, x, y)
    }

    // The check must be able to fail: a backpropagated gradient corrupted
    // on purpose is caught, at the parameter corrupted, with the relative
    // error the corruption implies (|a (1 + e) - a| / |a (1 + e)| =
    // e / (1 + e) when the differences agree with a to far better than e).
    #[test]
    fn a_corrupted_gradient_is_caught_where_it_was_corrupted() {
        let (net, x, y) = case();
        let run = |alter: &dyn Fn(&mut [f64])| {
            check_altered(
                &net,
                x.view(),
                y.view(),
                Loss::CrossEntropy,
                1e-3,
                Arithmetic::Portable,
                alter,
            )
            .unwrap()
        };
        let params = Params::<f64>::from_network(&net);
        let (hidden_weights, _) = params.ranges(0);
        let (_, output_bias) = params.ranges(1);
        let honest = run(&|_| {});
        assert!(honest.max_relative_error < 1e-7, "{honest:?}");
        // One hidden weight off by one part in 10^4.
        let i = hidden_weights.start + 4;
        let e = 1e-4;
        let scaled = run(&|g| g[i] *= 1.0 + e);
        assert_eq!(scaled.worst, (1, false, 4));
        let expected = e / (1.0 + e);
        assert!(
            (scaled.max_relative_error - expected).abs() < 1e-3 * expected,
            "{scaled:?}"
        );
        // The output bias's gradient with its sign flipped: |-a - a| / |a| = 2.
        let b = output_bias.start;
        let flipped = run(&|g| g[b] = -g[b]);
        assert_eq!(flipped.worst, (2, true, 0));
        assert!(
            (flipped.max_relative_error - 2.0).abs() < 1e-6,
            "{flipped:?}"
        );
    }
}
