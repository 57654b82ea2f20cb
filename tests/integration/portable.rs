//! The portable arithmetic mode: the same bits on 1 and 2 threads, and the
//! same bits as the naive loops documented on `Arithmetic::Portable`.

use ndarray::{Array1, Array2};
use stratanet::network::Arithmetic;
use stratanet::network::{Activation, Head, Init, Layer, Network};
use stratanet::prelude::*;
use stratanet::rng::uniform;
use stratanet::train::{train_arrays, Loss};
use stratanet::train::{Optimiser, TrainingOptions};

fn bits(net: &Network) -> Vec<u64> {
    net.layers()
        .iter()
        .flat_map(|l| {
            l.weights
                .iter()
                .chain(l.biases.iter())
                .map(|v| v.to_bits())
                .collect::<Vec<_>>()
        })
        .collect()
}

#[test]
fn portable_fit_is_the_same_on_one_and_two_threads() {
    let mut rng = seeded_rng(31);
    let x = Array2::from_shape_fn((90, 4), |_| uniform(&mut rng, -1.0, 1.0));
    let labels = x
        .rows()
        .into_iter()
        .map(|r| usize::from(r[0] - r[1] * r[2] + 0.2 * r[3] > 0.0))
        .collect();
    let data = Dataset::classification(x, labels, vec!["a".into(), "b".into()]).unwrap();
    let mut options = FitOptions::default()
        .hidden(&[24, 18])
        .epochs(20)
        .restarts(3);
    options.training.arithmetic = Arithmetic::Portable;
    let pool = |n| {
        rayon::ThreadPoolBuilder::new()
            .num_threads(n)
            .build()
            .unwrap()
    };
    let a = pool(1).install(|| fit(&data, &options, &mut seeded_rng(2)).unwrap());
    let b = pool(2).install(|| fit(&data, &options, &mut seeded_rng(2)).unwrap());
    assert_eq!(bits(a.model().network()), bits(b.model().network()));
    assert_eq!(a.report(), b.report());
    // The mode is recorded in the model's options (and so in its file).
    let json = a.model().to_json().unwrap();
    assert!(json.contains("\"arithmetic\": \"portable\""), "{json}");
}

/// Plain row-major matrices for the reference.
type M = Vec<Vec<f64>>;

/// The documented naive loop: `(sum over k ascending, from 0) + b[j]`.
fn forward(a: &M, w: &M, b: &[f64]) -> M {
    a.iter()
        .map(|row| {
            (0..b.len())
                .map(|j| {
                    let mut acc = 0.0;
                    for (k, &ak) in row.iter().enumerate() {
                        acc += ak * w[k][j];
                    }
                    acc + b[j]
                })
                .collect()
        })
        .collect()
}

/// `g[k][j] = sum over rows i ascending of a[i][k] * d[i][j]`.
fn weight_gradient(a: &M, d: &M) -> M {
    let (n_in, n_out) = (a[0].len(), d[0].len());
    let mut g = vec![vec![0.0; n_out]; n_in];
    for (k, gk) in g.iter_mut().enumerate() {
        for (j, gkj) in gk.iter_mut().enumerate() {
            let mut acc = 0.0;
            for i in 0..a.len() {
                acc += a[i][k] * d[i][j];
            }
            *gkj = acc;
        }
    }
    g
}

