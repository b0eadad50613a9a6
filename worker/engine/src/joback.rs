//! Joback & Reid (1987) group contributions: ideal-gas ΔfH°(298.15 K), ΔfG°(298.15 K) and
//! Cp(T), normal boiling point, critical temperature and pressure, ΔvapH at the boiling point,
//! from a molecular graph; and an estimated species built from them.
//!
//! Sources. K.G. Joback, R.C. Reid, "Estimation of pure-component properties from
//! group-contributions", Chem. Eng. Commun. 57 (1987) 233–243, as tabulated in B.E. Poling,
//! J.M. Prausnitz, J.P. O'Connell, *The Properties of Gases and Liquids*, 5th ed. (2001),
//! Table 2-2. The numbers below were copied programmatically from the `thermo` package 0.6.1
//! (`thermo/group_contribution/joback.py`, MIT licence), which carries that table; the group
//! definitions follow the SMARTS in the same file (J. Biggs). Reported accuracy (Joback & Reid
//! 1987 as quoted in thermo 0.6.1's docstrings): ΔfH°(g) average absolute error 2.2 kcal/mol
//! (9.2 kJ/mol) over 370 compounds, standard deviation 2.0 kcal/mol; ΔfG°(g) 2.0 kcal/mol over
//! 328 compounds; ΔvapH(Tb) 303.5 cal/mol over 368 compounds; Tb 12.91 K over 438 compounds.
//! The Cp polynomial was fitted to data from 298 K to 1000 K.
//!
//! Liquid species: ΔvapH is moved from Tb to 298.15 K by Watson's correlation (exponent 0.38);
//! the vapour pressure at 298.15 K follows from integrating Clausius–Clapeyron from Tb with that
//! ΔvapH(T), which gives ΔvapG° and so ΔvapS°; the liquid heat capacity is Rowlinson–Bondi's
//! (Poling et al. 5th ed. eq. 6-6.4, as in `chemicals` 1.5.2 `Rowlinson_Bondi`) at 298.15 K with
//! the acentric factor from Lee & Kesler (AIChE J. 21 (1975) 510, as in `chemicals` `LK_omega`),
//! held constant. S°(g) = (ΔfH° − ΔfG°)/T + Σ n S°(element in its reference state).

use crate::benson::{Benson, BensonError};
use crate::elements::Z;
use crate::formula::{Formula, Phase};
use crate::smiles::Molecule;
use crate::species::{Origin, Resolved, Segment, R, T_REF_K};
use std::borrow::Cow;

/// The method, as results name it.
pub const METHOD: &str = "Joback & Reid (1987) group contributions (Poling et al., 5th ed., Table 2-2)";

/// Correction of Joback's ΔfH°(g) per carbonyl carbon bonded to nitrogen (amides, imides,
/// ureas, carbamates), kJ/mol. Joback's first-order groups make amides far too unstable. Set on the
/// rule-setting rows of `tests/reference/condensed_dhf.tsv` (CRC Handbook gas values via chemicals
/// 1.5.2): 2-methylpropanamide, benzamide, caprolactam, formamide, N,N-dimethylacetamide,
/// pentanamide, propyl carbamate, succinimide and uracil, whose Joback errors per such carbonyl
/// were +41 to +78 kJ/mol (mean +60.9, SD 12). The same molecules are left out of the held-out
/// Joback check (`tests/joback_atct.rs`); the correction is checked on the held-out reactions.
pub const AMIDE_OFFSET_KJ_PER_MOL: f64 = -61.0;
/// Standard uncertainty added per corrected amide carbonyl (the rule set's spread), kJ/mol.
pub const AMIDE_SIGMA_KJ_PER_MOL: f64 = 13.0;
/// Correction of Joback's ΔfH°(g) per O–O bond, kJ/mol: Joback has no peroxide group and makes
/// peroxides far too stable. Set on benzoyl peroxide (CRC, rule rows of condensed_dhf.tsv) and
/// methyl hydroperoxide (ATcT 1.112, the rule-setting set of `tests/joback_atct.rs`): errors −212
/// and −221 kJ/mol. Its σ stays the peroxide weak spot's 50 kJ/mol per oxygen.
pub const PEROXIDE_OFFSET_KJ_PER_MOL: f64 = 216.0;

/// Correction of Joback's ΔfH°(g) per bond between two carbonyl carbons (1,2-diketones, glyoxal,
/// oxalic acid and its esters; not where a carbonyl is on nitrogen), kJ/mol: Joback makes them too
/// stable. Set on dimethyl oxalate (CRC, rule rows of condensed_dhf.tsv), glyoxal, oxalic acid and
/// 2,3-butanedione (ATcT 1.112, the rule-setting set): errors −51.6, −43.4, −63.8, −24.5 (mean
/// −45.8, SD 16). Checked on the held-out ones (benzil, diethyl oxalate, pyruvaldehyde, …).
pub const ADJACENT_CARBONYL_OFFSET_KJ_PER_MOL: f64 = 46.0;
/// Standard uncertainty per corrected carbonyl–carbonyl bond (the rule set's spread, widened), kJ/mol.
pub const ADJACENT_CARBONYL_SIGMA_KJ_PER_MOL: f64 = 20.0;

/// Joback & Reid's enthalpy-of-fusion contributions, kJ/mol, in [`GROUPS`] order (None where the
/// table has none), copied from `thermo` 0.6.1 (`JOBACK_GROUPS[k].Hfus`, MIT), which carries the
/// published table. Joback & Reid report an average absolute error of 485.2 cal/mol (2.0 kJ/mol)
/// over 155 compounds (as quoted in thermo 0.6.1's docstring).
pub static HFUS_KJ_PER_MOL: [Option<f64>; 41] = [
    Some(0.908),
    Some(2.59),
    Some(0.749),
    Some(-1.46),
    Some(-0.473),
    Some(2.691),
    Some(3.063),
    Some(4.72),
    Some(2.322),
    Some(4.151),
    Some(0.49),
    Some(3.243),
    Some(-1.373),
    Some(1.101),
    Some(2.394),
    Some(1.398),
    Some(2.515),
    Some(3.603),
    Some(2.724),
    Some(2.406),
    Some(4.49),
    Some(1.188),
    Some(5.879),
    Some(4.189),
    Some(0.0),
    Some(3.197),
    Some(11.051),
    Some(6.959),
    Some(3.624),
    Some(3.515),
    Some(5.099),
    Some(7.49),
    Some(4.703),
    None,
    Some(3.649),
    None,
    Some(2.414),
    Some(9.679),
    Some(2.36),
    Some(4.13),
    Some(1.557),
];

/// Standard uncertainty of the estimated enthalpy of fusion taken to 298.15 K, kJ/mol. Set on the
/// rule-setting rows of `tests/reference/condensed_dhf.tsv` (62 solids; experimental ΔsubH from
/// CRC Handbook values via chemicals 1.5.2): the estimated ΔsubH = ΔvapH + ΔfusH missed by RMS
/// 22.5 kJ/mol (mean −6.9: too small), so σ(fusion) = √(22.5² − 4.0²) beside the vaporization's
/// 4.0. Checked on the file's held-out rows in `tests/condensed_phases.rs`. Joback's own 2.0 kJ/mol
/// average error holds at the melting point only; the step to 298.15 K (ΔCp of fusion,
/// solid–solid transitions) and hydrogen-bonded crystals are not modelled.
pub const FUSION_SIGMA_KJ_PER_MOL: f64 = 22.0;

/// Extra lattice enthalpy of an amino acid's solid, kJ/mol: the crystal is the zwitterion
/// (H3N⁺–…–COO⁻), which a molecular vaporization-plus-fusion estimate misses. Set on the five
/// rule-setting amino acids of `tests/reference/condensed_dhf.tsv` (β-alanine, L-alanine,
/// L-methionine, 5-aminopentanoic acid, L-valine; CRC Handbook ΔsubH): the estimated ΔsubH fell
/// short by 51.2, 59.6, 55.1, 47.0 and 74.5 kJ/mol, mean 57.5, standard deviation 10.6 (σ below,
/// rounded up). Checked on the seven held-out amino acids in `tests/condensed_phases.rs`.
pub const ZWITTERION_LATTICE_KJ_PER_MOL: f64 = 57.5;
pub const ZWITTERION_SIGMA_KJ_PER_MOL: f64 = 11.0;

/// An amino acid whose crystal is a zwitterion: a carboxylic acid and a basic amine (sp3
/// nitrogen with no carbonyl, aromatic or heteroatom neighbour) in one molecule.
pub fn forms_zwitterion(m: &Molecule) -> bool {
    let acid = (0..m.atoms.len()).any(|c| {
        m.atoms[c].element == 6
            && kbonds(m, c).any(|(o, k)| k == 2 && m.atoms[o].element == 8)
            && kbonds(m, c).any(|(o, k)| k == 1 && m.atoms[o].element == 8 && m.atoms[o].hydrogens == 1)
    });
    let base = (0..m.atoms.len()).any(|n| {
        let a = &m.atoms[n];
        a.element == 7
            && a.charge == 0
            && !a.aromatic
            && kbonds(m, n)
                .all(|(w, k)| k == 1 && m.atoms[w].element == 6 && !m.atoms[w].aromatic && kbonds(m, w).all(|(x, o)| o == 1 || x == n))
    });
    acid && base
}

/// How the species table names the σ of a Joback estimate.
pub const SIGMA_BASIS: &str =
    "estimate: the project's Joback uncertainty rules (base σ widened at weak groups; set on ATcT 1.112, checked on CRC gas values)";

/// Where the σ of a Benson ideal gas comes from.
pub const BENSON_SIGMA_BASIS: &str =
    "estimate: the project's Benson uncertainty rules (base σ widened for thin groups and borrowed or fused ring strain; set on ATcT 1.112, checked on CRC gas values)";

/// Range of the Joback ideal-gas Cp polynomial (fitted 298–1000 K), K.
pub const CP_RANGE_K: (f64, f64) = (T_REF_K, 1000.0);

/// Average absolute error of ΔfH°(g) reported by Joback & Reid, kJ/mol (2.2 kcal/mol).
pub const DHF_AAE_KJ_PER_MOL: f64 = 2.2 * 4.184;

/// One group of Table 2-2 with its contributions (None where the table has no value).
#[derive(Debug)]
pub struct Group {
    pub name: &'static str,
    pub tc: Option<f64>,
    pub pc: Option<f64>,
    pub tb: Option<f64>,
    pub tm: Option<f64>,
    /// kJ/mol
    pub hf: Option<f64>,
    /// kJ/mol
    pub gf: Option<f64>,
    /// a, b, c, d of Cp = a + bT + cT² + dT³, J/(mol·K)
    pub cp: Option<[f64; 4]>,
    /// kJ/mol
    pub hvap: Option<f64>,
}

