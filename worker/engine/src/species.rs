//! Species thermodynamic data and how a written species finds it.
//!
//! The bundled table is `data/nasa_species.tsv`: NASA polynomials (McBride, Gordon & Reno,
//! NASA TM-4513, 7-coefficient fits, a few 9-coefficient; public domain), exported from Cantera's
//! `nasa_gas.yaml` and `nasa_condensed.yaml` by `scripts/gen_species_data.py`. It is embedded in
//! the binary and parsed once per process. Deuterated species are left out (no `D` element).
//!
//! Every model is held in NASA 9-coefficient form (`Cp/R = a1/T² + a2/T + a3 + a4 T + a5 T² + a6 T³ +
//! a7 T⁴`, with integration constants b1 for H and b2 for S): NASA 7-coefficient data and values
//! supplied with a request (ΔfH°, S° and a constant Cp) are exactly representable in it.
//!
//! Resolution order: values supplied with the request, then the bundled table by name, then by
//! formula. A formula that fits several compounds (isomers) is an error naming them; several solid
//! records of one compound form a polymorph series, and the one valid at 298.15 K is the reference.

use crate::formula::{parse_species, Formula, Phase, SpeciesSpec};
use crate::tsv::DataError;
use std::collections::HashMap;
use std::sync::OnceLock;

/// Molar gas constant, J/(mol·K) (CODATA 2018, exact).
pub const R: f64 = 8.314462618;
/// Standard reference temperature, K.
pub const T_REF_K: f64 = 298.15;

/// One temperature segment of a heat-capacity polynomial, NASA 9-coefficient form.
#[derive(Clone, Copy, Debug, PartialEq)]
pub struct Segment {
    pub t_min_k: f64,
    pub t_max_k: f64,
    /// a1..a7, b1, b2
    pub a: [f64; 9],
}

impl Segment {
    pub fn covers(&self, t: f64) -> bool {
        t >= self.t_min_k && t <= self.t_max_k
    }

    pub fn cp_over_r(&self, t: f64) -> f64 {
        let a = &self.a;
        a[0] / (t * t) + a[1] / t + a[2] + t * (a[3] + t * (a[4] + t * (a[5] + t * a[6])))
    }

    /// (H/(RT), S/R) at `t`, with `ln_t` = ln(t) passed in so callers evaluating many species at
    /// one temperature take the logarithm once.
    pub fn h_rt_s_r(&self, t: f64, ln_t: f64) -> (f64, f64) {
        let a = &self.a;
        let inv = 1.0 / t;
        let h = -a[0] * inv * inv
            + a[1] * ln_t * inv
            + a[2]
            + t * (a[3] / 2.0 + t * (a[4] / 3.0 + t * (a[5] / 4.0 + t * a[6] / 5.0)))
            + a[7] * inv;
        let s =
            -a[0] * inv * inv / 2.0 - a[1] * inv + a[2] * ln_t + t * (a[3] + t * (a[4] / 2.0 + t * (a[5] / 3.0 + t * a[6] / 4.0))) + a[8];
        (h, s)
    }

    /// NASA 7-coefficient data (a1..a5 of Cp/R, a6 for H, a7 for S) in 9-coefficient form.
    pub fn from_nasa7(t_min_k: f64, t_max_k: f64, c: &[f64; 7]) -> Segment {
        Segment {
            t_min_k,
            t_max_k,
            a: [0.0, 0.0, c[0], c[1], c[2], c[3], c[4], c[5], c[6]],
        }
    }

    /// A constant heat capacity fixed to ΔfH° and S° at 298.15 K.
    pub fn constant_cp(t_min_k: f64, t_max_k: f64, dhf_kj_per_mol: f64, s_j_per_mol_k: f64, cp_j_per_mol_k: f64) -> Segment {
        let a3 = cp_j_per_mol_k / R;
        let b1 = dhf_kj_per_mol * 1000.0 / R - a3 * T_REF_K;
        let b2 = s_j_per_mol_k / R - a3 * T_REF_K.ln();
        Segment {
            t_min_k,
            t_max_k,
            a: [0.0, 0.0, a3, 0.0, 0.0, 0.0, 0.0, b1, b2],
        }
    }
}

/// Molar enthalpy (NASA convention: H(298.15 K) = ΔfH°), entropy and validity at one temperature.
#[derive(Clone, Copy, Debug, PartialEq)]
pub struct State {
    pub h_j_per_mol: f64,
    pub s_j_per_mol_k: f64,
    /// Inside the range the data covers.
    pub in_range: bool,
    /// False when another phase of the compound has a lower Gibbs energy here at 1 bar (a liquid
    /// above its boiling point, a solid above its melting point): the phase as written is not
    /// the stable one, and results that use it are flagged.
    pub stable: bool,
}

