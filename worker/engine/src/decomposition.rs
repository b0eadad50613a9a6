//! How much heat a species could release by decomposing, and which of its groups are known to
//! make molecules energetic.
//!
//! **Maximum heat of decomposition** at 298.15 K: Hess's law from the species to the set of
//! products its own elements can form that releases the most heat, found by a small linear
//! program (minimise Σ n_p ΔfH°_p subject to the element balance, n ≥ 0). This is the
//! "maximum heat of decomposition" criterion of the ASTM CHETAH program (criterion 1; reviewed by
//! Shanley & Melhem, J. Loss Prev. Process Ind. 8 (1995) 261): an upper bound, since real
//! decompositions stop at CO, H2, soot and other less stable products. Products, in their
//! standard states at 298.15 K from the bundled table: CO2, H2O(l), N2, HCl, HF, HBr, HI, SO2,
//! SO3, the alkali chlorides and oxides, and every element in its reference state (so the
//! program always has a solution). Water is liquid, which gives the larger heat. σ is the
//! species' own ΔfH° σ (the products are tabulated to a few tenths of a kJ/mol).
//!
//! **Energetic groups**: the rows of the UN *Recommendations on the Transport of Dangerous
//! Goods, Manual of Tests and Criteria*, Appendix 6, Table A6.1 ("chemical groups indicating
//! explosive properties in organic materials"): C–C unsaturation (acetylenes, acetylides,
//! 1,2-dienes), C–metal and N–metal, contiguous nitrogen atoms, contiguous oxygen atoms, N–O,
//! N–halogen and O–halogen bonds.

use crate::elements::Z;
use crate::formula::Formula;
use crate::smiles::Molecule;
use crate::species::{Table, T_REF_K};

/// Product records, by the table's names: the products a decomposition may form.
const PRODUCTS: [&str; 23] = [
    "CO2", "H2O(L)", "HCL", "HF", "HBr", "HI", "SO2", "SO3", "NaCL(s)", "KCL(s)", "Na2O(c)", "K2O(s)",
    // Elements in their reference states.
    "C(gr)", "H2", "O2", "N2", "S(cr1)", "CL2", "F2", "Br2(L)", "I2(cr)", "Na(cr)", "K(cr)",
];