use Group as G;

/// The 41 groups, in Table 2-2's order; `GROUPS[k]` is group number k + 1.
pub static GROUPS: [Group; 41] = [
    G {
        name: "-CH3",
        tc: Some(0.0141),
        pc: Some(-0.0012),
        tb: Some(23.58),
        tm: Some(-5.1),
        hf: Some(-76.45),
        gf: Some(-43.96),
        cp: Some([19.5, -0.00808, 0.000153, -9.67e-08]),
        hvap: Some(2.373),
    },
    G {
        name: "-CH2-",
        tc: Some(0.0189),
        pc: Some(0.0),
        tb: Some(22.88),
        tm: Some(11.27),
        hf: Some(-20.64),
        gf: Some(8.42),
        cp: Some([-0.909, 0.095, -5.44e-05, 1.19e-08]),
        hvap: Some(2.226),
    },
    G {
        name: ">CH-",
        tc: Some(0.0164),
        pc: Some(0.002),
        tb: Some(21.74),
        tm: Some(12.64),
        hf: Some(29.89),
        gf: Some(58.36),
        cp: Some([-23.0, 0.204, -0.000265, 1.2e-07]),
        hvap: Some(1.691),
    },
    G {
        name: ">C<",
        tc: Some(0.0067),
        pc: Some(0.0043),
        tb: Some(18.25),
        tm: Some(46.43),
        hf: Some(82.23),
        gf: Some(116.02),
        cp: Some([-66.2, 0.427, -0.000641, 3.01e-07]),
        hvap: Some(0.636),
    },
    G {
        name: "=CH2",
        tc: Some(0.0113),
        pc: Some(-0.0028),
        tb: Some(18.18),
        tm: Some(-4.32),
        hf: Some(-9.63),
        gf: Some(3.77),
        cp: Some([23.6, -0.0381, 0.000172, -1.03e-07]),
        hvap: Some(1.724),
    },
    G {
        name: "=CH-",
        tc: Some(0.0129),
        pc: Some(-0.0006),
        tb: Some(24.96),
        tm: Some(8.73),
        hf: Some(37.97),
        gf: Some(48.53),
        cp: Some([-8.0, 0.105, -9.63e-05, 3.56e-08]),
        hvap: Some(2.205),
    },
    G {
        name: "=C<",
        tc: Some(0.0117),
        pc: Some(0.0011),
        tb: Some(24.14),
        tm: Some(11.14),
        hf: Some(83.99),
        gf: Some(92.36),
        cp: Some([-28.1, 0.208, -0.000306, 1.46e-07]),
        hvap: Some(2.138),
    },
    G {
        name: "=C=",
        tc: Some(0.0026),
        pc: Some(0.0028),
        tb: Some(26.15),
        tm: Some(17.78),
        hf: Some(142.14),
        gf: Some(136.7),
        cp: Some([27.4, -0.0557, 0.000101, -5.02e-08]),
        hvap: Some(2.661),
    },
    G {
        name: "≡CH",
        tc: Some(0.0027),
        pc: Some(-0.0008),
        tb: Some(9.2),
        tm: Some(-11.18),
        hf: Some(79.3),
        gf: Some(77.71),
        cp: Some([24.5, -0.0271, 0.000111, -6.78e-08]),
        hvap: Some(1.155),
    },
    G {
        name: "≡C-",
        tc: Some(0.002),
        pc: Some(0.0016),
        tb: Some(27.38),
        tm: Some(64.32),
        hf: Some(115.51),
        gf: Some(109.82),
        cp: Some([7.87, 0.0201, -8.33e-06, 1.39e-09]),
        hvap: Some(3.302),
    },
    G {
        name: "-CH2- (ring)",
        tc: Some(0.01),
        pc: Some(0.0025),
        tb: Some(27.15),
        tm: Some(7.75),
        hf: Some(-26.8),
        gf: Some(-3.68),
        cp: Some([-6.03, 0.0854, -8e-06, -1.8e-08]),
        hvap: Some(2.398),
    },
    G {
        name: ">CH- (ring)",
        tc: Some(0.0122),
        pc: Some(0.0004),
        tb: Some(21.78),
        tm: Some(19.88),
        hf: Some(8.67),
        gf: Some(40.99),
        cp: Some([-20.5, 0.162, -0.00016, 6.24e-08]),
        hvap: Some(1.942),
    },
    G {
        name: ">C< (ring)",
        tc: Some(0.0042),
        pc: Some(0.0061),
        tb: Some(21.32),
        tm: Some(60.15),
        hf: Some(79.72),
        gf: Some(87.88),
        cp: Some([-90.9, 0.557, -0.0009, 4.69e-07]),
        hvap: Some(0.644),
    },
    G {
        name: "=CH- (ring)",
        tc: Some(0.0082),
        pc: Some(0.0011),
        tb: Some(26.73),
        tm: Some(8.13),
        hf: Some(2.09),
        gf: Some(11.3),
        cp: Some([-2.14, 0.0574, -1.64e-06, -1.59e-08]),
        hvap: Some(2.544),
    },
    G {
        name: "=C< (ring)",
        tc: Some(0.0143),
        pc: Some(0.0008),
        tb: Some(31.01),
        tm: Some(37.02),
        hf: Some(46.43),
        gf: Some(54.05),
        cp: Some([-8.25, 0.101, -0.000142, 6.78e-08]),
        hvap: Some(3.059),
    },
    G {
        name: "-F",
        tc: Some(0.0111),
        pc: Some(-0.0057),
        tb: Some(-0.03),
        tm: Some(-15.78),
        hf: Some(-251.92),
        gf: Some(-247.19),
        cp: Some([26.5, -0.0913, 0.000191, -1.03e-07]),
        hvap: Some(-0.67),
    },
    G {
        name: "-Cl",
        tc: Some(0.0105),
        pc: Some(-0.0049),
        tb: Some(38.13),
        tm: Some(13.55),
        hf: Some(-71.55),
        gf: Some(-64.31),
        cp: Some([33.3, -0.0963, 0.000187, -9.96e-08]),
        hvap: Some(4.532),
    },
    G {
        name: "-Br",
        tc: Some(0.0133),
        pc: Some(0.0057),
        tb: Some(66.86),
        tm: Some(43.43),
        hf: Some(-29.48),
        gf: Some(-38.06),
        cp: Some([28.6, -0.0649, 0.000136, -7.45e-08]),
        hvap: Some(6.582),
    },
    G {
        name: "-I",
        tc: Some(0.0068),
        pc: Some(-0.0034),
        tb: Some(93.84),
        tm: Some(41.69),
        hf: Some(21.06),
        gf: Some(5.74),
        cp: Some([32.1, -0.0641, 0.000126, -6.87e-08]),
        hvap: Some(9.52),
    },
    G {
        name: "-OH (alcohol)",
        tc: Some(0.0741),
        pc: Some(0.0112),
        tb: Some(92.88),
        tm: Some(44.45),
        hf: Some(-208.04),
        gf: Some(-189.2),
        cp: Some([25.7, -0.0691, 0.000177, -9.88e-08]),
        hvap: Some(16.826),
    },
    G {
        name: "-OH (phenol)",
        tc: Some(0.024),
        pc: Some(0.0184),
        tb: Some(76.34),
        tm: Some(82.83),
        hf: Some(-221.65),
        gf: Some(-197.37),
        cp: Some([-2.81, 0.111, -0.000116, 4.94e-08]),
        hvap: Some(12.499),
    },
    G {
        name: "-O- (nonring)",
        tc: Some(0.0168),
        pc: Some(0.0015),
        tb: Some(22.42),
        tm: Some(22.23),
        hf: Some(-132.22),
        gf: Some(-105.0),
        cp: Some([25.5, -0.0632, 0.000111, -5.48e-08]),
        hvap: Some(2.41),
    },
    G {
        name: "-O- (ring)",
        tc: Some(0.0098),
        pc: Some(0.0048),
        tb: Some(31.22),
        tm: Some(23.05),
        hf: Some(-138.16),
        gf: Some(-98.22),
        cp: Some([12.2, -0.0126, 6.03e-05, -3.86e-08]),
        hvap: Some(4.682),
    },
    G {
        name: ">C=O (nonring)",
        tc: Some(0.038),
        pc: Some(0.0031),
        tb: Some(76.75),
        tm: Some(61.2),
        hf: Some(-133.22),
        gf: Some(-120.5),
        cp: Some([6.45, 0.067, -3.57e-05, 2.86e-09]),
        hvap: Some(8.972),
    },
    G {
        name: ">C=O (ring)",
        tc: Some(0.0284),
        pc: Some(0.0028),
        tb: Some(94.97),
        tm: Some(75.97),
        hf: Some(-164.5),
        gf: Some(-126.27),
        cp: Some([30.4, -0.0829, 0.000236, -1.31e-07]),
        hvap: Some(6.645),
    },
    G {
        name: "O=CH- (aldehyde)",
        tc: Some(0.0379),
        pc: Some(0.003),
        tb: Some(72.24),
        tm: Some(36.9),
        hf: Some(-162.03),
        gf: Some(-143.48),
        cp: Some([30.9, -0.0336, 0.00016, -9.88e-08]),
        hvap: Some(9.093),
    },
    G {
        name: "-COOH (acid)",
        tc: Some(0.0791),
        pc: Some(0.0077),
        tb: Some(169.09),
        tm: Some(155.5),
        hf: Some(-426.72),
        gf: Some(-387.87),
        cp: Some([24.1, 0.0427, 8.04e-05, -6.87e-08]),
        hvap: Some(19.537),
    },
    G {
        name: "-COO- (ester)",
        tc: Some(0.0481),
        pc: Some(0.0005),
        tb: Some(81.1),
        tm: Some(53.6),
        hf: Some(-337.92),
        gf: Some(-301.95),
        cp: Some([24.5, 0.0402, 4.02e-05, -4.52e-08]),
        hvap: Some(9.633),
    },
    G {
        name: "=O (other than above)",
        tc: Some(0.0143),
        pc: Some(0.0101),
        tb: Some(-10.5),
        tm: Some(2.08),
        hf: Some(-247.61),
        gf: Some(-250.83),
        cp: Some([6.82, 0.0196, 1.27e-05, -1.78e-08]),
        hvap: Some(5.909),
    },
    G {
        name: "-NH2",
        tc: Some(0.0243),
        pc: Some(0.0109),
        tb: Some(73.23),
        tm: Some(66.89),
        hf: Some(-22.02),
        gf: Some(14.07),
        cp: Some([26.9, -0.0412, 0.000164, -9.76e-08]),
        hvap: Some(10.788),
    },
    G {
        name: ">NH (nonring)",
        tc: Some(0.0295),
        pc: Some(0.0077),
        tb: Some(50.17),
        tm: Some(52.66),
        hf: Some(53.47),
        gf: Some(89.39),
        cp: Some([-1.21, 0.0762, -4.86e-05, 1.05e-08]),
        hvap: Some(6.436),
    },
    G {
        name: ">NH (ring)",
        tc: Some(0.013),
        pc: Some(0.0114),
        tb: Some(52.82),
        tm: Some(101.51),
        hf: Some(31.65),
        gf: Some(75.61),
        cp: Some([11.8, -0.023, 0.000107, -6.28e-08]),
        hvap: Some(6.93),
    },
    G {
        name: ">N- (nonring)",
        tc: Some(0.0169),
        pc: Some(0.0074),
        tb: Some(11.74),
        tm: Some(48.84),
        hf: Some(123.34),
        gf: Some(163.16),
        cp: Some([-31.1, 0.227, -0.00032, 1.46e-07]),
        hvap: Some(1.896),
    },
    G {
        name: "-N= (nonring)",
        tc: Some(0.0255),
        pc: Some(-0.0099),
        tb: Some(74.6),
        tm: None,
        hf: Some(23.61),
        gf: None,
        cp: None,
        hvap: Some(3.335),
    },
    G {
        name: "-N= (ring)",
        tc: Some(0.0085),
        pc: Some(0.0076),
        tb: Some(57.55),
        tm: Some(68.4),
        hf: Some(55.52),
        gf: Some(79.93),
        cp: Some([8.83, -0.00384, 4.35e-05, -2.6e-08]),
        hvap: Some(6.528),
    },
    G {
        name: "=NH",
        tc: None,
        pc: None,
        tb: Some(83.08),
        tm: Some(68.91),
        hf: Some(93.7),
        gf: Some(119.66),
        cp: Some([5.69, -0.00412, 0.000128, -8.88e-08]),
        hvap: Some(12.169),
    },
    G {
        name: "-CN",
        tc: Some(0.0496),
        pc: Some(-0.0101),
        tb: Some(125.66),
        tm: Some(59.89),
        hf: Some(88.43),
        gf: Some(89.22),
        cp: Some([36.5, -0.0733, 0.000184, -1.03e-07]),
        hvap: Some(12.851),
    },
    G {
        name: "-NO2",
        tc: Some(0.0437),
        pc: Some(0.0064),
        tb: Some(152.54),
        tm: Some(127.24),
        hf: Some(-66.57),
        gf: Some(-16.83),
        cp: Some([25.9, -0.00374, 0.000129, -8.88e-08]),
        hvap: Some(16.738),
    },
    G {
        name: "-SH",
        tc: Some(0.0031),
        pc: Some(0.0084),
        tb: Some(63.56),
        tm: Some(20.09),
        hf: Some(-17.33),
        gf: Some(-22.99),
        cp: Some([35.3, -0.0758, 0.000185, -1.03e-07]),
        hvap: Some(6.884),
    },
    G {
        name: "-S- (nonring)",
        tc: Some(0.0119),
        pc: Some(0.0049),
        tb: Some(68.78),
        tm: Some(34.4),
        hf: Some(41.87),
        gf: Some(33.12),
        cp: Some([19.6, -0.00561, 4.02e-05, -2.76e-08]),
        hvap: Some(6.817),
    },
    G {
        name: "-S- (ring)",
        tc: Some(0.0019),
        pc: Some(0.0051),
        tb: Some(52.1),
        tm: Some(79.93),
        hf: Some(39.1),
        gf: Some(27.76),
        cp: Some([16.7, 0.00481, 2.77e-05, -2.11e-08]),
        hvap: Some(5.984),
    },
];

