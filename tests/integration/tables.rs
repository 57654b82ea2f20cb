//! The crafted tables of tests/data/tables (see its README): one per case
//! where the reader must decide something about the user's data. Each
//! gives exactly the documented decision, warning or error (style of
//! check: serde_json's message tables).

use crate::support::data_dir;
use stratanet::data::{CsvOptions, DecimalMark, Missing, Target, Task};
use stratanet::fit::fit_with_seed;
use stratanet::prelude::*;

fn path(file: &str) -> std::path::PathBuf {
    data_dir().join("tables").join(file)
}

/// The message with the folder cut, so the expected text is stable.
fn message(e: stratanet::Error) -> String {
    e.to_string()
        .replace(&data_dir().join("tables").display().to_string(), "tables")
}

fn strings(items: &[stratanet::error::Message]) -> Vec<String> {
    items.iter().map(ToString::to_string).collect()
}

/// The median by its definition (Hyndman & Fan, "Sample quantiles in
/// statistical packages", 1996, definition 7 at p = 1/2): the middle value,
/// or the mean of the two middle values.
fn median(mut v: Vec<f64>) -> f64 {
    v.sort_by(f64::total_cmp);
    let n = v.len();
    if n % 2 == 1 {
        v[n / 2]
    } else {
        (v[n / 2 - 1] + v[n / 2]) / 2.0
    }
}

#[test]
fn a_marker_in_the_first_row_is_listed_not_encoded() {
    let e = CsvOptions::new("grade")
        .read(path("marker-first-row.csv"))
        .unwrap_err();
    assert_eq!(
        message(e),
        "tables/marker-first-row.csv: column \"width_mm\" (0): 22 cells are numbers but 2 are not: \"n.a.\" (2 cells, first on line 2); if these mark missing cells, list them in missing_markers (and choose what happens to missing cells with missing); if the column holds categories, list it in categorical; otherwise correct the cells"
    );
    let d = CsvOptions::new("grade")
        .missing_markers(&["n.a."])
        .missing(Missing::Drop)
        .read(path("marker-first-row.csv"))
        .unwrap();
    assert_eq!(d.feature_names(), ["width_mm", "height_mm"]);
    assert_eq!((d.n_rows(), d.dropped_rows()), (22, 2));
    assert_eq!(
        strings(&d.decisions()[2..]),
        ["dropped 2 rows with a missing cell (missing = drop)"]
    );
}

#[test]
fn decimal_commas_are_named_not_one_hot_encoded() {
    let e = CsvOptions::new("grade")
        .read(path("decimal-comma.csv"))
        .unwrap_err();
    assert_eq!(
        message(e),
        "tables/decimal-comma.csv: column \"width_mm\" (0): every cell reads as a number only with a decimal comma (such as \"1,41\" on line 2); set decimal = comma, or list the column in categorical if it holds categories"
    );
    let d = CsvOptions::new("grade")
        .decimal(DecimalMark::Comma)
        .read(path("decimal-comma.csv"))
        .unwrap();
    assert_eq!(d.feature_names(), ["width_mm", "height_mm"]);
    assert_eq!(d.x().row(0).to_vec(), [1.41, 0.523]);
}

#[test]
fn a_semicolon_export_is_detected_and_reported() {
    let e = CsvOptions::new("grade")
        .read(path("semicolon.csv"))
        .unwrap_err();
    assert_eq!(
        message(e),
        "tables/semicolon.csv: column \"width_mm\" (0): every cell reads as a number only with a decimal comma (such as \"1,14\" on line 2); set decimal = comma, or list the column in categorical if it holds categories"
    );
    let d = CsvOptions::new("grade")
        .decimal(DecimalMark::Comma)
        .read(path("semicolon.csv"))
        .unwrap();
    assert_eq!(d.feature_names(), ["width_mm", "height_mm"]);
    assert_eq!(
        strings(d.decisions()),
        [
            "delimiter ';' (detected from the header and the first 20 rows: 3 columns; the only one that splits the header)",
            "task: classification (the target \"grade\" holds text: 2 classes)"
        ]
    );
    assert_eq!(
        d.report().unwrap().delimiter,
        stratanet::data::Delimiter::Semicolon
    );
}

