//! The process view: heat budget, MTSR, criticality, gas and cooling, end to end and against
//! their definitions.
//!
//! Sources. No published worked example with numbers (adiabatic rise, MTSR, criticality class)
//! could be reached with the search tools available when this was written: the pages found
//! (H.E.L Group's blog on "Stoessel's Criticality Index", processchemistryportal.com's "Process
//! Thermal Safety Analysis" tool) describe the method but their stored excerpts stop before the
//! class definitions or any example. So the checks below are against the definitions
//! (ΔT_ad = Q/(m·c_p), MTSR = T_p + X_acc·ΔT_ad, Stoessel's class inequalities as recalled from
//! F. Stoessel, Thermal Safety of Chemical Processes, Wiley-VCH 2008, ch. 3 — from memory), with
//! values marked ILLUSTRATIVE: made up for the test, not published. Values that do come from an
//! outside source name it beside the value.

#![allow(clippy::unwrap_used, reason = "test helpers: a failed unwrap is a failed test")]

use thermosieve_engine::formula::{parse_species, Phase};
use thermosieve_engine::process::{
    adiabatic_rise_k, celsius_to_kelvin, cooling_capacity_check, criticality_class, evaluate, mtsr_k, severity_from_adiabatic_rise,
    Assessment, CriticalityClass, KTrend, Operation, ProcessConditions, ProcessError, Scale, Severity, MOLAR_VOLUME_STP_M3_PER_MOL,
};
use thermosieve_engine::species::{self, SuppliedSpecies, R};
use thermosieve_engine::{Screened, Screener, TemperatureGrid, CAUTION};

fn screen(equation: &str) -> Screened {
    let mut s = Screener::new(species::bundled(), TemperatureGrid::default_process());
    s.screen(equation).unwrap_or_else(|e| panic!("{equation}: {e}"))
}

fn close(got: f64, want: f64, tol: f64) -> bool {
    (got - want).abs() <= tol
}

#[test]
fn adiabatic_rise_and_mtsr_by_definition() {
    // ILLUSTRATIVE values: 5 kmol of a reaction with ΔrH = −200 kJ/mol in 4000 kg of mass with
    // c_p = 2.0 kJ/(kg·K): Q = 1.0e6 kJ, ΔT_ad = 1.0e6/(4000·2.0) = 125 K.
    let rise = adiabatic_rise_k(5000.0 * 200.0, 4000.0, 2.0);
    assert!(close(rise, 125.0, 1e-12), "{rise}");
    // Semi-batch at 80 °C with 30 % accumulation: MTSR = 353.15 + 0.3·125 = 390.65 K.
    let t_p = celsius_to_kelvin(80.0);
    assert!(close(mtsr_k(t_p, 0.3, rise), 390.65, 1e-9));
    // Batch: X_acc = 1, MTSR = 478.15 K.
    assert!(close(mtsr_k(t_p, 1.0, rise), 478.15, 1e-9));
    // Endothermic: no rise, MTSR stays at the process temperature.
    assert_eq!(mtsr_k(t_p, 1.0, -40.0), t_p);
}

#[test]
fn criticality_classes_by_definition() {
    // Stoessel's scheme (from memory, see the module comment), ILLUSTRATIVE temperatures in K.
    assert_eq!(criticality_class(350.0, 370.0, 420.0), CriticalityClass::Class1); // MTSR < MTT < T_D24
    assert_eq!(criticality_class(350.0, 420.0, 370.0), CriticalityClass::Class2); // MTSR < T_D24 < MTT
    assert_eq!(criticality_class(390.0, 370.0, 420.0), CriticalityClass::Class3); // MTT < MTSR < T_D24
    assert_eq!(criticality_class(450.0, 370.0, 420.0), CriticalityClass::Class4); // MTT < T_D24 < MTSR
    assert_eq!(criticality_class(450.0, 470.0, 420.0), CriticalityClass::Class5); // T_D24 < MTSR < MTT
    assert_eq!(criticality_class(480.0, 470.0, 420.0), CriticalityClass::Class5); // T_D24 < MTT < MTSR
                                                                                  // Ties count against safety.
    assert_eq!(criticality_class(370.0, 370.0, 420.0), CriticalityClass::Class3); // MTT reached
    assert_eq!(criticality_class(420.0, 370.0, 420.0), CriticalityClass::Class4); // T_D24 reached
    assert_eq!(criticality_class(350.0, 400.0, 400.0), CriticalityClass::Class2); // MTT = T_D24
    assert_eq!(CriticalityClass::Class4.number(), 4);
}

