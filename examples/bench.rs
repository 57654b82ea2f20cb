//! The Rust side of the side-by-side benchmark (run it through `bench/run.sh`).
//!
//! ```text
//! bench prepare DIR                      write every workload's data, starting weights and row orders
//! bench prepare-csv FILE                 write the 1,000,000 x 30 CSV of the memory workload
//! bench train DIR THREADS fast|portable  train one workload, print one JSON line
//! bench predict DIR THREADS fast|portable
//! bench cv DIR THREADS fast|portable     5-fold cross-validation of a workload's configuration
//! bench draw DIR 1 fast                  W5 in full: predict the grid and draw the decision map
//! bench csv FILE                         load a CSV, report peak RSS against the f64 matrix size
//! bench kernel                           print the instruction set the kernels run on here
//! ```
//! Every workload is written from fixed seeds, so the numpy reference
//! (`bench/reference.py`) reads exactly the same rows, starting weights and
//! per-epoch row orders and does the same work. A harness of its own rather
//! than criterion: the comparison is against another process, in one run.

use ndarray::Array2;
use std::io::Write;
use std::path::{Path, PathBuf};
use std::time::Instant;
use stratanet::data::Dataset;
use stratanet::network::Arithmetic;
use stratanet::network::{Activation, Head, Init, Layer, Network, Precision};
use stratanet::rng::{seeded_rng, shuffle, uniform, uniform01, ChaCha8Rng};
use stratanet::train::{mean_loss, train_arrays, Loss, Optimiser, TrainingOptions};
use stratanet::validate::{cross_validate, CvOptions};
use stratanet::FitOptions;

/// One workload's definition.
struct Spec {
    name: &'static str,
    rows: usize,
    sizes: Vec<usize>,
    activation: Activation,
    head: Head,
    loss: Loss,
    batch: usize,
    epochs: usize,
    learning_rate: f64,
    precision: Precision,
    /// Prediction repeats (prediction workloads only).
    repeats: usize,
    /// Timed runs; the fastest counts, on both sides (the machine is shared).
    runs: usize,
    seed: u64,
}

fn specs() -> Vec<Spec> {
    let base = |name, rows, sizes: &[usize]| Spec {
        name,
        rows,
        sizes: sizes.to_vec(),
        activation: Activation::Relu,
        head: Head::Softmax,
        loss: Loss::CrossEntropy,
        batch: 32,
        epochs: 50,
        learning_rate: 0.05,
        precision: Precision::F32,
        repeats: 0,
        runs: 3,
        seed: 11,
    };
    vec![
        Spec {
            activation: Activation::Sigmoid,
            head: Head::Logistic,
            loss: Loss::SquaredError,
            batch: 1,
            epochs: 20_000,
            learning_rate: 0.5,
            precision: Precision::F64,
            runs: 2,
            seed: 3,
            ..base("W1", 4, &[2, 2, 1])
        },
        base("W2", 10_000, &[30, 64, 32, 2]),
        Spec {
            precision: Precision::F64,
            runs: 2,
            ..base("W2-f64", 10_000, &[30, 64, 32, 2])
        },
        Spec {
            batch: 128,
            epochs: 3,
            learning_rate: 0.01,
            runs: 2,
            seed: 12,
            ..base("W3", 60_000, &[784, 256, 10])
        },
        Spec {
            activation: Activation::Tanh,
            precision: Precision::F64,
            repeats: 10,
            epochs: 0,
            seed: 13,
            ..base("W5", 90_000, &[2, 32, 32, 3])
        },
        Spec {
            epochs: 300,
            precision: Precision::F64,
            seed: 14,
            ..base("CV-small", 1_000, &[20, 32, 2])
        },
    ]
}

fn normal(rng: &mut ChaCha8Rng) -> f64 {
    let u1 = 1.0 - uniform01(rng);
    let u2 = uniform01(rng);
    (-2.0 * u1.ln()).sqrt() * (2.0 * std::f64::consts::PI * u2).cos()
}