/// One epoch of plain SGD, 6-20-3 ReLU network, identity head, squared
/// error, rows in order, written out with the documented sums.
fn reference_epoch(
    ws: &mut [M],
    bs: &mut [Vec<f64>],
    x: &M,
    y: &M,
    batch: usize,
    rate: f64,
) -> f64 {
    let mut total = 0.0;
    for start in (0..x.len()).step_by(batch) {
        let end = (start + batch).min(x.len());
        let xb: M = x[start..end].to_vec();
        let yb: M = y[start..end].to_vec();
        let scale = 1.0 / (end - start) as f64;
        let z1 = forward(&xb, &ws[0], &bs[0]);
        let a1: M = z1
            .iter()
            .map(|r| r.iter().map(|&v| if v > 0.0 { v } else { 0.0 }).collect())
            .collect();
        let z2 = forward(&a1, &ws[1], &bs[1]);
        let mut d2 = z2.clone();
        // Rows' losses summed per batch, then batches summed (as `train`).
        let mut batch_total = 0.0;
        for (i, row) in z2.iter().enumerate() {
            let mut e = 0.0;
            for (k, &a) in row.iter().enumerate() {
                e += (a - yb[i][k]) * (a - yb[i][k]);
                d2[i][k] = (a - yb[i][k]) * scale;
            }
            batch_total += e * 0.5;
        }
        total += batch_total;
        let gw2 = weight_gradient(&a1, &d2);
        let gb2: Vec<f64> = (0..3)
            .map(|j| d2.iter().fold(0.0, |acc, r| acc + r[j]))
            .collect();
        // p[i][k] = sum over j ascending of d[i][j] * w[k][j], times f'.
        let mut d1 = a1.clone();
        for i in 0..d2.len() {
            for k in 0..20 {
                let mut acc = 0.0;
                for j in 0..3 {
                    acc += d2[i][j] * ws[1][k][j];
                }
                d1[i][k] = if a1[i][k] > 0.0 { acc } else { 0.0 };
            }
        }
        let gw1 = weight_gradient(&xb, &d1);
        let gb1: Vec<f64> = (0..20)
            .map(|j| d1.iter().fold(0.0, |acc, r| acc + r[j]))
            .collect();
        for (l, (gw, gb)) in [(gw1, gb1), (gw2, gb2)].into_iter().enumerate() {
            for (wk, gk) in ws[l].iter_mut().zip(&gw) {
                for (w, g) in wk.iter_mut().zip(gk) {
                    *w -= rate * g;
                }
            }
            for (b, g) in bs[l].iter_mut().zip(&gb) {
                *b -= rate * g;
            }
        }
    }
    total
}

#[test]
fn portable_training_equals_the_naive_reference_loop_bit_for_bit() {
    let mut rng = seeded_rng(8);
    let (rows, batch, rate, epochs) = (21, 8, 0.05, 4);
    let x = Array2::from_shape_fn((rows, 6), |_| uniform(&mut rng, -1.0, 1.0));
    let y = Array2::from_shape_fn((rows, 3), |_| uniform(&mut rng, -1.0, 1.0));
    let net = Network::new(
        &[6, 20, 3],
        Activation::Relu,
        Head::Identity,
        Init::Auto,
        &mut rng,
    )
    .unwrap();
    let to_m = |a: &Array2<f64>| -> M { a.rows().into_iter().map(|r| r.to_vec()).collect() };
    let mut ws: Vec<M> = net.layers().iter().map(|l| to_m(&l.weights)).collect();
    let mut bs: Vec<Vec<f64>> = net.layers().iter().map(|l| l.biases.to_vec()).collect();
    let (xm, ym) = (to_m(&x), to_m(&y));
    let expected_losses: Vec<f64> = (0..epochs)
        .map(|_| reference_epoch(&mut ws, &mut bs, &xm, &ym, batch, rate) / rows as f64)
        .collect();

    let mut trained = net.clone();
    let options = TrainingOptions {
        epochs,
        batch_size: Some(stratanet::train::BatchSize::Rows(batch)),
        learning_rate: rate,
        optimiser: Optimiser::Sgd,
        loss: Some(Loss::SquaredError),
        early_stopping: None,
        shuffle: false,
        arithmetic: Arithmetic::Portable,
        ..Default::default()
    };
    let report = train_arrays(
        &mut trained,
        x.view(),
        y.view(),
        None,
        &options,
        &mut seeded_rng(1),
    )
    .unwrap();
    let expected = Network::from_layers(
        ws.iter()
            .zip(&bs)
            .map(|(w, b)| Layer {
                weights: Array2::from_shape_fn((w.len(), w[0].len()), |(i, j)| w[i][j]),
                biases: Array1::from(b.clone()),
            })
            .collect(),
        Activation::Relu,
        Head::Identity,
    )
    .unwrap();
    assert_eq!(bits(&trained), bits(&expected));
    let losses: Vec<u64> = report
        .training_losses()
        .iter()
        .map(|v| v.to_bits())
        .collect();
    let expected_bits: Vec<u64> = expected_losses.iter().map(|v| v.to_bits()).collect();
    assert_eq!(losses, expected_bits);
}