impl State {
    pub fn g_j_per_mol(&self, t: f64) -> f64 {
        self.h_j_per_mol - t * self.s_j_per_mol_k
    }
}

/// Where a species' numbers come from.
#[derive(Clone, Debug, PartialEq)]
pub enum Origin {
    /// A record of the bundled table (its name in the source, e.g. `H2O(L)`).
    Tabulated { record: String, note: String, source: String },
    /// Values supplied with the request.
    Supplied,
    /// Estimated from the structure by a group-contribution method (see `joback`).
    Estimated { method: String },
}

/// One record of a data table.
#[derive(Clone, Debug)]
pub struct Record {
    /// The source's own name: `CO2`, `H2O(L)`, `Fe(a)`.
    pub name: String,
    /// The name without its phase tag: `H2O`, `Fe`.
    pub base: String,
    pub phase: Phase,
    /// The source's polymorph/phase letters (`a`, `b`, `gr`, `L`), empty for gases.
    pub tag: String,
    pub formula: Formula,
    pub segments: Vec<Segment>,
    pub note: String,
    /// The data source, for humans: `NASA thermo data (...) via Cantera 3.2.0`.
    pub source: String,
    /// Standard uncertainty σ of ΔfH°(298.15 K): the source's (a 95% interval halved), else the
    /// table's source-typical σ (`data/source_sigma.tsv`), 0 for an element in its reference state.
    pub dhf_uncertainty_kj_per_mol: Option<f64>,
    /// Where that σ comes from, for the species table.
    pub sigma_basis: String,
}

impl Record {
    pub fn t_min_k(&self) -> f64 {
        self.segments.first().map_or(f64::NAN, |s| s.t_min_k)
    }
    pub fn t_max_k(&self) -> f64 {
        self.segments.last().map_or(f64::NAN, |s| s.t_max_k)
    }
    pub fn covers(&self, t: f64) -> bool {
        self.segments.iter().any(|s| s.covers(t))
    }
}

/// Values a request supplies for one species (they win over the bundled table).
#[derive(Clone, Debug, PartialEq)]
pub struct SuppliedSpecies {
    pub formula: Formula,
    pub phase: Phase,
    pub dhf_kj_per_mol: f64,
    pub s_j_per_mol_k: f64,
    /// Constant heat capacity; without it ΔCp of this species is taken as 0 and every temperature
    /// other than 298.15 K is flagged as outside the valid range.
    pub cp_j_per_mol_k: Option<f64>,
    /// Range in which the supplied Cp holds.
    pub t_min_k: f64,
    pub t_max_k: f64,
    pub dhf_uncertainty_kj_per_mol: Option<f64>,
}

/// A species as the engine will use it.
#[derive(Clone, Debug)]
pub struct Resolved {
    /// How it is shown in balanced equations: `H2O(l)`, `Fe(s)`, `C(gr)`.
    pub label: String,
    pub formula: Formula,
    pub phase: Phase,
    /// Segments of every record used (a solid's polymorph series has several records).
    pub segments: Vec<Segment>,
    pub origin: Vec<Origin>,
    /// Standard uncertainty σ of ΔfH°(298.15 K).
    pub dhf_uncertainty_kj_per_mol: Option<f64>,
    /// Where that σ comes from: the source's stated value, a source-typical σ, an estimation rule.
    pub sigma_basis: String,
    /// Things the user should know about how this species was resolved.
    pub notes: Vec<String>,
    /// Segments of the compound's other phases that could be more stable (gas for a liquid;
    /// liquid and gas for a solid), to detect boiling and melting inside a grid.
    pub rivals: Vec<Segment>,
}

impl Resolved {
    /// State at `t`. Outside every segment the nearest segment is used and `in_range` is false.
    /// Where segments overlap (polymorphs), the one with the lowest Gibbs energy is the stable one.
    pub fn state(&self, t: f64, ln_t: f64) -> State {
        let mut best: Option<(f64, f64, f64)> = None;
        for seg in self.segments.iter().filter(|s| s.covers(t)) {
            let (h, s) = seg.h_rt_s_r(t, ln_t);
            let g = h - s;
            if best.is_none_or(|b| g < b.2) {
                best = Some((h, s, g));
            }
        }
        let (h, s, in_range) = match best {
            Some((h, s, _)) => (h, s, true),
            None => {
                let seg = self
                    .segments
                    .iter()
                    .min_by(|a, b| dist(a, t).total_cmp(&dist(b, t)))
                    .expect("a resolved species has at least one segment");
                let (h, s) = seg.h_rt_s_r(t, ln_t);
                (h, s, false)
            }
        };
        let own_g = h - s;
        let stable = !self.rivals.iter().filter(|r| r.covers(t)).any(|r| {
            let (rh, rs) = r.h_rt_s_r(t, ln_t);
            rh - rs < own_g - 1e-9
        });
        State {
            h_j_per_mol: h * R * t,
            s_j_per_mol_k: s * R,
            in_range,
            stable,
        }
    }