/// The decomposition products the bundled table gives: formula and ΔfH°(298.15 K), kJ/mol.
#[derive(Clone, Debug)]
pub struct ProductSet {
    products: Vec<(&'static str, Formula, f64)>,
}

impl ProductSet {
    /// The products found in `table` (records it lacks are left out).
    pub fn from_table(table: &Table) -> ProductSet {
        let products = PRODUCTS
            .iter()
            .filter_map(|&name| {
                let r = table.records.iter().find(|r| r.name == name)?;
                let seg = r.segments.iter().find(|s| s.covers(T_REF_K))?;
                let (h_rt, _) = seg.h_rt_s_r(T_REF_K, T_REF_K.ln());
                Some((name, r.formula.clone(), h_rt * crate::species::R * T_REF_K / 1000.0))
            })
            .collect();
        ProductSet { products }
    }
}

/// The most exothermic decomposition of one species.
#[derive(Clone, Debug, PartialEq)]
pub struct Decomposition {
    /// Heat released, kJ per mol of the species (positive: exothermic).
    pub heat_kj_per_mol: f64,
    /// Heat released per kg of the species, kJ/kg (= J/g).
    pub heat_kj_per_kg: f64,
    /// σ of the heat, kJ/mol: the species' ΔfH° σ; None where that is unknown.
    pub sigma_kj_per_mol: Option<f64>,
    /// The products, mol per mol of the species, as `2 CO2 + 1.5 H2O(L) + 0.5 N2`.
    pub products: String,
}

/// Why no decomposition heat could be given.
#[derive(Clone, Debug, PartialEq, thiserror::Error)]
pub enum DecompositionError {
    #[error("an ion: decomposition heats are for neutral species")]
    Charged,
    #[error("no decomposition product holds {0}")]
    Element(String),
}

/// The maximum heat of decomposition of a species of `formula` and ΔfH°(298.15 K)
/// `dhf_kj_per_mol` (its σ `sigma`).
///
/// # Errors
/// [`DecompositionError`] for an ion, or an element no product holds.
pub fn maximum(formula: &Formula, dhf_kj_per_mol: f64, sigma: Option<f64>, set: &ProductSet) -> Result<Decomposition, DecompositionError> {
    if formula.charge != 0 {
        return Err(DecompositionError::Charged);
    }
    let elements: Vec<(Z, f64)> = formula.atoms.iter().map(|&(z, n)| (z, n as f64)).collect();
    let count = |f: &Formula, z: Z| f.atoms.iter().find(|a| a.0 == z).map_or(0.0, |a| a.1 as f64);
    // Products made only of the species' elements.
    let usable: Vec<&(&'static str, Formula, f64)> = set
        .products
        .iter()
        .filter(|(_, f, _)| f.charge == 0 && f.atoms.iter().all(|(z, _)| elements.iter().any(|e| e.0 == *z)))
        .collect();
    let m = elements.len();
    let n = usable.len();
    // A starting basis: each element's single-element product with the lowest ΔfH° (its
    // reference state, ΔfH° = 0).
    let mut basis = Vec::with_capacity(m);
    for &(z, _) in &elements {
        let j = (0..n)
            .filter(|&j| usable[j].1.atoms.len() == 1 && usable[j].1.atoms[0].0 == z)
            .min_by(|&a, &b| usable[a].2.total_cmp(&usable[b].2))
            .ok_or_else(|| DecompositionError::Element(crate::elements::symbol(z).to_string()))?;
        basis.push(j);
    }
    // Tableau: rows = elements, columns = products, last = amounts. The starting basis is
    // diagonal, so its rows are the element rows divided by the atoms per product.
    let mut t: Vec<Vec<f64>> = elements
        .iter()
        .enumerate()
        .map(|(r, &(z, b))| {
            let k = count(&usable[basis[r]].1, z);
            let mut row: Vec<f64> = usable.iter().map(|p| count(&p.1, z) / k).collect();
            row.push(b / k);
            row
        })
        .collect();
    let cost: Vec<f64> = usable.iter().map(|p| p.2).collect();
    // Simplex with Bland's rule (no cycling); a few dozen columns at most.
    for _ in 0..200 {
        let reduced = |j: usize, t: &Vec<Vec<f64>>| cost[j] - (0..m).map(|r| cost[basis[r]] * t[r][j]).sum::<f64>();
        let Some(enter) = (0..n).find(|&j| !basis.contains(&j) && reduced(j, &t) < -1e-9) else {
            break;
        };
        let leave = (0..m).filter(|&r| t[r][enter] > 1e-12).min_by(|&a, &b| {
            (t[a][n] / t[a][enter])
                .total_cmp(&(t[b][n] / t[b][enter]))
                .then(basis[a].cmp(&basis[b]))
        });
        // Bounded below by the elements' own amounts, never unbounded; stop if it were.
        let Some(leave) = leave else {
            break;
        };
        let pivot = t[leave][enter];
        for v in t[leave].iter_mut() {
            *v /= pivot;
        }
        let pivot_row = t[leave].clone();
        for (r, row) in t.iter_mut().enumerate() {
            if r != leave && row[enter] != 0.0 {
                let f = row[enter];
                for (v, p) in row.iter_mut().zip(&pivot_row) {
                    *v -= f * p;
                }
            }
        }
        basis[leave] = enter;
    }
    let mut products = Vec::new();
    let mut h_products = 0.0;
    let mut order: Vec<usize> = (0..m).collect();
    order.sort_by_key(|&r| basis[r]);
    for r in order {
        let amount = t[r][n];
        if amount > 1e-9 {
            h_products += amount * cost[basis[r]];
            let rounded = (amount * 1e4).round() / 1e4;
            products.push(format!("{rounded} {}", usable[basis[r]].0));
        }
    }
    let heat = dhf_kj_per_mol - h_products;
    Ok(Decomposition {
        heat_kj_per_mol: heat,
        heat_kj_per_kg: heat / formula.molar_mass_g_per_mol() * 1000.0,
        sigma_kj_per_mol: sigma,
        products: products.join(" + "),
    })
}

/// A row of UN Manual of Tests and Criteria, Appendix 6, Table A6.1.
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
pub enum EnergeticGroup {
    /// Acetylenes, acetylides, 1,2-dienes.
    CarbonUnsaturation,
    /// C–metal, N–metal.
    MetalBond,
    /// Azides, aliphatic azo compounds, diazonium salts, hydrazines, sulfonylhydrazides.
    ContiguousNitrogen,
    /// Peroxides, ozonides.
    ContiguousOxygen,
    /// Hydroxylamines, nitrates, nitro and nitroso compounds, N-oxides, 1,2-oxazoles.
    NitrogenOxygen,
    /// Chloramines, fluoroamines.
    NitrogenHalogen,
    /// Chlorates, perchlorates, iodosyl compounds.
    OxygenHalogen,
}

impl EnergeticGroup {
    pub fn name(self) -> &'static str {
        match self {
            EnergeticGroup::CarbonUnsaturation => "C-C unsaturation (acetylene, 1,2-diene)",
            EnergeticGroup::MetalBond => "C-metal or N-metal",
            EnergeticGroup::ContiguousNitrogen => "contiguous N (azide, azo, diazo, hydrazine)",
            EnergeticGroup::ContiguousOxygen => "contiguous O (peroxide, ozonide)",
            EnergeticGroup::NitrogenOxygen => "N-O (nitro, nitrate, nitroso, N-oxide, hydroxylamine)",
            EnergeticGroup::NitrogenHalogen => "N-halogen",
            EnergeticGroup::OxygenHalogen => "O-halogen",
        }
    }
}

fn is_metal(z: Z) -> bool {
    !matches!(z, 1 | 2 | 5..=10 | 14..=18 | 33..=36 | 52..=54 | 85 | 86)
}

fn is_halogen(z: Z) -> bool {
    matches!(z, 9 | 17 | 35 | 53)
}

/// The Table A6.1 groups present in a molecule, each once, in the table's order.
pub fn energetic_groups(m: &Molecule) -> Vec<EnergeticGroup> {
    let mut found = Vec::new();
    let mut add = |g: EnergeticGroup| {
        if !found.contains(&g) {
            found.push(g);
        }
    };
    for b in m.bonds() {
        let (x, y) = (m.atoms()[b.a].element, m.atoms()[b.b].element);
        let pair = |p: Z, q: Z| (x == p && y == q) || (x == q && y == p);
        if pair(6, 6) && b.kekule_order == 3 {
            add(EnergeticGroup::CarbonUnsaturation);
        }
        if (matches!(x, 6 | 7) && is_metal(y)) || (matches!(y, 6 | 7) && is_metal(x)) {
            add(EnergeticGroup::MetalBond);
        }
        if pair(7, 7) {
            add(EnergeticGroup::ContiguousNitrogen);
        }
        if pair(8, 8) {
            add(EnergeticGroup::ContiguousOxygen);
        }
        if pair(7, 8) {
            add(EnergeticGroup::NitrogenOxygen);
        }
        if (x == 7 && is_halogen(y)) || (y == 7 && is_halogen(x)) {
            add(EnergeticGroup::NitrogenHalogen);
        }
        if (x == 8 && is_halogen(y)) || (y == 8 && is_halogen(x)) {
            add(EnergeticGroup::OxygenHalogen);
        }
    }
    // 1,2-dienes: a carbon with two double bonds to carbons.
    for i in 0..m.atoms().len() {
        if m.atoms()[i].element == 6
            && m.neighbours(i)
                .filter(|&(w, b)| m.atoms()[w].element == 6 && m.bonds()[b].kekule_order == 2)
                .count()
                == 2
        {
            add(EnergeticGroup::CarbonUnsaturation);
        }
    }
    found.sort_by_key(|g| *g as u8);
    found
}

#[cfg(test)]
mod tests {
    use super::*;

