//! Writes the synthetic demo tables in `demo-data/` (run from the repo root:
//! `cargo run --example make_demo_data`). Everything here is invented: an
//! imagined shop that turns bushings and sorts them by gauge readings, and an
//! imagined multi-sensor spindle monitor. The same seed always writes the
//! same bytes; `tests` check that the committed files match.

use stratanet::rng::{seeded_rng, uniform01, ChaCha8Rng};

/// A standard normal draw (Box-Muller; Box & Muller, Ann. Math. Stat. 1958).
fn normal(rng: &mut ChaCha8Rng) -> f64 {
    let u1 = 1.0 - uniform01(rng); // in (0, 1]
    let u2 = uniform01(rng);
    (-2.0 * u1.ln()).sqrt() * (2.0 * std::f64::consts::PI * u2).cos()
}

/// Part-inspection table: three gauge readings, the spindle, and a verdict.
///
/// Rules of the invented shop: a part is accepted when its bore deviation and
/// roundness lie inside an elliptical tolerance zone and its surface is fine
/// enough; an undersized bore (negative deviation) or a rough surface can be
/// re-machined (rework); an oversized bore cannot (scrap). 3% of verdicts are
/// flipped to a random other class, as an inspector's slips would be.
pub fn parts(rows: usize, seed: u64) -> String {
    let mut rng = seeded_rng(seed);
    let mut out =
        String::from("part_id,bore_dev_um,roundness_um,roughness_ra_um,spindle,verdict\n");
    let spindles = ["north", "south", "east"];
    for i in 0..rows {
        let spindle = (uniform01(&mut rng) * 3.0) as usize;
        let drift = [0.0, 3.0, -2.0][spindle];
        let bore = 14.0 * normal(&mut rng) + drift;
        let roundness = (5.0 + 3.0 * normal(&mut rng)).abs();
        let roughness = (0.9 + 0.35 * normal(&mut rng)).clamp(0.2, 3.0);
        let inside = (bore / 20.0).powi(2) + ((roundness - 1.0) / 8.0).powi(2) < 1.0;
        let mut verdict = if inside && roughness < 1.6 {
            0
        } else if bore > 0.0 && !inside {
            2
        } else {
            1
        };
        if uniform01(&mut rng) < 0.03 {
            verdict = (verdict + 1 + (uniform01(&mut rng) * 2.0) as usize) % 3;
        }
        out.push_str(&format!(
            "P{:05},{bore:.2},{roundness:.2},{roughness:.3},{},{}\n",
            i + 1,
            spindles[spindle],
            ["accept", "rework", "scrap"][verdict]
        ));
    }
    out
}

/// Multi-sensor table: six readings driven by two hidden factors (load and
/// speed) with noise; 4% of rows are faults in which one reading breaks away
/// from the pattern the factors impose.
pub fn sensors(rows: usize, seed: u64) -> String {
    let mut rng = seeded_rng(seed);
    let mut out = String::from(
        "run_id,current_a,power_kw,vibration_mm_s,acoustic_db,coolant_c,torque_nm,condition\n",
    );
    for i in 0..rows {
        let load = uniform01(&mut rng);
        let speed = uniform01(&mut rng);
        let mut r = [
            4.0 + 6.0 * load + 0.15 * normal(&mut rng),
            1.5 + 4.0 * load * (0.5 + speed) + 0.12 * normal(&mut rng),
            0.8 + 2.5 * speed * speed + 0.08 * normal(&mut rng),
            62.0 + 12.0 * speed + 3.0 * load + 0.5 * normal(&mut rng),
            21.0 + 6.0 * load + 4.0 * speed + 0.3 * normal(&mut rng),
            8.0 + 20.0 * load - 4.0 * speed + 0.4 * normal(&mut rng),
        ];
        let fault = uniform01(&mut rng) < 0.04;
        if fault {
            let which = (uniform01(&mut rng) * 6.0) as usize;
            let spread = [0.9, 0.7, 0.5, 2.5, 1.2, 2.5][which];
            let sign = if uniform01(&mut rng) < 0.5 { -1.0 } else { 1.0 };
            r[which] += sign * spread * (0.5 + uniform01(&mut rng));
        }
        out.push_str(&format!(
            "R{:05},{:.3},{:.3},{:.3},{:.2},{:.2},{:.2},{}\n",
            i + 1,
            r[0],
            r[1],
            r[2],
            r[3],
            r[4],
            r[5],
            if fault { "fault" } else { "normal" }
        ));
    }
    out
}

fn main() {
    std::fs::create_dir_all("demo-data").expect("demo-data folder");
    std::fs::write("demo-data/parts.csv", parts(600, 20261202)).expect("write parts.csv");
    std::fs::write("demo-data/sensors.csv", sensors(1500, 20261203)).expect("write sensors.csv");
    println!("wrote demo-data/parts.csv and demo-data/sensors.csv");
}
