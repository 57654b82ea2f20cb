//! Writes the ONNX round-trip cases that `tools/onnx/check.sh` hands to an
//! independent runtime: for every hidden activation, every head and both
//! precisions, a model fitted on the demo data, its `.onnx` file, the input
//! rows (the demo table's rows, then seeded random rows over a range twice
//! as wide as the table's) and stratanet's own predictions for them.
//!
//! ```sh
//! cargo run --example onnx_cases -- FOLDER
//! ```
//!
//! Per case NAME: `NAME.onnx`, `NAME.inputs.csv` (header: the model's
//! feature names) and `NAME.expected.csv` (classifiers:
//! `probability:CLASS`... then `label`; regression: `values:0`...). The case
//! names are listed in `cases.txt`. Numbers are written in Rust's shortest
//! round-trip form, so the checker reads back the exact f64 values.

use rand::Rng;
use std::fmt::Write as _;
use std::path::{Path, PathBuf};
use stratanet::data::{Missing, Task};
use stratanet::network::{Activation, Precision};
use stratanet::prelude::*;
use stratanet::{ndarray, Error};

/// Random rows per case, on top of the table's own rows.
const RANDOM_ROWS: usize = 300;

fn csv_line(cells: impl IntoIterator<Item = String>) -> String {
    let cells: Vec<String> = cells
        .into_iter()
        .map(|c| {
            if c.contains([',', '"', '\n']) {
                format!("\"{}\"", c.replace('"', "\"\""))
            } else {
                c
            }
        })
        .collect();
    cells.join(",") + "\n"
}

fn number(v: f64) -> String {
    if v.is_nan() {
        String::new()
    } else {
        format!("{v:?}")
    }
}

/// The table's rows, then seeded random rows: each column uniform over its
/// observed range widened by half the range on each side (one-hot columns
/// too: the graph must agree on any number). With `missing`, every seventh
/// random row has one cell `NaN`.
fn inputs(data: &Dataset, seed: u64, missing: bool) -> ndarray::Array2<f64> {
    let x = data.x();
    let (n, f) = x.dim();
    let mut rng = seeded_rng(seed);
    let mut out = ndarray::Array2::<f64>::zeros((n + RANDOM_ROWS, f));
    out.slice_mut(ndarray::s![..n, ..]).assign(&x);
    for j in 0..f {
        let col: Vec<f64> = x
            .column(j)
            .iter()
            .copied()
            .filter(|v| v.is_finite())
            .collect();
        let lo = col.iter().copied().fold(f64::INFINITY, f64::min);
        let hi = col.iter().copied().fold(f64::NEG_INFINITY, f64::max);
        let pad = ((hi - lo) / 2.0).max(0.5);
        for i in 0..RANDOM_ROWS {
            out[[n + i, j]] = rng.random_range((lo - pad)..(hi + pad));
        }
    }
    if missing {
        for i in (0..RANDOM_ROWS).step_by(7) {
            let j = rng.random_range(0..f);
            out[[n + i, j]] = f64::NAN;
        }
    }
    out
}

fn write(path: &Path, text: &str) -> stratanet::Result<()> {
    std::fs::write(path, text).map_err(|e| Error::io(path, "writing", e))
}

fn case(
    out: &Path,
    name: &str,
    data: &Dataset,
    options: &FitOptions,
    missing: bool,
) -> stratanet::Result<()> {
    let fitted = fit(data, options, &mut seeded_rng(17))?;
    let model = fitted.model();
    let x = inputs(data, 23, missing);
    let mut inputs_csv = csv_line(model.feature_names().iter().cloned());
    for row in x.rows() {
        inputs_csv.push_str(&csv_line(row.iter().map(|&v| number(v))));
    }
    let mut expected = String::new();
    if let Some(classes) = model.class_names() {
        let p = model.predict_probabilities(x.view())?;
        let k = model.predict_classes(x.view())?;
        expected.push_str(&csv_line(
            classes
                .iter()
                .map(|c| format!("probability:{c}"))
                .chain(["label".to_string()]),
        ));
        for (row, &class) in p.rows().into_iter().zip(&k) {
            expected.push_str(&csv_line(
                row.iter()
                    .map(|&v| number(v))
                    .chain([classes[class].clone()]),
            ));
        }
    } else {
        let v = model.predict(x.view())?;
        expected.push_str(&csv_line((0..v.ncols()).map(|j| format!("values:{j}"))));
        for row in v.rows() {
            expected.push_str(&csv_line(row.iter().map(|&v| number(v))));
        }
    }
    stratanet::export::write_onnx(model, out.join(format!("{name}.onnx")))?;
    write(&out.join(format!("{name}.inputs.csv")), &inputs_csv)?;
    write(&out.join(format!("{name}.expected.csv")), &expected)?;
    Ok(())
}

fn main() -> stratanet::Result<()> {
    let out: PathBuf = std::env::args()
        .nth(1)
        .unwrap_or_else(|| "target/onnx-cases".into())
        .into();
    std::fs::create_dir_all(&out).map_err(|e| Error::io(&out, "creating", e))?;
    let root = Path::new(env!("CARGO_MANIFEST_DIR")).join("demo-data");
    // Three classes (softmax), two classes (one logistic output) and a
    // number (identity head, target standardised).
    let softmax = CsvOptions::new("verdict")
        .drop(&["part_id"])
        .read(root.join("parts.csv"))?;
    let logistic = CsvOptions::new("condition")
        .drop(&["run_id"])
        .read(root.join("sensors.csv"))?;
    let regression = CsvOptions::new("bore_dev_um")
        .drop(&["part_id"])
        .task(Task::Regression)
        .read(root.join("parts.csv"))?;
    // The parts table with every eleventh roundness cell blanked, read with
    // missing cells imputed: the graph's IsNaN/Where stage.
    let text = std::fs::read_to_string(root.join("parts.csv"))
        .map_err(|e| Error::io(root.join("parts.csv"), "reading", e))?;
    let mut holed = String::new();
    for (i, line) in text.lines().enumerate() {
        let mut cells: Vec<&str> = line.split(',').collect();
        if i > 0 && i % 11 == 0 {
            cells[2] = "";
        }
        let _ = writeln!(holed, "{}", cells.join(","));
    }
    let holed_path = out.join("parts-with-gaps.csv");
    write(&holed_path, &holed)?;
    let imputed = CsvOptions::new("verdict")
        .drop(&["part_id"])
        .missing(Missing::Impute)
        .read(&holed_path)?;

    let mut names = String::new();
    for precision in [Precision::F64, Precision::F32] {
        for activation in Activation::ALL {
            for (head, data) in [
                ("softmax", &softmax),
                ("logistic", &logistic),
                ("regression", &regression),
            ] {
                let name = format!("{precision}-{}-{head}", activation.name());
                let options = FitOptions::default()
                    .hidden(&[6, 5])
                    .activation(activation)
                    .epochs(25)
                    .precision(precision);
                case(&out, &name, data, &options, false)?;
                let _ = writeln!(names, "{name}");
            }
        }
        let name = format!("{precision}-tanh-softmax-imputed");
        let options = FitOptions::default()
            .hidden(&[6])
            .activation(Activation::Tanh)
            .epochs(25)
            .precision(precision);
        case(&out, &name, &imputed, &options, true)?;
        let _ = writeln!(names, "{name}");
    }
    write(&out.join("cases.txt"), &names)?;
    Ok(())
}