    fn heat(formula: &str, dhf: f64) -> Decomposition {
        let set = ProductSet::from_table(crate::species::bundled());
        let f = crate::formula::parse_species(formula, 0).unwrap().formula.unwrap();
        maximum(&f, dhf, None, &set).unwrap()
    }

    /// Hess's law by hand, products' ΔfH° from the bundled NASA records (CO2 −393.51, H2O(l)
    /// −285.83, HCl(g) −92.31, SO2 −296.81, SO3 −395.77; CODATA key values, from memory, agree
    /// to 0.01), species' ΔfH° as given (exercising the method, not a species' data).
    #[test]
    fn hand_hess_sums() {
        // Nitroglycerin C3H5N3O9, ΔfH°(l) −370.0 (value for the arithmetic): 3 CO2 + 2.5 H2O(l)
        // + 1.5 N2 + 0.25 O2: 3(−393.51) + 2.5(−285.83) = −1895.1; heat = −370.0 + 1895.1 = 1525.1.
        let d = heat("C3H5N3O9", -370.0);
        assert!((d.heat_kj_per_mol - 1525.1).abs() < 0.3, "{d:?}");
        assert!(d.products.contains("CO2") && d.products.contains("O2"), "{}", d.products);
        // Nitromethane CH3NO2, ΔfH°(l) −113.1: O is short: 1.5 H2O(l) takes 1.5 O, 0.25 CO2 the
        // other 0.5, 0.75 C(gr) left: −113.1 − [1.5(−285.83) + 0.25(−393.51)] = −113.1 + 527.1 = 414.0.
        let d = heat("CH3NO2", -113.1);
        assert!((d.heat_kj_per_mol - 414.0).abs() < 0.3, "{d:?}");
        // Di-tert-butyl peroxide C8H18O2, ΔfH°(l) −380.0: its 2 O make 2 H2O(l); 5 H2 and 8 C(gr)
        // are left: −380.0 + 2(285.83) = 191.7.
        let d = heat("C8H18O2", -380.0);
        assert!((d.heat_kj_per_mol - 191.7).abs() < 0.3, "{d:?}");
        // Ethanol C2H6O at ΔfH°(l) −277.6: its O makes 1 H2O(l); 2 H2 and 2 C(gr) are left:
        // −277.6 + 285.83 = 8.2 (a stable compound's small disproportionation heat).
        let d = heat("C2H6O", -277.6);
        assert!((d.heat_kj_per_mol - 8.2).abs() < 0.3, "{d:?}");
        // Chlorobenzene C6H5Cl, ΔfH°(l) 11.1: HCl(g) takes the Cl and 1 H, 2 H2 and 6 C(gr) are
        // left: 11.1 + 92.31 = 103.4.
        let d = heat("C6H5Cl", 11.1);
        assert!((d.heat_kj_per_mol - 103.4).abs() < 0.3, "{d:?}");
        // TNT C7H5N3O6, ΔfH°(s) −67.0: 2.5 H2O(l) take 2.5 O, the other 3.5 make 1.75 CO2, 5.25
        // C(gr) and 1.5 N2 are left: −67.0 + 2.5(285.83) + 1.75(393.51) = −67.0 + 1403.2 = 1336.2.
        let d = heat("C7H5N3O6", -67.0);
        assert!((d.heat_kj_per_mol - 1336.2).abs() < 0.3, "{d:?}");
        // Hydrogen peroxide H2O2, ΔfH°(l) −187.8: H2O(l) + 0.5 O2: −187.8 + 285.83 = 98.0.
        let d = heat("H2O2", -187.8);
        assert!((d.heat_kj_per_mol - 98.0).abs() < 0.3, "{d:?}");
        // Ammonium nitrate H4N2O3, ΔfH°(s) −365.6: 2 H2O(l) + N2 + 0.5 O2: −365.6 + 571.66 = 206.1.
        let d = heat("H4N2O3", -365.6);
        assert!((d.heat_kj_per_mol - 206.1).abs() < 0.3, "{d:?}");
        // No oxygen: acetylene C2H2 (g, 227.4) → 2 C(gr) + H2, hydrazine N2H4 (l, 50.6) → N2 +
        // 2 H2, sodium azide NaN3 (s, 21.7) → Na(cr) + 1.5 N2: the heat is −ΔfH° itself, reversed.
        for (f, h) in [("C2H2", 227.4), ("N2H4", 50.6), ("NaN3", 21.7)] {
            let d = heat(f, h);
            assert!((d.heat_kj_per_mol - h).abs() < 1e-6, "{f}: {d:?}");
        }
        // Per kg: nitromethane 414.0 kJ/mol / 61.04 g/mol = 6782 kJ/kg.
        let d = heat("CH3NO2", -113.1);
        assert!((d.heat_kj_per_kg - 6782.0).abs() < 5.0, "{d:?}");
    }

    #[test]
    fn groups_of_the_un_table() {
        let groups = |s: &str| energetic_groups(&Molecule::parse(s, 0).unwrap());
        assert_eq!(groups("C[N+](=O)[O-]"), vec![EnergeticGroup::NitrogenOxygen]);
        assert_eq!(groups("CCOOC"), vec![EnergeticGroup::ContiguousOxygen]);
        assert_eq!(groups("C#C"), vec![EnergeticGroup::CarbonUnsaturation]);
        assert_eq!(groups("C=C=C"), vec![EnergeticGroup::CarbonUnsaturation]);
        assert_eq!(groups("CN=[N+]=[N-]"), vec![EnergeticGroup::ContiguousNitrogen]);
        assert_eq!(groups("ClN(Cl)C"), vec![EnergeticGroup::NitrogenHalogen]);
        assert!(groups("CCO").is_empty());
        assert!(groups("c1ccccc1C(=O)O").is_empty());
    }
}