    /// Lowest temperature in `[lo, hi]` above which the phase as written stops being the stable
    /// one (boiling or melting at 1 bar), to 0.01 K; `None` when it stays stable.
    pub fn transition_k(&self, lo: f64, hi: f64) -> Option<f64> {
        if self.rivals.is_empty() {
            return None;
        }
        let stable = |t: f64| self.state(t, t.ln()).stable;
        let steps = 200;
        let mut prev = lo;
        for k in 1..=steps {
            let t = lo + (hi - lo) * k as f64 / steps as f64;
            if stable(prev) && !stable(t) {
                let (mut a, mut b) = (prev, t);
                while b - a > 0.01 {
                    let m = 0.5 * (a + b);
                    if stable(m) {
                        a = m
                    } else {
                        b = m
                    }
                }
                return Some(0.5 * (a + b));
            }
            prev = t;
        }
        None
    }

    /// Lowest and highest temperature any segment covers.
    pub fn range_k(&self) -> (f64, f64) {
        let lo = self.segments.iter().map(|s| s.t_min_k).fold(f64::INFINITY, f64::min);
        let hi = self.segments.iter().map(|s| s.t_max_k).fold(f64::NEG_INFINITY, f64::max);
        (lo, hi)
    }

    /// One line naming the data behind this species: each source, then the records used from it.
    pub fn source_line(&self) -> String {
        let mut parts: Vec<(String, Vec<String>)> = Vec::new();
        for o in &self.origin {
            let (source, item) = match o {
                Origin::Tabulated { record, note, source } if note.is_empty() => (source.clone(), record.clone()),
                Origin::Tabulated { record, note, source } => (source.clone(), format!("{record} ({note})")),
                Origin::Supplied => ("values supplied with the request".to_string(), String::new()),
                Origin::Estimated { method } => (format!("estimated: {method}"), String::new()),
            };
            match parts.iter_mut().find(|p| p.0 == source) {
                Some(p) => p.1.push(item),
                None => parts.push((source, vec![item])),
            }
        }
        let shown: Vec<String> = parts
            .into_iter()
            .map(|(source, items)| {
                let items: Vec<String> = items.into_iter().filter(|i| !i.is_empty()).collect();
                if items.is_empty() {
                    source
                } else {
                    format!("{source}: {}", items.join("; "))
                }
            })
            .collect();
        shown.join(" + ")
    }
}

fn dist(s: &Segment, t: f64) -> f64 {
    if t < s.t_min_k {
        s.t_min_k - t
    } else {
        t - s.t_max_k
    }
}

/// Why a species could not be resolved.
#[derive(Clone, Debug, PartialEq, thiserror::Error)]
pub enum ResolveError {
    #[error("no data for {species}: not in the bundled table{hint}")]
    NotFound { species: String, hint: String },
    #[error("{species} is ambiguous: it matches {}; {advice}", candidates.join(", "))]
    Ambiguous {
        species: String,
        candidates: Vec<String>,
        advice: &'static str,
    },
    #[error("{species} is written by name but a name alone gives no formula; supply its formula with its values")]
    NameWithoutData { species: String },
    #[error("no data for {species}: not in the bundled table, and it cannot be estimated: {reason}")]
    NotEstimable { species: String, reason: String },
    #[error("{species} is written as a formula that fits several compounds: {}; write the one you mean by name or SMILES", candidates.join(", "))]
    Isomers { species: String, candidates: Vec<String> },
    #[error("{species} is not a known name or CAS number{}", if suggestions.is_empty() { String::new() } else { format!(" (did you mean {}?)", suggestions.join(", ")) })]
    UnknownName { species: String, suggestions: Vec<String> },
    #[error("{species} is a lone ion: write a salt as its ions side by side ([Na+].[Cl-]), or tag the ion {{g}} for the gas-phase ion")]
    LoneIon { species: String },
    #[error("no aqueous data for {species}: aqueous species are not bundled; supply ΔfH° and S° for it")]
    Aqueous { species: String },
    #[error("no data for the salt {species}: no bundled record has its formula {formula}, and salts are not estimated; supply ΔfH° and S° for it")]
    UnknownSalt { species: String, formula: String },
}

/// The bundled data, indexed.
pub struct Table {
    pub records: Vec<Record>,
    by_name: HashMap<(String, i32), Vec<usize>>,
    by_formula: HashMap<String, Vec<usize>>,
    /// Header comments of the data files: generators, versions, terms.
    pub provenance: String,
    /// Every source the table's records come from, in load order.
    pub sources: Vec<String>,
}

