//! `stratanet demo`: the whole job on the embedded, synthetic demo data.

use super::charts::{ensure_dir, fit_charts, save_all};
use super::output::{cv_json, Outcome};
use super::progress::Progress;
use crate::atomic::write_text;
use crate::chart::{configuration_name, ChartOptions};
use crate::data::CsvOptions;
use crate::error::{Error, Result};
use crate::fit::{fit, FitOptions};
use crate::report::{self, Page};
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
const DEMO_FILES: [&str; 4] = [
    "parts.csv",
    "parts-model.json",
    "summary.html",
    "holdout-ledger.json",
];

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
    // The looks at the held-out rows are counted in a file beside the
    // model, so a rerun into this folder says it is not the first look.
    let ledger_path = out.join("holdout-ledger.json");
    let held_out = held_out.with_ledger(&ledger_path)?;
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
    // One name per configuration, the same in every table, chart and line.
    let hidden_name = configuration_name(&hidden);
    let single_name = configuration_name(&single);
    let chosen_name = if better_is_hidden {
        hidden_name.clone()
    } else {
        single_name.clone()
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
    let test_options = ChartOptions::default().scored(score.scored_rows());
    files.extend(save_all(
        &charts_dir,
        vec![
            (
                "confusion-matrix-test",
                test_metrics.confusion_chart_with(&test_options),
            ),
            (
                "roc-test",
                fitted.model().roc_chart_with(&test_rows, &test_options),
            ),
            (
                "cv-comparison",
                comparison.scores_chart(Metric::Accuracy, &hidden_name, &single_name),
            ),
        ],
    )?);
    // The summary page is the report page, with the demo's sections; it
    // embeds every chart, so it reads on its own.
    let mut page = Page::new("stratanet demo: sorting turned bushings (synthetic data)");
    page.caution(DEMO_CAUTION);
    page.paragraph(&format!(
        "{} rows of invented gauge readings (demo-data/README.md). {} rows were held out as a test set before anything else; cross-validation and the choice of network used the other {} only.",
        data.n_rows(),
        held_out.len(),
        development.n_rows()
    ));
    report::table_section(&mut page, &development)?;
    report::comparison_section(&mut page, &comparison, &hidden_name, &single_name)?;
    page.paragraph(&format!(
        "Chosen: {chosen_name}, fitted again on the {} development rows with 4 restarts.",
        development.n_rows()
    ));
    report::fit_sections(&mut page, &development, &fitted, Some("charts"))?;
    report::holdout_section(&mut page, &fitted, &test_rows, &score)?;
    let html = page.finish(
        "",
        &[format!("Seed {seed}: rerunning `stratanet demo --seed {seed}` reproduces every number and chart byte for byte, on any number of threads.")],
    );
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
            "ledger": ledger_path,
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
            "ledger": ledger_path,
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
        "  {hidden_name:<20}  {:.3}  95% [{:.3}, {:.3}]",
        a.mean, a.ci_low, a.ci_high
    );
    let _ = writeln!(
        text,
        "  {single_name:<20}  {:.3}  95% [{:.3}, {:.3}]",
        b.mean, b.ci_low, b.ci_high
    );
    let _ = writeln!(
        text,
        "  {}",
        crate::chart::named_reading(&comparison.test.reading, &hidden_name, &single_name)
    );
    let _ = writeln!(
        text,
        "chosen: {chosen_name}; held-out accuracy {:.3} ({})",
        test_metrics.accuracy,
        score.caution()
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
    let _ = writeln!(
        text,
        "  {}  (counts the looks at the held-out rows)",
        ledger_path.display()
    );
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