#[test]
fn an_id_column_is_left_out_with_a_warning_or_carried_as_an_id() {
    let d = CsvOptions::new("grade")
        .read(path("id-column.csv"))
        .unwrap();
    assert_eq!(d.feature_names(), ["width_mm", "height_mm"]);
    assert_eq!(
        strings(d.warnings()),
        ["column \"sample\" looks like an identifier (every one of its 24 cells is a different text) and is not used as a feature; to carry it into predictions set ids = sample, to silence this set drop = sample, to use it as a feature list it in features"]
    );
    let d = CsvOptions::new("grade")
        .ids(&["sample"])
        .read(path("id-column.csv"))
        .unwrap();
    assert!(d.warnings().is_empty());
    let ids = d.row_ids().unwrap();
    assert_eq!(ids.names(), ["sample"]);
    assert_eq!(
        (ids.row(0), ids.row(23)),
        (&["S-1000".to_string()][..], &["S-1161".to_string()][..])
    );
    // IDs follow their rows through a selection (as out-of-fold predictions need).
    assert_eq!(d.select(&[23, 0]).row_ids().unwrap().row(0), ["S-1161"]);
    // The model records them, and predictions carry them.
    let options = FitOptions::default().hidden(&[2]).epochs(5);
    let model = fit_with_seed(&d, &options, 1).unwrap().into_model();
    assert_eq!(model.id_columns(), ["sample"]);
    let back = Model::from_json(&model.to_json().unwrap(), "m.json").unwrap();
    assert_eq!(back.id_columns(), ["sample"]);
    let rows = stratanet::model_file::FeatureOptions::default()
        .ignore_extra(true)
        .read(&back, path("id-column.csv"))
        .unwrap();
    assert_eq!(rows.ids.unwrap().row(1), ["S-1007"]);
}

#[test]
fn a_whole_number_target_asks_for_the_task() {
    let e = CsvOptions::new("count")
        .read(path("whole-number-target.csv"))
        .unwrap_err();
    assert_eq!(
        message(e),
        "tables/whole-number-target.csv: column \"count\" (2): the target holds 26 distinct whole numbers in 40 rows: they may be counts or measurements (set task = regression) or class codes (set task = classification)"
    );
    let d = CsvOptions::new("count")
        .task(Task::Regression)
        .read(path("whole-number-target.csv"))
        .unwrap();
    assert!(matches!(d.target(), Target::Values { .. }));
    assert_eq!(
        d.decisions()[1].to_string(),
        "task: regression (asked for; target \"count\")"
    );
    // Predictions come back in the target's own units.
    let fitted = fit_with_seed(&d, &FitOptions::default().hidden(&[]), 3).unwrap();
    let p = fitted.model().predict(d.x()).unwrap();
    let Target::Values { values, .. } = d.target() else {
        unreachable!()
    };
    let mean = |a: ndarray::ArrayView1<'_, f64>| a.sum() / a.len() as f64;
    assert!((mean(p.column(0)) - mean(values.column(0))).abs() < 1.0);
    assert!(fitted.model().target_scaler().is_some());
}

#[test]
fn xor_fits_with_the_defaults() {
    let d = CsvOptions::new("y").read(path("xor.csv")).unwrap();
    assert_eq!(
        d.decisions()[1].to_string(),
        "task: classification (the target \"y\" holds 2 distinct whole numbers (0, 1), at most 10; set task = regression to predict them as numbers)"
    );
    let fitted = fit_with_seed(&d, &FitOptions::default(), 42).unwrap();
    assert_eq!(
        strings(fitted.notes()),
        ["early stopping is off: the default validation share (0.2) of 4 rows gives 0 validation rows, fewer than the 10 early stopping needs; every row trains for all 500 epochs (set validation_share to keep early stopping)"]
    );
    assert_eq!(
        fitted.model().predict_classes(d.x()).unwrap(),
        d.labels().unwrap()
    );
}

#[test]
fn thirty_rows_fit_with_the_defaults() {
    let d = CsvOptions::new("label")
        .read(path("thirty-rows.csv"))
        .unwrap();
    let fitted = fit_with_seed(&d, &FitOptions::default(), 42).unwrap();
    assert_eq!(
        strings(fitted.notes()),
        ["early stopping is off: the default validation share (0.2) of 30 rows gives 6 validation rows, fewer than the 10 early stopping needs; every row trains for all 500 epochs (set validation_share to keep early stopping)"]
    );
    assert_eq!(fitted.model().provenance().rows_used, (30, 0));
    // Cross-validation with the defaults works too (batch and early
    // stopping settle per fold).
    let cv = cross_validate(
        &d,
        &FitOptions::default().epochs(50),
        &CvOptions::default(),
        &mut seeded_rng(1),
    )
    .unwrap();
    assert_eq!(cv.folds.len(), 5);
}

