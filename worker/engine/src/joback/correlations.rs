//! Correlations beside Joback's: Watson's ΔvapH, Lee–Kesler's acentric factor,
//! Rowlinson–Bondi's liquid Cp, fusion and vaporization from an estimate, cubic Cp segments.

use super::*;

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
