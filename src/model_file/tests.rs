//! Unit tests of the model-file format. These are self-consistency checks of
//! our own format (no outside reference exists for it); the JSON rules they
//! lean on are RFC 8259's, and exact float reading is serde_json's
//! `float_roundtrip` feature.

use super::*;
use crate::data::CsvOptions;
use crate::fit::{fit, FitOptions};
use crate::network::Precision;
use crate::rng::seeded_rng;
use rand::RngCore;

fn small_model(precision: Precision) -> Model {
    let text = "a,colour,y\n0,red,n\n0,blue,y\n1,red,y\n1,blue,y\n0.1,red,n\n0,red,n\n0.9,blue,y\n1,red,y\n";
    let data = CsvOptions::new("y").read_str(text, "or.csv").unwrap();
    let options = FitOptions::default()
        .hidden(&[3])
        .early_stopping(None)
        .epochs(20)
        .batch_size(crate::train::BatchSize::Rows(4))
        .precision(precision);
    fit(&data, &options, &mut seeded_rng(3))
        .unwrap()
        .into_model()
}

fn reason(e: Error) -> String {
    match e.into_kind() {
        crate::ErrorKind::ModelFile { reason, .. } => reason,
        other => panic!("not a model-file error: {other:?}"),
    }
}

fn refuse(text: &str) -> String {
    reason(Model::from_json(text, "m.json").unwrap_err())
}

#[test]
fn round_trip_is_exact_in_both_precisions() {
    for precision in [Precision::F64, Precision::F32] {
        let model = small_model(precision);
        let text = model.to_json().unwrap();
        let back = Model::from_json(&text, "m.json").unwrap();
        assert_eq!(back, model);
        assert_eq!(back.to_json().unwrap(), text, "writing is deterministic");
    }
}

#[test]
fn weights_are_plain_nested_lists() {
    let model = small_model(Precision::F64);
    let v: Value = serde_json::from_str(&model.to_json().unwrap()).unwrap();
    let w = &v["network"]["layers"][0]["weights"];
    assert_eq!(w.as_array().unwrap().len(), 3, "one row per input unit");
    assert_eq!(
        w[0].as_array().unwrap().len(),
        3,
        "one number per output unit"
    );
    assert_eq!(
        w[1][2].as_f64().unwrap(),
        model.network.layers()[0].weights[[1, 2]]
    );
    assert_eq!(v["format"], FORMAT_NAME);
    assert_eq!(v["format_version"], 2);
    assert_eq!(v["network"]["layer_sizes"], serde_json::json!([3, 3, 1]));
}

/// With `float_roundtrip`, every finite f64 reads back to the same bits
/// (serde_json writes the shortest text that reads back, and its parser is
/// then correctly rounded). Random bit patterns cover all exponents.
#[test]
fn every_f64_round_trips_through_json() {
    let mut rng = seeded_rng(11);
    let mut values = vec![
        0.0,
        -0.0,
        f64::MIN_POSITIVE,
        5e-324,
        -5e-324,
        f64::MAX,
        f64::MIN,
        f64::EPSILON,
        0.1,
        1.0 / 3.0,
        f64::from_bits(0x000f_ffff_ffff_ffff), // the largest subnormal
        9007199254740993.0,
    ];
    while values.len() < 200_000 {
        let v = f64::from_bits(rng.next_u64());
        if v.is_finite() {
            values.push(v);
        }
    }
    let text = serde_json::to_string(&values).unwrap();
    let back: Vec<f64> = serde_json::from_str(&text).unwrap();
    for (a, b) in values.iter().zip(&back) {
        assert_eq!(a.to_bits(), b.to_bits(), "{a:e} read back as {b:e}");
    }
}

#[test]
fn skim_applies_the_depth_limit_and_reads_numbers() {
    let deep = format!("{}1{}", "[".repeat(200), "]".repeat(200));
    let e = serde_json::from_str::<Skim>(&deep).unwrap_err();
    assert_eq!(
        e.to_string(),
        "recursion limit exceeded at line 1 column 128"
    );
    let e = serde_json::from_str::<Skim>("{\"a\": [1e999]}").unwrap_err();
    assert_eq!(e.to_string(), "number out of range at line 1 column 12");
    serde_json::from_str::<Skim>(&format!("{}1{}", "[".repeat(100), "]".repeat(100))).unwrap();
}

#[test]
fn json_errors_read_well() {
    assert_eq!(
        refuse(""),
        "the file is empty; a model file is JSON text written by stratanet's save"
    );
    assert_eq!(
        refuse("{\"format\": \"stratanet-model\", \"a\": [1, 2"),
        "the file ends early, at line 1, column 40 (EOF while parsing a list): it is truncated, perhaps by an interrupted copy; save the model again"
    );
    assert_eq!(
        refuse("a,b,y\n1,2,x\n"),
        "this is not a JSON file (line 1, column 1: expected value); a stratanet model file is JSON text beginning with {"
    );
    assert_eq!(
        refuse("{\"a\": 0.1x3}"),
        "the JSON is damaged at line 1, column 10: expected `,` or `}`"
    );
    assert_eq!(
        refuse("[1, 2]"),
        "this is a JSON file but not a stratanet model (it holds an array, not an object with \"format\": \"stratanet-model\")"
    );
    assert_eq!(
        refuse("{\"format\": [1]}"),
        "this is a JSON file but not a stratanet model (\"format\" is [1], not \"stratanet-model\")"
    );
    assert_eq!(
        refuse("{\"format\": \"stratanet-model\", \"format_version\": -1}"),
        "\"format_version\" is -1, not a version number (stratanet 0.1.0 reads format versions 1 to 2)"
    );
    assert_eq!(
        refuse("{\"format\": \"stratanet-model\", \"format_version\": 1, \"format\": \"x\"}"),
        "line 1, column 59: duplicate field `format`"
    );
}

