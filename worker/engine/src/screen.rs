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
use crate::decomposition::{self, Decomposition, DecompositionError, EnergeticGroup, ProductSet};
use crate::equation;
use crate::equation::{split_equation, Arrow, Notation, RawTerm};
use crate::formula::{found_at, parse_species, tag_word, Phase, SpeciesSpec, SyntaxError};
use crate::names;
use crate::rational::Rational;
use crate::smiles::SmilesError;
use crate::species::Origin;
use crate::species::{from_supplied, ResolveError, Resolved, State, SuppliedSpecies, Table, T_REF_K};
use crate::structures::{self, DefaultPhase, SmilesSpeciesError, Structures};
use crate::thermo::{self, TemperatureGrid, ThermoPoint, LADDER};
use std::collections::HashMap;
use std::hash::{BuildHasherDefault, Hasher};
use std::sync::Arc;

/// FNV-1a: species texts are short, and SipHash's DoS resistance buys nothing for a cache the
/// caller fills from its own batch.
#[derive(Default)]
struct Fnv(u64);

impl Hasher for Fnv {
    fn write(&mut self, bytes: &[u8]) {
        let mut h = if self.0 == 0 { 0xcbf2_9ce4_8422_2325 } else { self.0 };
        for &b in bytes {
            h = (h ^ b as u64).wrapping_mul(0x0100_0000_01b3);
        }
        self.0 = h;
    }
    fn finish(&self) -> u64 {
        self.0
    }
}

type SpeciesCache = HashMap<String, Result<Arc<Prepared>, ResolveError>, BuildHasherDefault<Fnv>>;

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
    /// Gibbs energy (J/mol) at the [`LADDER`] temperatures, for the ΔrG° = 0 search.
    g_ladder: [f64; LADDER.count],
    /// Where the phase as written stops being stable at 1 bar (boiling, melting), if inside its data.
    pub transition_k: Option<f64>,
    /// A note for results when the grid reaches past `transition_k`.
    grid_note: Option<String>,
    /// `label: sources`, the data behind this species in one line (made once, shown per case).
    pub citation: String,
    /// Its maximum heat of decomposition at 298.15 K, or why there is none.
    pub decomposition: Result<Decomposition, DecompositionError>,
    /// The energetic groups (UN Manual of Tests and Criteria, Table A6.1) of its structure; None
    /// when no structure is known (a formula with no bundled structure).
    pub energetic_groups: Option<Vec<EnergeticGroup>>,
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
    cache: SpeciesCache,
    /// Phase of SMILES species (a SMILES carries none).
    default_phase: DefaultPhase,
    structures: &'static Structures,
    /// SMILES species by (canonical key, phase asked): one species however it is written.
    by_structure: HashMap<(String, DefaultPhase), Arc<Prepared>>,
    /// Decomposition products from the table.
    products: ProductSet,
}

