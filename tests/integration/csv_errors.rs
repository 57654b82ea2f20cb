//! Crafted bad CSV files produce exactly the expected messages, naming the
//! file, the 1-based line and the column. (Style of check: serde_json's
//! message tables; the files are described in tests/data/bad/README.md.)

use crate::support::data_dir;
use stratanet::data::{CsvOptions, Missing};

fn message(file: &str, options: CsvOptions) -> String {
    let path = data_dir().join("bad").join(file);
    let err = options.read(&path).expect_err(file);
    // Show paths relative to the data folder, so the expected text is stable.
    err.to_string()
        .replace(&data_dir().join("bad").display().to_string(), "bad")
}

#[test]
fn each_bad_file_has_its_exact_message() {
    let verdict = || CsvOptions::new("verdict");
    let cases: Vec<(&str, CsvOptions, &str)> = vec![
        ("ragged.csv", verdict(),
         "bad/ragged.csv: line 3: found 2 cells but the header has 3; every row needs one cell per column (check for a stray or missing comma)"),
        ("not_a_number.csv", verdict(),
         "bad/not_a_number.csv: column \"bore_um\" (0): 1 cell is a number but 1 is not: \"12a\" (1 cell, line 3); if these mark missing cells, list them in missing_markers (and choose what happens to missing cells with missing); if the column holds categories, list it in categorical; otherwise correct the cells"),
        ("missing.csv", verdict(),
         "bad/missing.csv: line 3, column \"roughness_um\" (1): missing value \"NA\"; fill the cell, or set missing = drop to drop rows with missing cells, or missing = impute to fill them from the training rows"),
        ("single_class.csv", verdict(),
         "bad/single_class.csv: target column \"verdict\" holds only one class (\"accept\"); a classifier needs at least two classes"),
        ("empty.csv", verdict(),
         "bad/empty.csv: the file is empty; a header row naming the columns is needed, then one row per sample"),
        ("header_only.csv", verdict(),
         "bad/header_only.csv: the file has a header but no data rows; add one row per sample below the header"),
        ("duplicate.csv", verdict(),
         "bad/duplicate.csv: line 1: column name \"bore_um\" appears twice (columns 0 and 1); give every column a distinct name"),
        ("infinite.csv", verdict(),
         "bad/infinite.csv: column \"roughness_um\" (1): 1 cell is a number but 1 is not: \"inf\" (1 cell, line 2); they are not finite numbers (check the exporter's overflow marker); if these mark missing cells, list them in missing_markers (and choose what happens to missing cells with missing); if the column holds categories, list it in categorical; otherwise correct the cells"),
        ("single_class.csv", CsvOptions::new("verdit"),
         "bad/single_class.csv: no column \"verdit\"; columns are: bore_um, roughness_um, verdict"),
        ("single_class.csv", CsvOptions::new("verdict").drop(&["width"]),
         "bad/single_class.csv: no column \"width\"; columns are: bore_um, roughness_um, verdict"),
        ("not_utf8.csv", verdict(),
         "bad/not_utf8.csv: line 2: the file is not valid UTF-8; save it as UTF-8 text"),
    ];
    for (file, options, expected) in cases {
        assert_eq!(message(file, options), expected, "{file}");
    }
}

#[test]
fn missing_cells_can_be_dropped_and_are_counted() {
    let path = data_dir().join("bad").join("missing.csv");
    // Two rows are left, one of each class: asking for classification
    // goes ahead where the automatic choice would refuse single-row classes.
    let data = CsvOptions::new("verdict")
        .missing(Missing::Drop)
        .task(stratanet::data::Task::Classification)
        .read(&path)
        .unwrap();
    assert_eq!(data.n_rows(), 2);
    assert_eq!(data.dropped_rows(), 3);
}

#[test]
fn an_unterminated_quote_is_reported() {
    // The csv crate reads an open quote to the end of the file, so the row
    // comes out short: it is reported as a ragged row at the line it starts.
    assert_eq!(
        message("open_quote.csv", CsvOptions::new("verdict")),
        "bad/open_quote.csv: line 2: found 1 cells but the header has 3; every row needs one cell per column (check for a stray or missing comma)"
    );
}

#[test]
fn a_missing_file_names_the_path() {
    let err = CsvOptions::new("y").read("no/such/file.csv").unwrap_err();
    assert!(err.is_io());
    assert!(
        err.to_string()
            .starts_with("no/such/file.csv: opening failed: "),
        "{err}"
    );
}