const NASA_TSV: &str = include_str!("../data/nasa_species.tsv");
/// How results name the bundled NASA data.
pub const SOURCE_NAME: &str = "NASA thermo data (McBride, Gordon & Reno, NASA TM-4513, 1993; public domain) via Cantera 3.2.0";

/// Organic liquids and gases NASA lacks, from open tables shipped in `chemicals`
/// (`scripts/gen_open_species.py`; origins and terms in `scripts/README-open-data.md`).
const OPEN_TSV: &str = include_str!("../data/open_species.tsv");
/// How results name the open tables when a record has no `source` of its own.
pub const OPEN_SOURCE_NAME: &str = "ATcT 1.112 (Argonne) + ChemSep 8.3 (Artistic License 2.0) via chemicals 1.5.2";
/// ATcT 1.112 uncertainties of ΔfH° for NASA records (`scripts/gen_nasa_uncertainty.py`).
const NASA_UNCERTAINTY_TSV: &str = include_str!("../data/nasa_uncertainty.tsv");

/// How the species table names σ taken from ATcT.
const ATCT_BASIS: &str = "ATcT 1.112 stated uncertainty, a 95% interval: σ = ±/2";

/// Source-typical σ of tables that state none (`scripts/gen_source_sigma.py`).
const SOURCE_SIGMA_TSV: &str = include_str!("../data/source_sigma.tsv");

/// Source-typical σ of ΔfH° per table, from comparisons with an independent source.
struct SourceSigma {
    /// (key, σ kJ/mol, how it was found)
    rows: Vec<(String, f64, String)>,
}

impl SourceSigma {
    fn bundled() -> SourceSigma {
        let t = crate::tsv::read(SOURCE_SIGMA_TSV, "source_sigma.tsv");
        let rows = t
            .rows()
            .map(|r| {
                let get = |c: &str| r.get(c).unwrap_or_else(|e| panic!("{e}"));
                let sigma: f64 = get("sigma_kj_per_mol")
                    .parse()
                    .unwrap_or_else(|_| panic!("{}", r.error("bad sigma")));
                (
                    get("source").to_string(),
                    sigma,
                    format!("{} ({} compounds)", get("comparison"), get("compared")),
                )
            })
            .collect();
        SourceSigma { rows }
    }

    fn get(&self, key: &str) -> (f64, &str) {
        self.rows
            .iter()
            .find(|r| r.0 == key)
            .map(|r| (r.1, r.2.as_str()))
            .unwrap_or_else(|| panic!("source_sigma.tsv has no row {key}"))
    }

    /// σ and its basis for a record without a stated σ. The open table's notes say which source
    /// each ΔfH° comes from: ChemSep's ideal gas, ChemSep's ideal gas less its ΔvapH, or an ATcT
    /// gas (± in the note) less ChemSep's ΔvapH.
    fn for_record(&self, r: &Record) -> (f64, String) {
        let typical = |key: &str| {
            let (s, how) = self.get(key);
            (s, format!("source-typical σ of {key}: {how}"))
        };
        if r.note.starts_with("dHf(g) ChemSep") {
            return typical("chemsep_gas");
        }
        if r.note.starts_with("dHf(l) = ChemSep") {
            return typical("chemsep_liquid");
        }
        if r.note.starts_with("dHf(l) = ATcT") {
            let atct = r
                .note
                .split_once("(+/- ")
                .and_then(|(_, rest)| rest.split_once(')'))
                .and_then(|(v, _)| v.trim().parse::<f64>().ok())
                .unwrap_or(0.0)
                / 2.0;
            let (vap, how) = self.get("chemsep_vaporization");
            return (
                (atct * atct + vap * vap).sqrt(),
                format!("ATcT 1.112 gas (±/2) combined with the source-typical σ of chemsep_vaporization: {how}"),
            );
        }
        typical("nasa")
    }
}

/// Every source a result of this build can cite: each distinct source of the bundled tables'
/// records, in load order, then the estimation methods used for species no table holds.
pub fn data_sources() -> Vec<String> {
    let mut out: Vec<String> = Vec::new();
    for r in &bundled().records {
        if !out.contains(&r.source) {
            out.push(r.source.clone());
        }
    }
    out.push(crate::benson::METHOD.to_string());
    out.push(crate::joback::METHOD.to_string());
    out
}

/// The bundled table, parsed on first use (a few milliseconds) and shared for the process.
pub fn bundled() -> &'static Table {
    static TABLE: OnceLock<Table> = OnceLock::new();
    TABLE.get_or_init(|| {
        Table::from_sources(&[(NASA_TSV, SOURCE_NAME), (OPEN_TSV, OPEN_SOURCE_NAME)], Some(NASA_UNCERTAINTY_TSV))
            .unwrap_or_else(|e| panic!("{e}"))
    })
}