/// Why a structure has no Joback estimate.
#[derive(Clone, Debug, PartialEq, Eq, thiserror::Error)]
pub enum JobackError {
    #[error("no Joback group for {what} (atom at byte {position}); supply values for this species")]
    NoGroup { what: String, position: usize },
    #[error("Joback's table has no {property} contribution for group {group}")]
    MissingContribution { property: &'static str, group: &'static str },
    #[error("Joback estimates are for neutral closed-shell molecules; {0}")]
    NotAMolecule(String),
    #[error("no {0} estimate: {1}")]
    Unsupported(&'static str, String),
}

/// Group counts of one molecule and the weak spots found while assigning them.
#[derive(Clone, Debug, PartialEq)]
pub struct Groups {
    /// `counts[k]` = occurrences of group k + 1
    pub counts: [u16; 41],
    /// Atoms in the molecule, hydrogens included (for Pc).
    pub atom_count: u32,
    pub heavy_atoms: u32,
    /// Why the method may be poor here; each adds to the uncertainty ([`Groups::dhf_sigma_kj_per_mol`]).
    pub weak_spots: Vec<WeakSpot>,
}

/// A feature of the molecule the method fits poorly, and the standard uncertainty it adds
/// (combined in quadrature with the others).
#[derive(Clone, Debug, PartialEq)]
pub struct WeakSpot {
    /// Occurrences of one kind add linearly; kinds add in quadrature.
    pub kind: &'static str,
    pub what: Cow<'static, str>,
    pub sigma_kj_per_mol: f64,
    /// A bias correction added to ΔfH°(g) (and ΔfG°), kJ/mol; 0 for most weak spots.
    pub offset_kj_per_mol: f64,
}

/// Group numbers (1-based, as in Table 2-2).
mod g {
    pub const CH3: usize = 1;
    pub const CH2: usize = 2;
    pub const CH: usize = 3;
    pub const C: usize = 4;
    pub const EQ_CH2: usize = 5;
    pub const EQ_CH: usize = 6;
    pub const EQ_C: usize = 7;
    pub const EQ_C_EQ: usize = 8;
    pub const TR_CH: usize = 9;
    pub const TR_C: usize = 10;
    pub const R_CH2: usize = 11;
    pub const R_CH: usize = 12;
    pub const R_C: usize = 13;
    pub const R_EQ_CH: usize = 14;
    pub const R_EQ_C: usize = 15;
    pub const F: usize = 16;
    pub const CL: usize = 17;
    pub const BR: usize = 18;
    pub const I: usize = 19;
    pub const OH_ALCOHOL: usize = 20;
    pub const OH_PHENOL: usize = 21;
    pub const O: usize = 22;
    pub const R_O: usize = 23;
    pub const CO: usize = 24;
    pub const R_CO: usize = 25;
    pub const CHO: usize = 26;
    pub const COOH: usize = 27;
    pub const COO: usize = 28;
    pub const EQ_O: usize = 29;
    pub const NH2: usize = 30;
    pub const NH: usize = 31;
    pub const R_NH: usize = 32;
    pub const N: usize = 33;
    pub const EQ_N: usize = 34;
    pub const R_EQ_N: usize = 35;
    pub const EQ_NH: usize = 36;
    pub const CN: usize = 37;
    pub const NO2: usize = 38;
    pub const SH: usize = 39;
    pub const S: usize = 40;
    pub const R_S: usize = 41;
}

/// Standard uncertainty of a Joback ΔfH°(g) before weak spots: √(π/2) × the reported average
/// absolute error (the ratio of σ to the mean absolute deviation of a normal distribution).
pub fn base_sigma_kj_per_mol() -> f64 {
    (std::f64::consts::PI / 2.0).sqrt() * DHF_AAE_KJ_PER_MOL
}

/// (neighbour, Kekulé order) of atom i.
fn kbonds(m: &Molecule, i: usize) -> impl Iterator<Item = (usize, u8)> + '_ {
    m.neighbours(i).map(move |(n, b)| (n, m.bonds[b].kekule_order))
}

struct Assign<'m> {
    m: &'m Molecule,
    claimed: Vec<bool>,
    counts: [u16; 41],
    weak: Vec<WeakSpot>,
}