#[test]
fn sizes_are_checked_before_the_weights_are_read() {
    let head = "{\"format\": \"stratanet-model\", \"format_version\": 1, \"network\": ";
    assert_eq!(
        refuse(&format!("{head}{{\"layers\": []}}}}")),
        "\"network\" has no field \"layer_sizes\""
    );
    assert_eq!(
        refuse(&format!("{head}\"big\"}}")),
        "line 1, column 67: invalid type: string \"big\", expected an object with layer_sizes, hidden_activation, head, precision and layers"
    );
    assert_eq!(
        refuse(&format!("{head}{{\"layer_sizes\": [4]}}}}")),
        "network: \"layer_sizes\" is [4]; a network needs at least an input size and an output size"
    );
    assert_eq!(
        refuse(&format!("{head}{{\"layer_sizes\": [4, 0, 1]}}}}")),
        "network: \"layer_sizes\" [4, 0, 1]: size 1 is 0; every layer needs at least one unit"
    );
    // u64::MAX squared overflows even u128 arithmetic without saturation.
    let max = u64::MAX;
    assert_eq!(
        refuse(&format!("{head}{{\"layer_sizes\": [{max}, {max}, {max}]}}}}")),
        format!("network: \"layer_sizes\" [{max}, {max}, {max}] give {} weights and biases, more than the limit of 50000000; the file is damaged or not meant for stratanet", u128::MAX)
    );
}

#[test]
fn parameter_count_matches_the_network() {
    let model = small_model(Precision::F64);
    let sizes: Vec<u64> = model.network.sizes().iter().map(|&s| s as u64).collect();
    assert_eq!(
        schema::parameter_count(&sizes),
        model.network.n_parameters() as u128
    );
    let max = u64::MAX;
    assert_eq!(
        schema::parameter_count(&[max, max]),
        (u128::from(max) + 1) * u128::from(max)
    );
    assert_eq!(schema::parameter_count(&[max, max, max]), u128::MAX);
}

#[test]
fn saving_refuses_what_loading_would_refuse() {
    // A scaler cannot hold a NaN scale (Scaler::from_parts refuses it), so
    // that case is covered by loading tests only.
    assert!(crate::data::Scaler::from_parts(
        crate::data::Scaling::Standardise,
        vec![0.0],
        vec![f64::NAN]
    )
    .is_err());
    let mut model = small_model(Precision::F64);
    model.provenance.final_training_loss = f64::INFINITY;
    assert_eq!(
        model.to_json().unwrap_err().to_string(),
        "serialising a model: the model cannot be stored: \"provenance\": \"final_training_loss\" is inf, which JSON cannot hold (it has no NaN or infinity)"
    );
    let mut model = small_model(Precision::F64);
    model.target_names.push("maybe".into());
    assert_eq!(
        model.to_json().unwrap_err().to_string(),
        "serialising a model: the model cannot be stored: \"target\" lists 3 classes, but the logistic head serves exactly two classes"
    );
}

#[test]
fn missing_field_names_are_extracted() {
    assert_eq!(missing_field("missing field `biases`"), Some("biases"));
    assert_eq!(missing_field("unknown field `x`"), None);
}

#[test]
fn files_over_the_size_limit_are_refused_before_reading() {
    let path = std::path::Path::new(env!("CARGO_MANIFEST_DIR")).join("tests/data/model-v1.json");
    let size = std::fs::metadata(&path).unwrap().len();
    let err = load_with_limit(&path, 1000).unwrap_err();
    assert_eq!(
        err.to_string(),
        format!(
            "{}: not a usable model file: the file holds {size} bytes, more than the limit of 1000 bytes for model files; a model of a few layers is far smaller, so the file is not one, or is damaged",
            path.display()
        )
    );
}

// The fast mode's bits depend on whether the CPU fuses multiply-adds
// (IEEE 754-2008 fusedMultiplyAdd rounds once, a product and a sum twice),
// so a fast model records it; a portable model records nothing about the
// CPU, so that its file is the same on every machine.
#[test]
fn the_fast_mode_records_whether_the_cpu_fused() {
    let portable = small_model(Precision::F64);
    assert_eq!(portable.provenance().fused_multiply_add, None);
    assert!(!portable.to_json().unwrap().contains("fused_multiply_add"));
    let text = "a,colour,y\n0,red,n\n0,blue,y\n1,red,y\n1,blue,y\n0.1,red,n\n0,red,n\n0.9,blue,y\n1,red,y\n";
    let data = CsvOptions::new("y").read_str(text, "or.csv").unwrap();
    let mut options = FitOptions::default()
        .hidden(&[3])
        .early_stopping(None)
        .epochs(5);
    options.training.arithmetic = crate::network::Arithmetic::Fast;
    let fast = fit(&data, &options, &mut seeded_rng(3))
        .unwrap()
        .into_model();
    let fused = crate::network::fast_mode_fuses();
    assert_eq!(fast.provenance().fused_multiply_add, Some(fused));
    let json = fast.to_json().unwrap();
    assert!(
        json.contains(&format!("\"fused_multiply_add\": {fused}")),
        "{json}"
    );
    assert_eq!(Model::from_json(&json, "m.json").unwrap(), fast);
}
