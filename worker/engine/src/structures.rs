//! SMILES species in equations: which data a structure resolves to.
//!
//! Order, after values supplied with the request (the screener checks those first):
//! 1. a bundled NASA record with the same structure (canonical key), in the phase asked for;
//! 2. an ion pair (`[Na+].[OH-]`): the salt's record by formula (a salt's formula is its identity);
//! 3. a Joback & Reid estimate from the structure (see [`crate::joback`]); a liquid asked for
//!    where the table holds only the gas is the tabulated gas with an estimated vaporization.
//!
//! The bundled structures are `data/structures.tsv`, written by `scripts/gen_structures.py`:
//! NASA names with a SMILES each, checked there with RDKit (its formula equals the record's
//! composition); the engine indexes them by its own canonical key when first used.

use crate::elements::Z;
use crate::formula::{Phase, SpeciesSpec};
use crate::joback::{self, Estimate};
use crate::names;
use crate::smiles::Molecule;
use crate::species::{Origin, ResolveError, Resolved, Table, T_REF_K};
use std::collections::HashMap;
use std::sync::OnceLock;

/// The phase a SMILES species takes when the case does not say (a SMILES carries no phase).
#[derive(Clone, Copy, Debug, PartialEq, Eq, Hash, Default)]
pub enum DefaultPhase {
    Gas,
    Liquid,
    Solid,
    /// The stable phase at 298.15 K and 1 bar, as for untagged formulas.
    #[default]
    Standard,
}

impl DefaultPhase {
    /// `gas`, `liquid`, `solid` or `standard` (also `g`, `l`, `s`).
    pub fn parse(s: &str) -> Option<DefaultPhase> {
        Some(match s.trim().to_ascii_lowercase().as_str() {
            "gas" | "g" => DefaultPhase::Gas,
            "liquid" | "l" => DefaultPhase::Liquid,
            "solid" | "s" => DefaultPhase::Solid,
            "standard" | "" => DefaultPhase::Standard,
            _ => return None,
        })
    }

    pub fn phase(self) -> Option<Phase> {
        match self {
            DefaultPhase::Gas => Some(Phase::Gas),
            DefaultPhase::Liquid => Some(Phase::Liquid),
            DefaultPhase::Solid => Some(Phase::Solid),
            DefaultPhase::Standard => None,
        }
    }

    /// The phase tag of a species written by name, as a default phase. Callers refuse an aqueous
    /// species before asking (no aqueous data is bundled); it maps to `Standard` only so the
    /// function is total.
    pub fn of(phase: Phase) -> DefaultPhase {
        match phase {
            Phase::Gas => DefaultPhase::Gas,
            Phase::Liquid => DefaultPhase::Liquid,
            Phase::Solid => DefaultPhase::Solid,
            Phase::Aqueous => DefaultPhase::Standard,
        }
    }

    pub fn name(self) -> &'static str {
        match self {
            DefaultPhase::Gas => "gas",
            DefaultPhase::Liquid => "liquid",
            DefaultPhase::Solid => "solid",
            DefaultPhase::Standard => "standard",
        }
    }
}

/// Bundled structures of table records, indexed by canonical key.
pub struct Structures {
    by_key: HashMap<String, Vec<String>>,
    /// Base names (as in the table) that have a structure: (canonical key, SMILES).
    named: HashMap<String, (String, String)>,
    /// Header comment of the data file.
    pub provenance: String,
}

const STRUCTURES_TSV: &str = include_str!("../data/structures.tsv");

/// The bundled structures, parsed on first use.
pub fn bundled() -> &'static Structures {
    static S: OnceLock<Structures> = OnceLock::new();
    S.get_or_init(|| Structures::from_tsv(STRUCTURES_TSV).unwrap_or_else(|e| panic!("{e}")))
}

