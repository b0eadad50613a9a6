//! Route roll-up and ranking. The process values are the engine's own (checked in
//! process_view.rs); these tests check the arithmetic of the roll-up and the documented score.
//! All conditions are ILLUSTRATIVE.

#![allow(clippy::unwrap_used, reason = "test helpers: a failed unwrap is a failed test")]

use thermosieve_engine::process::{evaluate, CriticalityClass, ProcessConditions, Scale};
use thermosieve_engine::routes::HeatPerProduct;
use thermosieve_engine::{roll_up, species, CaseProcess, RouteStep, Screener, TemperatureGrid, CAUTION};

fn case(equation: &str, c: ProcessConditions) -> CaseProcess {
    let mut s = Screener::new(species::bundled(), TemperatureGrid::default_process());
    let screened = s.screen(equation).unwrap_or_else(|e| panic!("{equation}: {e}"));
    evaluate(&screened, &c).unwrap()
}

fn conditions(mass_kg: f64, mtt_k: f64, t_d24_k: f64) -> ProcessConditions {
    ProcessConditions {
        process_temperature_k: Some(330.0),
        scale: Some(Scale::MolOfReaction(100.0)),
        reaction_mass_kg: Some(mass_kg),
        cp_kj_per_kg_k: Some(2.0),
        mtt_k: Some(mtt_k),
        t_d24_k: Some(t_d24_k),
        ..Default::default()
    }
}

#[test]
fn routes_roll_up_and_rank() {
    // Route A: two mild steps; the last is scaled in kg of its product.
    let a1 = case("C2H4(g) + H2(g) -> C2H6(g)", conditions(20_000.0, 400.0, 450.0));
    let a2 = case(
        "2 H2(g) + O2(g) -> 2 H2O(l)",
        ProcessConditions {
            scale: Some(Scale::KgOfProduct {
                species: "H2O(l)".into(),
                kg: 36.03,
            }),
            ..conditions(20_000.0, 400.0, 450.0)
        },
    );
    // Route B: one step with a small mass: a large rise, past MTT and T_D24.
    let b1 = case("2 H2(g) + O2(g) -> 2 H2O(l)", conditions(100.0, 373.0, 420.0));
    // Route C: its second step failed.
    let c1 = case("C2H4(g) + H2(g) -> C2H6(g)", conditions(20_000.0, 400.0, 450.0));
    // Route D: no MTT, so its class is not assessed and ranks below every assessed class.
    let d1 = case(
        "C2H4(g) + H2(g) -> C2H6(g)",
        ProcessConditions {
            mtt_k: None,
            ..conditions(1e6, 400.0, 450.0)
        },
    );
    let steps = [
        RouteStep {
            case_id: "a2",
            route_id: "A",
            step: 2,
            result: Ok((&a2).into()),
        },
        RouteStep {
            case_id: "b1",
            route_id: "B",
            step: 1,
            result: Ok((&b1).into()),
        },
        RouteStep {
            case_id: "a1",
            route_id: "A",
            step: 1,
            result: Ok((&a1).into()),
        },
        RouteStep {
            case_id: "c1",
            route_id: "C",
            step: 1,
            result: Ok((&c1).into()),
        },
        RouteStep {
            case_id: "c2",
            route_id: "C",
            step: 2,
            result: Err("no data for XYZ(l)"),
        },
        RouteStep {
            case_id: "d1",
            route_id: "D",
            step: 1,
            result: Ok((&d1).into()),
        },
        RouteStep {
            case_id: "lone",
            route_id: "",
            step: 1,
            result: Ok((&d1).into()),
        },
    ];
    let routes = roll_up(&steps);
    let ids: Vec<&str> = routes.iter().map(|r| r.route_id.as_str()).collect();
    // A (class 1) < B (class 4) < D (not assessed) < C (failed).
    assert_eq!(ids, ["A", "B", "D", "C"]);
    assert_eq!(routes.iter().map(|r| r.rank).collect::<Vec<_>>(), [1, 2, 3, 4]);
    for r in &routes {
        assert_eq!(r.caution, CAUTION);
    }

    let a = &routes[0];
    assert_eq!(a.case_ids, ["a1", "a2"]);
    let total = a1.heat.heat_kj_per_batch + a2.heat.heat_kj_per_batch;
    assert!((a.total_heat_kj.unwrap() - total).abs() < 1e-9);
    match &a.heat_per_final_product {
        Some(HeatPerProduct::KjPerKg { species, value }) => {
            assert_eq!(species, "H2O(l)");
            assert!((value - total / 36.03).abs() < 1e-9);
        }
        other => panic!("{other:?}"),
    }
    let gas = a1.gas.gas_mol_per_batch + a2.gas.gas_mol_per_batch;
    assert!((a.total_gas_mol.unwrap() - gas).abs() < 1e-9);
    let worst = a.worst_adiabatic_rise_k.as_ref().unwrap();
    let (want_id, want) = if a1.heat.adiabatic_rise_k > a2.heat.adiabatic_rise_k {
        ("a1", a1.heat.adiabatic_rise_k)
    } else {
        ("a2", a2.heat.adiabatic_rise_k)
    };
    assert_eq!((worst.case_id.as_str(), worst.value), (want_id, want));
    assert_eq!(a.worst_class.as_ref().unwrap().value, CriticalityClass::Class1);
    assert!(a.flagged_steps.is_empty(), "{:?}", a.flagged_steps);

    let b = &routes[1];
    assert_eq!(b.worst_class.as_ref().unwrap().value, CriticalityClass::Class4);
    assert_eq!(b.flagged_steps.len(), 1);
    assert!(b.flagged_steps[0].reasons[0].contains("class 4"));
    match &b.heat_per_final_product {
        Some(HeatPerProduct::KjPerMolOfFinalReaction(v)) => {
            assert!((v - b1.heat.heat_kj_per_mol).abs() < 1e-9)
        }
        other => panic!("{other:?}"),
    }

    let d = &routes[2];
    assert_eq!(d.class_not_assessed, ["d1"]);
    assert!(d.worst_class.is_none());

    let c = &routes[3];
    let failed = c.failed.as_ref().unwrap();
    assert_eq!(
        (failed.case_id.as_str(), failed.step, failed.value.as_str()),
        ("c2", 2, "no data for XYZ(l)")
    );
    assert_eq!(c.total_heat_kj, None);
    // What is known of the steps that succeeded is still reported.
    assert_eq!(c.worst_class.as_ref().unwrap().value, CriticalityClass::Class1);
}

