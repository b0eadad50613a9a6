//! Screens the bench reactions many times: `cargo run --release --example screen_loop -- 100000`.
//! Useful under `valgrind --tool=callgrind`, whose instruction counts do not depend on machine load.

use std::hint::black_box;
use thermosieve_engine::{species, Screener, TemperatureGrid};

include!("../benches/shared/reactions.rs");

fn main() {
    let n: usize = std::env::args().nth(1).and_then(|a| a.parse().ok()).unwrap_or(10_000);
    let mut screener = Screener::new(species::bundled(), TemperatureGrid::default_process());
    let t0 = std::time::Instant::now();
    for _ in 0..n {
        for r in REACTIONS {
            black_box(screener.screen(black_box(r)).ok());
        }
    }
    let per_s = (n * REACTIONS.len()) as f64 / t0.elapsed().as_secs_f64();
    println!("{} reactions, {per_s:.0} reactions/s", n * REACTIONS.len());
}