/// Rows and one-hot targets: features from a fixed seed, classes from a
/// fixed random two-layer rule (so a network has something to learn).
fn data(spec: &Spec) -> (Array2<f64>, Array2<f64>) {
    let mut rng = seeded_rng(spec.seed);
    let (d, k) = (spec.sizes[0], *spec.sizes.last().unwrap());
    let f32_exact = spec.precision == Precision::F32;
    let mut x = Array2::zeros((spec.rows, d));
    let mut y = Array2::zeros((spec.rows, k));
    if spec.name == "W1" {
        x = ndarray::array![[0.0, 0.0], [0.0, 1.0], [1.0, 0.0], [1.0, 1.0]];
        y = ndarray::array![[0.0], [1.0], [1.0], [0.0]];
        return (x, y);
    }
    let classes = k.max(2);
    let proj = Array2::from_shape_fn((d, classes), |_| normal(&mut rng));
    for i in 0..spec.rows {
        for j in 0..d {
            let v = if spec.name == "W5" {
                // The grid of a 300 x 300 decision map over [-3, 3]^2.
                let g = if j == 0 { i % 300 } else { i / 300 };
                -3.0 + 6.0 * g as f64 / 299.0
            } else if d > 100 {
                uniform01(&mut rng)
            } else {
                normal(&mut rng)
            };
            x[[i, j]] = if f32_exact { v as f32 as f64 } else { v };
        }
        let scores: Vec<f64> = (0..classes)
            .map(|c| {
                (0..d.min(64))
                    .map(|j| (x[[i, j]] * proj[[j, c]]).sin())
                    .sum::<f64>()
            })
            .collect();
        let best = stratanet_argmax(&scores);
        if k == 1 {
            y[[i, 0]] = best as f64;
        } else {
            y[[i, best]] = 1.0;
        }
    }
    (x, y)
}

fn stratanet_argmax(v: &[f64]) -> usize {
    let mut b = 0;
    for (i, &x) in v.iter().enumerate() {
        if x > v[b] {
            b = i;
        }
    }
    b
}

fn write_f64(path: &Path, values: impl Iterator<Item = f64>) {
    let mut out = std::io::BufWriter::new(std::fs::File::create(path).unwrap());
    for v in values {
        out.write_all(&v.to_le_bytes()).unwrap();
    }
}

fn read_f64(path: &Path) -> Vec<f64> {
    std::fs::read(path)
        .unwrap()
        .chunks_exact(8)
        .map(|c| f64::from_le_bytes(c.try_into().unwrap()))
        .collect()
}

fn starting_network(spec: &Spec) -> Network {
    let mut rng = seeded_rng(spec.seed + 1000);
    Network::new(
        &spec.sizes,
        spec.activation,
        spec.head,
        Init::Auto,
        &mut rng,
    )
    .unwrap()
    .with_precision(spec.precision)
}

fn prepare(dir: &Path) {
    for spec in specs() {
        let d = dir.join(spec.name);
        std::fs::create_dir_all(&d).unwrap();
        let (x, y) = data(&spec);
        write_f64(&d.join("x.f64"), x.iter().copied());
        write_f64(&d.join("y.f64"), y.iter().copied());
        let net = starting_network(&spec);
        write_f64(
            &d.join("init.f64"),
            net.layers().iter().flat_map(|l| {
                l.weights
                    .iter()
                    .chain(l.biases.iter())
                    .copied()
                    .collect::<Vec<_>>()
            }),
        );
        if spec.epochs > 0 {
            // The orders `train` will use: it shuffles the previous epoch's
            // order with the training generator at the start of each epoch.
            let mut rng = seeded_rng(spec.seed + 2000);
            let mut order: Vec<usize> = (0..spec.rows).collect();
            let mut out =
                std::io::BufWriter::new(std::fs::File::create(d.join("order.u32")).unwrap());
            for _ in 0..spec.epochs {
                shuffle(&mut rng, &mut order);
                for &r in &order {
                    out.write_all(&(r as u32).to_le_bytes()).unwrap();
                }
            }
        }
        let manifest = serde_json::json!({
            "name": spec.name,
            "rows": spec.rows,
            "sizes": spec.sizes,
            "activation": spec.activation.name(),
            "head": spec.head.name(),
            "loss": spec.loss.name(),
            "batch": spec.batch,
            "epochs": spec.epochs,
            "learning_rate": spec.learning_rate,
            "dtype": if spec.precision == Precision::F32 { "f32" } else { "f64" },
            "repeats": spec.repeats,
            "runs": spec.runs,
        });
        std::fs::write(d.join("manifest.json"), manifest.to_string()).unwrap();
    }
}

/// The memory workload: 1,000,000 rows of 30 numeric features and a label.
fn prepare_csv(path: &Path) {
    let mut out = std::io::BufWriter::new(std::fs::File::create(path).unwrap());
    let header: Vec<String> = (0..30).map(|j| format!("f{j}")).collect();
    writeln!(out, "{},label", header.join(",")).unwrap();
    let mut rng = seeded_rng(99);
    for _ in 0..1_000_000 {
        for _ in 0..30 {
            write!(out, "{:.6},", uniform(&mut rng, -100.0, 100.0)).unwrap();
        }
        writeln!(out, "{}", usize::from(uniform01(&mut rng) < 0.5)).unwrap();
    }
}

