//! Writes every chart kind, from the synthetic demo data, as SVG and PNG
//! (96 dots per inch: one pixel per CSS pixel) into one folder (default
//! `target/gallery`), plus one chart at journal-column size as PDF and PNG
//! (300 dots per inch):
//!
//! ```sh
//! cargo run --release --example gallery -- [FOLDER]
//! ```
//!
//! Every chart is drawn from the library's own results, through the
//! methods a notebook user calls.

use std::path::{Path, PathBuf};
use stratanet::chart::plot::{weight_maps, NetworkWeights};
use stratanet::chart::{Chart, ChartOptions, HiddenView};
use stratanet::data::{CsvOptions, ScoredRows, Task};
use stratanet::prelude::*;
use stratanet::validate::importance::ImportanceOptions;
use stratanet::validate::metrics::Binning;
use stratanet::validate::{nested_cross_validate, sweep, Grid, Scores};

fn save(out: &Path, name: &str, chart: &Chart) -> stratanet::Result<()> {
    let path = out.join(format!("{name}.svg"));
    chart.save(&path)?;
    let png = chart.to_png(96.0)?;
    let png_path = path.with_extension("png");
    std::fs::write(&png_path, png).map_err(|e| stratanet::Error::io(&png_path, "writing", e))?;
    println!("wrote {} and .png", path.display());
    Ok(())
}

