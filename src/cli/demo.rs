//! `stratanet demo`: the whole job on the embedded, synthetic demo data.

use super::charts::{ensure_dir, fit_charts, save_all};
use super::output::{cv_json, Outcome};
use super::progress::Progress;
use crate::atomic::write_text;
use crate::data::CsvOptions;
use crate::error::{Error, Result};
use crate::fit::{fit, FitOptions};
use crate::notebook::{escape, notes};
use crate::rng::seeded_rng;
use crate::validate::{
    compare_configurations, CrossValidation, CvOptions, HoldOut, Metric, Scores,
};
use serde_json::json;
use std::fmt::Write as _;
use std::path::Path;

/// The synthetic part-inspection table, embedded (see demo-data/README.md).
pub(crate) const DEMO_PARTS_CSV: &str = include_str!("../../demo-data/parts.csv");

/// The caution for the demo's invented scenario (sorting parts); every
/// other output carries the general one.
const DEMO_CAUTION: &str = "A model fitted here supports, and never replaces, qualified judgement, the applicable standards and local practice. Do not accept, rework or scrap a part on its output alone.";

/// The files the demo writes directly into its folder (charts go into
/// `charts/`).
const DEMO_FILES: [&str; 3] = ["parts.csv", "parts-model.json", "summary.html"];

/// Refuses a folder the demo would spoil: it must be absent, empty, or
/// hold an earlier demo's output (a `summary.html`), so that the table it
/// writes there never replaces a file of the user's.
pub(crate) fn check_folder(out: &Path) -> Result<()> {
    if out.is_file() {
        return Err(Error::option(
            "out",
            out.display(),
            "is a file; give a folder for the demo's output",
        ));
    }
    let Ok(entries) = std::fs::read_dir(out) else {
        return Ok(());
    };
    let names: Vec<String> = entries
        .filter_map(|e| e.ok())
        .map(|e| e.file_name().to_string_lossy().into_owned())
        .collect();
    if names.is_empty() || names.iter().any(|n| n == "summary.html") {
        return Ok(());
    }
    Err(Error::option(
        "out",
        out.display(),
        format!(
            "holds files of its own ({}); the demo writes {} there, so give an empty or new folder",
            names.iter().take(3).cloned().collect::<Vec<_>>().join(", "),
            DEMO_FILES.join(", ")
        ),
    ))
}