impl Structures {
    /// Parse the `structures.tsv` layout: `name`, `smiles` columns (others are checks).
    ///
    /// # Errors
    /// [`crate::DataError`] naming the line for a row that does not parse.
    pub fn from_tsv(tsv: &str) -> Result<Structures, crate::tsv::DataError> {
        let table = crate::tsv::read(tsv, "structures.tsv");
        let provenance = table.comments.clone();
        let mut by_key: HashMap<String, Vec<String>> = HashMap::new();
        let mut named = HashMap::new();
        for row in table.rows() {
            let col = |name: &str| row.get(name);
            let (name, smiles) = (col("name")?, col("smiles")?);
            let m = Molecule::parse(smiles, 0).map_err(|e| row.error(&e.to_string()))?;
            let key = m.canonical_key();
            by_key.entry(key.clone()).or_default().push(name.to_string());
            named.insert(name.to_string(), (key, smiles.to_string()));
        }
        Ok(Structures { by_key, named, provenance })
    }

    /// Table base names whose structure has this canonical key.
    pub fn names_for(&self, key: &str) -> &[String] {
        self.by_key.get(key).map_or(&[], Vec::as_slice)
    }

    /// Canonical key of a table base name, when it has a bundled structure.
    pub fn key_of(&self, name: &str) -> Option<&str> {
        self.named.get(name).map(|(k, _)| k.as_str())
    }

    /// SMILES of a table base name, when it has a bundled structure.
    pub fn smiles_of(&self, name: &str) -> Option<&str> {
        self.named.get(name).map(|(_, s)| s.as_str())
    }

    pub fn len(&self) -> usize {
        self.named.len()
    }

    pub fn is_empty(&self) -> bool {
        self.named.is_empty()
    }
}

/// Records holding each element's standard reference state, and atoms per formula unit: the
/// entropies S°(298.15 K) that turn a Joback ΔfG° into S°.
const REFERENCE_STATES: [(Z, &str, f64); 9] = [
    (6, "C(gr)", 1.0),
    (1, "H2", 2.0),
    (8, "O2", 2.0),
    (7, "N2", 2.0),
    (16, "S(cr1)", 1.0),
    (17, "CL2", 2.0),
    (9, "F2", 2.0),
    (35, "Br2(L)", 2.0),
    (53, "I2(cr)", 2.0),
];

/// S°(298.15 K) per atom of element `z` in its reference state, J/(mol·K), from the table's
/// records (C(gr), H2(g), O2(g), N2(g), S(cr1) rhombic, Cl2(g), F2(g), Br2(l), I2(cr)).
pub fn element_entropy(table: &Table, z: Z) -> Option<f64> {
    let &(_, record, atoms) = REFERENCE_STATES.iter().find(|r| r.0 == z)?;
    let r = table.records.iter().find(|r| r.name == record)?;
    let seg = r.segments.iter().find(|s| s.covers(T_REF_K))?;
    let (_, s_r) = seg.h_rt_s_r(T_REF_K, T_REF_K.ln());
    Some(s_r * crate::species::R / atoms)
}

/// A SMILES species resolved, with its canonical key (the screener merges species by it).
pub struct SmilesSpecies {
    pub resolved: Resolved,
    pub key: String,
}

