//! One reaction, end to end: cut the equation, resolve each species (cached by its written text),
//! net out species on both sides, balance or check the written coefficients, and evaluate the
//! thermodynamics at 298.15 K and over the grid.
//!
//! A [`Screener`] holds the grid and a cache of resolved species with their states already
//! evaluated at the grid temperatures, so a batch pays for each species' polynomials once.
//!
//! Reaction SMILES take their species' phase from the screener's default phase (the case's
//! `phase` column); SMILES species are resolved by [`crate::structures::resolve_smiles`] and
//! merged by canonical structure, so `OCC` and `C(O)C` are one species.

use crate::balance::{self, Balance, BalanceError, Column, Outcome, Side};
use crate::equation::{split_equation, Arrow, Notation, RawTerm};
use crate::formula::{parse_species, SpeciesSpec, SyntaxError};
use crate::smiles::{Molecule, SmilesError};
use crate::species::Origin;
use crate::structures::{self, DefaultPhase, SmilesSpeciesError, Structures};
use crate::rational::Rational;
use crate::species::{from_supplied, Resolved, ResolveError, State, SuppliedSpecies, Table, T_REF_K};
use crate::thermo::{self, ladder_k, TemperatureGrid, ThermoPoint};
use std::collections::HashMap;
use std::sync::Arc;