impl<'t> Screener<'t> {
    pub fn new(table: &'t Table, grid: TemperatureGrid) -> Screener<'t> {
        Screener {
            table,
            grid,
            supplied: HashMap::new(),
            cache: SpeciesCache::default(),
            default_phase: DefaultPhase::Standard,
            structures: structures::bundled(),
            by_structure: HashMap::new(),
            products: ProductSet::from_table(table),
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

    /// A SMILES species, from the cache when seen before (by text, then by structure). A state
    /// may follow the SMILES in braces (`CCO{l}`, `[Na+].[Cl-]{s}`); without one the species
    /// takes the screener's default phase.
    ///
    /// # Errors
    /// `ScreenError::Smiles` for a SMILES that does not parse (with its byte position),
    /// `ScreenError::Syntax` for a malformed state, `ScreenError::Species` when it has no data
    /// and cannot be estimated.
    pub fn smiles_species(&mut self, text: &str, position: usize) -> Result<Arc<Prepared>, ScreenError> {
        let (smiles, asked) = split_state(text, position)?;
        let phase = asked.unwrap_or(StateAsked::Phase(self.default_phase));
        self.structure_species(smiles, position, phase)
    }

    /// A species by structure in the state asked.
    fn structure_species(&mut self, smiles: &str, position: usize, asked: StateAsked) -> Result<Arc<Prepared>, ScreenError> {
        let phase = match asked {
            StateAsked::Aqueous => {
                return Err(ScreenError::Species {
                    position,
                    error: ResolveError::Aqueous {
                        species: format!("{smiles}{{aq}}"),
                    },
                })
            }
            StateAsked::Phase(p) => p,
        };
        // A charged species is a gas-phase ion only when the user says so.
        if equation::smiles_charge(smiles) != 0 && phase != DefaultPhase::Gas {
            return Err(ScreenError::Species {
                position,
                error: ResolveError::LoneIon {
                    species: smiles.to_string(),
                },
            });
        }
        let cache_key = format!("{}\u{1}{smiles}", phase.name());
        if let Some(hit) = self.cache.get(&cache_key) {
            return hit.clone().map_err(|error| ScreenError::Species { position, error });
        }
        let result = if let Some(v) = self.supplied.get(smiles) {
            Ok(Arc::new(self.prepare(from_supplied(smiles, v), Some(smiles))))
        } else {
            match structures::resolve_smiles(self.table, self.structures, smiles, position, phase) {
                Ok(s) => {
                    let k = (s.key, phase);
                    match self.by_structure.get(&k) {
                        Some(p) => Ok(p.clone()),
                        None => {
                            let p = Arc::new(self.prepare(s.resolved, Some(smiles)));
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

    /// A species written by name or CAS number (`nitrobenzene(l)`, `{acetic anhydride}(l)`,
    /// `98-95-3`): the structure the name table gives, resolved like a SMILES species.
    fn named_species(&mut self, name: &str, tag: Option<Phase>, position: usize) -> Result<Arc<Prepared>, ScreenError> {
        let names = names::bundled();
        let Some(c) = names.find(name) else {
            let error = ResolveError::UnknownName {
                species: name.to_string(),
                suggestions: names.closest(name, 3).into_iter().map(str::to_string).collect(),
            };
            return Err(ScreenError::Species { position, error });
        };
        let asked = match tag {
            Some(Phase::Aqueous) => StateAsked::Aqueous,
            Some(p) => StateAsked::Phase(DefaultPhase::of(p)),
            None => StateAsked::Phase(self.default_phase),
        };
        // Labelled like any structure (by formula or the table's preferred name), not as written:
        // a label must not depend on which spelling of a compound a screener met first.
        self.structure_species(c.smiles, position, asked)
    }

    pub fn grid(&self) -> &TemperatureGrid {
        &self.grid
    }

    pub fn table(&self) -> &'t Table {
        self.table
    }

    /// Values for one species that win over the bundled table. `key` is the species exactly as
    /// written in equations, phase tag included, e.g. `INT7(l)`; it need not be a formula.
    pub fn supply(&mut self, key: &str, values: SuppliedSpecies) {
        self.cache.clear();
        self.by_structure.clear();
        self.supplied.insert(key.to_string(), values);
    }

    /// Precompute a species' states on the grid, its decomposition heat and, where its structure
    /// is known (`smiles`, else the bundled structure of its tabulated record), its energetic groups.
    fn prepare(&self, resolved: Resolved, smiles: Option<&str>) -> Prepared {
        let eval = |t: f64| resolved.state(t, t.ln());
        let at_ref = eval(T_REF_K);
        let decomposition = decomposition::maximum(
            &resolved.formula,
            at_ref.h_j_per_mol / 1000.0,
            resolved.dhf_uncertainty_kj_per_mol,
            &self.products,
        );
        // A tabulated record's structure is filed under its base name (`C6H5NO2` for
        // `C6H5NO2(L)`).
        let structure = smiles.or_else(|| {
            resolved.origin.iter().find_map(|o| match o {
                Origin::Tabulated { record, .. } => {
                    let base = self
                        .table
                        .records
                        .iter()
                        .find(|r| &r.name == record)
                        .map_or(record.as_str(), |r| r.base.as_str());
                    self.structures.smiles_of(base)
                }
                _ => None,
            })
        });
        let energetic_groups = structure
            .and_then(|s| crate::smiles::Molecule::parse(s, 0).ok())
            .map(|m| decomposition::energetic_groups(&m));
        let (lo, hi) = resolved.range_k();
        let transition_k = resolved.transition_k(lo.max(T_REF_K), hi);
        let grid_max = self.grid.temperatures_k().iter().copied().fold(T_REF_K, f64::max);
        let grid_note = transition_k.filter(|&t| t < grid_max).map(|t| {
            format!(
                "{} is not the stable phase above {t:.1} K at 1 bar (it boils or melts there): points above are flagged",
                resolved.label
            )
        });
        Prepared {
            citation: format!("{}: {}", resolved.label, resolved.source_line()),
            transition_k,
            grid_note,
            at_ref,
            at_grid: self.grid.temperatures_k().iter().map(|&t| eval(t)).collect(),
            decomposition,
            energetic_groups,
            g_ladder: std::array::from_fn(|i| {
                let t = LADDER.t(i);
                eval(t).g_j_per_mol(t)
            }),
            resolved,
        }
    }

    /// The species a written token resolves to, from the cache when seen before: a formula
    /// (`C2H5OH(l)`), a name (`nitrobenzene(l)`, `{acetic anhydride}(l)`) or a CAS number.
    ///
    /// # Errors
    /// `ScreenError` for a token that does not parse or resolve.
    pub fn species(&mut self, text: &str, position: usize) -> Result<Arc<Prepared>, ScreenError> {
        // Supplied values are matched on the text as written, which need not be a formula.
        if !self.supplied.contains_key(text) {
            if let Some((name, tag)) = written_name(text, position)? {
                return self.named_species(name, tag, position);
            }
        }
        if let Some(hit) = self.cache.get(text) {
            return hit.clone().map_err(|error| ScreenError::Species { position, error });
        }
        let result = match self.supplied.get(text) {
            Some(v) => Ok(from_supplied(text, v)),
            None => {
                // Parse errors depend on the position, so they are not cached.
                let spec = match parse_species(text, position) {
                    Ok(spec) => spec,
                    Err(e) => {
                        // Not a formula: a name the table may know (`acetic anhydride(l)`).
                        let (name, tag) = strip_tag(text);
                        if names::bundled().find(name).is_some() || looks_like_a_name(name) {
                            return self.named_species(name, tag, position);
                        }
                        return Err(e.into());
                    }
                };
                if spec.formula.is_none() {
                    return self.named_species(&spec.text, spec.phase, position);
                }
                let resolved = self.check_isomers(&spec).and_then(|()| self.table.resolve(&spec));
                // A record with a known structure but not in the state asked (`CH3COOH(l)` where
                // only the gas is tabulated): the structure path estimates that state.
                if matches!(resolved, Err(ResolveError::NotFound { .. })) && spec.phase != Some(Phase::Aqueous) && spec.form.is_none() {
                    let structure = self
                        .table
                        .by_name(&spec.text, spec.charge())
                        .iter()
                        .find_map(|&k| self.structures.smiles_of(&self.table.records[k].base));
                    if let Some(smiles) = structure {
                        let asked = StateAsked::Phase(spec.phase.map_or(DefaultPhase::Standard, DefaultPhase::of));
                        let r = self.structure_species(smiles, position, asked);
                        if let Ok(p) = &r {
                            self.cache.insert(text.to_string(), Ok(p.clone()));
                        }
                        return r;
                    }
                }
                resolved
            }
        };
        let result = result.map(|r| Arc::new(self.prepare(r, None)));
        self.cache.insert(text.to_string(), result.clone());
        result.map_err(|error| ScreenError::Species { position, error })
    }

    /// A carbon formula names one compound only when no other known compound shares it, or when
    /// it is written as the structural formula of a bundled record with a known structure
    /// (`C2H5OH`, `CH3COCH3`). `C6H5CH2OH`, `C3H6O` or `C8H18` fit several compounds: an error
    /// naming them.
    fn check_isomers(&self, spec: &SpeciesSpec) -> Result<(), ResolveError> {
        let Some(formula) = &spec.formula else { return Ok(()) };
        // Inorganic formulas name their compound in practice (HNO3 is nitric acid, not
        // peroxynitrous acid); isomers that matter in route chemistry are carbon compounds.
        if !formula.atoms.iter().any(|&(z, _)| z == 6) {
            return Ok(());
        }
        let hill = formula.hill();
        let known = names::bundled().with_formula(&hill);
        if known.len() < 2 {
            return Ok(());
        }
        let written_as_hill = spec.text_with_charge() == hill;
        let structural_record = self.structures.key_of(&spec.text).is_some()
            || self
                .table
                .by_name(&spec.text, formula.charge)
                .iter()
                .any(|&k| self.structures.key_of(&self.table.records[k].base).is_some());
        if structural_record && !written_as_hill {
            return Ok(());
        }
        let mut candidates: Vec<String> = known.iter().map(|c| format!("{} ({})", c.name(), c.smiles)).collect();
        candidates.sort();
        let more = candidates.len().saturating_sub(8);
        candidates.truncate(8);
        if more > 0 {
            candidates.push(format!("and {more} more"));
        }
        Err(ResolveError::Isomers {
            species: spec.to_string(),
            candidates,
        })
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
                let c = if side == Side::Reactant {
                    c.checked_neg().map_err(|_| BalanceError::Overflow)?
                } else {
                    c
                };
                match distinct.iter_mut().find(|d| d.0.resolved.label == p.resolved.label) {
                    Some(d) => {
                        d.1 = d.1.checked_add(c).map_err(|_| BalanceError::Overflow)?;
                        if side == Side::Reactant {
                            d.2 = true
                        } else {
                            d.3 = true
                        }
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
            return Err(BalanceError::Impossible {
                reason: "nothing is left once species on both sides cancel".into(),
            }
            .into());
        }
        let sides: Vec<Side> = distinct
            .iter()
            .map(|d| if d.1.signum() < 0 { Side::Reactant } else { Side::Product })
            .collect();
        let columns: Vec<Column> = distinct
            .iter()
            .zip(&sides)
            .map(|(d, &side)| Column {
                label: &d.0.resolved.label,
                formula: &d.0.resolved.formula,
                side,
            })
            .collect();
        let Balance { outcome, coefficients } = if written {
            let abs: Vec<Rational> = distinct
                .iter()
                .map(|d| if d.1.signum() < 0 { d.1.checked_neg().unwrap_or(d.1) } else { d.1 })
                .collect();
            balance::check(&columns, &abs)?
        } else {
            balance::balance(&columns)?
        };
        let species: Vec<SpeciesTerm> = distinct
            .into_iter()
            .zip(&sides)
            .zip(coefficients)
            .map(|(((p, _, _, _), &side), c)| SpeciesTerm {
                species: p,
                nu: if side == Side::Reactant { c.checked_neg().unwrap_or(c) } else { c },
            })
            .collect();
        for s in &species {
            notes.extend(s.species.resolved.notes.iter().cloned());
            notes.extend(s.species.grid_note.iter().cloned());
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
            .map(|i| {
                thermo::point(
                    self.grid.temperatures_k()[i],
                    nus.iter().zip(&species).map(|(&n, s)| (n, &s.species.at_grid[i])),
                )
            })
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
            estimated_species: species
                .iter()
                .filter(|s| s.species.resolved.origin.iter().any(|o| matches!(o, Origin::Estimated { .. })))
                .count(),
            species,
            notes,
            agents: Vec::new(),
        }
    }

    /// Sample ΔrG° from the species' cached ladder values (50 K steps) and at 298.15 K, inside the
    /// span all species' data cover, then refine the first sign change by direct evaluation.
    fn delta_g_zero(&self, species: &[SpeciesTerm], nus: &[f64], lo: f64, hi: f64) -> Option<f64> {
        let (first, last) = LADDER.indices_within(lo, hi)?;
        // Species-major accumulation: one pass per species over contiguous values.
        let mut acc = [0.0f64; LADDER.count];
        for (n, s) in nus.iter().zip(species) {
            for (a, g) in acc[first..=last].iter_mut().zip(&s.species.g_ladder[first..=last]) {
                *a += n * g;
            }
        }
        let g_ref: f64 = nus
            .iter()
            .zip(species)
            .map(|(n, s)| n * s.species.at_ref.g_j_per_mol(T_REF_K))
            .sum();
        let with_ref = (lo..=hi).contains(&T_REF_K);
        // Walk the samples in temperature order (298.15 K slotted in) to the first sign change.
        let mut prev: Option<(f64, f64)> = None;
        let mut bracket = None;
        let mut ref_pending = with_ref;
        for (i, &g) in acc.iter().enumerate().take(last + 1).skip(first) {
            let t = LADDER.t(i);
            let mut visit = |p: (f64, f64)| {
                if bracket.is_none() {
                    if let Some(q) = prev {
                        if q.1 == 0.0 || q.1.signum() != p.1.signum() {
                            bracket = Some([q, p]);
                        }
                    }
                    prev = Some(p);
                }
            };
            if ref_pending && t > T_REF_K {
                visit((T_REF_K, g_ref));
                ref_pending = false;
            }
            visit((t, g));
        }
        if ref_pending && bracket.is_none() {
            if let Some(q) = prev {
                if q.1 == 0.0 || q.1.signum() != g_ref.signum() {
                    bracket = Some([q, (T_REF_K, g_ref)]);
                }
            }
        }
        let samples = bracket?;
        let refs: Vec<(f64, &Resolved)> = nus.iter().zip(species).map(|(&n, s)| (n, &s.species.resolved)).collect();
        thermo::delta_g_zero_k(&refs, &samples)
    }
}

fn write_equation(species: &[SpeciesTerm], arrow: Arrow) -> String {
    use std::fmt::Write as _;
    let mut out = String::with_capacity(64);
    for reactant in [true, false] {
        if !reactant {
            out.push_str(match arrow {
                Arrow::Forward => " -> ",
                Arrow::Equilibrium => " <=> ",
            });
        }
        let mut first = true;
        for s in species.iter().filter(|s| (s.nu.signum() < 0) == reactant) {
            if !first {
                out.push_str(" + ");
            }
            first = false;
            let c = if reactant { s.nu.checked_neg().unwrap_or(s.nu) } else { s.nu };
            if c.is_integer() && c != Rational::ONE {
                push_int(&mut out, c.numer());
                out.push(' ');
            } else if c != Rational::ONE {
                let _ = write!(out, "{c} ");
            }
            out.push_str(&s.species.resolved.label);
        }
    }
    out
}

/// Append a positive integer without going through `fmt` (this runs once per term per reaction).
fn push_int(out: &mut String, mut n: i128) {
    let mut buf = [0u8; 40];
    let mut i = buf.len();
    loop {
        i -= 1;
        buf[i] = b'0' + (n % 10) as u8;
        n /= 10;
        if n == 0 {
            break;
        }
    }
    out.push_str(std::str::from_utf8(&buf[i..]).unwrap_or("?"));
}

/// The state asked for a species written by structure or name.
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
enum StateAsked {
    Phase(DefaultPhase),
    Aqueous,
}

/// A SMILES species and the state written after it in braces: `CCO{l}` → (`CCO`, liquid).
///
/// # Errors
/// `SyntaxError` at the brace for an unclosed brace or an unknown state word.
fn split_state(text: &str, position: usize) -> Result<(&str, Option<StateAsked>), SyntaxError> {
    let Some(open) = text.find('{') else {
        return Ok((text, None));
    };
    let expected = "a state in braces after the SMILES: {g}, {l}, {s}, {aq} or {std}";
    let Some(inner) = text[open + 1..].strip_suffix('}') else {
        return Err(SyntaxError::Unexpected {
            position: position + open,
            expected,
            found: found_at(text, open),
        });
    };
    // The state words of phase tags (`g`, `l`, `s`, `cr`, `aq`, …), and `std` for the stable state.
    let word = inner.trim().to_ascii_lowercase();
    let state = match word.as_str() {
        "std" | "standard" => StateAsked::Phase(DefaultPhase::Standard),
        w => match tag_word(w) {
            Some((Some(Phase::Aqueous), None)) => StateAsked::Aqueous,
            Some((Some(p), None)) => StateAsked::Phase(DefaultPhase::of(p)),
            _ => {
                return Err(SyntaxError::Unexpected {
                    position: position + open + 1,
                    expected,
                    found: format!("{{{inner}}}"),
                })
            }
        },
    };
    Ok((&text[..open], Some(state)))
}

/// A trailing phase tag of a name: `acetic anhydride(l)` → (`acetic anhydride`, liquid).
fn strip_tag(text: &str) -> (&str, Option<Phase>) {
    if let Some((head, word)) = text.strip_suffix(')').and_then(|t| t.rsplit_once('(')) {
        if let Some((Some(phase), None)) = tag_word(word) {
            return (head.trim_end(), Some(phase));
        }
    }
    (text, None)
}

/// A name in braces, `{2-nitrotoluene}(l)`, or a CAS number, `98-95-3(l)`.
///
/// # Errors
/// `SyntaxError` for an unclosed brace or text after the tag.
fn written_name(text: &str, position: usize) -> Result<Option<(&str, Option<Phase>)>, SyntaxError> {
    if let Some(rest) = text.strip_prefix('{') {
        let Some(close) = rest.find('}') else {
            return Err(SyntaxError::Unexpected {
                position,
                expected: "a name in braces: {acetic anhydride}",
                found: "no closing '}'".into(),
            });
        };
        let after = &rest[close + 1..];
        let (_, tag) = strip_tag(after);
        if !after.is_empty() && tag.is_none() {
            return Err(SyntaxError::Unexpected {
                position: position + close + 2,
                expected: "a phase tag such as (l) after the name, or nothing",
                found: found_at(text, close + 2),
            });
        }
        return Ok(Some((rest[..close].trim(), tag)));
    }
    let (head, tag) = strip_tag(text);
    Ok(names::looks_like_cas(head).then_some((head, tag)))
}

/// Words no formula has: a run of three lower-case letters, or a space.
fn looks_like_a_name(s: &str) -> bool {
    s.contains(' ') || s.as_bytes().windows(3).any(|w| w.iter().all(u8::is_ascii_lowercase))
}
