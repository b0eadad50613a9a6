//! Properties of the process view that hold for any input: the criticality class never falls as
//! MTSR rises; the equilibrium extent stays within [0, ξmax]; the conversion stays within [0, 1]
//! and never falls as K rises; a root is a root.

use proptest::prelude::*;
use thermosieve_engine::process::{criticality_class, equilibrium_conversion, solve_extent, Assessment, EquilibriumSpecies, ExtentKind};
use thermosieve_engine::{species, Screener, TemperatureGrid};

/// Σν ln a − ln K at the solved extent (the function the solver zeroes).
fn residual(species: &[EquilibriumSpecies], ln_k: f64, p: f64, inert: f64, xi: f64, rem: f64) -> f64 {
    let dnu: f64 = species.iter().filter(|s| s.gas).map(|s| s.nu).sum();
    let (mut sum_ln, mut n_t) = (0.0, inert);
    for s in species.iter().filter(|s| s.gas) {
        let n = if s.nu < 0.0 { -s.nu * rem } else { s.nu * xi };
        n_t += n;
        sum_ln += s.nu * n.ln();
    }
    if dnu == 0.0 {
        sum_ln - ln_k
    } else {
        sum_ln - dnu * n_t.ln() + dnu * p.ln() - ln_k
    }
}

fn reaction() -> impl Strategy<Value = Vec<EquilibriumSpecies>> {
    (
        prop::collection::vec(1u8..5, 0..4),
        prop::collection::vec(1u8..5, 0..4),
        prop::collection::vec(1u8..4, 0..2),
        prop::collection::vec(1u8..4, 0..2),
    )
        .prop_filter("a reaction has reactants and products", |(gr, gp, cr, cp)| {
            (!gr.is_empty() || !cr.is_empty()) && (!gp.is_empty() || !cp.is_empty())
        })
        .prop_map(|(gr, gp, cr, cp)| {
            let mut v = Vec::new();
            v.extend(gr.iter().map(|&n| EquilibriumSpecies {
                nu: -(n as f64),
                gas: true,
            }));
            v.extend(gp.iter().map(|&n| EquilibriumSpecies { nu: n as f64, gas: true }));
            v.extend(cr.iter().map(|&n| EquilibriumSpecies {
                nu: -(n as f64),
                gas: false,
            }));
            v.extend(cp.iter().map(|&n| EquilibriumSpecies { nu: n as f64, gas: false }));
            v
        })
}

proptest! {
    #![proptest_config(ProptestConfig::with_cases(2000))]

    #[test]
    fn raising_mtsr_never_lowers_the_class(
        mtt in 250.0f64..700.0, td24 in 250.0f64..700.0, a in 250.0f64..900.0, b in 250.0f64..900.0,
    ) {
        let (lo, hi) = if a <= b { (a, b) } else { (b, a) };
        prop_assert!(criticality_class(lo, mtt, td24) <= criticality_class(hi, mtt, td24));
    }

    #[test]
    fn extent_stays_in_bounds_and_solves_the_equation(
        sp in reaction(), ln_k in -300.0f64..300.0, log_p in -3.0f64..3.0, inert in prop_oneof![Just(0.0), 0.0f64..10.0],
    ) {
        let p = 10f64.powf(log_p);
        let e = solve_extent(&sp, ln_k, p, inert);
        prop_assert!((0.0..=1.0).contains(&e.extent), "{e:?}");
        prop_assert!((0.0..=1.0).contains(&e.remaining), "{e:?}");
        prop_assert!((e.extent + e.remaining - 1.0).abs() < 1e-12, "{e:?}");
        if e.kind == ExtentKind::Root {
            let r = residual(&sp, ln_k, p, inert, e.extent, e.remaining);
            prop_assert!(r.abs() < 1e-6 * (1.0 + ln_k.abs()), "residual {r} at {e:?}");
        }
        // More K, never less conversion.
        let more = solve_extent(&sp, ln_k + 0.5, p, inert);
        prop_assert!(more.extent >= e.extent - 1e-12, "{e:?} then {more:?}");
    }
}

const EQUATIONS: [&str; 6] = [
    "N2(g) + 3 H2(g) -> 2 NH3(g)",
    "N2O4(g) -> 2 NO2(g)",
    "2 SO2(g) + O2(g) -> 2 SO3(g)",
    "CH4(g) + H2O(g) -> CO(g) + 3 H2(g)",
    "CaCO3(s) -> CaO(s) + CO2(g)",
    "C(gr) + CO2(g) -> 2 CO(g)",
];

proptest! {
    #![proptest_config(ProptestConfig::with_cases(300))]

    #[test]
    fn conversion_of_real_reactions_is_a_fraction(
        k in 0usize..EQUATIONS.len(), t in 300.0f64..2000.0, log_p in -2.0f64..3.0, inert in 0.0f64..5.0,
    ) {
        let mut s = Screener::new(species::bundled(), TemperatureGrid::default_process());
        let screened = s.screen(EQUATIONS[k]).unwrap();
        match equilibrium_conversion(&screened, t, 10f64.powf(log_p), inert) {
            Assessment::Assessed(c) => {
                prop_assert!((0.0..=1.0).contains(&c.conversion), "{c:?}");
                prop_assert!(c.extent <= c.extent_max);
                let x: f64 = c.gas_mole_fractions.iter().map(|f| f.1).sum();
                prop_assert!((x - 1.0).abs() < 1e-9, "mole fractions sum to {x}");
            }
            Assessment::NotAssessed { reason, .. } => prop_assert!(false, "{reason}"),
        }
    }
}