impl Assign<'_> {
    fn add(&mut self, group: usize) {
        self.counts[group - 1] += 1;
    }

    fn weak(&mut self, kind: &'static str, what: impl Into<Cow<'static, str>>, sigma: f64) {
        self.biased(kind, what, sigma, 0.0);
    }

    /// A weak spot whose bias is known: the estimate is corrected by `offset` kJ/mol.
    fn biased(&mut self, kind: &'static str, what: impl Into<Cow<'static, str>>, sigma: f64, offset: f64) {
        self.weak.push(WeakSpot {
            kind,
            what: what.into(),
            sigma_kj_per_mol: sigma,
            offset_kj_per_mol: offset,
        });
    }

    fn no_group(&self, i: usize, what: &str) -> JobackError {
        JobackError::NoGroup {
            what: what.to_string(),
            position: self.m.atoms[i].position,
        }
    }

    fn is_terminal_o(&self, i: usize) -> bool {
        let a = &self.m.atoms[i];
        a.element == 8 && a.hydrogens == 0 && self.m.degree(i) == 1
    }

    fn connections(&self, i: usize) -> usize {
        self.m.degree(i) + self.m.atoms[i].hydrogens as usize
    }

    /// Multi-atom groups first: nitrile, nitro, and the carbonyl family (acid, ester, aldehyde,
    /// ketone), claiming their atoms.
    fn multi_atom_groups(&mut self) -> Result<(), JobackError> {
        let m = self.m;
        for i in 0..m.atoms.len() {
            let a = &m.atoms[i];
            if a.element == 7 && a.charge >= 0 {
                let o: Vec<usize> = kbonds(self.m, i).filter(|&(n, _)| m.atoms[n].element == 8).map(|x| x.0).collect();
                let terminal = o.iter().filter(|&&n| self.is_terminal_o(n)).count();
                if o.len() >= 2 && terminal >= 2 && a.hydrogens == 0 {
                    if o.len() > 2 {
                        return Err(self.no_group(i, "a nitrate (O-NO2)"));
                    }
                    self.add(g::NO2);
                    self.claimed[i] = true;
                    for n in o {
                        self.claimed[n] = true;
                    }
                }
            }
        }
        for i in 0..m.atoms.len() {
            let a = &m.atoms[i];
            if a.element != 6 || self.claimed[i] {
                continue;
            }
            if let Some((n, _)) =
                kbonds(self.m, i).find(|&(n, o)| o == 3 && m.atoms[n].element == 7 && m.degree(n) == 1 && m.atoms[n].charge == 0)
            {
                if self.connections(i) == 2 {
                    self.add(g::CN);
                    self.claimed[i] = true;
                    self.claimed[n] = true;
                    continue;
                }
            }
            if self.connections(i) != 3 {
                continue;
            }
            let Some((o_dbl, _)) = kbonds(self.m, i).find(|&(n, o)| o == 2 && self.is_terminal_o(n) && m.atoms[n].charge == 0) else {
                continue;
            };
            let single_o: Vec<usize> = kbonds(self.m, i)
                .filter(|&(n, o)| o == 1 && m.atoms[n].element == 8 && m.atoms[n].charge == 0)
                .map(|x| x.0)
                .collect();
            let hydroxyl = single_o.iter().copied().find(|&n| m.atoms[n].hydrogens == 1 && m.degree(n) == 1);
            let ether = single_o.iter().copied().find(|&n| m.atoms[n].hydrogens == 0 && m.degree(n) == 2);
            self.claimed[i] = true;
            self.claimed[o_dbl] = true;
            if single_o.len() >= 2 {
                return Err(self.no_group(i, "a carbonate or orthoester-type carbon (C(=O) with two more oxygens)"));
            }
            if let Some(oh) = hydroxyl {
                self.add(g::COOH);
                self.claimed[oh] = true;
            } else if let (Some(o), 0) = (ether, a.hydrogens) {
                if self.claimed[o] {
                    self.weak("approximation", "an anhydride: its second C=O is taken as a ketone group", 40.0);
                    self.add(if a.in_ring { g::R_CO } else { g::CO });
                } else {
                    self.add(g::COO);
                    self.claimed[o] = true;
                }
            } else if a.hydrogens == 1 {
                if ether.is_some() {
                    self.weak("approximation", "a formate ester: taken as O=CH- plus -O-", 40.0);
                }
                self.add(g::CHO);
            } else if a.hydrogens == 2 {
                return Err(self.no_group(i, "formaldehyde's H2C=O"));
            } else {
                self.add(if a.in_ring { g::R_CO } else { g::CO });
            }
        }
        Ok(())
    }

    fn atom_group(&mut self, i: usize) -> Result<(), JobackError> {
        let m = self.m;
        let a = &m.atoms[i];
        let (h, ring, x) = (a.hydrogens, a.in_ring, self.connections(i));
        let doubles = kbonds(self.m, i).filter(|b| b.1 == 2).count();
        let triples = kbonds(self.m, i).filter(|b| b.1 == 3).count();
        if a.charge != 0 {
            return Err(JobackError::NotAMolecule(format!(
                "the atom at byte {} carries a charge",
                a.position
            )));
        }
        let group = match a.element {
            6 => match (triples, doubles, x, h) {
                (1, 0, 2, 1) => g::TR_CH,
                (1, 0, 2, 0) => g::TR_C,
                (0, 2, 2, 0) => g::EQ_C_EQ,
                (0, 1, 3, 2) => g::EQ_CH2,
                (0, 1, 3, 1) => {
                    if ring {
                        g::R_EQ_CH
                    } else {
                        g::EQ_CH
                    }
                }
                (0, 1, 3, 0) => {
                    if ring {
                        g::R_EQ_C
                    } else {
                        g::EQ_C
                    }
                }
                (0, 0, 4, 3) => g::CH3,
                (0, 0, 4, 2) => {
                    if ring {
                        g::R_CH2
                    } else {
                        g::CH2
                    }
                }
                (0, 0, 4, 1) => {
                    if ring {
                        g::R_CH
                    } else {
                        g::CH
                    }
                }
                (0, 0, 4, 0) => {
                    if ring {
                        g::R_C
                    } else {
                        g::C
                    }
                }
                (0, 0, 4, 4) => return Err(self.no_group(i, "methane")),
                _ => return Err(self.no_group(i, "a carbon with an unusual valence (radical or carbene)")),
            },
            8 => match (doubles, x, h) {
                (0, 2, 1) => {
                    let (n, _) = kbonds(self.m, i).next().expect("one neighbour");
                    if m.atoms[n].aromatic {
                        g::OH_PHENOL
                    } else {
                        g::OH_ALCOHOL
                    }
                }
                (0, 2, 0) => {
                    if ring {
                        g::R_O
                    } else {
                        g::O
                    }
                }
                (1, 1, 0) => g::EQ_O,
                (0, 2, 2) => return Err(self.no_group(i, "water")),
                _ => return Err(self.no_group(i, "an oxygen with an unusual valence")),
            },
            7 => match (triples, doubles, x, h) {
                (0, 0, 3, 2) => g::NH2,
                (0, 0, 3, 1) => {
                    if ring {
                        g::R_NH
                    } else {
                        g::NH
                    }
                }
                (0, 0, 3, 0) => g::N,
                (0, 1, 2, 1) => g::EQ_NH,
                (0, 1, 2, 0) => {
                    if ring {
                        g::R_EQ_N
                    } else {
                        g::EQ_N
                    }
                }
                (0, 0, 3, 3) => return Err(self.no_group(i, "ammonia")),
                _ => return Err(self.no_group(i, "a nitrogen with this bonding (isonitrile, N-oxide or radical)")),
            },
            16 => match (doubles + triples, x, h) {
                (0, 2, 1) => g::SH,
                (0, 2, 0) => {
                    if ring {
                        g::R_S
                    } else {
                        g::S
                    }
                }
                (0, 2, 2) => return Err(self.no_group(i, "hydrogen sulfide")),
                _ => return Err(self.no_group(i, "sulfur above valence 2 (sulfoxide, sulfone, thione)")),
            },
            9 | 17 | 35 | 53 if x == 1 && m.degree(i) == 1 => match a.element {
                9 => g::F,
                17 => g::CL,
                35 => g::BR,
                _ => g::I,
            },
            9 | 17 | 35 | 53 => return Err(self.no_group(i, "a halogen not bonded to one carbon-chain atom")),
            _ => return Err(self.no_group(i, crate::elements::symbol(a.element))),
        };
        self.add(group);
        Ok(())
    }

    /// The engine's rules for where the method is weak (see the module documentation). Each
    /// occurrence adds its σ linearly to others of its kind (a group value that is off is off
    /// the same way every time it appears); kinds combine in quadrature.
    fn weak_spots(&mut self) {
        let m = self.m;
        let n = m.atoms.len();
        let is_halogen = |z: Z| matches!(z, 9 | 17 | 35 | 53);
        if m.heavy_atom_count() <= 3 {
            self.weak("small", "a very small molecule (3 heavy atoms or fewer)", 40.0);
        }
        // Rings: strain is not in the ring groups (cyclopropane ≈ 115 kJ/mol), unsaturation in a
        // small ring still less; aliphatic rings are fitted loosely.
        let rings = m.rings();
        for ring in rings {
            let (mut double_inside, mut triple_inside) = (false, false);
            for &i in ring {
                for (w, b) in m.neighbours(i) {
                    let order = m.bonds[b].kekule_order;
                    if order >= 2 && ring.binary_search(&w).is_ok() {
                        double_inside = true;
                        triple_inside |= order == 3;
                    }
                }
            }
            let aromatic = ring.iter().all(|&i| m.atoms[i].aromatic);
            match (ring.len(), double_inside) {
                (3, true) => self.weak("strain", "an unsaturated three-membered ring", 120.0),
                (3, false) => self.weak("strain", "a three-membered ring", 40.0),
                (4, true) => self.weak("strain", "an unsaturated four-membered ring", 80.0),
                (4, false) => self.weak("strain", "a four-membered ring", 40.0),
                _ => {}
            }
            if triple_inside {
                self.weak("strain", "a triple bond in a ring", 150.0);
            }
            if aromatic && ring.iter().any(|&i| m.atoms[i].element != 6) {
                self.weak(
                    "heteroaromatic",
                    "an aromatic ring with a heteroatom (aromaticity is not a group)",
                    15.0,
                );
            } else if !aromatic {
                self.weak("aliphatic ring", "a non-aromatic ring", 15.0);
            }
        }
        for i in 0..n {
            let a = &m.atoms[i];
            let ring_bonds = m.neighbours(i).filter(|&(_, b)| m.bonds[b].in_ring).count();
            if ring_bonds >= 3 {
                let smallest = rings
                    .iter()
                    .filter(|r| r.binary_search(&i).is_ok())
                    .map(Vec::len)
                    .min()
                    .unwrap_or(8);
                if smallest <= 5 {
                    self.weak("fusion", "a fused or bridged atom of a small ring", 40.0);
                } else {
                    self.weak("fusion", "a ring-fusion atom", 8.0);
                }
            }
            if a.element == 9 {
                self.weak("fluorine", "a fluorine (fluorocarbons are fitted poorly)", 15.0);
            }
            let heavy_halogens = m.neighbours(i).filter(|&(w, _)| matches!(m.atoms[w].element, 17 | 35 | 53)).count();
            let halogens = m.neighbours(i).filter(|&(w, _)| is_halogen(m.atoms[w].element)).count();
            if a.element == 6 && halogens >= 2 && heavy_halogens >= 1 {
                for _ in 1..halogens.min(heavy_halogens + 1) {
                    self.weak("polyhalogen", "one more Cl, Br or I on a carbon (no interaction terms)", 20.0);
                }
            }
            let triple = m.neighbours(i).any(|(_, b)| m.bonds[b].kekule_order == 3);
            if a.element == 6 && triple {
                let odd_neighbour = m.neighbours(i).any(|(w, b)| {
                    let wa = &m.atoms[w];
                    m.bonds[b].kekule_order != 3
                        && (wa.element != 6
                            || m.neighbours(w).any(|(_, b2)| {
                                m.bonds[b2].kekule_order == 3
                                    || (m.bonds[b2].kekule_order == 2
                                        && b2 != b
                                        && m.neighbours(w).filter(|&(_, b3)| m.bonds[b3].kekule_order == 2).count() == 2)
                            }))
                });
                if odd_neighbour {
                    self.weak(
                        "substituted alkyne",
                        "a triple-bonded carbon on a heteroatom or another triple bond",
                        50.0,
                    );
                }
            }
            if a.element == 8 && m.neighbours(i).any(|(w, _)| m.atoms[w].element == 8) {
                // Counted once per oxygen of the bond: half the bond's correction each.
                self.biased(
                    "peroxide",
                    "an O-O bond (no peroxide group; corrected by +216 kJ/mol per bond)",
                    50.0,
                    PEROXIDE_OFFSET_KJ_PER_MOL / 2.0,
                );
            }
        }
        // Carbonyl carbons next to each other or carrying a halogen.
        let carbonyl: Vec<bool> = (0..n)
            .map(|i| {
                m.atoms[i].element == 6
                    && m.neighbours(i)
                        .any(|(w, b)| m.bonds[b].kekule_order == 2 && m.atoms[w].element == 8 && m.degree(w) == 1)
            })
            .collect();
        let carbonyl = |i: usize| carbonyl[i];
        let on_nitrogen = |i: usize| m.neighbours(i).any(|(w, _)| m.atoms[w].element == 7);
        for b in &m.bonds {
            if carbonyl(b.a) && carbonyl(b.b) {
                if on_nitrogen(b.a) || on_nitrogen(b.b) {
                    // Oxamides and oxamic acids: the amide correction already applies.
                    self.weak("adjacent carbonyls", "two carbonyl groups bonded to each other", 30.0);
                } else {
                    self.biased(
                        "adjacent carbonyls",
                        "two carbonyl groups bonded to each other (corrected by +46 kJ/mol)",
                        ADJACENT_CARBONYL_SIGMA_KJ_PER_MOL,
                        ADJACENT_CARBONYL_OFFSET_KJ_PER_MOL,
                    );
                }
            }
        }
        for i in 0..n {
            if carbonyl(i) && m.neighbours(i).any(|(w, _)| is_halogen(m.atoms[w].element)) {
                self.weak("acyl halide", "an acyl halide", 25.0);
            }
            if carbonyl(i) && m.neighbours(i).any(|(w, _)| m.atoms[w].element == 7) {
                self.biased(
                    "amide",
                    "an amide-type carbonyl (C=O on N; corrected by −61 kJ/mol)",
                    AMIDE_SIGMA_KJ_PER_MOL,
                    AMIDE_OFFSET_KJ_PER_MOL,
                );
            }
        }
        let polar: usize = [
            g::OH_ALCOHOL,
            g::OH_PHENOL,
            g::O,
            g::R_O,
            g::CO,
            g::R_CO,
            g::CHO,
            g::COOH,
            g::COO,
            g::EQ_O,
            g::NH2,
            g::NH,
            g::R_NH,
            g::N,
            g::EQ_N,
            g::R_EQ_N,
            g::EQ_NH,
            g::CN,
            g::NO2,
            g::SH,
            g::S,
            g::R_S,
        ]
        .iter()
        .map(|&k| self.counts[k - 1] as usize)
        .sum();
        for _ in 1..polar {
            self.weak("polar", "one more polar group (no group-interaction terms)", 5.0);
        }
        for k in [g::EQ_C_EQ, g::R_C, g::EQ_N, g::EQ_NH] {
            for _ in 0..self.counts[k - 1] {
                let sigma = if k == g::EQ_C_EQ { 30.0 } else { 10.0 };
                self.weak(
                    "rare group",
                    format!("group {} (few compounds behind its value)", GROUPS[k - 1].name),
                    sigma,
                );
            }
        }
    }
}