/// Append the records of one table in the `nasa_species.tsv` layout.
fn parse_records(tsv: &str, source_name: &str, records: &mut Vec<Record>, provenance: &mut String) -> Result<(), DataError> {
    let table = crate::tsv::read(tsv, source_name);
    provenance.push_str(&table.comments);
    for row in table.rows() {
        let col = |name: &str| row.get(name);
        let err = |what: &str| row.error(what);
        let phase = match col("phase")? {
            "g" => Phase::Gas,
            "l" => Phase::Liquid,
            "s" => Phase::Solid,
            p => return Err(err(&format!("phase {p:?}"))),
        };
        let charge: i32 = col("charge")?.parse().map_err(|_| err("charge"))?;
        let formula = match parse_composition(col("composition")?, charge) {
            Ok(f) => f,
            // Fractional compositions (non-stoichiometric solids) cannot be balanced in
            // integers, and deuterium is not an element of the table: leave those out.
            Err(CompositionError::NonInteger | CompositionError::NotAnElement) => continue,
            Err(e) => return Err(err(&e.to_string())),
        };
        let nasa7 = match col("model")? {
            "nasa9" => false,
            "nasa7" => true,
            m => return Err(err(&format!("model {m:?}"))),
        };
        let mut segments = Vec::new();
        for seg in col("segments")?.split(';') {
            let v: Vec<f64> = seg
                .split(',')
                .map(|x| x.trim().parse::<f64>())
                .collect::<Result<_, _>>()
                .map_err(|_| err("segment number"))?;
            let s = match (nasa7, v.len()) {
                (false, 11) => Segment {
                    t_min_k: v[0],
                    t_max_k: v[1],
                    a: v[2..11].try_into().map_err(|_| err("segment"))?,
                },
                (true, 9) => Segment::from_nasa7(v[0], v[1], &v[2..9].try_into().map_err(|_| err("segment"))?),
                _ => return Err(err("segment length")),
            };
            segments.push(s);
        }
        segments.sort_by(|a, b| a.t_min_k.total_cmp(&b.t_min_k));
        // The CHEMKIN-format NASA files give 300 K as the lower limit of many condensed
        // species (Al2O3, Fe2O3, CaO) and a few gases (SO2, SO3, HCl) whose fits start at the
        // 298.15 K reference point; take them as valid from 298.15 K so standard values are
        // not flagged for a 1.85 K step.
        if let Some(first) = segments.first_mut() {
            if first.t_min_k == 300.0 {
                first.t_min_k = T_REF_K;
            }
        }
        records.push(Record {
            name: col("name")?.to_string(),
            base: col("base")?.to_string(),
            phase,
            tag: col("tag")?.to_string(),
            formula,
            segments,
            note: col("note").unwrap_or("").to_string(),
            source: col("source").ok().filter(|s| !s.is_empty()).unwrap_or(source_name).to_string(),
            // The open table's column is ATcT's stated ±, a 95% interval: σ is half of it.
            dhf_uncertainty_kj_per_mol: match col("dhf_uncertainty_kj_per_mol") {
                Ok("") | Err(_) => None,
                Ok(v) => Some(v.parse::<f64>().map_err(|_| err("dhf_uncertainty_kj_per_mol"))? / 2.0),
            },
            sigma_basis: String::from(ATCT_BASIS),
        });
    }
    Ok(())
}

/// Set ΔfH° uncertainties from an overlay keyed by record name.
fn apply_uncertainties(tsv: &str, records: &mut [Record], provenance: &mut String) -> Result<(), DataError> {
    let by_name: HashMap<String, usize> = records.iter().enumerate().map(|(k, r)| (r.name.clone(), k)).collect();
    let table = crate::tsv::read(tsv, "uncertainty overlay");
    provenance.push_str(&table.comments);
    for row in table.rows() {
        let (name, u) = (row.get("name")?, row.get("atct_uncertainty_kj_per_mol")?);
        let u: f64 = u.parse().map_err(|_| row.error("bad number"))?;
        if let Some(&k) = by_name.get(name) {
            records[k].dhf_uncertainty_kj_per_mol = Some(u / 2.0);
            records[k].sigma_basis = ATCT_BASIS.to_string();
        }
    }
    Ok(())
}

/// Whether a polymorph or allotrope asked for (`alpha` … `delta`, `graphite`, `rhombic`,
/// `monoclinic`) names a record's tag. NASA labels polymorphs by letters (`a`, `b`), by `cr1`/`cr2`
/// (sulfur) or by Roman and Arabic numerals in order of increasing temperature; those codes are
/// the data's provenance, never what a user writes.
fn form_matches(form: &str, tag: &str) -> bool {
    let tags: &[&str] = match form {
        "alpha" | "rhombic" => &["a", "cr1", "I", "1"],
        "beta" | "monoclinic" => &["b", "cr2", "II", "2", "b,c"],
        "gamma" => &["c", "III", "3", "b,c"],
        "delta" => &["d", "IV"],
        "graphite" => &["gr"],
        _ => return false,
    };
    tags.contains(&tag)
}

