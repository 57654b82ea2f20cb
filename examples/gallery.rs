//! Writes every chart kind, from the synthetic demo data, as SVG and PNG into
//! one folder (default `target/gallery`):
//!
//! ```sh
//! cargo run --release --example gallery -- [FOLDER]
//! ```

use std::path::{Path, PathBuf};
use stratanet::chart::HiddenView;
use stratanet::data::CsvOptions;
use stratanet::prelude::*;
use stratanet::validate::Scores;

fn png(svg_path: &Path) {
    let svg = std::fs::read(svg_path).expect("svg");
    let mut options = resvg::usvg::Options::default();
    options.fontdb_mut().load_system_fonts();
    options.fontdb_mut().set_sans_serif_family("DejaVu Sans");
    let tree = resvg::usvg::Tree::from_data(&svg, &options).expect("parse svg");
    let size = tree.size().to_int_size();
    let mut pixmap = resvg::tiny_skia::Pixmap::new(size.width(), size.height()).expect("pixmap");
    resvg::render(
        &tree,
        resvg::tiny_skia::Transform::default(),
        &mut pixmap.as_mut(),
    );
    pixmap
        .save_png(svg_path.with_extension("png"))
        .expect("png");
}

fn main() -> stratanet::Result<()> {
    let out: PathBuf = std::env::args()
        .nth(1)
        .unwrap_or_else(|| "target/gallery".into())
        .into();
    std::fs::create_dir_all(&out).map_err(|e| stratanet::Error::io(&out, "creating", e))?;
    let root = Path::new(env!("CARGO_MANIFEST_DIR"));
    let parts = CsvOptions::new("verdict")
        .drop(&["part_id"])
        .read(root.join("demo-data/parts.csv"))?;
    let options = FitOptions::default().hidden(&[12]).epochs(400).restarts(4);
    let fitted = fit(&parts, &options, &mut seeded_rng(42))?;
    let model = fitted.model();
    let (scores, _) = Scores::of(model, &parts)?;
    let Scores::Classification(metrics) = &scores else {
        unreachable!("a classifier")
    };
    let two = CsvOptions::new("verdict")
        .features(&["bore_dev_um", "roundness_um"])
        .read(root.join("demo-data/parts.csv"))?;
    let fitted_two = fit(
        &two,
        &FitOptions::default().hidden(&[8]).epochs(400),
        &mut seeded_rng(7),
    )?;
    let comparison = compare_configurations(
        &parts,
        &FitOptions::default().hidden(&[]).epochs(200),
        &FitOptions::default().hidden(&[12]).epochs(200),
        &CvOptions::default(),
        Metric::Accuracy,
        &mut seeded_rng(5),
    )?;
    let charts = vec![
        ("learning-curves", fitted.learning_curves_chart()?),
        (
            "decision-map",
            model.decision_map_chart(&parts, "bore_dev_um", "roundness_um")?,
        ),
        (
            "decision-map-two-features",
            fitted_two
                .model()
                .decision_map_chart(&two, "bore_dev_um", "roundness_um")?,
        ),
        (
            "decision-map-components",
            model.decision_map_components_chart(&parts)?,
        ),
        (
            "hidden-layer",
            model.hidden_layer_chart(&parts, 1, HiddenView::PrincipalComponents)?,
        ),
        ("confusion-matrix", metrics.confusion_chart()?),
        ("roc", model.roc_chart(&parts)?),
        ("precision-recall", model.precision_recall_chart(&parts)?),
        (
            "cv-comparison",
            comparison.scores_chart(Metric::Accuracy, "no hidden layer", "hidden 12")?,
        ),
        ("network", model.network_chart()?),
    ];
    for (name, c) in charts {
        let path = out.join(format!("{name}.svg"));
        c.save(&path)?;
        png(&path);
        println!("wrote {} and .png", path.display());
    }
    Ok(())
}
