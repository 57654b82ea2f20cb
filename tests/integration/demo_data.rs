//! The committed demo tables are exactly what the seeded generator writes.

#[path = "../../examples/make_demo_data.rs"]
#[allow(dead_code)]
mod generator;

#[test]
fn committed_demo_data_matches_the_generator() {
    let root = std::path::Path::new(env!("CARGO_MANIFEST_DIR")).join("demo-data");
    let parts = std::fs::read_to_string(root.join("parts.csv")).unwrap();
    assert!(
        parts == generator::parts(600, 20261202),
        "demo-data/parts.csv differs: rerun `cargo run --example make_demo_data`"
    );
    let sensors = std::fs::read_to_string(root.join("sensors.csv")).unwrap();
    assert!(
        sensors == generator::sensors(1500, 20261203),
        "demo-data/sensors.csv differs: rerun `cargo run --example make_demo_data`"
    );
}