impl Groups {
    /// Assign every heavy atom of `m` to one Joback group.
    ///
    /// # Errors
    /// [`JobackError`] for an atom no group covers (metals, P, B, Si; sulfoxides; radicals;
    /// methane, water, ammonia, formaldehyde), for charged species (nitro groups written
    /// `[N+](=O)[O-]` aside) and for several disconnected parts.
    pub fn assign(m: &Molecule) -> Result<Groups, JobackError> {
        if m.component_count() != 1 {
            return Err(JobackError::NotAMolecule("this structure has several disconnected parts".into()));
        }
        if m.formula().charge != 0 {
            return Err(JobackError::NotAMolecule("this structure has a net charge".into()));
        }
        if m.atoms.iter().any(|a| a.isotope.is_some()) {
            return Err(JobackError::NotAMolecule(
                "isotope labels are not covered by the group values".into(),
            ));
        }
        if m.atoms.iter().any(|a| a.element == 1) {
            return Err(JobackError::NotAMolecule("hydrogen atoms not bonded to a heavy atom".into()));
        }
        let mut s = Assign {
            m,
            claimed: vec![false; m.atoms.len()],
            counts: [0; 41],
            weak: Vec::new(),
        };
        s.multi_atom_groups()?;
        for i in 0..m.atoms.len() {
            if !s.claimed[i] {
                s.atom_group(i)?;
            }
        }
        s.weak_spots();
        let heavy = m.heavy_atom_count() as u32;
        let hydrogens: u32 = m.atoms.iter().map(|a| a.hydrogens as u32).sum();
        Ok(Groups {
            counts: s.counts,
            atom_count: heavy + hydrogens,
            heavy_atoms: heavy,
            weak_spots: s.weak,
        })
    }

    fn sum(&self, property: &'static str, f: impl Fn(&Group) -> Option<f64>) -> Result<f64, JobackError> {
        let mut total = 0.0;
        for (k, &n) in self.counts.iter().enumerate() {
            if n > 0 {
                let v = f(&GROUPS[k]).ok_or(JobackError::MissingContribution {
                    property,
                    group: GROUPS[k].name,
                })?;
                total += n as f64 * v;
            }
        }
        Ok(total)
    }

    /// Enthalpy of fusion at the melting point, kJ/mol: ΔfusH = −0.88 + Σ ΔfusH,i (Joback & Reid
    /// 1987; group values in [`HFUS_KJ_PER_MOL`]).
    pub fn dhfus_kj_per_mol(&self) -> Result<f64, JobackError> {
        let mut total = -0.88;
        for (k, &n) in self.counts.iter().enumerate() {
            if n > 0 {
                let v = HFUS_KJ_PER_MOL[k].ok_or(JobackError::MissingContribution {
                    property: "ΔfusH",
                    group: GROUPS[k].name,
                })?;
                total += n as f64 * v;
            }
        }
        Ok(total)
    }

    /// Normal boiling point, K: Tb = 198.2 + Σ Tb,i.
    pub fn tb_k(&self) -> Result<f64, JobackError> {
        Ok(198.2 + self.sum("Tb", |g| g.tb)?)
    }

    /// Melting point, K: Tm = 122.5 + Σ Tm,i.
    pub fn tm_k(&self) -> Result<f64, JobackError> {
        Ok(122.5 + self.sum("Tm", |g| g.tm)?)
    }

    /// Critical temperature, K: Tc = Tb / (0.584 + 0.965 Σ − Σ²), with the given Tb.
    pub fn tc_k(&self, tb_k: f64) -> Result<f64, JobackError> {
        let s = self.sum("Tc", |g| g.tc)?;
        Ok(tb_k / (0.584 + 0.965 * s - s * s))
    }

    /// Critical pressure, bar: Pc = (0.113 + 0.0032 n_atoms − Σ Pc,i)⁻².
    pub fn pc_bar(&self) -> Result<f64, JobackError> {
        let s = self.sum("Pc", |g| g.pc)?;
        Ok((0.113 + 0.0032 * self.atom_count as f64 - s).powi(-2))
    }

    /// Ideal-gas ΔfH°(298.15 K), kJ/mol: 68.29 + Σ.
    pub fn dhf_gas_kj_per_mol(&self) -> Result<f64, JobackError> {
        Ok(68.29 + self.sum("ΔfH°", |g| g.hf)?)
    }

    /// Ideal-gas ΔfG°(298.15 K), kJ/mol: 53.88 + Σ.
    pub fn dgf_gas_kj_per_mol(&self) -> Result<f64, JobackError> {
        Ok(53.88 + self.sum("ΔfG°", |g| g.gf)?)
    }

    /// Ideal-gas Cp = a + bT + cT² + dT³ (J/(mol·K)): the four coefficients.
    pub fn cp_coefficients(&self) -> Result<[f64; 4], JobackError> {
        let mut c = [-37.93, 0.210, -3.91e-4, 2.06e-7];
        for (k, &n) in self.counts.iter().enumerate() {
            if n > 0 {
                let g = GROUPS[k].cp.ok_or(JobackError::MissingContribution {
                    property: "Cp",
                    group: GROUPS[k].name,
                })?;
                for (acc, v) in c.iter_mut().zip(g) {
                    *acc += n as f64 * v;
                }
            }
        }
        Ok(c)
    }

    /// ΔvapH at the normal boiling point, kJ/mol: 15.30 + Σ.
    pub fn dhvap_tb_kj_per_mol(&self) -> Result<f64, JobackError> {
        Ok(15.30 + self.sum("ΔvapH", |g| g.hvap)?)
    }

    /// Standard uncertainty of the ideal-gas ΔfH°, kJ/mol: the base ([`base_sigma_kj_per_mol`])
    /// and every weak spot in quadrature.
    pub fn dhf_sigma_kj_per_mol(&self) -> f64 {
        let base = base_sigma_kj_per_mol();
        let mut by_kind: Vec<(&str, f64)> = Vec::new();
        for w in &self.weak_spots {
            match by_kind.iter_mut().find(|k| k.0 == w.kind) {
                Some(k) => k.1 += w.sigma_kj_per_mol,
                None => by_kind.push((w.kind, w.sigma_kj_per_mol)),
            }
        }
        (base * base + by_kind.iter().map(|k| k.1 * k.1).sum::<f64>()).sqrt()
    }

    /// The project's bias corrections of ΔfH°(g) at weak spots ([`AMIDE_OFFSET_KJ_PER_MOL`],
    /// [`PEROXIDE_OFFSET_KJ_PER_MOL`]), kJ/mol.
    pub fn correction_kj_per_mol(&self) -> f64 {
        self.weak_spots.iter().map(|w| w.offset_kj_per_mol).sum()
    }