fn main() -> stratanet::Result<()> {
    let out: PathBuf = std::env::args()
        .nth(1)
        .unwrap_or_else(|| "target/gallery".into())
        .into();
    std::fs::create_dir_all(&out).map_err(|e| stratanet::Error::io(&out, "creating", e))?;
    let root = Path::new(env!("CARGO_MANIFEST_DIR"));
    let parts_csv = root.join("demo-data/parts.csv");
    let parts = CsvOptions::new("verdict")
        .drop(&["part_id"])
        .read(&parts_csv)?;
    let options = FitOptions::default().hidden(&[12]).epochs(400).restarts(4);
    let fitted = fit(&parts, &options, &mut seeded_rng(42))?;
    let model = fitted.model();
    let train = parts.select(&fitted.split().train);
    let val = parts.select(&fitted.split().validation);
    let on_train = ChartOptions::default().scored(ScoredRows::Training);
    let on_val = ChartOptions::default().scored(ScoredRows::Validation);
    let (scores, _) = Scores::of(model, &val)?;
    let Scores::Classification(metrics) = &scores else {
        unreachable!("a classifier")
    };
    let two = CsvOptions::new("verdict")
        .features(&["bore_dev_um", "roundness_um"])
        .read(&parts_csv)?;
    let fitted_two = fit(
        &two,
        &FitOptions::default().hidden(&[8]).epochs(400),
        &mut seeded_rng(7),
    )?;
    let none = FitOptions::default().hidden(&[]).epochs(200);
    let twelve = FitOptions::default().hidden(&[12]).epochs(200);
    let comparison = compare_configurations(
        &parts,
        &none,
        &twelve,
        &CvOptions::default(),
        Metric::Accuracy,
        &mut seeded_rng(5),
    )?;
    let cv = cross_validate(&parts, &twelve, &CvOptions::default(), &mut seeded_rng(6))?;
    let grid = Grid {
        hidden_layers: vec![vec![], vec![4], vec![12], vec![12, 6]],
        learning_rates: vec![0.003, 0.01],
        ..Grid::default()
    };
    let swept = sweep(
        &parts,
        &FitOptions::default().epochs(150),
        &grid.into(),
        &CvOptions::default(),
        Metric::Accuracy,
        &mut seeded_rng(8),
    )?;
    let sensors = CsvOptions::new("power_kw")
        .drop(&["run_id", "condition"])
        .task(Task::Regression)
        .read(root.join("demo-data/sensors.csv"))?;
    let regression = fit(
        &sensors,
        &FitOptions::default().hidden(&[8]).epochs(300),
        &mut seeded_rng(9),
    )?;
    let sensors_val = sensors.select(&regression.split().validation);
    let importance =
        cv.permutation_importance(&parts, &ImportanceOptions::default(), &mut seeded_rng(11))?;
    let nested = nested_cross_validate(
        &parts,
        &FitOptions::default().epochs(120),
        &Grid {
            hidden_layers: vec![vec![], vec![4], vec![12]],
            ..Grid::default()
        }
        .into(),
        &CvOptions::default(),
        &CvOptions {
            folds: 3,
            ..CvOptions::default()
        },
        Metric::Accuracy,
        &mut seeded_rng(21),
    )?;
    // The table as read with its identifier kept, for the column overview.
    let parts_all = CsvOptions::new("verdict").read(&parts_csv)?;
    // A network of the acceptance size, 30-64-32-2, freshly initialised.
    let wide = stratanet::network::Network::new(
        &[30, 64, 32, 2],
        Activation::Tanh,
        stratanet::network::Head::Softmax,
        stratanet::network::Init::Auto,
        &mut seeded_rng(3),
    )?;
    let wide_weights = NetworkWeights {
        layer_sizes: wide.sizes(),
        weights: wide.layers().iter().map(|l| l.weights.clone()).collect(),
        biases: Some(wide.layers().iter().map(|l| l.biases.to_vec()).collect()),
        input_names: None,
        output_names: None,
    };
    let charts: Vec<(&str, Chart)> = vec![
        ("learning-curves", fitted.learning_curves_chart()?),
        (
            "decision-map",
            model.decision_map_chart_with(
                &train,
                "bore_dev_um",
                "roundness_um",
                &stratanet::chart::DecisionMapOptions {
                    chart: on_train.clone(),
                    ..Default::default()
                },
            )?,
        ),
        (
            "decision-map-two-features",
            fitted_two
                .model()
                .decision_map_chart(&two, "bore_dev_um", "roundness_um")?,
        ),
        (
            "components",
            model.components_chart_with(&train, &on_train)?,
        ),
        (
            "hidden-layer",
            model.hidden_layer_chart_with(&train, 1, HiddenView::PrincipalComponents, &on_train)?,
        ),
        ("confusion-matrix", metrics.confusion_chart_with(&on_val)?),
        ("roc", model.roc_chart_with(&val, &on_val)?),
        (
            "precision-recall",
            model.precision_recall_chart_with(&val, &on_val)?,
        ),
        (
            "cv-comparison",
            comparison.scores_chart(Metric::Accuracy, "no hidden layer", "hidden 12 (tanh)")?,
        ),
        ("cv-scores", cv.scores_chart(Metric::Accuracy)?),
        ("cv-learning-curves", cv.learning_curves_chart()?),
        ("sweep-scores", swept.table.scores_chart()?),
        ("weights", model.weights_chart()?),
        (
            "weights-30-64-32-2",
            weight_maps(
                &wide_weights,
                &ChartOptions::titled("Weights of a freshly initialised 30-64-32-2 network"),
            )?,
        ),
        (
            "predicted-actual",
            regression
                .model()
                .predicted_actual_chart_with(&sensors_val, &on_val)?,
        ),
        (
            "residuals",
            regression
                .model()
                .residuals_chart_with(&sensors_val, &on_val)?,
        ),
        (
            "reliability",
            cv.reliability_chart(&parts, Binning::EqualCount(10))?,
        ),
        ("permutation-importance", importance.chart()?),
        ("nested-cv", nested.chart()?),
        ("columns", parts_all.summary(None).columns_chart()?),
    ];
    for (name, c) in &charts {
        save(&out, name, c)?;
    }
    // One chart at print size: a journal column (85 mm), as PDF and as a
    // 300-dpi PNG.
    let column =
        model.roc_chart_with(&val, &ChartOptions::single_column().rows("validation rows"))?;
    for ext in ["svg", "pdf", "png"] {
        let path = out.join(format!("roc-single-column.{ext}"));
        column.save(&path)?;
        println!("wrote {}", path.display());
    }
    Ok(())
}