#[test]
fn ties_rank_by_rise_then_heat_then_id_and_duplicate_steps_are_noted() {
    let mild = case("C2H4(g) + H2(g) -> C2H6(g)", conditions(20_000.0, 400.0, 450.0));
    let milder = case("C2H4(g) + H2(g) -> C2H6(g)", conditions(40_000.0, 400.0, 450.0));
    let steps = [
        RouteStep {
            case_id: "x",
            route_id: "X",
            step: 1,
            result: Ok((&mild).into()),
        },
        RouteStep {
            case_id: "y",
            route_id: "Y",
            step: 1,
            result: Ok((&milder).into()),
        },
        RouteStep {
            case_id: "z1",
            route_id: "Z",
            step: 1,
            result: Ok((&milder).into()),
        },
        RouteStep {
            case_id: "z2",
            route_id: "Z",
            step: 1,
            result: Ok((&milder).into()),
        },
    ];
    let routes = roll_up(&steps);
    let ids: Vec<&str> = routes.iter().map(|r| r.route_id.as_str()).collect();
    // Y and Z share the worst rise; Y releases less heat in total (one step, Z has two).
    assert_eq!(ids, ["Y", "Z", "X"]);
    assert!(routes[1].notes.iter().any(|n| n.contains("both step 1")), "{:?}", routes[1].notes);
}

/// The route names its worst decomposition heat and the steps whose mass carries an energetic
/// group. Nitrobenzene's nitration product, as the mass after a step, carries N–O; the
/// hydrogenation's products (aniline, water) carry none. Values are the engine's own (checked by
/// hand in decomposition.rs and process_view's e2e); here only the roll-up's choice.
#[test]
fn routes_name_their_worst_decomposition_and_energetic_steps() {
    let batch = |mass| ProcessConditions {
        process_temperature_k: Some(313.15),
        scale: Some(Scale::MolOfReaction(10.0)),
        reaction_mass_kg: Some(mass),
        ..Default::default()
    };
    let nitration = case("benzene(l) + nitric acid(l) -> nitrobenzene(l) + water(l)", batch(5.0));
    let reduction = case("nitrobenzene(l) + 3 H2(g) -> aniline(l) + 2 water(l)", batch(5.0));
    let q1 = nitration.decomposition.as_ref().unwrap().heat_kj_per_kg;
    let q2 = reduction.decomposition.as_ref().unwrap().heat_kj_per_kg;
    assert!(q1 > q2, "nitrobenzene's mass {q1} kJ/kg vs aniline's {q2}");
    let steps = [
        RouteStep {
            case_id: "n1",
            route_id: "N",
            step: 1,
            result: Ok((&nitration).into()),
        },
        RouteStep {
            case_id: "n2",
            route_id: "N",
            step: 2,
            result: Ok((&reduction).into()),
        },
    ];
    let r = &roll_up(&steps)[0];
    let w = r.worst_decomposition_heat_kj_per_kg.as_ref().unwrap();
    assert_eq!((w.case_id.as_str(), w.value), ("n1", q1));
    assert_eq!(r.energetic_steps.len(), 1, "{:?}", r.energetic_steps);
    assert_eq!(r.energetic_steps[0].case_id, "n1");
    assert!(r.energetic_steps[0].value[0].starts_with("N-O"));
}

/// A formula-written tabulated species takes the energetic groups of its record's bundled
/// structure (hydrogen peroxide's record H2O2 → contiguous O).
#[test]
fn formula_species_take_their_records_structure() {
    let mut s = Screener::new(species::bundled(), TemperatureGrid::default_process());
    let r = s.screen("2 H2O2(g) -> 2 H2O(g) + O2(g)").unwrap();
    let peroxide = r.species.iter().find(|t| t.species.resolved.formula.hill() == "H2O2").unwrap();
    let groups = peroxide.species.energetic_groups.as_ref().expect("a bundled structure");
    assert_eq!(groups.len(), 1);
    assert!(groups[0].name().starts_with("contiguous O"), "{groups:?}");
}