    /// (group name, count) of the groups present, in table order.
    pub fn present(&self) -> impl Iterator<Item = (&'static str, u16)> + '_ {
        self.counts
            .iter()
            .enumerate()
            .filter(|(_, &n)| n > 0)
            .map(|(k, &n)| (GROUPS[k].name, n))
    }
}

/// Standard uncertainty added for moving ΔvapH from Tb to 298.15 K, kJ/mol: Joback's ΔvapH(Tb)
/// error (303.5 cal/mol average, ×1.25 for σ) and the Watson step with an estimated Tb and Tc,
/// taken together as 4 kJ/mol (engine rule).
pub const DHVAP_SIGMA_KJ_PER_MOL: f64 = 4.0;

/// Watson's correlation: ΔvapH at `t_k` from its value at `t_ref_k`, exponent 0.38.
pub fn watson_kj_per_mol(dhvap_ref: f64, t_ref_k: f64, t_k: f64, tc_k: f64) -> f64 {
    dhvap_ref * ((1.0 - t_k / tc_k) / (1.0 - t_ref_k / tc_k)).powf(0.38)
}

/// Lee–Kesler acentric factor from Tb, Tc (K) and Pc (bar).
pub fn lee_kesler_omega(tb_k: f64, tc_k: f64, pc_bar: f64) -> f64 {
    let tbr = tb_k / tc_k;
    let t6 = tbr.powi(6);
    let ln_p = (1.01325 / pc_bar).ln();
    (ln_p - 5.92714 + 6.09648 / tbr + 1.28862 * tbr.ln() - 0.169347 * t6) / (15.2518 - 15.6875 / tbr - 13.4721 * tbr.ln() + 0.43577 * t6)
}

/// Rowlinson–Bondi liquid heat capacity, J/(mol·K), from the ideal-gas value.
pub fn rowlinson_bondi(t_k: f64, tc_k: f64, omega: f64, cp_gas: f64) -> f64 {
    let tr = t_k / tc_k;
    let x = 1.0 - tr;
    cp_gas + R * (1.45 + 0.45 / x + 0.25 * omega * (17.11 + 25.2 * x.cbrt() / tr + 1.742 / x))
}

/// Everything the estimate gives for one molecule.
#[derive(Clone, Debug, PartialEq)]
pub struct Estimate {
    pub groups: Groups,
    /// ΔfH°(g) by the published method alone, before the project's corrections, kJ/mol.
    pub published_dhf_gas_kj_per_mol: f64,
    pub tb_k: f64,
    pub tm_k: Option<f64>,
    /// Where Tb and Tm come from: the estimate, or a measured value of the name table.
    pub tb_source: String,
    pub tm_source: String,
    /// ΔfusH at the melting point, kJ/mol (Joback), where every group has a value.
    pub dhfus_kj_per_mol: Option<f64>,
    pub tc_k: Option<f64>,
    pub pc_bar: Option<f64>,
    pub dhf_gas_kj_per_mol: f64,
    pub dgf_gas_kj_per_mol: f64,
    pub cp: [f64; 4],
    pub dhvap_tb_kj_per_mol: f64,
    /// An amino acid whose solid is a zwitterion ([`forms_zwitterion`]).
    pub zwitterion: bool,
    /// Benson's groups for the ideal gas, or why they do not cover the molecule. Where they do,
    /// the species takes its gas ΔfH°, S°, Cp and σ from them and the rest (Tb, Tc, Pc, ΔvapH,
    /// ΔfusH) from Joback.
    pub benson: Result<Benson, BensonError>,
}

impl Estimate {
    /// # Errors
    /// [`JobackError`] when a group is not covered or lacks a ΔfH°, ΔfG°, Cp, Tb or ΔvapH value.
    pub fn of(m: &Molecule) -> Result<Estimate, JobackError> {
        let groups = Groups::assign(m)?;
        let tb_k = groups.tb_k()?;
        Ok(Estimate {
            tm_k: groups.tm_k().ok(),
            tb_source: "Joback estimate".into(),
            tm_source: "Joback estimate".into(),
            dhfus_kj_per_mol: groups.dhfus_kj_per_mol().ok(),
            tc_k: groups.tc_k(tb_k).ok(),
            pc_bar: groups.pc_bar().ok(),
            // A ΔfH° correction moves ΔfG° by the same amount, so S° is the method's.
            published_dhf_gas_kj_per_mol: groups.dhf_gas_kj_per_mol()?,
            dhf_gas_kj_per_mol: groups.dhf_gas_kj_per_mol()? + groups.correction_kj_per_mol(),
            dgf_gas_kj_per_mol: groups.dgf_gas_kj_per_mol()? + groups.correction_kj_per_mol(),
            cp: groups.cp_coefficients()?,
            dhvap_tb_kj_per_mol: groups.dhvap_tb_kj_per_mol()?,
            tb_k,
            groups,
            benson: Benson::of(m),
            zwitterion: forms_zwitterion(m),
        })
    }

    /// The method the ideal gas comes from.
    pub fn gas_method(&self) -> &'static str {
        match &self.benson {
            Ok(b) if b.second_tier.is_empty() => crate::benson::METHOD,
            Ok(_) => crate::benson::METHOD_DHF_ONLY,
            Err(_) => METHOD,
        }
    }

    /// ΔfH°(g, 298.15 K) the species uses, kJ/mol: Benson's where it covers the molecule.
    pub fn gas_dhf_kj_per_mol(&self) -> f64 {
        self.benson.as_ref().map_or(self.dhf_gas_kj_per_mol, |b| b.dhf_gas_kj_per_mol)
    }

    /// σ of [`Estimate::gas_dhf_kj_per_mol`], kJ/mol.
    pub fn gas_dhf_sigma_kj_per_mol(&self) -> f64 {
        self.benson
            .as_ref()
            .map_or_else(|_| self.groups.dhf_sigma_kj_per_mol(), |b| b.dhf_sigma_kj_per_mol)
    }