#[test]
fn missing_cells_are_refused_or_imputed_from_the_training_rows() {
    let e = CsvOptions::new("grade")
        .read(path("missing-cells.csv"))
        .unwrap_err();
    assert_eq!(
        message(e),
        "tables/missing-cells.csv: line 4, column \"width_mm\" (0): missing value \"\"; fill the cell, or set missing = drop to drop rows with missing cells, or missing = impute to fill them from the training rows"
    );
    let d = CsvOptions::new("grade")
        .missing(Missing::Impute)
        .missing_indicators(true)
        .read(path("missing-cells.csv"))
        .unwrap();
    assert_eq!(
        d.decisions()[2].to_string(),
        "5 cells are missing: width_mm (3), colour (2); they are filled when fitting, from the training rows only (median of a numeric column, most frequent level of a text column)"
    );
    assert_eq!(
        d.feature_names(),
        [
            "width_mm",
            "width_mm:missing",
            "colour=blue",
            "colour=green",
            "colour=red",
            "colour:missing",
            "height_mm"
        ]
    );
    assert_eq!(d.missing_cells(), 5);
    // Every row trains here (early stopping is off for 24 rows), so the
    // fill values are the medians and modes of the whole table.
    let fitted = fit_with_seed(&d, &FitOptions::default().epochs(20), 5).unwrap();
    let fill = fitted.model().imputer().unwrap().fill_values();
    let widths: Vec<f64> = d
        .x()
        .column(0)
        .iter()
        .copied()
        .filter(|v| !v.is_nan())
        .collect();
    assert_eq!(fill[0], median(widths));
    // red, blue, green take turns (8 rows each); both NA cells fall on
    // blue rows, so green and red tie at 8 and the tie goes to the first
    // level in sorted order (blue, green, red): green.
    assert_eq!(&fill[2..5], [0.0, 1.0, 0.0]);
    // The model fills new rows' missing cells the same way.
    let p = fitted.model().predict_probabilities(d.x()).unwrap();
    assert!(p.iter().all(|v| v.is_finite()));
}

#[test]
fn options_without_effect_are_refused() {
    let e = CsvOptions::new("grade")
        .features(&["width_mm"])
        .categorical(&["height_mm"])
        .read(path("thirty-rows.csv"))
        .unwrap_err();
    assert_eq!(
        e.to_string(),
        "option categorical = height_mm: has no effect: the column is not among the features (width_mm); add it there or leave it out"
    );
    let e = CsvOptions::new("grade")
        .missing_indicators(true)
        .read(path("thirty-rows.csv"))
        .unwrap_err();
    assert_eq!(
        e.to_string(),
        "option missing_indicators = on: has no effect unless missing cells are imputed; set missing = impute or leave it out"
    );
}

#[test]
fn the_summary_says_what_each_column_is_and_why() {
    let d = CsvOptions::new("grade")
        .missing(Missing::Impute)
        .read(path("missing-cells.csv"))
        .unwrap();
    let s = d.summary(Some(30));
    let width = &s.columns[0];
    assert_eq!(
        (
            width.role.as_str(),
            width.kind.as_str(),
            width.why.to_string().as_str(),
            width.missing
        ),
        (
            "feature",
            "numeric",
            "every non-missing cell is a number",
            Some(3)
        )
    );
    let colour = &s.columns[1];
    assert_eq!(colour.kind, "categorical");
    assert_eq!(colour.levels[0], ("green".to_string(), 8));
    let grade = &s.columns[3];
    assert_eq!(
        (grade.role.as_str(), grade.kind.as_str()),
        ("target", "classes")
    );
    assert_eq!(
        grade.levels,
        [("bad".to_string(), 12), ("ok".to_string(), 12)]
    );
    assert_eq!(
        s.warnings.last().unwrap().to_string(),
        "the smallest class, \"bad\", has 12 rows, fewer than the 30 folds asked for: stratified cross-validation needs every class in every fold; use at most 12 folds"
    );
    assert!(s.to_html().contains("every non-missing cell is a number"));
}
