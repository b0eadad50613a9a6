//! The process view never errs away from the hazard, as properties over the input space, on a
//! real exothermic step (nitrobenzene hydrogenation, screened by the engine):
//! - MTSR = T_p + X·max(ΔT_ad, 0) with X = 1 for a batch step, whatever fraction it carries, and
//!   the given X_acc only for a semi-batch step;
//! - every default the engine fills in (reaction mass = the reactants alone, c_p = 1.8, X_acc = 1
//!   for a semi-batch step without one) gives an MTSR, a class and a decomposition heat per kg at
//!   least those of any value the default stands for (a mass with solvent, a larger c_p, a
//!   measured accumulation);
//! - less mass or a smaller c_p (more heat per kg) never lowers the class, never lowers the
//!   decomposition heat per kg;
//! - more heat or less cooling capacity never raises the cooling margin.

#![allow(clippy::unwrap_used, reason = "test helpers: a failed unwrap is a failed test")]

use proptest::prelude::*;
use thermosieve_engine::process::{evaluate, CaseProcess, Operation, ProcessConditions, Scale};
use thermosieve_engine::{species, Screened, Screener, TemperatureGrid};

fn step() -> Screened {
    let mut s = Screener::new(species::bundled(), TemperatureGrid::default_process());
    s.screen("nitrobenzene(l) + 3 H2(g) -> aniline(l) + 2 water(l)").unwrap()
}

/// Reactant mass per mol of reaction, kg: nitrobenzene 123.11 + 3 H2 6.048 g.
const REACTANTS_KG_PER_MOL: f64 = 0.129_16;

fn run(s: &Screened, c: &ProcessConditions) -> CaseProcess {
    evaluate(s, c).unwrap()
}

fn class(p: &CaseProcess) -> u8 {
    p.criticality.value().map_or(0, |c| c.class.number())
}

fn decomposition(p: &CaseProcess) -> f64 {
    p.decomposition.as_ref().unwrap().heat_kj_per_kg
}

proptest! {
    #![proptest_config(ProptestConfig::with_cases(300))]

    #[test]
    fn mtsr_follows_the_documented_rule(
        tp in 280.0f64..420.0, solvent in 1.0f64..20.0, cp in 0.8f64..4.0, x in 0.0f64..1.0, semi in any::<bool>(),
    ) {
        let s = step();
        let c = ProcessConditions {
            process_temperature_k: Some(tp),
            scale: Some(Scale::MolOfReaction(1.0)),
            reaction_mass_kg: Some(REACTANTS_KG_PER_MOL * solvent),
            cp_kj_per_kg_k: Some(cp),
            operation: Some(if semi { Operation::SemiBatch } else { Operation::Batch }),
            dosing_time_h: semi.then_some(2.0),
            accumulation_fraction: Some(x),
            ..Default::default()
        };
        let p = run(&s, &c);
        let xacc = if semi { x } else { 1.0 };
        let want = tp + xacc * p.heat.adiabatic_rise_k.max(0.0);
        prop_assert!((p.heat.mtsr_k - want).abs() < 1e-9, "MTSR {} vs {want}", p.heat.mtsr_k);
        prop_assert!(p.heat.mtsr_k >= tp + xacc * p.heat.adiabatic_rise_k.max(0.0) - 1e-9);
    }

    #[test]
    fn defaults_are_never_milder_than_what_they_stand_for(
        tp in 280.0f64..420.0, solvent in 1.0f64..20.0, cp in 1.8f64..4.0, x in 0.0f64..1.0,
        mtt in 300.0f64..500.0, td24 in 300.0f64..700.0,
    ) {
        let s = step();
        let base = ProcessConditions {
            process_temperature_k: Some(tp),
            scale: Some(Scale::MolOfReaction(1.0)),
            operation: Some(Operation::SemiBatch),
            dosing_time_h: Some(2.0),
            mtt_k: Some(mtt),
            t_d24_k: Some(td24),
            ..Default::default()
        };
        let defaulted = run(&s, &base);
        let given = run(&s, &ProcessConditions {
            reaction_mass_kg: Some(REACTANTS_KG_PER_MOL * solvent),
            cp_kj_per_kg_k: Some(cp),
            accumulation_fraction: Some(x),
            ..base.clone()
        });
        prop_assert!(defaulted.heat.mtsr_k >= given.heat.mtsr_k - 1e-9);
        prop_assert!(class(&defaulted) >= class(&given));
        prop_assert!(decomposition(&defaulted) >= decomposition(&given) - 1e-9);
    }

    #[test]
    fn more_heat_per_kg_never_lowers_the_class(
        tp in 280.0f64..420.0, m1 in 1.0f64..20.0, m2 in 1.0f64..20.0, cp1 in 0.8f64..4.0, cp2 in 0.8f64..4.0,
        mtt in 300.0f64..500.0, td24 in 300.0f64..700.0,
    ) {
        let s = step();
        let at = |m: f64, cp: f64| run(&s, &ProcessConditions {
            process_temperature_k: Some(tp),
            scale: Some(Scale::MolOfReaction(1.0)),
            reaction_mass_kg: Some(REACTANTS_KG_PER_MOL * m),
            cp_kj_per_kg_k: Some(cp),
            mtt_k: Some(mtt),
            t_d24_k: Some(td24),
            ..Default::default()
        });
        // The hotter case: less mass and a smaller c_p.
        let (hot, cold) = (at(m1.min(m2), cp1.min(cp2)), at(m1.max(m2), cp1.max(cp2)));
        prop_assert!(class(&hot) >= class(&cold));
        prop_assert!(hot.heat.mtsr_k >= cold.heat.mtsr_k - 1e-9);
        prop_assert!(decomposition(&hot) >= decomposition(&cold) - 1e-9);
    }
}

proptest! {
    #![proptest_config(ProptestConfig::with_cases(300))]

    /// More heat (a larger batch, a shorter dosing time) or less capacity (a smaller U·A, a warmer
    /// coolant) never raises the cooling margin.
    #[test]
    fn more_heat_or_less_capacity_never_raises_the_cooling_margin(
        tp in 300.0f64..400.0, mol1 in 1.0f64..100.0, mol2 in 1.0f64..100.0, ua1 in 10.0f64..5000.0, ua2 in 10.0f64..5000.0,
        dose1 in 0.5f64..10.0, dose2 in 0.5f64..10.0, dt1 in 5.0f64..60.0, dt2 in 5.0f64..60.0,
    ) {
        let s = step();
        let margin = |mol: f64, ua: f64, dose: f64, dt: f64| {
            let p = run(&s, &ProcessConditions {
                process_temperature_k: Some(tp),
                scale: Some(Scale::MolOfReaction(mol)),
                operation: Some(Operation::SemiBatch),
                dosing_time_h: Some(dose),
                ua_w_per_k: Some(ua),
                coolant_temperature_k: Some(tp - dt),
                ..Default::default()
            });
            p.cooling.value().expect("assessed").margin_kw
        };
        let hot = margin(mol1.max(mol2), ua1.min(ua2), dose1.min(dose2), dt1.min(dt2));
        let cool = margin(mol1.min(mol2), ua1.max(ua2), dose1.max(dose2), dt1.max(dt2));
        prop_assert!(hot <= cool + 1e-9, "margin {hot} kW with more heat and less capacity vs {cool}");
    }
}