/// Why a record's composition cell does not give a formula.
#[derive(Clone, Debug, PartialEq, Eq, thiserror::Error)]
enum CompositionError {
    #[error("composition {0:?}: expected `El:n` pairs with numbers")]
    Malformed(String),
    /// A non-stoichiometric solid: no integer balance is possible.
    #[error("non-integer composition")]
    NonInteger,
    /// A symbol the element table does not hold (deuterium `D`).
    #[error("an element the table does not hold")]
    NotAnElement,
}

fn parse_composition(s: &str, charge: i32) -> Result<Formula, CompositionError> {
    let mut text = String::new();
    for part in s.split_whitespace() {
        let (el, n) = part.split_once(':').ok_or_else(|| CompositionError::Malformed(s.to_string()))?;
        let n: f64 = n.parse().map_err(|_| CompositionError::Malformed(s.to_string()))?;
        if n.fract() != 0.0 {
            return Err(CompositionError::NonInteger);
        }
        text.push_str(el);
        text.push_str(&(n as u64).to_string());
    }
    if text.is_empty() {
        return Ok(Formula { atoms: Vec::new(), charge });
    }
    let mut f = parse_species(&text, 0)
        .map_err(|_| CompositionError::NotAnElement)?
        .formula
        .ok_or_else(|| CompositionError::Malformed(s.to_string()))?;
    f.charge = charge;
    Ok(f)
}

fn strip_charge(name: &str) -> &str {
    name.trim_end_matches(['+', '-'])
}

impl Table {
    /// Parse one table in the `nasa_species.tsv` layout; `source_name` names its records' source
    /// unless a `source` column does.
    ///
    /// # Errors
    /// [`crate::DataError`] naming the line when a row is malformed.
    pub fn from_tsv(tsv: &str, source_name: &str) -> Result<Table, DataError> {
        Table::from_sources(&[(tsv, source_name)], None)
    }

    /// Parse several tables (later ones add records; they never replace earlier ones) and an
    /// optional overlay of ΔfH° uncertainties keyed by record name (`name` and
    /// `atct_uncertainty_kj_per_mol` columns).
    ///
    /// # Errors
    /// [`crate::DataError`] naming the file and line when a row is malformed.
    pub fn from_sources(tables: &[(&str, &str)], uncertainties: Option<&str>) -> Result<Table, DataError> {
        let mut provenance = String::new();
        let mut records = Vec::new();
        let mut sources = Vec::new();
        for (tsv, source_name) in tables {
            parse_records(tsv, source_name, &mut records, &mut provenance)?;
            sources.push(source_name.to_string());
        }
        if let Some(overlay) = uncertainties {
            apply_uncertainties(overlay, &mut records, &mut provenance)?;
        }
        // An element in its reference state has ΔfH° = 0 by definition: no uncertainty.
        let ln_t = T_REF_K.ln();
        for r in records
            .iter_mut()
            .filter(|r| r.dhf_uncertainty_kj_per_mol.is_none() && r.formula.atoms.len() == 1 && r.formula.charge == 0)
        {
            if let Some(seg) = r.segments.iter().find(|s| s.covers(T_REF_K)) {
                if (seg.h_rt_s_r(T_REF_K, ln_t).0 * R * T_REF_K).abs() < 1.0 {
                    r.dhf_uncertainty_kj_per_mol = Some(0.0);
                    r.sigma_basis = "0: an element in its reference state (ΔfH° = 0 by definition)".into();
                }
            }
        }
        let typical = SourceSigma::bundled();
        for r in records.iter_mut().filter(|r| r.dhf_uncertainty_kj_per_mol.is_none()) {
            let (sigma, basis) = typical.for_record(r);
            r.dhf_uncertainty_kj_per_mol = Some(sigma);
            r.sigma_basis = basis;
        }
        Ok(Table::index(records, provenance, sources))
    }

    fn index(records: Vec<Record>, provenance: String, sources: Vec<String>) -> Table {
        let mut by_name: HashMap<(String, i32), Vec<usize>> = HashMap::new();
        let mut by_formula: HashMap<String, Vec<usize>> = HashMap::new();
        for (k, r) in records.iter().enumerate() {
            let base = if r.formula.charge != 0 {
                strip_charge(&r.base)
            } else {
                r.base.as_str()
            };
            // Record names (`C4H10,n-butane`) are looked up whole, only by the engine itself: users
            // write isomers by name or SMILES (`crate::names`, `crate::structures`).
            by_name.entry((base.to_string(), r.formula.charge)).or_default().push(k);
            by_formula.entry(r.formula.hill()).or_default().push(k);
        }
        Table {
            records,
            by_name,
            by_formula,
            provenance,
            sources,
        }
    }