    fn gas_sigma_basis(&self) -> &'static str {
        if self.benson.is_ok() {
            BENSON_SIGMA_BASIS
        } else {
            SIGMA_BASIS
        }
    }

    /// Cp polynomial of the gas the species uses, J/(mol·K).
    pub fn gas_cp(&self) -> [f64; 4] {
        self.benson.as_ref().ok().and_then(|b| b.cp).unwrap_or(self.cp)
    }

    fn gas_cp_at(&self, t_k: f64) -> f64 {
        let [a, b, c, d] = self.gas_cp();
        a + t_k * (b + t_k * (c + t_k * d))
    }

    /// S°(g, 298.15 K) the species uses: Benson's where it covers the molecule, else Joback's
    /// from ΔfH° and ΔfG° ([`Estimate::s_gas_j_per_mol_k`]).
    ///
    /// # Errors
    /// As [`Estimate::s_gas_j_per_mol_k`].
    pub fn gas_s_j_per_mol_k(&self, formula: &Formula, element_entropy: &dyn Fn(Z) -> Option<f64>) -> Result<f64, JobackError> {
        match self.benson.as_ref().ok().and_then(|b| b.s_gas_j_per_mol_k) {
            Some(s) => Ok(s),
            None => self.s_gas_j_per_mol_k(formula, element_entropy),
        }
    }

    /// The estimate with measured melting and boiling points where known (value K, source): Tc
    /// is re-estimated from the measured Tb, as Joback's Tc formula intends.
    pub fn with_measured(mut self, tm: Option<(f64, &str)>, tb: Option<(f64, &str)>) -> Estimate {
        if let Some((t, src)) = tb {
            self.tb_k = t;
            self.tb_source = format!("measured ({src})");
            self.tc_k = self.groups.tc_k(t).ok();
        }
        if let Some((t, src)) = tm {
            self.tm_k = Some(t);
            self.tm_source = format!("measured ({src})");
        }
        self
    }

    /// The stable state at 298.15 K and 1 bar from Tm and Tb, and why.
    pub fn state_at_298(&self) -> (Phase, String) {
        if let Some(tm) = self.tm_k.filter(|&t| t > T_REF_K) {
            return (Phase::Solid, format!("Tm = {tm:.0} K ({}) is above 298.15 K", self.tm_source));
        }
        if self.tb_k > T_REF_K {
            (
                Phase::Liquid,
                format!("Tb = {:.0} K ({}) is above 298.15 K", self.tb_k, self.tb_source),
            )
        } else {
            (
                Phase::Gas,
                format!("Tb = {:.0} K ({}) is below 298.15 K", self.tb_k, self.tb_source),
            )
        }
    }

    /// Liquid-to-solid step at 298.15 K: ΔfusH (Joback, at Tm, taken as the value at 298.15 K)
    /// and ΔfusS = ΔfusH / Tm.
    ///
    /// # Errors
    /// When Tm or a group's ΔfusH has no value.
    pub fn fusion(&self) -> Result<Fusion, JobackError> {
        let tm = self
            .tm_k
            .ok_or_else(|| JobackError::Unsupported("solid-phase", "no melting point for these groups".into()))?;
        let dh = self
            .dhfus_kj_per_mol
            .ok_or_else(|| JobackError::Unsupported("solid-phase", "no enthalpy-of-fusion value for these groups".into()))?;
        // A negative or tiny sum is outside the method's range: fusion always absorbs heat.
        let dh = dh.max(1.0);
        Ok(Fusion {
            dhfus_kj_per_mol: dh,
            dsfus_j_per_mol_k: dh * 1000.0 / tm,
            tm_k: tm,
            zwitterion_kj_per_mol: if self.zwitterion { ZWITTERION_LATTICE_KJ_PER_MOL } else { 0.0 },
        })
    }

    pub fn cp_gas_j_per_mol_k(&self, t_k: f64) -> f64 {
        let [a, b, c, d] = self.cp;
        a + t_k * (b + t_k * (c + t_k * d))
    }

    /// S°(g, 298.15 K), J/(mol·K): (ΔfH° − ΔfG°)/T + Σ n S°(elements), with the elements'
    /// standard entropies from `element_entropy` (None for an element it does not know).
    ///
    /// # Errors
    /// [`JobackError::Unsupported`] for an element without a reference entropy.
    pub fn s_gas_j_per_mol_k(&self, formula: &Formula, element_entropy: &dyn Fn(Z) -> Option<f64>) -> Result<f64, JobackError> {
        let mut s_el = 0.0;
        for &(z, n) in &formula.atoms {
            let s = element_entropy(z).ok_or_else(|| {
                JobackError::Unsupported("entropy", format!("no reference-state entropy for {}", crate::elements::symbol(z)))
            })?;
            s_el += n as f64 * s;
        }
        Ok((self.dhf_gas_kj_per_mol - self.dgf_gas_kj_per_mol) * 1000.0 / T_REF_K + s_el)
    }

    /// ΔvapH(298.15 K) by Watson from Tb, kJ/mol.
    ///
    /// # Errors
    /// When Tc has no estimate.
    pub fn dhvap_298_kj_per_mol(&self) -> Result<f64, JobackError> {
        let tc = self.tc_k.ok_or(JobackError::Unsupported(
            "liquid",
            "no critical temperature for these groups".into(),
        ))?;
        Ok(watson_kj_per_mol(self.dhvap_tb_kj_per_mol, self.tb_k, T_REF_K, tc))
    }

    /// Vapour pressure at `t_k`, bar, from Clausius–Clapeyron integrated from (Tb, 1 atm) with
    /// ΔvapH(T) by Watson (Simpson's rule, 64 intervals).
    pub fn vapour_pressure_bar(&self, t_k: f64, tc_k: f64) -> f64 {
        let f = |t: f64| watson_kj_per_mol(self.dhvap_tb_kj_per_mol, self.tb_k, t, tc_k) * 1000.0 / (R * t * t);
        let (a, b) = (t_k, self.tb_k);
        let n = 64;
        let h = (b - a) / n as f64;
        let mut s = f(a) + f(b);
        for k in 1..n {
            s += f(a + k as f64 * h) * if k % 2 == 1 { 4.0 } else { 2.0 };
        }
        1.01325 * (-(s * h / 3.0)).exp()
    }

    /// Gas-to-liquid step at 298.15 K from the estimated Tb, Tc, Pc and ΔvapH(Tb).
    ///
    /// # Errors
    /// When Tc or Pc has no estimate, or Tc is not above Tb and 298.15 K.
    pub fn vaporization(&self) -> Result<Vaporization, JobackError> {
        let tc = self.tc_k.ok_or(JobackError::Unsupported(
            "liquid",
            "no critical temperature for these groups".into(),
        ))?;
        let pc = self
            .pc_bar
            .ok_or(JobackError::Unsupported("liquid", "no critical pressure for these groups".into()))?;
        if !(tc > self.tb_k && tc > T_REF_K) {
            return Err(JobackError::Unsupported(
                "liquid",
                format!("estimated Tc = {tc:.0} K is not above Tb and 298.15 K"),
            ));
        }
        let dhvap = watson_kj_per_mol(self.dhvap_tb_kj_per_mol, self.tb_k, T_REF_K, tc);
        let p_sat_bar = self.vapour_pressure_bar(T_REF_K, tc);
        // ΔvapG° = −RT ln(p_sat / p°), p° = 1 bar.
        let dgvap_kj = -R * T_REF_K * p_sat_bar.ln() / 1000.0;
        Ok(Vaporization {
            dhvap_298_kj_per_mol: dhvap,
            dsvap_298_j_per_mol_k: (dhvap - dgvap_kj) * 1000.0 / T_REF_K,
            p_sat_298_bar: p_sat_bar,
            tc_k: tc,
            omega: lee_kesler_omega(self.tb_k, tc, pc),
            // Valid up to the estimated boiling point (the liquid boils there at 1 bar) and down
            // to the estimated melting point, at most 298.15 K and at least 200 K.
            t_min_k: self.tm_k.unwrap_or(200.0).clamp(200.0, T_REF_K),
            t_max_k: self.tb_k.max(T_REF_K),
        })
    }

    /// Build the species the engine uses. `phase`: `Some(Gas)`, `Some(Liquid)`, or `None` for the
    /// stable phase at 298.15 K by the estimated Tb (gas when Tb ≤ 298.15 K).
    ///
    /// # Errors
    /// [`JobackError`] for a solid or aqueous species, or a liquid without Tc/Pc estimates.
    pub fn resolved(
        &self,
        label_base: &str,
        formula: &Formula,
        phase: Option<Phase>,
        element_entropy: &dyn Fn(Z) -> Option<f64>,
    ) -> Result<Resolved, JobackError> {
        let mut notes = Vec::new();
        let phase = match phase {
            Some(p) => p,
            None => {
                let (p, why) = self.state_at_298();
                notes.push(format!("{label_base}: no state given; {why}: a {} at 298.15 K", p.name()));
                p
            }
        };
        let s_gas = self.gas_s_j_per_mol_k(formula, element_entropy)?;
        let sigma_gas = self.gas_dhf_sigma_kj_per_mol();
        let mut origin = vec![Origin::Estimated {
            method: self.gas_method().to_string(),
        }];
        if self.benson.is_ok() {
            origin.push(Origin::Estimated {
                method: format!("boiling, melting and critical points and phase changes from {METHOD}"),
            });
        }
        let dhf_gas = self.gas_dhf_kj_per_mol();
        let cp_gas = self.gas_cp();
        let cp_298 = self.gas_cp_at(T_REF_K);
        let basis = self.gas_sigma_basis();
        match &self.benson {
            Ok(b) => {
                notes.push(format!(
                    "{label_base}: ideal gas by Benson groups {} (σ {:.0}, optical isomers {:.0})",
                    b.groups_text(),
                    b.symmetry_number,
                    b.optical_isomers
                ));
                if !b.widened.is_empty() {
                    notes.push(format!("{label_base}: estimate widened for {}", b.widened.join("; ")));
                }
            }
            Err(e) => notes.push(format!("{label_base}: ideal gas by Joback ({e})")),
        }
        let mut counted: Vec<(&str, usize)> = Vec::new();
        for w in &self.groups.weak_spots {
            match counted.iter_mut().find(|c| c.0 == w.what.as_ref()) {
                Some(c) => c.1 += 1,
                None => counted.push((w.what.as_ref(), 1)),
            }
        }
        let weak: Vec<String> = counted
            .iter()
            .map(|&(w, n)| if n > 1 { format!("{w} (×{n})") } else { w.to_string() })
            .collect();
        if !weak.is_empty() && self.benson.is_err() {
            notes.push(format!("{label_base}: estimate widened for {}", weak.join("; ")));
        }
        match phase {
            Phase::Gas => {
                let seg = cubic_cp_segment(CP_RANGE_K.0, CP_RANGE_K.1, cp_gas, dhf_gas, s_gas);
                // The estimated liquid, where it can be had, is the rival phase that shows where
                // the gas condenses inside a grid.
                let rivals = self
                    .vaporization()
                    .map(|v| vec![v.liquid_segment(dhf_gas, s_gas, cp_298).0])
                    .unwrap_or_default();
                Ok(Resolved {
                    label: format!("{label_base}(g)"),
                    formula: formula.clone(),
                    phase,
                    segments: vec![seg],
                    origin,
                    dhf_uncertainty_kj_per_mol: Some(sigma_gas),
                    sigma_basis: basis.into(),
                    notes,
                    rivals,
                })
            }
            Phase::Liquid => {
                let v = self.vaporization()?;
                if self.tb_k < T_REF_K {
                    notes.push(format!(
                        "{label_base}: estimated Tb = {:.0} K is below 298.15 K: the liquid is hypothetical at 1 bar",
                        self.tb_k
                    ));
                }
                let (seg, cp_l) = v.liquid_segment(dhf_gas, s_gas, cp_298);
                notes.push(format!("{label_base}(l): liquid Cp held at the Rowlinson–Bondi value at 298.15 K ({cp_l:.0} J/mol/K); valid to the estimated Tb = {:.0} K", self.tb_k));
                Ok(Resolved {
                    label: format!("{label_base}(l)"),
                    formula: formula.clone(),
                    phase,
                    segments: vec![seg],
                    origin,
                    dhf_uncertainty_kj_per_mol: Some((sigma_gas * sigma_gas + DHVAP_SIGMA_KJ_PER_MOL * DHVAP_SIGMA_KJ_PER_MOL).sqrt()),
                    sigma_basis: format!("{basis}, with the vaporization's σ"),
                    notes,
                    rivals: vec![cubic_cp_segment(CP_RANGE_K.0, CP_RANGE_K.1, cp_gas, dhf_gas, s_gas)],
                })
            }
            Phase::Solid => {
                let v = self.vaporization()?;
                let f = self.fusion()?;
                let (liquid, cp_l) = v.liquid_segment(dhf_gas, s_gas, cp_298);
                let solid = f.solid_segment(&liquid, cp_l);
                notes.push(format!(
                    "{label_base}(s): solid = gas − ΔvapH(298.15 K) {:.1} − ΔfusH {:.1} kJ/mol (Joback at Tm = {:.0} K, {}); solid Cp taken as the liquid's ({cp_l:.0} J/mol/K, no solid Cp method), valid to Tm",
                    v.dhvap_298_kj_per_mol, f.dhfus_kj_per_mol, f.tm_k, self.tm_source
                ));
                if let Some(n) = f.zwitterion_note() {
                    notes.push(format!("{label_base}(s): {n}"));
                }
                let sigma = (sigma_gas * sigma_gas + DHVAP_SIGMA_KJ_PER_MOL.powi(2) + f.sigma_kj_per_mol().powi(2)).sqrt();
                Ok(Resolved {
                    label: format!("{label_base}(s)"),
                    formula: formula.clone(),
                    phase,
                    segments: vec![solid],
                    origin,
                    dhf_uncertainty_kj_per_mol: Some(sigma),
                    sigma_basis: format!("{basis}, with the vaporization's and the fusion's σ"),
                    notes,
                    rivals: vec![liquid, cubic_cp_segment(CP_RANGE_K.0, CP_RANGE_K.1, cp_gas, dhf_gas, s_gas)],
                })
            }
            Phase::Aqueous => Err(JobackError::Unsupported("aqueous", "Joback gives no solution properties".into())),
        }
    }
}

/// The solid relative to the liquid at 298.15 K, from an estimate.
#[derive(Clone, Copy, Debug, PartialEq)]
pub struct Fusion {
    pub dhfus_kj_per_mol: f64,
    pub dsfus_j_per_mol_k: f64,
    pub tm_k: f64,
    /// Extra lattice enthalpy of a zwitterionic crystal (0 for other molecules), kJ/mol.
    pub zwitterion_kj_per_mol: f64,
}

impl Fusion {
    /// σ of the liquid-to-solid step, kJ/mol.
    pub fn sigma_kj_per_mol(&self) -> f64 {
        let zw = if self.zwitterion_kj_per_mol > 0.0 {
            ZWITTERION_SIGMA_KJ_PER_MOL
        } else {
            0.0
        };
        (FUSION_SIGMA_KJ_PER_MOL.powi(2) + zw * zw).sqrt()
    }

    /// The note for a zwitterionic solid, if this is one.
    pub fn zwitterion_note(&self) -> Option<String> {
        (self.zwitterion_kj_per_mol > 0.0).then(|| {
            format!(
                "an amino acid: its crystal is taken as the zwitterion, {:.1} kJ/mol more stable than the molecular estimate (project rule set on five amino acids, CRC)",
                self.zwitterion_kj_per_mol
            )
        })
    }

    /// The solid's segment below a liquid segment: ΔfH° and S° lower by ΔfusH and ΔfusS, Cp the
    /// liquid's (`cp_j_per_mol_k`), valid from 200 K to Tm.
    pub fn solid_segment(&self, liquid: &Segment, cp_j_per_mol_k: f64) -> Segment {
        let (h_rt, s_r) = liquid.h_rt_s_r(T_REF_K, T_REF_K.ln());
        Segment::constant_cp(
            200.0_f64.min(self.tm_k),
            self.tm_k.max(T_REF_K),
            h_rt * R * T_REF_K / 1000.0 - self.dhfus_kj_per_mol - self.zwitterion_kj_per_mol,
            s_r * R - self.dsfus_j_per_mol_k,
            cp_j_per_mol_k,
        )
    }
}

