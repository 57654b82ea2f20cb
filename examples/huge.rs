//! The huge-input check of RELIABILITY.md: a 1,000,000-row CSV (30 numeric
//! features and a two-class label, synthetic, seeded) is read, fitted and
//! 5-fold cross-validated in one process, and the peak resident memory of
//! each phase is printed against the size of the table's f64 matrix.
//!
//!     cargo run --release --example huge [-- ROWS]
//!
//! Bounds (exit 1 when broken): reading peaks below 2x the matrix (the
//! performance issue's bound); fitting below 3x (the table, and one scaled
//! copy of its fitting rows); 5-fold cross-validation on two threads below
//! 5x (the table, and each running fold's fitting rows, scaled in place,
//! and held-out rows). The table is written once to target/huge/ and reused.

use std::io::Write;
use std::path::Path;
use std::time::Instant;
use stratanet::data::CsvOptions;
use stratanet::fit::{fit_with_seed, FitOptions};
use stratanet::rng::{seeded_rng, uniform};
use stratanet::validate::{cross_validate, CvOptions, Metric};

const FEATURES: usize = 30;

fn write_table(path: &Path, rows: usize) {
    let tmp = path.with_extension("partial");
    let mut out = std::io::BufWriter::new(std::fs::File::create(&tmp).unwrap());
    let header: Vec<String> = (0..FEATURES).map(|j| format!("f{j}")).collect();
    writeln!(out, "{},label", header.join(",")).unwrap();
    let mut rng = seeded_rng(2026);
    for _ in 0..rows {
        let mut sum = 0.0;
        for j in 0..FEATURES {
            let v = uniform(&mut rng, -100.0, 100.0);
            if j < 3 {
                sum += v;
            }
            write!(out, "{v:.6},").unwrap();
        }
        writeln!(out, "{}", if sum > 0.0 { "high" } else { "low" }).unwrap();
    }
    out.flush().unwrap();
    drop(out);
    std::fs::rename(tmp, path).unwrap();
}

fn peak_rss_kb() -> u64 {
    std::fs::read_to_string("/proc/self/status")
        .unwrap_or_default()
        .lines()
        .find(|l| l.starts_with("VmHWM:"))
        .and_then(|l| l.split_whitespace().nth(1))
        .and_then(|v| v.parse().ok())
        .unwrap_or(0)
}

/// Resets the peak so that the next phase is measured alone (Linux:
/// writing 5 to clear_refs resets VmHWM to the current RSS).
fn reset_peak() {
    let _ = std::fs::write("/proc/self/clear_refs", "5");
}

fn main() {
    let rows: usize = std::env::args()
        .nth(1)
        .map_or(1_000_000, |a| a.parse().expect("ROWS is a whole number"));
    let dir = Path::new(env!("CARGO_MANIFEST_DIR")).join("target/huge");
    std::fs::create_dir_all(&dir).unwrap();
    let path = dir.join(format!("table-{rows}.csv"));
    if !path.exists() {
        let t = Instant::now();
        write_table(&path, rows);
        println!(
            "wrote {} ({} MiB) in {:.1} s",
            path.display(),
            std::fs::metadata(&path).unwrap().len() >> 20,
            t.elapsed().as_secs_f64()
        );
    }
    let matrix_kb = (rows * FEATURES * 8 / 1024) as f64;
    let mut failed = false;
    let mut report = |phase: &str, seconds: f64, bound: f64| {
        let peak = peak_rss_kb() as f64;
        let ratio = peak / matrix_kb;
        let ok = ratio < bound;
        failed |= !ok;
        println!(
            "{phase:<28} {seconds:>7.1} s   peak RSS {:>6.0} MiB = {ratio:.2} x the matrix (bound {bound} x) {}",
            peak / 1024.0,
            if ok { "ok" } else { "OVER" }
        );
    };
    println!(
        "{rows} rows x {FEATURES} features: f64 matrix {:.0} MiB",
        matrix_kb / 1024.0
    );

    reset_peak();
    let t = Instant::now();
    let data = CsvOptions::new("label")
        .read(&path)
        .expect("the table reads");
    report("read the CSV", t.elapsed().as_secs_f64(), 2.0);

    let options = FitOptions::default()
        .hidden(&[16])
        .epochs(2)
        .batch_size(stratanet::train::BatchSize::Rows(256))
        .learning_rate(0.01)
        .early_stopping(None)
        .validation_share(0.0);
    reset_peak();
    let t = Instant::now();
    let fitted = fit_with_seed(&data, &options, 1).expect("the table fits");
    report("fit (2 epochs)", t.elapsed().as_secs_f64(), 3.0);
    println!(
        "  final training loss {:.4}",
        fitted.report().final_training_loss
    );
    drop(fitted);

    reset_peak();
    let t = Instant::now();
    let cv = CvOptions::default();
    let result = cross_validate(&data, &options, &cv, &mut seeded_rng(2))
        .expect("the table cross-validates");
    report("5-fold CV (2 epochs each)", t.elapsed().as_secs_f64(), 5.0);
    let acc = result.metric(Metric::Accuracy).expect("accuracy");
    println!(
        "  accuracy {:.4} (95% interval {:.4} to {:.4}), threads {}",
        acc.summary.mean,
        acc.summary.ci_low,
        acc.summary.ci_high,
        rayon::current_num_threads()
    );
    if failed {
        eprintln!("a phase went over its memory bound");
        std::process::exit(1);
    }
}
