//! The reviewer's rerun (issue 18): the hold-out ledger that counts looks
//! across runs, the development subset named as a part of its file, and
//! the verdict of a rerun against the author's committed key results.

use std::path::{Path, PathBuf};
use stratanet::data::{ScoredRows, TablePart};
use stratanet::prelude::*;
use stratanet::validate::{HoldOut, KeyResults};

fn parts() -> Dataset {
    CsvOptions::new("verdict")
        .drop(&["part_id"])
        .read(concat!(env!("CARGO_MANIFEST_DIR"), "/demo-data/parts.csv"))
        .unwrap()
}

fn quick() -> FitOptions {
    FitOptions::default().hidden(&[6]).epochs(40)
}

/// A fresh, empty folder for one test, under cargo's folder for
/// integration tests' temporary files; no two tests share one.
fn fresh_dir(test: &str) -> PathBuf {
    let dir = Path::new(env!("CARGO_TARGET_TMPDIR"))
        .join("rerun")
        .join(format!("{test}-{}", std::process::id()));
    let _ = std::fs::remove_dir_all(&dir);
    std::fs::create_dir_all(&dir).unwrap();
    dir
}

#[test]
fn two_hold_outs_sharing_a_ledger_count_one_then_two() {
    let dir = fresh_dir("ledger-one-two");
    let ledger = dir.join("holdout-ledger.json");
    let data = parts();
    // Two separate HoldOut values, as two runs of the same analysis make.
    let (development, first) = HoldOut::split(&data, 0.2, &mut seeded_rng(2026)).unwrap();
    let model = fit(&development, &quick(), &mut seeded_rng(1)).unwrap();
    let first = first.with_ledger(&ledger).unwrap();
    let one = first.score(model.model()).unwrap();
    assert_eq!(one.times_scored, 1);
    assert_eq!(
        one.caution(),
        "first look at the held-out set (counted in the ledger holdout-ledger.json): an honest final estimate"
    );
    let (_, second) = HoldOut::split(&data, 0.2, &mut seeded_rng(2026)).unwrap();
    let second = second.with_ledger(&ledger).unwrap();
    let two = second.score(model.model()).unwrap();
    assert_eq!(two.times_scored, 2);
    assert_eq!(two.models_scored, Some(1));
    assert_eq!(
        two.caution(),
        "the held-out set has now been scored 2 times (counted in the ledger holdout-ledger.json, all of the same model); if earlier scores steered any choice, this estimate is optimistic"
    );
    assert_eq!(two.scored_rows(), ScoredRows::HoldOut { uses: 2 });
    // The same scores either way: the ledger counts, it changes no number.
    assert_eq!(one.scores, two.scores);
    // A second model on the same rows is named as another model.
    let other = fit(&development, &quick(), &mut seeded_rng(2)).unwrap();
    let three = second.score(other.model()).unwrap();
    assert_eq!((three.times_scored, three.models_scored), (3, Some(2)));
    assert!(
        three.caution().contains("of 2 different models"),
        "{}",
        three.caution()
    );
    let text = std::fs::read_to_string(&ledger).unwrap();
    assert!(text.contains(&second.fingerprint()), "{text}");
    assert!(
        text.contains(&model.model().fingerprint().unwrap()),
        "{text}"
    );
}

#[test]
fn another_split_starts_its_own_count() {
    let dir = fresh_dir("ledger-other-split");
    let ledger = dir.join("ledger.json");
    let data = parts();
    let (development, a) = HoldOut::split(&data, 0.2, &mut seeded_rng(2026)).unwrap();
    let model = fit(&development, &quick(), &mut seeded_rng(1)).unwrap();
    let a = a.with_ledger(&ledger).unwrap();
    assert_eq!(a.score(model.model()).unwrap().times_scored, 1);
    assert_eq!(a.score(model.model()).unwrap().times_scored, 2);
    let (_, b) = HoldOut::split(&data, 0.2, &mut seeded_rng(7)).unwrap();
    assert_ne!(a.fingerprint(), b.fingerprint());
    let b = b.with_ledger(&ledger).unwrap();
    assert_eq!(b.score(model.model()).unwrap().times_scored, 1);
    // And the first split's count is where it was.
    assert_eq!(a.score(model.model()).unwrap().times_scored, 3);
}