/// Why a SMILES species could not be resolved.
#[derive(Clone, Debug, PartialEq, thiserror::Error)]
pub enum SmilesSpeciesError {
    #[error("{0}")]
    Syntax(#[from] crate::smiles::SmilesError),
    #[error("{0}")]
    Resolve(#[from] ResolveError),
}

/// Resolve one SMILES species (bundled record by structure, a salt by its formula, or an
/// estimate). Results name it by its formula where that names one compound (H2O, CO2), else by
/// the name table's preferred name, else by the SMILES as written.
///
/// # Errors
/// [`SmilesSpeciesError`] when the SMILES does not parse (with its byte position) or the species
/// has no data and cannot be estimated.
pub fn resolve_smiles(
    table: &Table,
    structures: &Structures,
    smiles: &str,
    position: usize,
    phase: DefaultPhase,
) -> Result<SmilesSpecies, SmilesSpeciesError> {
    let m = Molecule::parse(smiles, position)?;
    let key = m.canonical_key();
    let formula = m.formula();
    let hill = formula.hill();
    let known = names::bundled();
    let named = || known.by_structure(&key, &hill).map(|c| c.name().to_string());
    let mut r = if smiles.contains('.') && smiles.split('.').any(|c| crate::equation::smiles_charge(c) != 0) {
        let (mut r, base) = salt(table, &formula, smiles, phase)?;
        // A salt is shown by its formula as the table writes it (NASA spells Cl and Al in capitals).
        r.label = format!("{}({})", base.replace("CL", "Cl").replace("AL", "Al"), r.phase.tag());
        return Ok(SmilesSpecies { resolved: r, key });
    } else {
        by_structure(table, structures, &m, &key, smiles, phase)?
    };
    // Results name a species by its formula where that names one compound (H2, CO2, HCl), else by
    // the name table's name, else by the SMILES as written: never by how it was spelled.
    // Formulas read well for inorganic molecules and the smallest carbon ones (CO2, CH4, COCl2).
    let count = |z: u8| formula.atoms.iter().find(|a| a.0 == z).map_or(0, |a| a.1);
    let small = count(6) == 0 || (count(6) == 1 && (count(1) == 0 || m.heavy_atom_count() == 1));
    // The table's own formula for a tabulated small molecule (H2SO4, N2H4, COCl2), as chemists
    // write them; Hill-like order otherwise.
    let record_formula = r.origin.iter().find_map(|o| match o {
        Origin::Tabulated { record, .. } => table
            .records
            .iter()
            .find(|x| &x.name == record)
            .map(|x| x.base.as_str())
            .filter(|b| !b.contains(',') && !b.contains('('))
            .map(|b| b.replace("CL", "Cl").replace("AL", "Al")),
        _ => None,
    });
    let formula_label = (small && known.with_formula(&hill).len() < 2).then(|| record_formula.unwrap_or_else(|| formula_text(&formula)));
    let shown = (if formula.charge == 0 { formula_label } else { None })
        .or_else(named)
        .unwrap_or_else(|| smiles.to_string());
    r.label = format!("{shown}({})", r.phase.tag());
    Ok(SmilesSpecies { resolved: r, key })
}

/// A formula as chemists write small molecules: `H2O`, `CO2`, `HCl`, `NaOH` (Hill order, but
/// hydrogen first for binary hydrides of the halogens and chalcogens, and metals first in salts).
fn formula_text(f: &crate::formula::Formula) -> String {
    use crate::elements;
    let mut parts: Vec<(&str, u32)> = f.atoms.iter().map(|&(z, n)| (elements::symbol(z), n)).collect();
    let has_carbon = parts.iter().any(|p| p.0 == "C");
    let nh3_like = parts.len() == 2 && parts.iter().any(|p| p.0 == "H");
    // Electropositive first: H before halogens/chalcogens (HCl, H2O), metals before all.
    let rank = |s: &str| -> u8 {
        match s {
            "C" if has_carbon => 0,
            "H" if has_carbon => 1,
            "Li" | "Na" | "K" | "Mg" | "Ca" | "Ba" | "Cs" | "Rb" | "Sr" | "Al" | "Fe" | "Cu" | "Zn" => 2,
            "N" if nh3_like => 4,
            "H" => 3,
            _ => 5,
        }
    };
    parts.sort_by_key(|p| (rank(p.0), p.0));
    let mut out = String::new();
    for (s, n) in parts {
        out.push_str(s);
        if n != 1 {
            out.push_str(&n.to_string());
        }
    }
    out
}

/// An ion pair written in a SMILES (`[Na+].[OH-]`) is the salt: the bundled record of its
/// formula in the state asked (the stable one at 298.15 K for `standard`), never gas-phase ions.
fn salt(table: &Table, formula: &crate::formula::Formula, shown: &str, phase: DefaultPhase) -> Result<(Resolved, String), ResolveError> {
    let hill = formula.hill();
    let mut bases: Vec<&str> = table.by_formula(&hill).iter().map(|&k| table.records[k].base.as_str()).collect();
    bases.sort_unstable_by_key(|b| b.to_ascii_uppercase());
    bases.dedup_by(|a, b| a.eq_ignore_ascii_case(b));
    // NASA names the gas `NAOH`-style in capitals and the condensed phases in mixed case: one salt.
    let Some(base) = bases
        .iter()
        .find(|b| table.by_name(b, 0).iter().any(|&k| table.records[k].phase != Phase::Gas))
        .or(bases.first())
    else {
        return Err(ResolveError::UnknownSalt {
            species: shown.to_string(),
            formula: hill,
        });
    };
    let spec = SpeciesSpec {
        text: base.to_string(),
        formula: Some(formula.clone()),
        phase: phase.phase(),
        form: None,
    };
    let mut r = table.resolve(&spec)?;
    r.notes.retain(|n| !n.contains("has no phase tag"));
    r.notes.push(format!(
        "{shown}: an ion pair, taken as the salt {base} ({}); aqueous ions are not bundled",
        r.phase.tag()
    ));
    Ok((r, base.to_string()))
}

/// A molecule: the bundled record with the same structure, else an estimate from the structure.
/// A record whose structure is unknown or different is never used, even with the same formula.
fn by_structure(
    table: &Table,
    structures: &Structures,
    m: &Molecule,
    key: &str,
    smiles: &str,
    phase: DefaultPhase,
) -> Result<Resolved, ResolveError> {
    let formula = m.formula();
    let mut notes = Vec::new();
    let spec_for = |name: &str, phase: Option<Phase>| SpeciesSpec {
        text: name.to_string(),
        formula: Some(formula.clone()),
        phase,
        form: None,
    };
    let names = structures.names_for(key);
    // Joback groups with the name table's measured melting and boiling points where it has them;
    // made once, when first needed.
    let estimated = std::cell::OnceCell::new();
    let estimate = || {
        estimated.get_or_init(|| {
            Estimate::of(m).map(|e| {
                let known = names::bundled().by_structure(key, &formula.hill());
                e.with_measured(known.and_then(|c| c.melting_k), known.and_then(|c| c.boiling_k))
            })
        })
    };
    for name in names {
        match table.resolve(&spec_for(name, phase.phase())) {
            Ok(mut r) => {
                // A table with only the gas of a compound that is condensed at 298.15 K: for the
                // standard state, the liquid or solid from the gas and an estimated vaporization
                // (and fusion).
                let condensed_listed = || {
                    names.iter().any(|n| {
                        table.resolve(&spec_for(n, Some(Phase::Liquid))).is_ok() || table.resolve(&spec_for(n, Some(Phase::Solid))).is_ok()
                    })
                };
                if phase == DefaultPhase::Standard && r.phase == Phase::Gas && !condensed_listed() {
                    if let Ok(e) = estimate() {
                        let (state, why) = e.state_at_298();
                        if state != Phase::Gas {
                            return condensed_from_gas(&r, e, name, state, &why);
                        }
                    }
                }
                r.notes.retain(|n| !n.contains("has no phase tag"));
                r.notes.push(format!("{smiles}: bundled record {name} by structure"));
                return Ok(r);
            }
            Err(ResolveError::NotFound { .. }) => {}
            Err(e) => return Err(e),
        }
    }
    // A solid-phase case keeps species that melt below 298.15 K (solvents, reagents) in their
    // stable state, as a liquid-phase case keeps permanent gases gaseous.
    let mut phase = phase;
    if phase == DefaultPhase::Solid {
        if let Ok(e) = estimate() {
            if let Some(tm) = e.tm_k.filter(|&t| t < T_REF_K) {
                notes.push(format!(
                    "{smiles}: asked as a solid, but it melts at {tm:.0} K ({}): its stable state at 298.15 K is used",
                    e.tm_source
                ));
                phase = DefaultPhase::Standard;
                if let Some(r) = names.iter().find_map(|n| table.resolve(&spec_for(n, None)).ok()) {
                    let mut r = r;
                    r.notes.retain(|n| !n.contains("has no phase tag"));
                    r.notes.append(&mut notes);
                    return Ok(r);
                }
            }
        }
    }
    if let Some(asked @ (Phase::Liquid | Phase::Solid)) = phase.phase() {
        let from = |p: Phase| names.iter().find_map(|n| table.resolve(&spec_for(n, Some(p))).ok().map(|r| (n, r)));
        if let Some((name, tabulated)) = from(Phase::Gas).or_else(|| from(Phase::Liquid)) {
            // The condensed phase asked for, from the tabulated gas, where the melting and
            // boiling points say it can be one at 298.15 K; a permanent gas (H2, CO2, ethylene)
            // in a liquid-phase case stays a gas, with a note.
            return match estimate() {
                Ok(e) if e.tb_k > T_REF_K && tabulated.phase == Phase::Gas => condensed_from_gas(&tabulated, e, name, asked, "asked for"),
                _ => Ok(fallback(tabulated, smiles, phase)),
            };
        }
    }
    if let Some(name) = names.first() {
        notes.push(format!("{smiles}: the bundled table has {name} but not as {}", phase.name()));
    }
    // Estimate.
    let shown = format!("{smiles}({})", phase.phase().map_or("standard", |p| p.tag()));
    let e = estimate().as_ref().map_err(|e| ResolveError::NotEstimable {
        species: shown.clone(),
        reason: e.to_string(),
    })?;
    let entropy = |z: Z| element_entropy(table, z);
    let mut r = e
        .resolved(smiles, &formula, phase.phase(), &entropy)
        .map_err(|e| ResolveError::NotEstimable {
            species: shown,
            reason: e.to_string(),
        })?;
    notes.append(&mut r.notes);
    r.notes = notes;
    Ok(r)
}

/// A tabulated species used in another phase than the case's default, saying so.
fn fallback(mut r: Resolved, smiles: &str, phase: DefaultPhase) -> Resolved {
    r.notes.retain(|n| !n.contains("has no phase tag"));
    r.notes.push(format!(
        "{smiles}: the default phase is {} but the bundled table has no {} data for it; {} is used",
        phase.name(),
        phase.name(),
        r.label
    ));
    r
}

/// The liquid or solid from a tabulated gas: minus an estimated vaporization at 298.15 K, and
/// for a solid minus an estimated fusion. `why` says why this state (for the note).
fn condensed_from_gas(gas: &Resolved, e: &Estimate, name: &str, state: Phase, why: &str) -> Result<Resolved, ResolveError> {
    let label = format!("{name}({})", state.tag());
    let err = |err: joback::JobackError| ResolveError::NotEstimable {
        species: label.clone(),
        reason: err.to_string(),
    };
    let v = e.vaporization().map_err(err)?;
    let ln_t = T_REF_K.ln();
    let st = gas.state(T_REF_K, ln_t);
    let seg = gas
        .segments
        .iter()
        .find(|s| s.covers(T_REF_K))
        .or(gas.segments.first())
        .expect("a resolved species has segments");
    let cp_gas = seg.cp_over_r(T_REF_K) * crate::species::R;
    let (liquid, cp_l) = v.liquid_segment(st.h_j_per_mol / 1000.0, st.s_j_per_mol_k, cp_gas);
    let mut origin = gas.origin.clone();
    origin.push(Origin::Estimated {
        method: format!(
            "vaporization from {}: Watson (0.38) and Clausius–Clapeyron from Tb ({}), Rowlinson–Bondi liquid Cp",
            joback::METHOD,
            e.tb_source
        ),
    });
    let mut sigma2 = gas.dhf_uncertainty_kj_per_mol.unwrap_or(0.0).powi(2) + joback::DHVAP_SIGMA_KJ_PER_MOL.powi(2);
    let mut note = format!(
        "{label}: the bundled table has only the gas; {why}; liquid = gas − estimated vaporization at 298.15 K (ΔvapH {:.1} kJ/mol, p_sat {:.3} bar, Tb {:.0} K, {}), liquid Cp {cp_l:.0} J/mol/K held constant",
        v.dhvap_298_kj_per_mol, v.p_sat_298_bar, e.tb_k, e.tb_source
    );
    let (segment, rivals) = if state == Phase::Solid {
        let f = e.fusion().map_err(err)?;
        origin.push(Origin::Estimated {
            method: format!("enthalpy of fusion from {} at Tm ({})", joback::METHOD, e.tm_source),
        });
        sigma2 += f.sigma_kj_per_mol().powi(2);
        note.push_str(&format!(
            "; solid = liquid − ΔfusH {:.1} kJ/mol (Tm {:.0} K), solid Cp taken as the liquid's",
            f.dhfus_kj_per_mol, f.tm_k
        ));
        if let Some(n) = f.zwitterion_note() {
            note.push_str("; ");
            note.push_str(&n);
        }
        let mut rivals = gas.segments.clone();
        rivals.push(liquid);
        (f.solid_segment(&liquid, cp_l), rivals)
    } else {
        (liquid, gas.segments.clone())
    };
    Ok(Resolved {
        label,
        formula: gas.formula.clone(),
        phase: state,
        segments: vec![segment],
        origin,
        dhf_uncertainty_kj_per_mol: Some(sigma2.sqrt()),
        sigma_basis: format!("{} combined with the estimated phase change's σ", gas.sigma_basis),
        notes: vec![note],
        rivals,
    })
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::species::bundled as table;

    fn resolve(s: &str, p: DefaultPhase) -> Resolved {
        resolve_smiles(table(), bundled(), s, 0, p)
            .unwrap_or_else(|e| panic!("{s}: {e}"))
            .resolved
    }

    fn dhf(r: &Resolved) -> f64 {
        r.state(T_REF_K, T_REF_K.ln()).h_j_per_mol / 1000.0
    }

    #[test]
    fn structures_file_parses_and_names_table_records() {
        let s = bundled();
        assert!(s.len() >= 50, "{}", s.len());
        let t = table();
        for names in s.by_key.values() {
            for n in names {
                assert!(!t.by_name(n, 0).is_empty() || n.ends_with(['+', '-']), "{n} is not a table record");
            }
        }
    }

    #[test]
    fn tabulated_records_are_found_by_structure() {
        // NASA record names from data/nasa_species.tsv.
        let r = resolve("OCC", DefaultPhase::Gas);
        assert!(
            matches!(&r.origin[0], Origin::Tabulated { record, .. } if record == "C2H5OH"),
            "{:?}",
            r.origin
        );
        let r2 = resolve("C(O)C", DefaultPhase::Gas);
        assert_eq!(r.origin, r2.origin);
        let r = resolve("COC", DefaultPhase::Gas);
        assert!(matches!(&r.origin[0], Origin::Tabulated { record, .. } if record == "CH3OCH3"));
        let r = resolve("c1ccccc1", DefaultPhase::Liquid);
        assert!(
            matches!(&r.origin[0], Origin::Tabulated { record, .. } if record == "C6H6(L)"),
            "{:?}",
            r.origin
        );
        let r = resolve("CCCC", DefaultPhase::Gas);
        assert!(matches!(&r.origin[0], Origin::Tabulated { record, .. } if record == "C4H10,n-butane"));
        let r = resolve("CC(C)C", DefaultPhase::Gas);
        assert!(matches!(&r.origin[0], Origin::Tabulated { record, .. } if record == "C4H10,isobutane"));
    }

    #[test]
    fn unknown_structures_are_estimated_with_uncertainty() {
        // Ethyl dodecanoate: every group has a Benson value; σ by benson::sigma: base 4, 0.4
        // per heavy atom (16): √(16 + 6.4²) = 7.55.
        let r = resolve("CCCCCCCCCCCC(=O)OCC", DefaultPhase::Gas);
        assert!(
            matches!(&r.origin[0], Origin::Estimated { method } if method.starts_with("Benson")),
            "{:?}",
            r.origin
        );
        assert!(
            (r.dhf_uncertainty_kj_per_mol.unwrap() - 7.55).abs() < 0.01,
            "{:?}",
            r.dhf_uncertainty_kj_per_mol
        );
        // A thioether has no Benson groups in the carried tables: Joback.
        let r = resolve("CCSCC", DefaultPhase::Gas);
        assert!(
            matches!(&r.origin[0], Origin::Estimated { method } if method.starts_with("Joback")),
            "{:?}",
            r.origin
        );
        assert!(
            r.notes.iter().any(|n| n.contains("ideal gas by Joback (no Benson group for S")),
            "{:?}",
            r.notes
        );
        let r = resolve("CC(C)(C)OC", DefaultPhase::Standard);
        assert_eq!(r.phase, Phase::Liquid, "MTBE boils at 328 K");
        assert!(resolve_smiles(table(), bundled(), "CS(=O)C", 0, DefaultPhase::Gas).is_err());
        // A solid is estimated through vaporization and Joback's enthalpy of fusion; a group
        // without a fusion value (=NH) makes it an error.
        // 4-nitrotoluene (Tm 325 K, measured) is in no bundled table.
        let s = resolve("Cc1ccc(cc1)[N+](=O)[O-]", DefaultPhase::Standard);
        assert_eq!(s.phase, Phase::Solid);
        assert!(s.notes.iter().any(|n| n.contains("ΔfusH")), "{:?}", s.notes);
        // An imine: Joback's =NH group has no fusion value.
        assert!(resolve_smiles(table(), bundled(), "CC(=N)c1ccc(O)cc1", 0, DefaultPhase::Solid).is_err());
    }

    #[test]
    fn liquid_from_tabulated_gas() {
        // Ethanol: the NASA table has only the gas (ΔfH°(g) −234.8 kJ/mol). Experimental liquid
        // ΔfH° −277.5 kJ/mol and S° 160.7 J/mol/K (NIST Chemistry WebBook, ethanol condensed
        // phase, memory); the estimated vaporization should land within 10 kJ/mol and 15 J/mol/K.
        let r = resolve("CCO", DefaultPhase::Liquid);
        assert_eq!(r.phase, Phase::Liquid);
        assert!((dhf(&r) + 277.5).abs() < 10.0, "{}", dhf(&r));
        let s = r.state(T_REF_K, T_REF_K.ln()).s_j_per_mol_k;
        assert!((s - 160.7).abs() < 15.0, "{s}");
        let std = resolve("CCO", DefaultPhase::Standard);
        assert_eq!(std.phase, Phase::Liquid);
    }

    #[test]
    fn element_entropies_from_the_table() {
        // CODATA key values (Cox, Wagman & Medvedev 1989): C(gr) 5.74, H2 130.68/2, O2 205.152/2,
        // N2 191.61/2, S(rhombic) 32.054, Cl2 223.081/2, Br2(l) 152.21/2, I2(cr) 116.14/2.
        let t = table();
        for (z, s) in [
            (6, 5.74),
            (1, 65.34),
            (8, 102.576),
            (7, 95.805),
            (16, 32.054),
            (17, 111.54),
            (35, 76.105),
            (53, 58.07),
        ] {
            let v = element_entropy(t, z).unwrap();
            assert!((v - s).abs() < 0.15, "{z}: {v}");
        }
    }
}
