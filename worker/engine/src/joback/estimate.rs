//! The estimate of one molecule (the published sums, the project's corrections and σ) and its
//! conversion to a resolved species.

use super::*;

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

    pub(super) fn gas_sigma_basis(&self) -> &'static str {
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

    pub(super) fn gas_cp_at(&self, t_k: f64) -> f64 {
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