/// The liquid relative to the ideal gas at 298.15 K, from an estimate.
#[derive(Clone, Copy, Debug, PartialEq)]
pub struct Vaporization {
    pub dhvap_298_kj_per_mol: f64,
    pub dsvap_298_j_per_mol_k: f64,
    pub p_sat_298_bar: f64,
    pub tc_k: f64,
    pub omega: f64,
    pub t_min_k: f64,
    pub t_max_k: f64,
}

impl Vaporization {
    /// The liquid's segment from gas-phase ΔfH° (kJ/mol), S° and Cp at 298.15 K (J/(mol·K)), and
    /// the liquid Cp used (Rowlinson–Bondi at 298.15 K, held constant).
    pub fn liquid_segment(&self, dhf_gas_kj_per_mol: f64, s_gas_j_per_mol_k: f64, cp_gas_298: f64) -> (Segment, f64) {
        let cp_l = rowlinson_bondi(T_REF_K, self.tc_k, self.omega, cp_gas_298);
        let seg = Segment::constant_cp(
            self.t_min_k,
            self.t_max_k,
            dhf_gas_kj_per_mol - self.dhvap_298_kj_per_mol,
            s_gas_j_per_mol_k - self.dsvap_298_j_per_mol_k,
            cp_l,
        );
        (seg, cp_l)
    }
}

/// A NASA 9 segment with Cp = a + bT + cT² + dT³ (J/(mol·K)) fixed to ΔfH° and S° at 298.15 K.
pub fn cubic_cp_segment(t_min_k: f64, t_max_k: f64, cp: [f64; 4], dhf_kj_per_mol: f64, s_j_per_mol_k: f64) -> Segment {
    let [a3, a4, a5, a6] = cp.map(|c| c / R);
    let t = T_REF_K;
    let h_rt_poly = a3 + a4 * t / 2.0 + a5 * t * t / 3.0 + a6 * t * t * t / 4.0;
    let s_r_poly = a3 * t.ln() + a4 * t + a5 * t * t / 2.0 + a6 * t * t * t / 3.0;
    let b1 = dhf_kj_per_mol * 1000.0 / R - h_rt_poly * t;
    let b2 = s_j_per_mol_k / R - s_r_poly;
    Segment {
        t_min_k,
        t_max_k,
        a: [0.0, 0.0, a3, a4, a5, a6, 0.0, b1, b2],
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    fn groups(s: &str) -> Vec<(&'static str, u16)> {
        Groups::assign(&Molecule::parse(s, 0).unwrap())
            .unwrap_or_else(|e| panic!("{s}: {e}"))
            .present()
            .collect()
    }

    fn estimate(s: &str) -> Estimate {
        Estimate::of(&Molecule::parse(s, 0).unwrap()).unwrap_or_else(|e| panic!("{s}: {e}"))
    }

    #[test]
    fn table_has_41_groups_with_the_published_first_and_last_rows() {
        // Poling et al. 5th ed. Table 2-2 (via thermo 0.6.1): -CH3 and -S- (ring).
        assert_eq!(GROUPS[0].name, "-CH3");
        assert_eq!(GROUPS[0].hf, Some(-76.45));
        assert_eq!(GROUPS[40].name, "-S- (ring)");
        assert_eq!(GROUPS[40].gf, Some(27.76));
    }

    #[test]
    fn acetone_worked_example() {
        // Worked example for acetone (2 × -CH3, 1 × >C=O nonring), as given in the Wikipedia
        // article "Joback method" and reproduced in thermo 0.6.1's docstrings (Joback.Tb, .Tc,
        // .Hf, .Gf, .Hvap, .Cpig_coeffs): Tb 322.11 K, Tc 500.559 K, ΔfH° −217.83 kJ/mol,
        // ΔfG° −154.54 kJ/mol, ΔvapH(Tb) 29.018 kJ/mol, Cp(300 K) 75.32642 J/mol/K.
        let e = estimate("CC(=O)C");
        assert_eq!(e.groups.present().collect::<Vec<_>>(), [("-CH3", 2), (">C=O (nonring)", 1)]);
        assert!((e.tb_k - 322.11).abs() < 1e-9);
        assert!((e.tc_k.unwrap() - 500.559).abs() < 1e-3);
        assert!((e.dhf_gas_kj_per_mol + 217.83).abs() < 1e-9);
        assert!((e.dgf_gas_kj_per_mol + 154.54).abs() < 1e-9);
        assert!((e.dhvap_tb_kj_per_mol - 29.018).abs() < 1e-9);
        assert!((e.cp_gas_j_per_mol_k(300.0) - 75.32642).abs() < 1e-6);
        // Pc: thermo 0.6.1 docstring, 4802499.604994407 Pa.
        assert!((e.pc_bar.unwrap() - 48.02499604994407).abs() < 1e-6);
    }

    #[test]
    fn two_methylphenol_critical_temperature_with_known_tb() {
        // Poling et al., The Properties of Gases and Liquids, 6th ed. (Elliott et al. 2023),
        // Joback example for 2-methylphenol with experimental Tb = 464.15 K: Tc = 692.64 K
        // (quoted in thermo 0.6.1's Joback class docstring).
        let e = estimate("CC1=CC=CC=C1O");
        let tc = e.groups.tc_k(464.15).unwrap();
        assert!((tc - 692.64).abs() < 0.01, "{tc}");
    }

    #[test]
    fn group_assignment() {
        assert_eq!(groups("CCO"), [("-CH3", 1), ("-CH2-", 1), ("-OH (alcohol)", 1)]);
        assert_eq!(groups("c1ccccc1O"), [("=CH- (ring)", 5), ("=C< (ring)", 1), ("-OH (phenol)", 1)]);
        assert_eq!(groups("CC(=O)O"), [("-CH3", 1), ("-COOH (acid)", 1)]);
        assert_eq!(groups("CC(=O)OC"), [("-CH3", 2), ("-COO- (ester)", 1)]);
        assert_eq!(groups("CC=O"), [("-CH3", 1), ("O=CH- (aldehyde)", 1)]);
        assert_eq!(groups("O=C1CCCCC1"), [("-CH2- (ring)", 5), (">C=O (ring)", 1)]);
        assert_eq!(groups("CC#N"), [("-CH3", 1), ("-CN", 1)]);
        assert_eq!(groups("C[N+](=O)[O-]"), [("-CH3", 1), ("-NO2", 1)]);
        assert_eq!(groups("CN(=O)=O"), [("-CH3", 1), ("-NO2", 1)]);
        assert_eq!(groups("c1ccncc1"), [("=CH- (ring)", 5), ("-N= (ring)", 1)]);
        assert_eq!(groups("c1cc[nH]c1"), [("=CH- (ring)", 4), (">NH (ring)", 1)]);
        assert_eq!(groups("c1ccsc1"), [("=CH- (ring)", 4), ("-S- (ring)", 1)]);
        assert_eq!(groups("C1CCOC1"), [("-CH2- (ring)", 4), ("-O- (ring)", 1)]);
        assert_eq!(groups("CCS"), [("-CH3", 1), ("-CH2-", 1), ("-SH", 1)]);
        assert_eq!(groups("CSC"), [("-CH3", 2), ("-S- (nonring)", 1)]);
        assert_eq!(groups("CNC"), [("-CH3", 2), (">NH (nonring)", 1)]);
        assert_eq!(groups("CN(C)C"), [("-CH3", 3), (">N- (nonring)", 1)]);
        assert_eq!(groups("CCN"), [("-CH3", 1), ("-CH2-", 1), ("-NH2", 1)]);
        assert_eq!(groups("C=C=C"), [("=CH2", 2), ("=C=", 1)]);
        assert_eq!(groups("CC#C"), [("-CH3", 1), ("≡CH", 1), ("≡C-", 1)]);
        assert_eq!(groups("CC(C)=C"), [("-CH3", 2), ("=CH2", 1), ("=C<", 1)]);
        assert_eq!(groups("FC(F)(F)Cl"), [(">C<", 1), ("-F", 3), ("-Cl", 1)]);
        assert_eq!(groups("CC(=O)N"), [("-CH3", 1), (">C=O (nonring)", 1), ("-NH2", 1)]);
        assert_eq!(groups("CC(C)=NC"), [("-CH3", 3), ("=C<", 1), ("-N= (nonring)", 1)]);
        assert_eq!(groups("CC(C)=N"), [("-CH3", 2), ("=C<", 1), ("=NH", 1)]);
    }

    #[test]
    fn uncovered_structures_are_errors() {
        for s in [
            "C",
            "O",
            "N",
            "C=O",
            "CS(=O)C",
            "[Na+].[Cl-]",
            "CP(C)C",
            "[CH3]",
            "CCO.O",
            "C[N+](C)(C)C",
            "COC(=O)OC",
            "Cl",
        ] {
            assert!(Estimate::of(&Molecule::parse(s, 0).unwrap()).is_err(), "{s}");
        }
    }

    #[test]
    fn uncertainty_grows_at_weak_spots() {
        let base = base_sigma_kj_per_mol();
        // √(π/2) × 2.2 kcal/mol (Joback & Reid 1987 average absolute error of ΔfH°(g)).
        assert!((base - 11.54).abs() < 0.01, "{base}");
        let hexane = estimate("CCCCCC").groups.dhf_sigma_kj_per_mol();
        assert!((hexane - base).abs() < 1e-9);
        assert!(estimate("C1CC1").groups.dhf_sigma_kj_per_mol() > 40.0);
        assert!(estimate("C1CCC1").groups.dhf_sigma_kj_per_mol() > 40.0);
        assert!(estimate("c1ccc2ccccc2c1").groups.dhf_sigma_kj_per_mol() > hexane);
        assert!(estimate("ClC(Cl)Cl").groups.dhf_sigma_kj_per_mol() > 20.0);
    }

    #[test]
    fn segment_reproduces_the_estimate() {
        // Definition check: H(298.15) = ΔfH°, S(298.15) = S°, Cp(T) = the Joback cubic.
        let e = estimate("CCCCCC");
        let seg = cubic_cp_segment(298.15, 1000.0, e.cp, e.dhf_gas_kj_per_mol, 388.0);
        let (h, s) = seg.h_rt_s_r(T_REF_K, T_REF_K.ln());
        assert!((h * R * T_REF_K / 1000.0 - e.dhf_gas_kj_per_mol).abs() < 1e-9);
        assert!((s * R - 388.0).abs() < 1e-9);
        for t in [300.0, 500.0, 900.0] {
            assert!((seg.cp_over_r(t) * R - e.cp_gas_j_per_mol_k(t)).abs() < 1e-9);
        }
    }
}