#[test]
fn severity_bands() {
    // Stoessel's three-level bands (from memory): < 50 K low, 50–200 K medium, > 200 K high.
    assert_eq!(severity_from_adiabatic_rise(-10.0), Severity::Low);
    assert_eq!(severity_from_adiabatic_rise(49.9), Severity::Low);
    assert_eq!(severity_from_adiabatic_rise(50.0), Severity::Medium);
    assert_eq!(severity_from_adiabatic_rise(200.0), Severity::Medium);
    assert_eq!(severity_from_adiabatic_rise(200.1), Severity::High);
}

#[test]
fn molar_volume_is_codata() {
    // CODATA 2018: molar volume of ideal gas (273.15 K, 101.325 kPa) = 22.413 969 54... × 10⁻³ m³/mol
    // (the digits shown; the exact value follows from R).
    assert!(
        close(MOLAR_VOLUME_STP_M3_PER_MOL, 22.413_969_54e-3, 1e-11),
        "{MOLAR_VOLUME_STP_M3_PER_MOL}"
    );
}

#[test]
fn heat_at_process_temperature_matches_cantera() {
    // ΔrH°(600 K) of N2 + 3 H2 -> 2 NH3 = −108.990... kJ/mol: worker/engine/tests/reference/
    // cantera_reactions.tsv (Cantera 3.2.0 on the NASA TM-4513 polynomials).
    let want_dh = cantera_delta_h("ammonia_synthesis", 600.0);
    let s = screen("N2(g) + 3 H2(g) -> 2 NH3(g)");
    let c = ProcessConditions {
        process_temperature_k: Some(600.0),
        ..Default::default()
    };
    let p = evaluate(&s, &c).unwrap();
    assert!(
        close(p.heat.heat_kj_per_mol, -want_dh, 0.1),
        "{} vs {}",
        p.heat.heat_kj_per_mol,
        -want_dh
    );
    assert!(close(p.equilibrium.point.delta_h_kj_per_mol, want_dh, 0.1));
    assert_eq!(p.equilibrium.k_trend, KTrend::FallsWithTemperature);
}

fn cantera_delta_h(id: &str, t: f64) -> f64 {
    let text = include_str!("reference/cantera_reactions.tsv");
    let mut lines = text.lines().filter(|l| !l.starts_with('#') && !l.trim().is_empty());
    let header: Vec<&str> = lines.next().unwrap().split('\t').collect();
    let col = |n: &str| header.iter().position(|h| *h == n).unwrap();
    for l in lines {
        let f: Vec<&str> = l.split('\t').collect();
        if f[col("id")] == id && f[col("temperature_k")].parse::<f64>().unwrap() == t {
            return f[col("delta_h_kj_per_mol")].parse().unwrap();
        }
    }
    panic!("no row {id} at {t} K")
}

#[test]
fn end_to_end_with_defaults_lists_every_assumption() {
    let s = screen("C2H4(g) + H2(g) -> C2H6(g)");
    let p = evaluate(&s, &ProcessConditions::default()).unwrap();
    let assumed = p.assumed.join("\n");
    for field in [
        "process_temperature_k",
        "pressure_bar",
        "scale",
        "reaction_mass_kg",
        "cp_kj_per_kg_k",
        "operation",
    ] {
        assert!(assumed.contains(field), "{field} not listed in {assumed}");
    }
    // The safety temperatures are never defaulted.
    match &p.criticality {
        Assessment::NotAssessed { missing, .. } => {
            assert_eq!(missing, &vec!["mtt_k", "t_d24_k (or dsc_onset_k)"]);
        }
        other => panic!("{other:?}"),
    }
    assert!(matches!(p.cooling, Assessment::NotAssessed { .. }));
    assert_eq!(p.caution, CAUTION);
    // Default scale 1 kmol; default mass = reactants' mass = 1000 mol × 30.070 g/mol (C2H4 + H2
    // = C2H6, IUPAC 2021 weights: 2·12.011 + 6·1.008 = 30.070).
    assert!(close(p.conditions.reaction_mol, 1000.0, 0.0));
    assert!(
        close(p.conditions.reaction_mass_kg, 30.07, 0.01),
        "{}",
        p.conditions.reaction_mass_kg
    );
    let q = p.heat.heat_kj_per_mol;
    assert!(close(p.heat.heat_kj_per_batch, q * 1000.0, 1e-6));
    assert!(close(
        p.heat.adiabatic_rise_k,
        q * 1000.0 / (p.conditions.reaction_mass_kg * 1.8),
        1e-9
    ));
    // Gas consumed: Δn = −1 per mole of reaction.
    assert_eq!(p.gas.delta_n_gas_per_mol, -1.0);
    assert!(close(p.gas.gas_m3_at_stp, -1000.0 * 22.413_969_54e-3, 1e-8));
}

