//! Replays the fuzz targets' seed corpora and every saved regression input
//! through the same checks the fuzzer runs (fuzz/src/harness.rs), on the
//! stable toolchain and without libFuzzer: a crash found once stays fixed.
//! `write_seeds` (ignored) regenerates the seed corpora from the test data;
//! RELIABILITY.md gives the fuzzing commands.

#[path = "../../fuzz/src/harness.rs"]
#[allow(dead_code)]
mod harness;

use std::fs;
use std::path::{Path, PathBuf};

/// A target's name and its check.
type Target = (&'static str, fn(&[u8]));

const TARGETS: [Target; 6] = [
    ("csv_table", harness::csv_table),
    ("feature_table", harness::feature_table),
    ("model_file", harness::model_file),
    ("sweep_files", harness::sweep_files),
    ("cli_args", harness::cli_args),
    ("record_files", harness::record_files),
];

fn root() -> PathBuf {
    Path::new(env!("CARGO_MANIFEST_DIR")).to_path_buf()
}

fn files(dir: &Path) -> Vec<PathBuf> {
    let mut out: Vec<PathBuf> = match fs::read_dir(dir) {
        Ok(entries) => entries
            .map(|e| e.expect("a readable folder").path())
            .filter(|p| p.is_file())
            .collect(),
        Err(_) => Vec::new(),
    };
    out.sort();
    out
}

#[test]
fn seeds_and_regressions_pass_the_fuzz_checks() {
    let mut replayed = 0;
    for (name, check) in TARGETS {
        let seeds = files(&root().join("fuzz/seeds").join(name));
        assert!(
            seeds.len() >= 3,
            "fuzz/seeds/{name} holds {} files; run write_seeds",
            seeds.len()
        );
        for path in seeds
            .into_iter()
            .chain(files(&root().join("fuzz/regressions").join(name)))
        {
            let bytes = fs::read(&path).unwrap();
            let result = std::panic::catch_unwind(|| check(&bytes));
            assert!(result.is_ok(), "{} fails the {name} checks", path.display());
            replayed += 1;
        }
    }
    assert!(replayed >= 30, "only {replayed} inputs replayed");
}

/// Option bytes for the CSV target (six; see `harness::csv_table`).
fn csv_seed(dir: &Path, stem: &str, text: &[u8], heads: &[[u8; 6]]) {
    for (i, head) in heads.iter().enumerate() {
        let mut bytes = head.to_vec();
        bytes.extend_from_slice(text);
        fs::write(dir.join(format!("{stem}-{i}")), bytes).unwrap();
    }
}

fn head_lines(path: &Path, lines: usize) -> Vec<u8> {
    let text = fs::read_to_string(path).unwrap();
    let mut out: String = text.lines().take(lines).collect::<Vec<_>>().join("\n");
    out.push('\n');
    out.into_bytes()
}

#[test]
#[ignore = "regenerates fuzz/seeds; run by hand after changing a format"]
fn write_seeds() {
    let seeds = root().join("fuzz/seeds");
    for (name, _) in TARGETS {
        let dir = seeds.join(name);
        let _ = fs::remove_dir_all(&dir);
        fs::create_dir_all(&dir).unwrap();
    }
    // CSV tables: the malformed files of tests/data/bad and the head of each
    // demo table, under several option choices.
    let csv = seeds.join("csv_table");
    for path in files(&root().join("tests/data/bad")) {
        if path.extension().is_some_and(|e| e == "csv") {
            let stem = path.file_stem().unwrap().to_string_lossy().into_owned();
            csv_seed(
                &csv,
                &stem,
                &fs::read(&path).unwrap(),
                &[[0, 0, 0, 0, 0, 0], [1, 1, 0, 0, 0, 0]],
            );
        }
    }
    // The crafted tables, read as they come and with the options that
    // read them (impute, a decimal comma, an ID column).
    for path in files(&root().join("tests/data/tables")) {
        if path.extension().is_some_and(|e| e == "csv") {
            let stem = path.file_stem().unwrap().to_string_lossy().into_owned();
            csv_seed(
                &csv,
                &stem,
                &fs::read(&path).unwrap(),
                &[
                    [2, 0, 0, 0, 0, 0],
                    [3, 0x03, 1, 0, 0x18, 0],
                    [2, 0x12, 0, 0, 0x20, 0],
                ],
            );
        }
    }
    for table in ["parts", "sensors"] {
        let text = head_lines(&root().join(format!("demo-data/{table}.csv")), 30);
        csv_seed(
            &csv,
            table,
            &text,
            &[
                [7, 0, 0, 0, 0, 0],
                [7, 0x02, 2, 0, 0x01, 0],
                [3, 0x06, 0, 0, 0x0a, 0],
                [5, 0x13, 1, 0, 0x04, 0],
                [0, 0x20, 0, 0, 0x20, 1],
            ],
        );
    }
    // Feature tables for the harness's fixed model (columns length, colour,
    // width; target grade).
    let ft = seeds.join("feature_table");
    let rows = "length,colour,width,grade\n1.5,red,3,pass\n2.25,blue,0,fail\n,green,4,pass\n";
    for (i, flags) in [0u8, 1, 2, 4, 8, 0x13].into_iter().enumerate() {
        let mut bytes = vec![flags];
        bytes.extend_from_slice(rows.as_bytes());
        fs::write(ft.join(format!("table-{i}")), bytes).unwrap();
    }
    fs::write(
        ft.join("reordered"),
        b"\x01width,extra,colour,length\n1,x,blue,2\n",
    )
    .unwrap();
    // Model files: the checked-in version-1 file and the notebook's model.
    let mf = seeds.join("model_file");
    fs::copy(
        root().join("tests/data/model-v1.json"),
        mf.join("model-v1.json"),
    )
    .unwrap();
    fs::copy(
        root().join("notebooks/parts-model.json"),
        mf.join("parts-model.json"),
    )
    .unwrap();
    fs::write(mf.join("empty-object.json"), b"{}").unwrap();
    // Sweep files: a plan of the harness's fixed table, and a trial result
    // made for the harness's fixed plan (so its fingerprint matches).
    let sf = seeds.join("sweep_files");
    let scratch = crate::support::scratch("fuzz-seeds");
    let (data, plan) = fixed_plan_for_seeds();
    let table = stratanet::data::CsvOptions::new("class");
    stratanet::validate::sweep_files::write_plan(&plan, &table, &scratch.join("plan.jsonl"))
        .unwrap();
    let mut bytes = vec![0u8];
    bytes.extend(fs::read(scratch.join("plan.jsonl")).unwrap());
    fs::write(sf.join("plan"), bytes).unwrap();
    for trial in [0, 4] {
        let result = plan.run_trial(&data, trial).unwrap();
        let path = scratch.join(format!("trial-{trial}.json"));
        let classes = data.class_names().unwrap().to_vec();
        let checksum = stratanet::validate::sweep_files::plan_checksum(&plan, &table);
        let truth = data.select(&result.test_rows);
        stratanet::validate::sweep_files::write_trial(
            &checksum,
            trial,
            data.n_rows(),
            &classes,
            truth.target(),
            &result,
            trial == 4,
            &path,
        )
        .unwrap();
        let mut bytes = vec![1u8];
        bytes.extend(fs::read(&path).unwrap());
        fs::write(sf.join(format!("trial-{trial}")), bytes).unwrap();
    }
    // Records of a reviewer's rerun: a hold-out ledger with two looks (the
    // committed model scored twice on the notebooks' held-out rows) and the
    // committed key results; mode byte 0 for a ledger, 1 for key results.
    let rf = seeds.join("record_files");
    {
        // Read from text under its path in the repository, so that the seed
        // names no folder of the machine that wrote it.
        let text = fs::read_to_string(root().join("demo-data/parts.csv")).unwrap();
        let data = stratanet::data::CsvOptions::new("verdict")
            .drop(&["part_id"])
            .read_str(&text, "demo-data/parts.csv")
            .unwrap();
        let (_, held) =
            stratanet::validate::HoldOut::split(&data, 0.2, &mut stratanet::rng::seeded_rng(2026))
                .unwrap();
        let ledger = scratch.join("holdout-ledger.json");
        let held = held.with_ledger(&ledger).unwrap();
        let model = stratanet::fit::Model::load(root().join("notebooks/parts-model.json")).unwrap();
        held.score(&model).unwrap();
        held.score(&model).unwrap();
        let mut bytes = vec![0u8];
        bytes.extend(fs::read(&ledger).unwrap());
        fs::write(rf.join("ledger"), bytes).unwrap();
        let mut bytes = vec![1u8];
        bytes.extend(fs::read(root().join("notebooks/parts-results.json")).unwrap());
        fs::write(rf.join("key-results"), bytes).unwrap();
        fs::write(rf.join("empty-object-ledger"), b"\x00{}").unwrap();
        fs::write(rf.join("empty-object-results"), b"\x01{}").unwrap();
    }
    // Command lines from the README, NUL-separated.
    let cli = seeds.join("cli_args");
    let lines = [
        "fit demo-data/parts.csv --target verdict --drop part_id --hidden 12 --out parts-model.json",
        "predict parts-model.json new-parts.csv --out predictions.csv",
        "cv demo-data/parts.csv --target verdict --drop part_id --folds 5 --charts cv-charts",
        "sweep demo-data/parts.csv --target verdict --drop part_id --grid-hidden 4,12,12-6 --grid-learning-rate 0.003,0.01",
        "sweep data.csv --target y --grid-hidden 8,16,32 --write-plan plan.jsonl",
        "sweep-trial plan.jsonl data.csv --trial 3 --out trial-3.json",
        "sweep-trial plan.jsonl data.csv --task 2 --tasks 20 --out-dir trials",
        "sweep-merge plan.jsonl trials --data data.csv --out best-model.json",
        "sweep-status plan.jsonl trials --tasks 20",
        "sweep data.csv --target y --random 20 --range-learning-rate 0.0001:0.1 --range-hidden 4:64 --halving 3",
        "fit data.csv --target y --learning-rate 0 --epochs 10",
        "demo --seed 7 --json",
        "inspect data.csv --target y --missing impute --missing-indicators --decimal comma --delimiter semicolon --id row --task regression --json",
        "fit data.csv --target y --class-weights balanced --missing-markers n.a.,- --categorical z --features z,w",
    ];
    for (i, line) in lines.iter().enumerate() {
        let joined = line.split(' ').collect::<Vec<_>>().join("\0");
        fs::write(cli.join(format!("readme-{i}")), joined).unwrap();
    }
}

/// The harness's fixed plan, built by the harness itself.
fn fixed_plan_for_seeds() -> (stratanet::data::Dataset, stratanet::validate::SweepPlan) {
    harness::fixed_plan_parts()
}
