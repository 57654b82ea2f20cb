//! Backpropagated gradients against central finite differences.
//!
//! Bound: a relative error below 1e-7 in double precision (common practice,
//! no source; rectifier kinks need care, as the loss has no derivative
//! there). Differences: the five-point central stencil (Abramowitz & Stegun
//! 1964, 25.3.6) with h = 1e-3; parameters whose steps cross a rectifier
//! kink are left out by the check and counted.

use ndarray::Array2;
use stratanet::network::{Activation, Head, Init, Network};
use stratanet::rng::{below, uniform};
use stratanet::seeded_rng;
use stratanet::train::{check_gradients, Loss};

fn targets(
    head: Head,
    rows: usize,
    outputs: usize,
    rng: &mut stratanet::rng::ChaCha8Rng,
) -> Array2<f64> {
    match head {
        Head::Softmax => {
            let mut y = Array2::zeros((rows, outputs));
            for i in 0..rows {
                y[[i, below(rng, outputs)]] = 1.0;
            }
            y
        }
        Head::Logistic => Array2::from_shape_fn((rows, outputs), |_| below(rng, 2) as f64),
        Head::Identity => Array2::from_shape_fn((rows, outputs), |_| uniform(rng, -2.0, 2.0)),
    }
}

#[test]
fn every_activation_head_and_loss() {
    let combos = [
        (Head::Logistic, 1, Loss::CrossEntropy),
        (Head::Logistic, 3, Loss::CrossEntropy),
        (Head::Logistic, 2, Loss::SquaredError),
        (Head::Softmax, 3, Loss::CrossEntropy),
        (Head::Softmax, 4, Loss::SquaredError),
        (Head::Identity, 2, Loss::SquaredError),
    ];
    let mut worst = 0.0f64;
    let mut checked = 0;
    let mut kinks = 0;
    for (case, activation) in Activation::ALL.into_iter().enumerate() {
        for (k, &(head, outputs, loss)) in combos.iter().enumerate() {
            for hidden in [vec![4], vec![5, 3]] {
                let seed = (case * 100 + k * 10 + hidden.len()) as u64;
                let mut rng = seeded_rng(seed);
                let mut sizes = vec![3];
                sizes.extend(&hidden);
                sizes.push(outputs);
                let net = Network::new(
                    &sizes,
                    activation,
                    head,
                    Init::SmallUniform { range: 1.0 },
                    &mut rng,
                )
                .unwrap();
                let x = Array2::from_shape_fn((7, 3), |_| uniform(&mut rng, -1.5, 1.5));
                let y = targets(head, 7, outputs, &mut rng);
                let check = check_gradients(&net, x.view(), y.view(), loss, 1e-3).unwrap();
                kinks += check.at_kinks;
                assert!(
                    check.max_relative_error < 1e-7,
                    "{} / {} x{outputs} / {} / {sizes:?}: relative error {:e} at {:?}",
                    activation.name(),
                    head.name(),
                    loss.name(),
                    check.max_relative_error,
                    check.worst
                );
                worst = worst.max(check.max_relative_error);
                checked += 1;
            }
        }
    }
    assert_eq!(checked, 60);
    eprintln!("largest relative error over {checked} networks: {worst:e}; parameters at rectifier kinks left out: {kinks}");
    assert!(
        kinks < 20,
        "too many kinks ({kinks}) for the check to mean much"
    );
}

// The check reports a disagreement when the differences are poor: a huge
// step makes the central difference a bad estimate of the derivative. (That
// the check fails on a corrupted backpropagated gradient, at the parameter
// corrupted, is tested beside it: src/train/gradcheck.rs,
// `a_corrupted_gradient_is_caught_where_it_was_corrupted`.)
#[test]
fn a_step_too_large_for_the_differences_is_reported() {
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
    // A huge step makes the central difference a poor estimate.
    let check = check_gradients(&net, x.view(), y.view(), Loss::CrossEntropy, 3.0).unwrap();
    assert!(
        check.max_relative_error > 1e-4,
        "{:e}",
        check.max_relative_error
    );
}