#[test]
fn scale_in_kg_of_product_and_gas_volumes() {
    // CaCO3(s) -> CaO(s) + CO2(g): 44.009 kg of CO2 is 1000 mol of reaction (M(CO2) = 12.011 +
    // 2·15.999 = 44.009 g/mol, IUPAC 2021 abridged weights).
    let s = screen("CaCO3(s) -> CaO(s) + CO2(g)");
    let c = ProcessConditions {
        process_temperature_k: Some(1100.0),
        pressure_bar: Some(1.0),
        scale: Some(Scale::KgOfProduct {
            species: "CO2(g)".into(),
            kg: 44.009,
        }),
        ..Default::default()
    };
    let p = evaluate(&s, &c).unwrap();
    assert!(close(p.conditions.reaction_mol, 1000.0, 1e-6), "{}", p.conditions.reaction_mol);
    assert_eq!(p.gas.delta_n_gas_per_mol, 1.0);
    assert!(close(p.gas.gas_m3_at_stp, 22.413_969_54, 1e-6));
    // Ideal gas at 1100 K and 1 bar: n R T / P.
    assert!(close(p.gas.gas_m3_at_process, 1000.0 * R * 1100.0 / 1e5, 1e-9));
    // Endothermic: heat is negative, no adiabatic rise.
    assert!(p.heat.heat_kj_per_mol < 0.0);
    assert_eq!(p.heat.mtsr_k, 1100.0);
    assert_eq!(p.equilibrium.k_trend, KTrend::RisesWithTemperature);
    // A product that is not in the reaction is an error naming the products.
    let bad = ProcessConditions {
        scale: Some(Scale::KgOfProduct {
            species: "CO(g)".into(),
            kg: 1.0,
        }),
        ..Default::default()
    };
    match evaluate(&s, &bad) {
        Err(ProcessError::UnknownProduct { products, .. }) => {
            assert_eq!(products, vec!["CaO(s)", "CO2(g)"])
        }
        other => panic!("{other:?}"),
    }
}

#[test]
fn criticality_from_a_dsc_onset_with_the_default_margin() {
    let s = screen("2 H2(g) + O2(g) -> 2 H2O(g)");
    let c = ProcessConditions {
        process_temperature_k: Some(400.0),
        mtt_k: Some(450.0),
        dsc_onset_k: Some(600.0),
        reaction_mass_kg: Some(50_000.0),
        cp_kj_per_kg_k: Some(2.0),
        scale: Some(Scale::MolOfReaction(100.0)),
        ..Default::default()
    };
    let p = evaluate(&s, &c).unwrap();
    assert!(p.assumed.iter().any(|a| a.starts_with("dsc_margin_k = 100")), "{:?}", p.assumed);
    assert_eq!(p.conditions.t_d24_k, Some(500.0));
    let crit = p.criticality.value().expect("assessed");
    // ΔT_ad = 100 mol × ~486 kJ/mol / (50 000 kg × 2.0) ≈ 0.49 K: MTSR ≈ 400.5 K < MTT < T_D24.
    assert_eq!(crit.class, CriticalityClass::Class1);
    assert!(close(crit.mtsr_k, 400.0 + p.heat.adiabatic_rise_k, 1e-9));
    // A given T_D24 wins over the onset; a margin of 0 uses the onset itself.
    let c2 = ProcessConditions {
        t_d24_k: Some(420.0),
        dsc_margin_k: Some(0.0),
        ..c.clone()
    };
    let p2 = evaluate(&s, &c2).unwrap();
    assert_eq!(p2.conditions.t_d24_k, Some(420.0));
    assert_eq!(p2.criticality.value().unwrap().class, CriticalityClass::Class2);
}

