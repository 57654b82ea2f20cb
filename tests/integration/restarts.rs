//! Restarts keep the best network (issue 19): the kept restart has the
//! lowest validation loss of all restarts (the rule documented on
//! `Fitted::chosen_restart`; keeping the best of several random starts is
//! common practice, no source).

use ndarray::Array2;
use stratanet::prelude::*;
use stratanet::rng::uniform;

fn blobs() -> Dataset {
    let mut rng = seeded_rng(21);
    let x = Array2::from_shape_fn((150, 3), |_| uniform(&mut rng, -1.0, 1.0));
    let labels = x
        .rows()
        .into_iter()
        .map(|r| usize::from(r[0] * r[1] - 0.4 * r[2] > 0.0))
        .collect();
    Dataset::classification(x, labels, vec!["a".into(), "b".into()]).unwrap()
}

#[test]
fn the_kept_restart_has_the_lowest_validation_loss() {
    let data = blobs();
    for seed in [1, 2, 3] {
        let options = FitOptions::default().hidden(&[3]).epochs(15).restarts(5);
        let fitted = fit(&data, &options, &mut seeded_rng(seed)).unwrap();
        let losses: Vec<f64> = fitted
            .restarts()
            .iter()
            .map(|r| r.best_validation_loss.unwrap())
            .collect();
        assert_eq!(losses.len(), 5);
        let lowest = losses.iter().copied().fold(f64::INFINITY, f64::min);
        let highest = losses.iter().copied().fold(f64::NEG_INFINITY, f64::max);
        // The restarts differ, so keeping the wrong one would show.
        assert!(highest > lowest, "seed {seed}: {losses:?}");
        let first_lowest = losses.iter().position(|&l| l == lowest).unwrap();
        assert_eq!(
            fitted.chosen_restart(),
            first_lowest,
            "seed {seed}: {losses:?}"
        );
        assert_eq!(fitted.report(), &fitted.restarts()[first_lowest]);
        assert_eq!(fitted.report().best_validation_loss, Some(lowest));
    }
}