#[test]
fn a_damaged_ledger_is_an_error_naming_the_file_and_the_fix() {
    let dir = fresh_dir("ledger-damaged");
    let data = parts();
    let (development, held) = HoldOut::split(&data, 0.2, &mut seeded_rng(2026)).unwrap();
    let model = fit(&development, &quick(), &mut seeded_rng(1)).unwrap();
    let ledger = dir.join("ledger.json");
    for (bad, reason) in [
        ("not json at all", "not a stratanet hold-out ledger"),
        ("", "the file is empty"),
        ("{\"format\": \"something-else\"}", "this JSON is not a hold-out ledger"),
        (
            "{\"format\": \"stratanet-holdout-ledger\", \"format_version\": 1, \"held_out_sets\": [{\"held_out\": \"00\", \"rows\": 1, \"table_source\": \"x\", \"looks\": []}]}",
            "\"held_out\" is not a SHA-256 in hex",
        ),
    ] {
        std::fs::write(&ledger, bad).unwrap();
        let (_, held) = HoldOut::split(&data, 0.2, &mut seeded_rng(2026)).unwrap();
        let e = held.with_ledger(&ledger).unwrap_err().to_string();
        assert!(e.starts_with(&ledger.display().to_string()), "{e}");
        assert!(e.contains(reason), "{reason}: {e}");
        assert!(e.contains("a ledger is never reset silently"), "{e}");
        assert!(e.contains("move it away"), "{e}");
        // Never reset: the file is as it was.
        assert_eq!(std::fs::read_to_string(&ledger).unwrap(), bad);
    }
    // A ledger damaged after it was opened: the look is refused, not counted
    // from zero.
    std::fs::remove_file(&ledger).unwrap();
    let held = held.with_ledger(&ledger).unwrap();
    assert_eq!(held.score(model.model()).unwrap().times_scored, 1);
    let good = std::fs::read_to_string(&ledger).unwrap();
    let renumbered = good.replace("\"look\": 1", "\"look\": 2");
    std::fs::write(&ledger, &renumbered).unwrap();
    let e = held.score(model.model()).unwrap_err().to_string();
    assert!(
        e.contains("look 1 is numbered 2; looks are numbered 1, 2, ... in order"),
        "{e}"
    );
    assert_eq!(std::fs::read_to_string(&ledger).unwrap(), renumbered);
    // A ledger that vanished after a look is refused, not started afresh.
    std::fs::remove_file(&ledger).unwrap();
    let e = held.score(model.model()).unwrap_err().to_string();
    assert!(e.contains("is gone now"), "{e}");
    assert!(!ledger.exists());
}

#[test]
fn the_development_subset_is_named_as_part_of_its_file() {
    let dir = fresh_dir("table-part");
    let data = parts();
    let (development, held) = HoldOut::split(&data, 0.2, &mut seeded_rng(2026)).unwrap();
    assert_eq!(
        development.part(),
        Some(TablePart::Development { of_rows: 600 })
    );
    let said = "480 of 600 rows: development subset; 120 held out";
    assert_eq!(development.rows_described(), said);
    assert!(development.to_html().contains(said));
    assert_eq!(data.rows_described(), "600 rows");
    // A selection of a part is another set of rows: no claim carried over.
    assert_eq!(development.select(&[0, 1, 2]).part(), None);
    let test_rows = data.select(held.row_indices());
    assert_eq!(test_rows.part(), None);
    let fitted = fit(&development, &quick(), &mut seeded_rng(1)).unwrap();
    assert_eq!(fitted.model().provenance().table_rows_described(), said);
    assert!(fitted.model().to_html().contains(said));
    let path = dir.join("model.json");
    fitted.model().save(&path).unwrap();
    let text = std::fs::read_to_string(&path).unwrap();
    assert!(
        text.contains(
            "\"table_part\": {\n      \"role\": \"development\",\n      \"of_rows\": 600\n    }"
        ),
        "{text}"
    );
    let back = Model::load(&path).unwrap();
    assert_eq!(
        back.provenance().table_part,
        Some(TablePart::Development { of_rows: 600 })
    );
    assert_eq!(
        back.fingerprint().unwrap(),
        fitted.model().fingerprint().unwrap()
    );
    // The fingerprint is the SHA-256 of the file's bytes.
    assert_eq!(
        back.fingerprint().unwrap(),
        sha256_hex(&std::fs::read(&path).unwrap())
    );
    // A part as large as its whole is refused by name.
    let bad = text.replace("\"of_rows\": 600", "\"of_rows\": 480");
    let e = Model::from_json(&bad, "bad.json").unwrap_err().to_string();
    assert!(e.contains("a part must be smaller than the whole"), "{e}");
    let cv = cross_validate(
        &development,
        &quick(),
        &CvOptions::default(),
        &mut seeded_rng(3),
    )
    .unwrap();
    assert!(cv
        .to_html()
        .contains(&format!("5-fold cross-validation on {said}")));
}