fn spec_of(dir: &Path) -> Spec {
    let name = dir.file_name().unwrap().to_str().unwrap();
    specs()
        .into_iter()
        .find(|s| s.name == name)
        .unwrap_or_else(|| panic!("unknown workload {name}"))
}

fn load(dir: &Path, spec: &Spec) -> (Array2<f64>, Array2<f64>, Network) {
    let (d, k) = (spec.sizes[0], *spec.sizes.last().unwrap());
    let x = Array2::from_shape_vec((spec.rows, d), read_f64(&dir.join("x.f64"))).unwrap();
    let y = Array2::from_shape_vec((spec.rows, k), read_f64(&dir.join("y.f64"))).unwrap();
    let flat = read_f64(&dir.join("init.f64"));
    let mut layers = Vec::new();
    let mut off = 0;
    for w in spec.sizes.windows(2) {
        let (i, o) = (w[0], w[1]);
        let weights = Array2::from_shape_vec((i, o), flat[off..off + i * o].to_vec()).unwrap();
        off += i * o;
        let biases = ndarray::Array1::from(flat[off..off + o].to_vec());
        off += o;
        layers.push(Layer { weights, biases });
    }
    let net = Network::from_layers(layers, spec.activation, spec.head)
        .unwrap()
        .with_precision(spec.precision);
    (x, y, net)
}

fn peak_rss_kb() -> u64 {
    let status = std::fs::read_to_string("/proc/self/status").unwrap_or_default();
    status
        .lines()
        .find(|l| l.starts_with("VmHWM:"))
        .and_then(|l| l.split_whitespace().nth(1))
        .and_then(|v| v.parse().ok())
        .unwrap_or(0)
}

fn options(spec: &Spec, arithmetic: Arithmetic) -> TrainingOptions {
    TrainingOptions {
        epochs: spec.epochs,
        batch_size: Some(stratanet::train::BatchSize::Rows(spec.batch)),
        learning_rate: spec.learning_rate,
        optimiser: Optimiser::Sgd,
        loss: Some(spec.loss),
        early_stopping: None,
        arithmetic,
        ..Default::default()
    }
}

fn dtype(spec: &Spec) -> &'static str {
    if spec.precision == Precision::F32 {
        "f32"
    } else {
        "f64"
    }
}

/// W5 in full: a 300 x 300 decision map (90,000 predictions) drawn to SVG
/// with 2,000 data points over it. Printed as its own line (no numpy side:
/// the drawing is ours alone).
fn draw(x: &Array2<f64>, y: &Array2<f64>, net: &Network, spec: &Spec) {
    use stratanet::chart::plot::{decision_map, ClassPoints};
    use stratanet::chart::DecisionMapOptions;
    let k = y.ncols();
    let points = ClassPoints {
        points: (0..2000)
            .map(|i| {
                let r = (i * 45) % x.nrows();
                (
                    x[[r, 0]],
                    x[[r, 1]],
                    stratanet_argmax(y.row(r).as_slice().unwrap()),
                )
            })
            .collect(),
        class_names: (0..k).map(|c| format!("class {c}")).collect(),
        x_name: "x0".into(),
        y_name: "x1".into(),
    };
    let options = DecisionMapOptions {
        resolution: 300,
        x_range: Some((-3.0, 3.0)),
        y_range: Some((-3.0, 3.0)),
        ..Default::default()
    };
    let predict = |g: ndarray::ArrayView2<'_, f64>| net.predict(g);
    let mut best = f64::INFINITY;
    let mut bytes = 0;
    for _ in 0..spec.runs {
        let t = Instant::now();
        let chart = decision_map(&predict, &points, &options).unwrap();
        best = best.min(t.elapsed().as_secs_f64());
        bytes = chart.as_svg().len();
    }
    println!("W5 in full (predict a 300 x 300 grid and draw the decision map with 2,000 points): {best:.3} s, SVG {} KiB, peak RSS {} MiB", bytes / 1024, peak_rss_kb() / 1024);
}