    /// Records whose base name is `name` with this charge.
    pub fn by_name(&self, name: &str, charge: i32) -> &[usize] {
        self.by_name.get(&(name.to_string(), charge)).map_or(&[], Vec::as_slice)
    }

    /// Records with this Hill formula (with charge).
    pub fn by_formula(&self, hill: &str) -> &[usize] {
        self.by_formula.get(hill).map_or(&[], Vec::as_slice)
    }

    /// Resolve a written species to the data the engine will use.
    ///
    /// # Errors
    /// `ResolveError` when the species is unknown, ambiguous or written by name with no data.
    pub fn resolve(&self, spec: &SpeciesSpec) -> Result<Resolved, ResolveError> {
        let shown = spec.to_string();
        let charge = spec.charge();
        let by_name = self.by_name(&spec.text, charge);
        let formula = match &spec.formula {
            Some(f) => f.clone(),
            None => match by_name.first() {
                Some(&k) => self.records[k].formula.clone(),
                None => return Err(ResolveError::NameWithoutData { species: shown }),
            },
        };
        if spec.phase == Some(Phase::Aqueous) {
            return Err(ResolveError::NotFound {
                species: shown,
                hint: " (no aqueous-species data is bundled; supply ΔfH° and S° for it)".into(),
            });
        }
        let mut ids: Vec<usize> = by_name.to_vec();
        if ids.is_empty() {
            ids = self.by_formula(&formula.hill()).to_vec();
        }
        let all = ids.clone();
        ids.retain(|&k| {
            let r = &self.records[k];
            spec.phase.is_none_or(|p| p == r.phase) && spec.form.as_ref().is_none_or(|f| form_matches(f, &r.tag))
        });
        if ids.is_empty() {
            let hint = if all.is_empty() {
                String::new()
            } else {
                let have: Vec<String> = all.iter().map(|&k| self.records[k].name.clone()).collect();
                format!(" in that phase (the table has {})", have.join(", "))
            };
            return Err(ResolveError::NotFound { species: shown, hint });
        }
        // NASA writes gas names in capitals (`AL`, `CL2`) and condensed ones in mixed case
        // (`Al(cr)`): one compound, so bases are compared without case.
        let mut bases: Vec<&str> = ids.iter().map(|&k| self.records[k].base.as_str()).collect();
        bases.sort_unstable_by_key(|b| b.to_ascii_uppercase());
        bases.dedup_by(|a, b| a.eq_ignore_ascii_case(b));
        if bases.len() > 1 {
            let mut names: Vec<String> = bases.iter().map(|b| b.to_string()).collect();
            names.sort();
            return Err(ResolveError::Ambiguous {
                species: shown,
                candidates: names,
                advice: "write the one you mean by its name",
            });
        }
        let mut notes = Vec::new();
        let phase = match spec.phase {
            Some(p) => p,
            None => {
                let p = self.stable_phase_at_298(&ids);
                notes.push(format!(
                    "{} has no phase tag: the stable phase at 298.15 K ({}) is used",
                    spec.text,
                    p.tag()
                ));
                p
            }
        };
        ids.retain(|&k| self.records[k].phase == phase);
        if ids.len() > 1 {
            let at_ref: Vec<usize> = ids.iter().copied().filter(|&k| self.records[k].covers(T_REF_K)).collect();
            if phase != Phase::Solid || at_ref.len() > 1 {
                let names = if at_ref.len() > 1 { &at_ref } else { &ids };
                return Err(ResolveError::Ambiguous {
                    species: shown,
                    candidates: names.iter().map(|&k| self.records[k].name.clone()).collect(),
                    advice: "add a form such as (cr,alpha) or (cr,graphite)",
                });
            }
        }
        ids.sort_by(|&a, &b| self.records[a].t_min_k().total_cmp(&self.records[b].t_min_k()));
        // Labels in IUPAC style: `Fe(cr,alpha)`, `C(cr,graphite)`, `H2O(l)`.
        let label = match (phase, spec.form.as_deref()) {
            (_, Some(f)) => format!("{}(cr,{f})", spec.text_with_charge()),
            (p, None) => format!("{}({})", spec.text_with_charge(), p.tag()),
        };
        let recs: Vec<&Record> = ids.iter().map(|&k| &self.records[k]).collect();
        let rival_phases: &[Phase] = match phase {
            Phase::Liquid => &[Phase::Gas],
            Phase::Solid => &[Phase::Liquid, Phase::Gas],
            Phase::Gas | Phase::Aqueous => &[],
        };
        let rivals: Vec<Segment> = all
            .iter()
            .map(|&k| &self.records[k])
            .filter(|r| rival_phases.contains(&r.phase) && r.base.eq_ignore_ascii_case(&recs[0].base))
            .flat_map(|r| r.segments.iter().copied())
            .collect();
        Ok(Resolved {
            label,
            formula: recs[0].formula.clone(),
            phase,
            segments: recs.iter().flat_map(|r| r.segments.iter().copied()).collect(),
            origin: recs
                .iter()
                .map(|r| Origin::Tabulated {
                    record: r.name.clone(),
                    note: r.note.clone(),
                    source: r.source.clone(),
                })
                .collect(),
            dhf_uncertainty_kj_per_mol: recs[0].dhf_uncertainty_kj_per_mol,
            sigma_basis: recs[0].sigma_basis.clone(),
            notes,
            rivals,
        })
    }

