//! Screens the bench reactions many times: `cargo run --release --example screen_loop -- 100000`.
//! Useful under `valgrind --tool=callgrind`, whose instruction counts do not depend on machine load.

use std::hint::black_box;
use thermosieve_engine::{species, Screener, TemperatureGrid};

const REACTIONS: [&str; 24] = [
    "CH4(g) + 2 O2(g) -> CO2(g) + 2 H2O(g)",
    "C3H8(g) + O2(g) -> CO2(g) + H2O(l)",
    "C2H4(g) + H2(g) -> C2H6(g)",
    "C6H6(g) + H2(g) -> C6H12,cyclo-(g)",
    "CO(g) + 2 H2(g) -> CH3OH(g)",
    "CO2(g) + H2(g) -> CH3OH(g) + H2O(g)",
    "2 SO2(g) + O2(g) -> 2 SO3(g)",
    "NH3(g) + O2(g) -> NO(g) + H2O(g)",
    "N2(g) + H2(g) -> NH3(g)",
    "CaCO3(s) -> CaO(s) + CO2(g)",
    "Al(cr) + Fe2O3(s) -> Al2O3(s) + Fe(cr)",
    "CH4(g) + H2O(g) -> CO(g) + H2(g)",
    "CO(g) + H2O(g) -> CO2(g) + H2(g)",
    "C(gr) + CO2(g) -> CO(g)",
    "Fe(s) + O2(g) -> Fe3O4(s)",
    "2 NO(g) + O2(g) -> 2 NO2(g)",
    "NaOH(s) + HCl(g) -> NaCl(s) + H2O(l)",
    "C7H8(l) + 9 O2(g) -> 7 CO2(g) + 4 H2O(l)",
    "SO3(g) + H2O(l) -> H2SO4(l)",
    "C2H5OH(g) + O2(g) -> CO2(g) + H2O(g)",
    "2 Mg(s) + O2(g) -> 2 MgO(s)",
    "H2(g) + Cl2(g) -> 2 HCl(g)",
    "CaO(s) + H2O(l) -> CaO2H2(s)",
    "N2O4(g) <=> 2 NO2(g)",
];

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