/// The whole job on the embedded demo data: hold out a test set, compare two
/// architectures by cross-validation, fit the better one, score it once on
/// the held-out rows, save it, and write every chart and a summary page.
///
/// # Errors
/// A folder or file that cannot be written.
pub(crate) fn demo(out: &Path, seed: u64, progress: &Progress) -> Result<Outcome> {
    ensure_dir(out)?;
    let model_path = out.join("parts-model.json");
    let data_path = out.join("parts.csv");
    // The demo table is written next to the results so the CLI commands
    // printed below can be tried on it.
    write_text(&data_path, DEMO_PARTS_CSV)?;
    let data = CsvOptions::new("verdict")
        .drop(&["part_id"])
        .read_str(DEMO_PARTS_CSV, "demo-data/parts.csv")?;
    let mut rng = seeded_rng(seed);
    let (development, held_out) = HoldOut::split(&data, 0.2, &mut rng)?;
    let say = |s: &str| progress.say(s);
    let observed = |mut o: FitOptions| {
        o.training.observer = progress.observer();
        o
    };
    let single = observed(FitOptions::default().hidden(&[]));
    let hidden = observed(FitOptions::default().hidden(&[12]));
    say("cross-validating two configurations (5 folds each)");
    let cv = CvOptions::default();
    let comparison = compare_configurations(
        &development,
        &hidden,
        &single,
        &cv,
        Metric::Accuracy,
        &mut rng,
    )?;
    let better_is_hidden = comparison.test.mean_difference >= 0.0;
    let chosen = if better_is_hidden {
        hidden.clone().restarts(4)
    } else {
        single.clone().restarts(4)
    };
    let chosen_name = if better_is_hidden {
        "hidden layer of 12 tanh units"
    } else {
        "no hidden layer"
    };
    say("fitting the chosen configuration with 4 restarts");
    let fitted = fit(&development, &chosen, &mut rng)?;
    fitted.model().save(&model_path)?;
    let score = held_out.score(fitted.model())?;
    let Scores::Classification(test_metrics) = &score.scores else {
        return Err(Error::input("demo", "the demo target holds classes"));
    };
    let charts_dir = out.join("charts");
    let mut files = fit_charts(&development, &fitted, &charts_dir)?;
    let test_rows = {
        // The held-out rows for the test-set charts.
        let idx = held_out.row_indices().to_vec();
        data.select(&idx)
    };
    files.extend(save_all(
        &charts_dir,
        vec![
            ("confusion-matrix-test", test_metrics.confusion_chart()),
            ("roc-test", fitted.model().roc_chart(&test_rows)),
            (
                "cv-comparison",
                comparison.scores_chart(Metric::Accuracy, "hidden 12", "no hidden layer"),
            ),
        ],
    )?);
    // The summary page embeds every chart, so it reads on its own.
    let mut html = String::from(
        "<!DOCTYPE html>\n<html lang=\"en\"><head><meta charset=\"utf-8\"><title>stratanet demo</title></head>\n<body style=\"font-family:sans-serif;max-width:980px;margin:24px auto;color:#222\">\n",
    );
    let _ = writeln!(html, "<h1 style=\"font-size:22px\">stratanet demo: sorting turned bushings (synthetic data)</h1>");
    let _ = writeln!(html, "<p style=\"background:#fff4e0;border-left:4px solid #c77700;padding:8px 12px\"><b>Caution.</b> {}</p>", escape(DEMO_CAUTION));
    let _ = writeln!(
        html,
        "<p>{} rows of invented gauge readings (demo-data/README.md). {} rows were held out as a test set before anything else; cross-validation and the choice of network used the other {} only.</p>",
        data.n_rows(),
        held_out.len(),
        development.n_rows()
    );
    html.push_str("<h2 style=\"font-size:18px\">1. Comparing two configurations</h2>");
    html.push_str(&comparison.to_html());
    let _ = writeln!(html, "<p>Chosen: {}.</p>", escape(chosen_name));
    html.push_str("<h2 style=\"font-size:18px\">2. The fitted model</h2>");
    html.push_str(&fitted.to_html());
    html.push_str("<h2 style=\"font-size:18px\">3. One look at the held-out test set</h2>");
    html.push_str(&score.to_html());
    html.push_str("<h2 style=\"font-size:18px\">4. Charts</h2>");
    for f in &files {
        let name = f.file_name().and_then(|n| n.to_str()).unwrap_or_default();
        let svg = std::fs::read_to_string(f).map_err(|e| Error::io(f, "reading", e))?;
        let _ = writeln!(html, "<figure style=\"margin:12px 0\">{svg}<figcaption style=\"font-size:12px;color:#555\"><a href=\"charts/{n}\">charts/{n}</a></figcaption></figure>", n = escape(name));
    }
    html.push_str(&notes(&[format!("Seed {seed}; rerunning `stratanet demo --seed {seed}` reproduces every number and chart byte for byte.")]));
    html.push_str("</body></html>\n");
    let summary = out.join("summary.html");
    write_text(&summary, &html)?;

    let mut warnings: Vec<crate::error::Message> = fitted.warnings().to_vec();
    for (name, cv) in [
        ("hidden 12", &comparison.a),
        ("no hidden layer", &comparison.b),
    ] {
        warnings.extend(
            cv.warnings()
                .into_iter()
                .map(|w| w.prefixed(&format!("{name}, "))),
        );
    }
    let warnings = super::output::flags(&warnings);
    let acc = |cv: &CrossValidation| cv.metric(Metric::Accuracy).map(|m| m.summary.clone());
    let (a, b) = (acc(&comparison.a)?, acc(&comparison.b)?);
    let json = json!({
        "command": "demo",
        "out": out,
        "files": {
            "summary": summary,
            "model": model_path,
            "data": data_path,
            "charts": files,
        },
        "cv": {
            "hidden_12": cv_json(&comparison.a),
            "no_hidden_layer": cv_json(&comparison.b),
        },
        "comparison": {
            "metric": "accuracy",
            "mean_difference": comparison.test.mean_difference,
            "t": comparison.test.t,
            "p_value": comparison.test.p_value,
            "reading": comparison.test.reading,
        },
        "chosen": chosen_name,
        "test": {
            "rows": score.rows,
            "times_scored": score.times_scored,
            "accuracy": test_metrics.accuracy,
            "balanced_accuracy": test_metrics.balanced_accuracy,
            "macro_f1": test_metrics.macro_f1,
        },
        "warnings": warnings,
    });
    let mut text = String::new();
    let _ = writeln!(
        text,
        "stratanet demo on {} synthetic part-inspection rows ({} held out for one final test)",
        data.n_rows(),
        held_out.len()
    );
    let _ = writeln!(
        text,
        "5-fold cross-validated accuracy on the other {}:",
        development.n_rows()
    );
    let _ = writeln!(
        text,
        "  hidden layer of 12    {:.3}  95% [{:.3}, {:.3}]",
        a.mean, a.ci_low, a.ci_high
    );
    let _ = writeln!(
        text,
        "  no hidden layer       {:.3}  95% [{:.3}, {:.3}]",
        b.mean, b.ci_low, b.ci_high
    );
    let _ = writeln!(text, "  {}", comparison.test.reading);
    let _ = writeln!(
        text,
        "chosen: {chosen_name}; held-out accuracy {:.3} (scored once)",
        test_metrics.accuracy
    );
    for w in &warnings {
        let _ = writeln!(text, "warning: {w}");
    }
    let _ = writeln!(text, "wrote:");
    let _ = writeln!(
        text,
        "  {}  (one-page summary with every chart)",
        summary.display()
    );
    let _ = writeln!(text, "  {}", model_path.display());
    let _ = writeln!(text, "  {} charts in {}", files.len(), charts_dir.display());
    let _ = writeln!(
        text,
        "try: stratanet check {} {}",
        model_path.display(),
        data_path.display()
    );
    let _ = write!(text, "{DEMO_CAUTION}");
    Ok(Outcome { json, text })
}