    /// Of the phases these records offer, the one with the lowest Gibbs energy at 298.15 K among
    /// records valid there (the stable phase at 1 bar); gas when none is valid there.
    fn stable_phase_at_298(&self, ids: &[usize]) -> Phase {
        let ln_t = T_REF_K.ln();
        ids.iter()
            .filter_map(|&k| {
                let r = &self.records[k];
                let seg = r.segments.iter().find(|s| s.covers(T_REF_K))?;
                let (h, s) = seg.h_rt_s_r(T_REF_K, ln_t);
                Some((h - s, r.phase))
            })
            .min_by(|a, b| a.0.total_cmp(&b.0))
            .map_or(Phase::Gas, |(_, p)| p)
    }
}

/// Build a resolved species from supplied values; `label` is the species as written.
pub fn from_supplied(label: &str, v: &SuppliedSpecies) -> Resolved {
    let (cp, lo, hi) = match v.cp_j_per_mol_k {
        Some(cp) => (cp, v.t_min_k, v.t_max_k),
        None => (0.0, T_REF_K, T_REF_K),
    };
    let mut notes = Vec::new();
    if v.cp_j_per_mol_k.is_none() {
        notes.push(format!(
            "{label}: no heat capacity supplied; its Cp is taken as 0 away from 298.15 K (flagged)"
        ));
    }
    Resolved {
        label: label.to_string(),
        formula: v.formula.clone(),
        phase: v.phase,
        segments: vec![Segment::constant_cp(lo, hi, v.dhf_kj_per_mol, v.s_j_per_mol_k, cp)],
        origin: vec![Origin::Supplied],
        // Values supplied without an uncertainty are taken as exact, and the table says so.
        dhf_uncertainty_kj_per_mol: Some(v.dhf_uncertainty_kj_per_mol.unwrap_or(0.0)),
        sigma_basis: if v.dhf_uncertainty_kj_per_mol.is_some() {
            "supplied with the request".into()
        } else {
            "0: supplied with the request without an uncertainty (taken as exact)".into()
        },
        notes,
        rivals: Vec::new(),
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn constant_cp_segment_reproduces_its_inputs() {
        // Definition check: H(298.15) = ΔfH°, S(298.15) = S°, Cp constant.
        let s = Segment::constant_cp(250.0, 400.0, -285.83, 69.95, 75.3);
        let (h, sr) = s.h_rt_s_r(T_REF_K, T_REF_K.ln());
        assert!((h * R * T_REF_K / 1000.0 + 285.83).abs() < 1e-9);
        assert!((sr * R - 69.95).abs() < 1e-9);
        assert!((s.cp_over_r(350.0) * R - 75.3).abs() < 1e-9);
    }

    #[test]
    fn nasa7_and_nasa9_forms_agree() {
        let c = [3.0, 1e-3, -2e-7, 3e-11, -1e-15, -1000.0, 4.0];
        let s7 = Segment::from_nasa7(300.0, 1000.0, &c);
        let t: f64 = 500.0;
        // NASA 7 definitions (McBride, Gordon & Reno, NASA TM-4513, eqs. 1-3).
        let cp = c[0] + c[1] * t + c[2] * t * t + c[3] * t.powi(3) + c[4] * t.powi(4);
        let h = c[0] + c[1] * t / 2.0 + c[2] * t * t / 3.0 + c[3] * t.powi(3) / 4.0 + c[4] * t.powi(4) / 5.0 + c[5] / t;
        let s = c[0] * t.ln() + c[1] * t + c[2] * t * t / 2.0 + c[3] * t.powi(3) / 3.0 + c[4] * t.powi(4) / 4.0 + c[6];
        let (h9, s9) = s7.h_rt_s_r(t, t.ln());
        assert!((s7.cp_over_r(t) - cp).abs() < 1e-12);
        assert!((h9 - h).abs() < 1e-12 && (s9 - s).abs() < 1e-12);
    }
}