fn sha256_hex(bytes: &[u8]) -> String {
    use sha2::{Digest, Sha256};
    Sha256::digest(bytes)
        .iter()
        .map(|b| format!("{b:02x}"))
        .collect()
}

/// What `notebooks/reviewer.ipynb` recomputes, from the model at
/// `model_path` (keep the two in step: same names, same options, same
/// seeds).
fn reviewer_rerun(model_path: &Path) -> KeyResults {
    let model = Model::load(model_path).unwrap();
    let data = parts();
    let (development, held_out) = HoldOut::split(&data, 0.2, &mut seeded_rng(2026)).unwrap();
    let options = FitOptions::default().hidden(&[12]).restarts(5);
    let cv = cross_validate(
        &development,
        &options,
        &CvOptions::default(),
        &mut seeded_rng(2027),
    )
    .unwrap();
    let accuracy = cv.metric(Metric::Accuracy).unwrap().summary.clone();
    KeyResults::new("the reviewer's rerun")
        .fingerprint("development rows (SHA-256)", development.fingerprint())
        .fingerprint("held-out rows (SHA-256)", held_out.fingerprint())
        .fingerprint("model file (SHA-256)", model.fingerprint().unwrap())
        .number("cross-validated accuracy, mean", accuracy.mean)
        .number(
            "cross-validated accuracy, 95% interval low",
            accuracy.ci_low,
        )
        .number(
            "cross-validated accuracy, 95% interval high",
            accuracy.ci_high,
        )
}

fn committed(name: &str) -> PathBuf {
    Path::new(env!("CARGO_MANIFEST_DIR"))
        .join("notebooks")
        .join(name)
}

/// The committed model and key results reproduce ("same"); one weight
/// changed in a copy of the model gives "differs", naming the model file's
/// fingerprint with both values, and nothing else.
#[test]
fn the_reviewers_verdict_is_same_for_the_committed_model_and_differs_for_one_weight() {
    let author = KeyResults::load(committed("parts-results.json")).unwrap();
    let verdict = author.compare(&reviewer_rerun(&committed("parts-model.json")));
    assert!(verdict.is_same(), "{verdict}");
    assert!(
        verdict.verdict().starts_with("reproduced: same (6 of 6"),
        "{verdict}"
    );
    assert!(verdict.to_html().contains("reproduced: same"));

    let dir = fresh_dir("one-weight");
    let mut file: serde_json::Value =
        serde_json::from_str(&std::fs::read_to_string(committed("parts-model.json")).unwrap())
            .unwrap();
    let w = &mut file["network"]["layers"][0]["weights"][0][0];
    let changed = w.as_f64().unwrap() + 1e-3;
    *w = serde_json::json!(changed);
    let altered = dir.join("parts-model.json");
    std::fs::write(
        &altered,
        serde_json::to_string_pretty(&file).unwrap() + "\n",
    )
    .unwrap();
    let altered_fingerprint = Model::load(&altered).unwrap().fingerprint().unwrap();
    let verdict = author.compare(&reviewer_rerun(&altered));
    assert!(!verdict.is_same());
    let differs: Vec<&str> = verdict
        .differences()
        .iter()
        .map(|d| d.name.as_str())
        .collect();
    assert_eq!(differs, ["model file (SHA-256)"]);
    let expected = author.get("model file (SHA-256)").unwrap().to_string();
    assert_eq!(
        verdict.verdict(),
        format!(
            "reproduced: differs: model file (SHA-256) (expected {expected}, got {altered_fingerprint})"
        )
    );
    let html = verdict.to_html();
    assert!(
        html.contains("reproduced: differs: model file (SHA-256)"),
        "{html}"
    );
    assert!(html.contains("DIFFERS"));
}
