//! Writes every chart kind, from the synthetic demo data, as SVG and PNG
//! (96 dots per inch: one pixel per CSS pixel) into one folder (default
//! `target/gallery`), plus one chart at journal-column size as PDF and PNG
//! (300 dots per inch):
//!
//! ```sh
//! cargo run --release --example gallery -- [FOLDER]
//! ```
//!
//! The kinds whose results other parts of the library compute on their
//! own (reliability bins, permutation importance, nested cross-validation)
//! are fed here by a few lines of plain computation, for the picture only.

use std::path::{Path, PathBuf};
use stratanet::chart::plot::{
    column_overview, nested_cross_validation, permutation_importance, reliability_diagram,
    weight_maps, ColumnSummary, FeatureImportance, NestedOutcome, NetworkWeights, OuterFold,
    ReliabilityBin,
};
use stratanet::chart::{Chart, ChartOptions, HiddenView};
use stratanet::data::{stratified_folds, ColumnEncoding, CsvOptions, TargetKind};
use stratanet::ndarray::Array2;
use stratanet::prelude::*;
use stratanet::rand::RngCore;
use stratanet::validate::{sweep, Grid, Scores, Summary};

fn save(out: &Path, name: &str, chart: &Chart) -> stratanet::Result<()> {
    let path = out.join(format!("{name}.svg"));
    chart.save(&path)?;
    let png = chart.to_png(96.0)?;
    let png_path = path.with_extension("png");
    std::fs::write(&png_path, png).map_err(|e| stratanet::Error::io(&png_path, "writing", e))?;
    println!("wrote {} and .png", path.display());
    Ok(())
}

/// Ten bins of P(class) on `rows`: mean predicted, observed share, count.
fn reliability_bins(
    model: &Model,
    rows: &Dataset,
    class: usize,
) -> stratanet::Result<Vec<ReliabilityBin>> {
    let p = model.predict_probabilities(rows.x())?;
    let labels = rows.labels().expect("classes");
    let mut bins = vec![(0.0, 0.0, 0usize); 10];
    for (i, &l) in labels.iter().enumerate() {
        let q = p[[i, class]];
        let b = ((q * 10.0).floor() as usize).min(9);
        bins[b].0 += q;
        bins[b].1 += f64::from(u8::from(l == class));
        bins[b].2 += 1;
    }
    Ok(bins
        .into_iter()
        .map(|(sum, hits, n)| ReliabilityBin {
            mean_predicted: if n > 0 { sum / n as f64 } else { f64::NAN },
            observed: if n > 0 { hits / n as f64 } else { f64::NAN },
            count: n,
        })
        .collect())
}

/// Accuracy drop when one source column is shuffled, 10 seeded shuffles,
/// mean and Student t 95% interval over the shuffles.
fn importances(model: &Model, rows: &Dataset) -> stratanet::Result<Vec<FeatureImportance>> {
    let x = rows.x().to_owned();
    let labels = rows.labels().expect("classes");
    let accuracy = |x: &Array2<f64>| -> stratanet::Result<f64> {
        let p = model.predict_classes(x.view())?;
        Ok(p.iter().zip(labels).filter(|(a, b)| a == b).count() as f64 / labels.len() as f64)
    };
    let base = accuracy(&x)?;
    let mut rng = seeded_rng(11);
    let mut out = Vec::new();
    let mut offset = 0;
    for column in rows.columns() {
        let width = column.width();
        let mut drops = Vec::new();
        for _ in 0..10 {
            let mut order: Vec<usize> = (0..x.nrows()).collect();
            for i in (1..order.len()).rev() {
                let j = (rng.next_u64() % (i as u64 + 1)) as usize;
                order.swap(i, j);
            }
            let mut shuffled = x.clone();
            for (i, &from) in order.iter().enumerate() {
                for c in offset..offset + width {
                    shuffled[[i, c]] = x[[from, c]];
                }
            }
            drops.push(base - accuracy(&shuffled)?);
        }
        let s = Summary::from_values(&drops)?;
        out.push(FeatureImportance {
            name: column.name().to_string(),
            mean_drop: s.mean,
            interval: (s.ci_low, s.ci_high),
        });
        offset += width;
    }
    Ok(out)
}

/// A small nested cross-validation: 5 outer folds, a sweep of three
/// layouts on 3 inner folds of each outer training set.
fn nested(parts: &Dataset) -> stratanet::Result<NestedOutcome> {
    let mut rng = seeded_rng(21);
    let labels = parts.labels().expect("classes");
    let folds = stratified_folds(labels, 5, &mut rng)?;
    let base = FitOptions::default().epochs(120);
    let grid = Grid {
        hidden_layers: vec![vec![], vec![4], vec![12]],
        ..Grid::default()
    };
    let inner = CvOptions {
        folds: 3,
        ..CvOptions::default()
    };
    let mut outer = Vec::new();
    let mut scores = Vec::new();
    for fold in &folds {
        let train = parts.select(&fold.train);
        let test = parts.select(&fold.test);
        let s = sweep(&train, &base, &grid, &inner, Metric::Accuracy, &mut rng)?;
        let (scored, _) = Scores::of(s.best.model(), &test)?;
        let score = scored.value(Metric::Accuracy)?;
        scores.push(score);
        outer.push(OuterFold {
            score,
            winner: s.table.rows[0].name.clone(),
        });
    }
    let s = Summary::from_values(&scores)?;
    Ok(NestedOutcome {
        folds: outer,
        metric: "accuracy".into(),
        higher_is_better: true,
        summary: Some((s.mean, (s.ci_low, s.ci_high))),
    })
}

fn columns(data: &Dataset) -> Vec<ColumnSummary> {
    let x = data.x();
    let mut offset = 0;
    data.columns()
        .iter()
        .map(|c| {
            let summary = match c {
                ColumnEncoding::Numeric { name } => {
                    let mut v = x.column(offset).to_vec();
                    v.sort_by(f64::total_cmp);
                    v.dedup();
                    ColumnSummary {
                        name: name.clone(),
                        kind: "numeric".into(),
                        missing: 0,
                        distinct: v.len(),
                    }
                }
                ColumnEncoding::OneHot { name, levels } => ColumnSummary {
                    name: name.clone(),
                    kind: "text".into(),
                    missing: 0,
                    distinct: levels.len(),
                },
            };
            offset += c.width();
            summary
        })
        .collect()
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
    let on_train = ChartOptions::default().rows("training rows");
    let on_val = ChartOptions::default().rows("validation rows");
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
        &grid,
        &CvOptions::default(),
        Metric::Accuracy,
        &mut seeded_rng(8),
    )?;
    let sensors = CsvOptions::new("power_kw")
        .drop(&["run_id", "condition"])
        .target_kind(TargetKind::Values)
        .read(root.join("demo-data/sensors.csv"))?;
    let regression = fit(
        &sensors,
        &FitOptions::default().hidden(&[8]).epochs(300),
        &mut seeded_rng(9),
    )?;
    let sensors_val = sensors.select(&regression.split().validation);
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
            reliability_diagram(
                &reliability_bins(model, &val, 2)?,
                "P(scrap)",
                &ChartOptions::default().rows("validation rows"),
            )?,
        ),
        (
            "permutation-importance",
            permutation_importance(
                &importances(model, &val)?,
                "accuracy",
                &ChartOptions::default(),
            )?,
        ),
        (
            "nested-cv",
            nested_cross_validation(&nested(&parts)?, &ChartOptions::default())?,
        ),
        (
            "columns",
            column_overview(
                &columns(&parts),
                parts.n_rows(),
                &ChartOptions::titled("Columns of parts.csv"),
            )?,
        ),
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