fn main() {
    let args: Vec<String> = std::env::args().skip(1).collect();
    let cmd = args.first().map(String::as_str).unwrap_or("");
    let wanted = match cmd {
        "kernel" => 1,
        "prepare" | "prepare-csv" | "csv" => 2,
        "train" | "predict" | "cv" | "draw" => 4,
        _ => usize::MAX,
    };
    if args.len() != wanted {
        eprintln!("bench: a benchmark harness for bench/run.sh; usage (see the module docs):");
        eprintln!("  bench prepare DIR | prepare-csv FILE | csv FILE | kernel");
        eprintln!("  bench train|predict|cv|draw DIR THREADS fast|portable");
        std::process::exit(2);
    }
    if cmd == "prepare" {
        prepare(Path::new(&args[1]));
        return;
    }
    if cmd == "kernel" {
        println!("{}", stratanet::network::kernel_name());
        return;
    }
    if cmd == "prepare-csv" {
        prepare_csv(Path::new(&args[1]));
        return;
    }
    if cmd == "csv" {
        let t = Instant::now();
        let data = stratanet::data::CsvOptions::new("label")
            .read(&args[1])
            .unwrap();
        let seconds = t.elapsed().as_secs_f64();
        let matrix_kb = (data.x().len() * 8 / 1024) as u64;
        println!(
            "{}",
            serde_json::json!({
                "side": "stratanet", "workload": "CSV 1e6x30", "rows": data.n_rows(),
                "seconds": seconds, "matrix_kb": matrix_kb, "peak_rss_kb": peak_rss_kb(),
            })
        );
        return;
    }
    let dir = PathBuf::from(&args[1]);
    let threads: usize = args[2].parse().unwrap();
    let arithmetic = match args[3].as_str() {
        "fast" => Arithmetic::Fast,
        "portable" => Arithmetic::Portable,
        other => panic!("unknown arithmetic {other}"),
    };
    rayon::ThreadPoolBuilder::new()
        .num_threads(threads)
        .build_global()
        .unwrap();
    let spec = spec_of(&dir);
    let (x, y, net) = load(&dir, &spec);
    if cmd == "draw" {
        draw(&x, &y, &net, &spec);
        return;
    }
    let (seconds, samples, final_loss, last_epoch) = match cmd {
        "train" => {
            let opts = options(&spec, arithmetic);
            let mut best = f64::INFINITY;
            let mut result = None;
            for _ in 0..spec.runs {
                let mut trained = net.clone();
                let t = Instant::now();
                let report = train_arrays(
                    &mut trained,
                    x.view(),
                    y.view(),
                    None,
                    &opts,
                    &mut seeded_rng(spec.seed + 2000),
                )
                .unwrap();
                best = best.min(t.elapsed().as_secs_f64());
                result = Some((trained, report));
            }
            let (trained, report) = result.unwrap();
            let fin = mean_loss(&trained, x.view(), y.view(), spec.loss).unwrap();
            (
                best,
                spec.rows * spec.epochs,
                fin,
                report.final_training_loss,
            )
        }
        "predict" => {
            let mut p = Array2::zeros((0, 0));
            let mut seconds = f64::INFINITY;
            for _ in 0..spec.runs {
                let t = Instant::now();
                for _ in 0..spec.repeats {
                    p = net.predict(x.view()).unwrap();
                }
                seconds = seconds.min(t.elapsed().as_secs_f64());
            }
            let fin = p.column(0).sum() / spec.rows as f64;
            (seconds, spec.rows * spec.repeats, fin, fin)
        }
        "cv" => {
            let labels: Vec<usize> = y
                .rows()
                .into_iter()
                .map(|r| stratanet_argmax(r.as_slice().unwrap()))
                .collect();
            let k = y.ncols();
            let data = Dataset::classification(x, labels, (0..k).map(|c| c.to_string()).collect())
                .unwrap();
            let mut fo = FitOptions::default()
                .hidden(&spec.sizes[1..spec.sizes.len() - 1])
                .activation(spec.activation)
                .validation_share(0.0)
                .early_stopping(None)
                .precision(spec.precision);
            fo.head = Some(Head::Softmax);
            fo.training = options(&spec, arithmetic);
            let mut seconds = f64::INFINITY;
            let mut cv = None;
            let runs = if spec.name == "W2" { 1 } else { spec.runs };
            for _ in 0..runs {
                let t = Instant::now();
                cv = Some(
                    cross_validate(&data, &fo, &CvOptions::default(), &mut seeded_rng(5)).unwrap(),
                );
                seconds = seconds.min(t.elapsed().as_secs_f64());
            }
            let cv = cv.unwrap();
            let fin = cv
                .folds
                .iter()
                .map(|f| f.report.final_training_loss)
                .sum::<f64>()
                / cv.folds.len() as f64;
            // Rows trained on: 4/5 of the table per fold, five folds.
            let trained: usize = cv.folds.iter().map(|f| f.train_rows).sum();
            (seconds, trained * spec.epochs, fin, fin)
        }
        other => panic!("unknown command {other}"),
    };
    println!(
        "{}",
        serde_json::json!({
            "side": "stratanet", "workload": if cmd == "cv" { format!("{}-cv", spec.name) } else { spec.name.to_string() }, "threads": threads, "dtype": dtype(&spec),
            "arithmetic": args[3], "seconds": seconds, "samples": samples,
            "samples_per_s": samples as f64 / seconds, "final_loss": final_loss,
            "last_epoch_loss": last_epoch, "peak_rss_kb": peak_rss_kb(),
        })
    );
}
