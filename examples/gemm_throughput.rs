//! Throughput of the engine's matrix product on the shapes the benchmark's
//! networks use, in both arithmetic modes (f32) and portable f64: GFLOP/s by
//! wall clock and by this thread's CPU time (Linux's schedstat).
//!
//!     cargo run --release --example gemm_throughput -- [threads]
use std::time::Instant;
/// This thread's CPU time in nanoseconds, or NaN where Linux's schedstat is
/// missing (the CPU column then reads NaN).
fn cpu_ns() -> f64 {
    std::fs::read_to_string("/proc/thread-self/schedstat")
        .ok()
        .and_then(|s| s.split_whitespace().next()?.parse::<f64>().ok())
        .unwrap_or(f64::NAN)
}
use stratanet::network::{matrix_product_f32, matrix_product_f64, Arithmetic};
fn main() {
    let args: Vec<String> = std::env::args().collect();
    let threads: usize = match args.get(1).map(|s| s.parse()) {
        None => 1,
        Some(Ok(t)) => t,
        Some(Err(_)) => {
            eprintln!("gemm_throughput: the first argument is a thread count, say 2");
            std::process::exit(2);
        }
    };
    rayon::ThreadPoolBuilder::new()
        .num_threads(threads)
        .build_global()
        .expect("the first and only global pool");
    println!("kernel {}", stratanet::network::kernel_name());
    for &(m, p, n) in &[
        (128usize, 784usize, 256usize),
        (784, 128, 256),
        (128, 256, 10),
        (512, 512, 512),
        (32, 30, 64),
        (1024, 32, 32),
    ] {
        let a: Vec<f32> = (0..m * p)
            .map(|i| ((i * 7919) % 1000) as f32 / 1000.0 - 0.5)
            .collect();
        let b: Vec<f32> = (0..p * n)
            .map(|i| ((i * 104729) % 1000) as f32 / 1000.0 - 0.5)
            .collect();
        let mut c = vec![0f32; m * n];
        for ar in [Arithmetic::Portable, Arithmetic::Fast] {
            let reps = (2e9 / (2.0 * (m * n * p) as f64)).max(3.0) as usize;
            matrix_product_f32(ar, (m, n, p), &a, &b, None, &mut c);
            let t = Instant::now();
            let c0 = cpu_ns();
            for _ in 0..reps {
                matrix_product_f32(ar, (m, n, p), &a, &b, None, &mut c);
            }
            let s = t.elapsed().as_secs_f64();
            let cs = (cpu_ns() - c0) / 1e9;
            println!(
                "f32 {m}x{p}x{n} {ar}: {:.1} GFLOP/s wall, {:.1} GFLOP/s cpu",
                2.0 * (m * n * p * reps) as f64 / s / 1e9,
                2.0 * (m * n * p * reps) as f64 / cs / 1e9
            );
        }
        let a: Vec<f64> = a.iter().map(|&v| v as f64).collect();
        let b: Vec<f64> = b.iter().map(|&v| v as f64).collect();
        let mut c = vec![0f64; m * n];
        let ar = Arithmetic::Portable;
        let reps = (1e9 / (2.0 * (m * n * p) as f64)).max(3.0) as usize;
        let t = Instant::now();
        let c0 = cpu_ns();
        for _ in 0..reps {
            matrix_product_f64(ar, (m, n, p), &a, &b, None, &mut c);
        }
        let s = t.elapsed().as_secs_f64();
        let cs = (cpu_ns() - c0) / 1e9;
        println!(
            "f64 {m}x{p}x{n} {ar}: {:.1} GFLOP/s wall, {:.1} GFLOP/s cpu",
            2.0 * (m * n * p * reps) as f64 / s / 1e9,
            2.0 * (m * n * p * reps) as f64 / cs / 1e9
        );
    }
}