#[test]
fn semi_batch_accumulation_and_cooling_capacity() {
    let s = screen("2 H2(g) + O2(g) -> 2 H2O(g)");
    let c = ProcessConditions {
        process_temperature_k: Some(350.0),
        operation: Some(Operation::SemiBatch),
        accumulation_fraction: Some(0.25),
        dosing_time_h: Some(2.0),
        ua_w_per_k: Some(2000.0),
        coolant_temperature_k: Some(300.0),
        reaction_mass_kg: Some(5000.0),
        cp_kj_per_kg_k: Some(2.0),
        scale: Some(Scale::MolOfReaction(1000.0)),
        ..Default::default()
    };
    let p = evaluate(&s, &c).unwrap();
    assert!(close(p.heat.mtsr_k, 350.0 + 0.25 * p.heat.adiabatic_rise_k, 1e-9));
    let cool = p.cooling.value().expect("assessed");
    // Rate = Q_batch / 7200 s; capacity = 2000 W/K × 50 K = 100 kW.
    assert!(close(cool.heat_release_kw, p.heat.heat_kj_per_batch / 7200.0, 1e-9));
    assert!(close(cool.cooling_capacity_kw, 100.0, 1e-12));
    assert!(close(cool.margin_kw, 100.0 - cool.heat_release_kw, 1e-9));
    // ILLUSTRATIVE: 720 000 kJ over 2 h is 100 kW; against 100 kW of cooling the ratio is 1.
    let k = cooling_capacity_check(720_000.0, 2.0, 2000.0, 350.0, 300.0);
    assert!(close(k.heat_release_kw, 100.0, 1e-12) && close(k.release_to_capacity.unwrap(), 1.0, 1e-12));
    // Coolant at or above the process temperature: no capacity, no ratio.
    assert_eq!(cooling_capacity_check(1.0, 1.0, 2000.0, 300.0, 300.0).release_to_capacity, None);
}

#[test]
fn batch_defaults_merge_under_case_values() {
    let batch = ProcessConditions {
        process_temperature_k: Some(celsius_to_kelvin(60.0)),
        cp_kj_per_kg_k: Some(1.9),
        dsc_onset_k: Some(500.0),
        ..Default::default()
    };
    let case = ProcessConditions {
        process_temperature_k: Some(330.0),
        t_d24_k: Some(410.0),
        ..Default::default()
    };
    let m = case.with_defaults(&batch);
    assert_eq!(m.process_temperature_k, Some(330.0));
    assert_eq!(m.cp_kj_per_kg_k, Some(1.9));
    // The case's T_D24 keeps the batch's DSC onset out.
    assert_eq!(m.t_d24_k, Some(410.0));
    assert_eq!(m.dsc_onset_k, None);
    let plain = ProcessConditions::default().with_defaults(&batch);
    assert_eq!(plain.dsc_onset_k, Some(500.0));
}

#[test]
fn invalid_conditions_name_the_field() {
    let s = screen("C2H4(g) + H2(g) -> C2H6(g)");
    for (c, field) in [
        (
            ProcessConditions {
                accumulation_fraction: Some(1.5),
                ..Default::default()
            },
            "accumulation_fraction",
        ),
        (
            ProcessConditions {
                pressure_bar: Some(0.0),
                ..Default::default()
            },
            "pressure_bar",
        ),
        (
            ProcessConditions {
                process_temperature_k: Some(f64::NAN),
                ..Default::default()
            },
            "process_temperature_k",
        ),
        (
            ProcessConditions {
                scale: Some(Scale::MolOfReaction(-1.0)),
                ..Default::default()
            },
            "scale_mol",
        ),
        (
            ProcessConditions {
                dsc_onset_k: Some(400.0),
                dsc_margin_k: Some(450.0),
                ..Default::default()
            },
            "dsc_margin_k",
        ),
    ] {
        match evaluate(&s, &c) {
            Err(ProcessError::Invalid { field: f, .. }) => assert_eq!(f, field),
            other => panic!("{field}: {other:?}"),
        }
    }
}