/// Why one reaction could not be screened. Each error is about this case only.
#[derive(Clone, Debug, PartialEq, thiserror::Error)]
pub enum ScreenError {
    #[error("{0}")]
    Syntax(#[from] SyntaxError),
    #[error("species at byte {position}: {error}")]
    Species { position: usize, error: ResolveError },
    #[error("{0}")]
    Balance(#[from] BalanceError),
    #[error("{0}")]
    Smiles(#[from] SmilesError),
}

/// A resolved species with its states precomputed for the screener's grid.
#[derive(Debug)]
pub struct Prepared {
    pub resolved: Resolved,
    at_ref: State,
    at_grid: Vec<State>,
    /// States at [`ladder_k`] temperatures, for the ΔrG° = 0 search.
    at_ladder: Vec<State>,
}

/// One species of a screened reaction with its stoichiometric number (negative for reactants).
#[derive(Clone, Debug)]
pub struct SpeciesTerm {
    pub species: Arc<Prepared>,
    pub nu: Rational,
}

/// The screening result for one reaction.
#[derive(Clone, Debug)]
pub struct Screened {
    /// The balanced equation with the species as resolved: `2 Al(s) + Fe2O3(s) -> Al2O3(s) + 2 Fe(s)`.
    pub balanced_equation: String,
    pub outcome: Outcome,
    pub species: Vec<SpeciesTerm>,
    /// At 298.15 K.
    pub standard: ThermoPoint,
    /// At each grid temperature, in grid order.
    pub points: Vec<ThermoPoint>,
    /// Lowest temperature inside every species' valid range where ΔrG° = 0, if any.
    pub delta_g_zero_k: Option<f64>,
    /// Root-sum-square of ν·σ(ΔfH°) when every species has an uncertainty.
    pub delta_h_uncertainty_kj_per_mol: Option<f64>,
    /// Temperatures over which every species' data is valid.
    pub valid_range_k: (f64, f64),
    pub notes: Vec<String>,
    /// How many of `species` were estimated (any [`Origin::Estimated`] in their data).
    pub estimated_species: usize,
    /// Agents of a reaction SMILES as written (not balanced).
    pub agents: Vec<String>,
}

/// Screens reactions against one data table and one temperature grid.
pub struct Screener<'t> {
    table: &'t Table,
    grid: TemperatureGrid,
    supplied: HashMap<String, SuppliedSpecies>,
    cache: HashMap<String, Result<Arc<Prepared>, ResolveError>>,
    /// Phase of SMILES species (a SMILES carries none).
    default_phase: DefaultPhase,
    structures: &'static Structures,
    /// SMILES species by (canonical key, phase asked): one species however it is written.
    by_structure: HashMap<(String, DefaultPhase), Arc<Prepared>>,
}

impl<'t> Screener<'t> {
    pub fn new(table: &'t Table, grid: TemperatureGrid) -> Screener<'t> {
        Screener {
            table,
            grid,
            supplied: HashMap::new(),
            cache: HashMap::new(),
            default_phase: DefaultPhase::Standard,
            structures: structures::bundled(),
            by_structure: HashMap::new(),
        }
    }

    /// The phase SMILES species take from now on (the case's `phase`; `Standard` by default).
    pub fn set_default_phase(&mut self, phase: DefaultPhase) {
        self.default_phase = phase;
    }

    pub fn default_phase(&self) -> DefaultPhase {
        self.default_phase
    }

    /// Screen one reaction with SMILES species in `phase` (formula species keep their tags).
    ///
    /// # Errors
    /// As [`Screener::screen`].
    pub fn screen_with(&mut self, equation: &str, phase: DefaultPhase) -> Result<Screened, ScreenError> {
        let before = std::mem::replace(&mut self.default_phase, phase);
        let out = self.screen(equation);
        self.default_phase = before;
        out
    }

    /// A SMILES species, from the cache when seen before (by text, then by structure).
    ///
    /// # Errors
    /// `ScreenError::Smiles` for a SMILES that does not parse (with its byte position),
    /// `ScreenError::Species` when it has no data and cannot be estimated.
    pub fn smiles_species(&mut self, text: &str, position: usize) -> Result<Arc<Prepared>, ScreenError> {
        let cache_key = format!("{}\u{1}{text}", self.default_phase.name());
        if let Some(hit) = self.cache.get(&cache_key) {
            return hit.clone().map_err(|error| ScreenError::Species { position, error });
        }
        let result = if let Some(v) = self.supplied.get(text) {
            let m = Molecule::parse(text, position)?;
            let spec = SpeciesSpec { text: text.to_string(), formula: Some(m.formula()), phase: Some(v.phase), form: None };
            Ok(Arc::new(self.prepare(from_supplied(&spec, v))))
        } else {
            match structures::resolve_smiles(self.table, self.structures, text, position, self.default_phase) {
                Ok(s) => {
                    let k = (s.key, self.default_phase);
                    match self.by_structure.get(&k) {
                        Some(p) => Ok(p.clone()),
                        None => {
                            let p = Arc::new(self.prepare(s.resolved));
                            self.by_structure.insert(k, p.clone());
                            Ok(p)
                        }
                    }
                }
                // Parse errors depend on the position, so they are not cached.
                Err(SmilesSpeciesError::Syntax(e)) => return Err(e.into()),
                Err(SmilesSpeciesError::Resolve(e)) => Err(e),
            }
        };
        self.cache.insert(cache_key, result.clone());
        result.map_err(|error| ScreenError::Species { position, error })
    }

    pub fn grid(&self) -> &TemperatureGrid {
        &self.grid
    }

    pub fn table(&self) -> &'t Table {
        self.table
    }

    /// Values for one species that win over the bundled table. `key` is the species as written in
    /// equations, e.g. `INT7(l)` (matched against the text with its phase tag).
    pub fn supply(&mut self, key: &str, values: SuppliedSpecies) {
        self.cache.clear();
        self.by_structure.clear();
        self.supplied.insert(key.to_string(), values);
    }

    fn prepare(&self, resolved: Resolved) -> Prepared {
        let eval = |t: f64| resolved.state(t, t.ln());
        Prepared {
            at_ref: eval(T_REF_K),
            at_grid: self.grid.temperatures_k().iter().map(|&t| eval(t)).collect(),
            at_ladder: ladder_k().map(eval).collect(),
            resolved,
        }
    }

    fn resolve_spec(&self, spec: &SpeciesSpec, written: &str) -> Result<Resolved, ResolveError> {
        if let Some(v) = self.supplied.get(written).or_else(|| self.supplied.get(&spec.to_string())) {
            return Ok(from_supplied(spec, v));
        }
        self.table.resolve(spec)
    }

    /// The species a written token resolves to, from the cache when seen before.
    ///
    /// # Errors
    /// `ScreenError` for a token that does not parse or resolve.
    pub fn species(&mut self, text: &str, position: usize) -> Result<Arc<Prepared>, ScreenError> {
        if let Some(hit) = self.cache.get(text) {
            return hit.clone().map_err(|error| ScreenError::Species { position, error });
        }
        // Parse errors depend on the position, so they are not cached.
        let spec = parse_species(text, position)?;
        let result = self.resolve_spec(&spec, text).map(|r| Arc::new(self.prepare(r)));
        self.cache.insert(text.to_string(), result.clone());
        result.map_err(|error| ScreenError::Species { position, error })
    }

    /// Screen one reaction.
    ///
    /// # Errors
    /// `ScreenError` when the equation does not parse, a species cannot be resolved, or the
    /// reaction cannot be balanced (or its written coefficients do not balance).
    pub fn screen(&mut self, equation: &str) -> Result<Screened, ScreenError> {
        let raw = split_equation(equation)?;
        let written = raw.reactants.iter().chain(&raw.products).any(|t| t.coefficient.is_some());
        let mut notes = Vec::new();

        // Net every distinct species (by resolved label): products minus reactants.
        let mut distinct: Vec<(Arc<Prepared>, Rational, bool, bool)> = Vec::with_capacity(8);
        let sides: [(&[RawTerm], Side); 2] = [(&raw.reactants, Side::Reactant), (&raw.products, Side::Product)];
        for (terms, side) in sides {
            for t in terms {
                let p = match raw.notation {
                    Notation::Formula => self.species(t.text, t.position)?,
                    Notation::Smiles => self.smiles_species(t.text, t.position)?,
                };
                let c = t.coefficient.unwrap_or(Rational::ONE);
                let c = if side == Side::Reactant { c.checked_neg().map_err(|_| BalanceError::Overflow)? } else { c };
                match distinct.iter_mut().find(|d| d.0.resolved.label == p.resolved.label) {
                    Some(d) => {
                        d.1 = d.1.checked_add(c).map_err(|_| BalanceError::Overflow)?;
                        if side == Side::Reactant { d.2 = true } else { d.3 = true }
                    }
                    None => distinct.push((p, c, side == Side::Reactant, side == Side::Product)),
                }
            }
        }
        for d in &distinct {
            if d.2 && d.3 {
                notes.push(format!("{} appears on both sides; only its net amount counts", d.0.resolved.label));
            }
        }
        if written {
            distinct.retain(|d| !d.1.is_zero());
        } else {
            // Without written coefficients a species on both sides is a spectator.
            distinct.retain(|d| !(d.2 && d.3));
        }
        if distinct.is_empty() {
            return Err(BalanceError::Impossible { reason: "nothing is left once species on both sides cancel".into() }.into());
        }
        let sides: Vec<Side> = distinct.iter().map(|d| if d.1.signum() < 0 { Side::Reactant } else { Side::Product }).collect();
        let columns: Vec<Column> = distinct
            .iter()
            .zip(&sides)
            .map(|(d, &side)| Column { label: &d.0.resolved.label, formula: &d.0.resolved.formula, side })
            .collect();
        let Balance { outcome, coefficients } = if written {
            let abs: Vec<Rational> = distinct.iter().map(|d| if d.1.signum() < 0 { d.1.checked_neg().unwrap_or(d.1) } else { d.1 }).collect();
            balance::check(&columns, &abs)?
        } else {
            balance::balance(&columns)?
        };
        let species: Vec<SpeciesTerm> = distinct
            .into_iter()
            .zip(&sides)
            .zip(coefficients)
            .map(|(((p, _, _, _), &side), c)| SpeciesTerm { species: p, nu: if side == Side::Reactant { c.checked_neg().unwrap_or(c) } else { c } })
            .collect();
        for s in &species {
            notes.extend(s.species.resolved.notes.iter().cloned());
        }
        let agents: Vec<String> = raw.agents.iter().map(|t| t.text.to_string()).collect();
        if !agents.is_empty() {
            notes.push(format!("agents recorded, not balanced: {}", agents.join(", ")));
        }
        let mut out = self.evaluate(species, raw.arrow, outcome, notes);
        out.agents = agents;
        Ok(out)
    }

    fn evaluate(&self, species: Vec<SpeciesTerm>, arrow: Arrow, outcome: Outcome, notes: Vec<String>) -> Screened {
        let nus: Vec<f64> = species.iter().map(|s| s.nu.to_f64()).collect();
        let standard = thermo::point(T_REF_K, nus.iter().zip(&species).map(|(&n, s)| (n, &s.species.at_ref)));
        let points = (0..self.grid.temperatures_k().len())
            .map(|i| thermo::point(self.grid.temperatures_k()[i], nus.iter().zip(&species).map(|(&n, s)| (n, &s.species.at_grid[i]))))
            .collect();
        let (mut lo, mut hi) = (f64::NEG_INFINITY, f64::INFINITY);
        for s in &species {
            let (a, b) = s.species.resolved.range_k();
            lo = lo.max(a);
            hi = hi.min(b);
        }
        let delta_g_zero_k = (lo < hi).then(|| self.delta_g_zero(&species, &nus, lo, hi)).flatten();
        let mut sq = Some(0.0);
        for (s, n) in species.iter().zip(&nus) {
            sq = match (sq, s.species.resolved.dhf_uncertainty_kj_per_mol) {
                (Some(acc), Some(u)) => Some(acc + (n * u) * (n * u)),
                _ => None,
            };
        }
        Screened {
            balanced_equation: write_equation(&species, arrow),
            outcome,
            standard,
            points,
            delta_g_zero_k,
            delta_h_uncertainty_kj_per_mol: sq.map(f64::sqrt),
            valid_range_k: (lo, hi),
            estimated_species: species.iter().filter(|s| s.species.resolved.origin.iter().any(|o| matches!(o, Origin::Estimated { .. }))).count(),
            species,
            notes,
            agents: Vec::new(),
        }
    }

    fn delta_g_zero(&self, species: &[SpeciesTerm], nus: &[f64], lo: f64, hi: f64) -> Option<f64> {
        let dg_at = |states: &dyn Fn(&Prepared) -> State, t: f64| -> f64 {
            nus.iter().zip(species).map(|(n, s)| n * states(&s.species).g_j_per_mol(t)).sum()
        };
        let refs: Vec<(f64, &Resolved)> = nus.iter().zip(species).map(|(&n, s)| (n, &s.species.resolved)).collect();
        let direct = |t: f64| dg_at(&|p: &Prepared| p.resolved.state(t, t.ln()), t);
        let mut samples = Vec::with_capacity(120);
        samples.push((lo, direct(lo)));
        for (i, t) in ladder_k().enumerate() {
            if t > lo && t < hi {
                samples.push((t, dg_at(&|p: &Prepared| p.at_ladder[i], t)));
            }
        }
        samples.push((hi, direct(hi)));
        thermo::delta_g_zero_k(&refs, &samples)
    }
}

fn write_equation(species: &[SpeciesTerm], arrow: Arrow) -> String {
    let side = |reactant: bool| -> String {
        let parts: Vec<String> = species
            .iter()
            .filter(|s| (s.nu.signum() < 0) == reactant)
            .map(|s| {
                let c = if reactant { s.nu.checked_neg().unwrap_or(s.nu) } else { s.nu };
                if c == Rational::ONE {
                    s.species.resolved.label.clone()
                } else {
                    format!("{c} {}", s.species.resolved.label)
                }
            })
            .collect();
        parts.join(" + ")
    };
    let a = match arrow {
        Arrow::Forward => "->",
        Arrow::Equilibrium => "<=>",
    };
    format!("{} {a} {}", side(true), side(false))
}