#[test]
fn equilibrium_conversion_special_cases() {
    // All condensed (thermite): K ≫ 1 and no gas, so the reaction goes to completion.
    let s = screen("2 Al(s) + Fe2O3(s) -> Al2O3(s) + 2 Fe(s)");
    let p = evaluate(
        &s,
        &ProcessConditions {
            process_temperature_k: Some(600.0),
            ..Default::default()
        },
    )
    .unwrap();
    let c = p.equilibrium.conversion.value().expect("assessed");
    assert_eq!(c.conversion, 1.0);
    assert!(c.note.as_deref().unwrap_or("").contains("completion"));
    // CaCO3 at 800 K, 1 bar: K = p(CO2)/p° ≪ 1 and, with no inert, x(CO2) = 1 at any extent, so
    // it does not proceed; at 1300 K (above ΔrG° = 0 near 1170 K) it goes to completion.
    let s = screen("CaCO3(s) -> CaO(s) + CO2(g)");
    let at = |t: f64, inert: f64| {
        let c = ProcessConditions {
            process_temperature_k: Some(t),
            pressure_bar: Some(1.0),
            inert_gas_mol_per_mol_reaction: Some(inert),
            ..Default::default()
        };
        evaluate(&s, &c).unwrap().equilibrium.conversion.value().unwrap().conversion
    };
    assert_eq!(at(800.0, 0.0), 0.0);
    assert_eq!(at(1300.0, 0.0), 1.0);
    // With 10 mol of inert per mole: p(CO2)/p° = ξ/(ξ + 10) = K, so ξ = 10K/(1 − K).
    let k = 10f64.powf(thermosieve_engine::process::point_at(&s, 1000.0).log10_k);
    let want = 10.0 * k / (1.0 - k);
    assert!(close(at(1000.0, 10.0), want, 1e-9), "{} vs {want}", at(1000.0, 10.0));
    assert!(
        s.delta_g_zero_k.is_some_and(|t| (1100.0..1250.0).contains(&t)),
        "{:?}",
        s.delta_g_zero_k
    );
}

#[test]
fn aqueous_species_are_not_assessed_for_conversion() {
    let mut sc = Screener::new(species::bundled(), TemperatureGrid::default_process());
    // ILLUSTRATIVE values for a supplied aqueous species (only the phase matters here).
    let formula = parse_species("NaCl", 0).unwrap().formula.unwrap();
    sc.supply(
        "NaCl(aq)",
        SuppliedSpecies {
            formula,
            phase: Phase::Aqueous,
            dhf_kj_per_mol: -407.0,
            s_j_per_mol_k: 115.0,
            cp_j_per_mol_k: Some(-90.0),
            t_min_k: 273.15,
            t_max_k: 373.15,
            dhf_uncertainty_kj_per_mol: None,
        },
    );
    let s = sc.screen("NaCl(s) -> NaCl(aq)").unwrap();
    let p = evaluate(&s, &ProcessConditions::default()).unwrap();
    match &p.equilibrium.conversion {
        Assessment::NotAssessed { reason, missing } => {
            assert!(reason.contains("aqueous"), "{reason}");
            assert!(missing.is_empty());
        }
        other => panic!("{other:?}"),
    }
}

#[test]
fn extrapolation_and_phase_changes_are_flagged() {
    // Liquid water at 450 K and 1 bar is past its boiling point.
    let s = screen("2 H2(g) + O2(g) -> 2 H2O(l)");
    let p = evaluate(
        &s,
        &ProcessConditions {
            process_temperature_k: Some(450.0),
            ..Default::default()
        },
    )
    .unwrap();
    assert!(!p.heat.in_valid_range);
    assert!(p.notes.iter().any(|n| n.contains("H2O(l)")), "{:?}", p.notes);
    let ok = evaluate(
        &s,
        &ProcessConditions {
            process_temperature_k: Some(330.0),
            ..Default::default()
        },
    )
    .unwrap();
    assert!(ok.heat.in_valid_range, "{:?}", ok.notes);
    assert!(ok.equilibrium.conversion.value().is_some_and(|c| c.conversion > 0.999_999));
}

#[test]
fn inputs_beyond_any_plant_give_an_error_never_an_infinite_result() {
    // No physical data needed: any finite input that overflows a result must be refused by name.
    let s = screen("CO(g) + 0.5 O2(g) -> CO2(g)");
    // m·c_p underflows to 0: ΔT_ad = Q/(m·c_p) would be infinite.
    let tiny_cp = ProcessConditions {
        cp_kj_per_kg_k: Some(1e-300),
        reaction_mass_kg: Some(1e-300),
        ..ProcessConditions::default()
    };
    match evaluate(&s, &tiny_cp) {
        Err(ProcessError::NonFinite { quantity, value }) => {
            assert_eq!(quantity, "adiabatic_rise_k");
            assert!(value.is_infinite());
        }
        other => panic!("{other:?}"),
    }
    let huge_scale = ProcessConditions {
        scale: Some(Scale::MolOfReaction(1e308)),
        ..ProcessConditions::default()
    };
    let e = evaluate(&s, &huge_scale).unwrap_err();
    assert!(matches!(e, ProcessError::NonFinite { .. }), "{e:?}");
    assert!(e.to_string().contains("outside any physical range"), "{e}");
}
