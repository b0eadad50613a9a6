//! Benson's second-order group additivity: ideal-gas ΔfH°(298.15 K), S°(298.15 K) and Cp(T)
//! from a molecular graph.
//!
//! A group is a polyvalent atom with its neighbours: `C(C)(H)3` is a methyl on a carbon,
//! `CO(C)(O)` the carbonyl carbon of an ester. Each group carries ΔfH°, S° and Cp at 300–1500 K;
//! a molecule is the sum of its groups plus corrections for non-next-neighbour interactions
//! (gauche, cis, ortho) and ring strain, and S° takes −R ln σ for the symmetry number and
//! +R ln n for n optical isomers.
//!
//! Sources. S.W. Benson, *Thermochemical Kinetics*, 2nd ed., Wiley (1976), group tables
//! pp. 272–279 and the ring corrections, as carried by the `pgradd` package 2.9.14 (Vlachos
//! group, MIT licence; `pgradd/data/BensonGA/gas_benson/*.yaml`), copied by
//! `scripts/gen_benson.py` into `data/benson_groups.tsv`. The atom types and names follow
//! pgradd's scheme (`C`, `C[d]`, `C[t]`, `C[B]`, `C[BF]`, `CO`, `O`, `N`, …; the ligands sorted
//! with H last); where pgradd's scheme has no pattern for a composite ligand that Benson's
//! table lists (nitrile `CN`, nitro `NO2`, nitrite `NO`), this module forms it.
//!
//! Coverage: C, H, O and N only (the carried tables have no halogen or sulfur groups), no
//! charged atoms, no heteroaromatic rings other than furan. A molecule with any group or ring
//! without a value is not estimated here; the caller falls back to Joback and says which group
//! was missing.

use crate::elements::Z;
use crate::smiles::Molecule;
use crate::species::{R, T_REF_K};
use std::borrow::Cow;
use std::collections::HashMap;
use std::fmt::Write as _;
use std::sync::OnceLock;

/// The method, as results name it.
pub const METHOD: &str = "Benson group additivity (Benson, Thermochemical Kinetics, 2nd ed., 1976; tables of pgradd 2.9.14)";

/// The method when a second-tier row gives ΔfH° but S° and Cp come from Joback.
pub const METHOD_DHF_ONLY: &str =
    "Benson group additivity for ΔfH° (Benson 1976; tables of pgradd 2.9.14), S° and Cp by Joback & Reid (1987)";

const DATA: &str = include_str!("../data/benson_groups.tsv");

/// Temperatures of the tabulated heat capacities, K.
const CP_T_K: [f64; 7] = [300.0, 400.0, 500.0, 600.0, 800.0, 1000.0, 1500.0];
const CP_COLUMNS: [&str; 7] = ["cp300", "cp400", "cp500", "cp600", "cp800", "cp1000", "cp1500"];

/// The range the fitted Cp polynomial is used over, K.
pub const CP_RANGE_K: (f64, f64) = (T_REF_K, 1000.0);

/// σ rules for ΔfH°(g), kJ/mol, combined in quadrature. Set on the rule-setting set (ATcT 1.112,
/// `tests/reference/atct_hfg.tsv`, and the CRC rows with an even CAS check digit), checked on
/// the held-out CRC rows with an odd check digit (`tests/joback_atct.rs`).
pub mod sigma {
    /// Every molecule.
    pub const BASE: f64 = 4.0;
    /// Per heavy atom (errors grow with size: long chains, crowded molecules).
    pub const PER_HEAVY_ATOM: f64 = 0.4;
    /// Per nitrogen or composite group (values resting on few compounds).
    pub const THIN_GROUP: f64 = 4.0;
    /// Per occurrence of a second-tier row (ΔfH° without S° or Cp in the table).
    pub const SECOND_TIER: f64 = 10.0;
    /// Per pair of O or N atoms two or three bonds apart (diols, glycol ethers, amino
    /// alcohols: interactions the groups do not see).
    pub const HETERO_PAIR: f64 = 9.0;
    /// Per sp3 carbon with four heavy neighbours (tert-butyl and quaternary crowding).
    pub const QUATERNARY: f64 = 6.0;
    /// Per atom of a non-aromatic ring that carries a substituent (axial/equatorial and
    /// ring-gauche effects the corrections do not resolve).
    pub const RING_SUBSTITUENT: f64 = 5.0;
    /// Per gauche or ortho interaction counted (crowding the corrections only roughly price).
    pub const CROWDING: f64 = 2.5;
    /// Per ring whose strain is borrowed from a carbocycle (a project rule) and per ring of a
    /// fused or bridged system.
    pub const RING: f64 = 12.0;
}

/// Table rows not used: their values miss the rule-setting set by far (tetracyanoethene,
/// CRC: 705.0 kJ/mol, by these groups 302.1).
const REJECTED: [&str; 1] = ["C[d](CN)2"];

/// Values of one group or correction: ΔfH° kJ/mol, S° J/(mol·K), Cp J/(mol·K) at [`CP_T_K`].
#[derive(Clone, Debug, PartialEq)]
struct Values {
    /// A ring-strain row (its S° and Cp are not zero when missing, unlike a gauche's).
    strain: bool,
    dhf: f64,
    s: Option<f64>,
    cp: [Option<f64>; 7],
    thin: bool,
}

/// FNV-1a: the group names are short and trusted (bundled), so a fast non-keyed hash will do.
#[derive(Default)]
struct Fnv(u64);

impl std::hash::Hasher for Fnv {
    fn finish(&self) -> u64 {
        self.0
    }
    fn write(&mut self, bytes: &[u8]) {
        let mut h = if self.0 == 0 { 0xcbf2_9ce4_8422_2325 } else { self.0 };
        for &b in bytes {
            h = (h ^ b as u64).wrapping_mul(0x0100_0000_01b3);
        }
        self.0 = h;
    }
}

type Map<V> = HashMap<String, V, std::hash::BuildHasherDefault<Fnv>>;

struct Library {
    values: Map<Values>,
    remaps: Map<Vec<(f64, String)>>,
}

fn library() -> &'static Library {
    static LIB: OnceLock<Library> = OnceLock::new();
    LIB.get_or_init(|| Library::parse(DATA).unwrap_or_else(|e| panic!("bundled benson_groups.tsv: {e}")))
}

impl Library {
    fn parse(text: &str) -> Result<Library, crate::tsv::DataError> {
        let t = crate::tsv::read(text, "benson_groups.tsv");
        let mut lib = Library {
            values: Map::default(),
            remaps: Map::default(),
        };
        let num = |row: &crate::tsv::Row, c: &str| -> Result<Option<f64>, crate::tsv::DataError> {
            let v = row.get(c)?.trim();
            if v.is_empty() {
                return Ok(None);
            }
            v.parse::<f64>()
                .map(Some)
                .map_err(|_| row.error(&format!("{c} is not a number: {v}")))
        };
        for row in t.rows() {
            let kind = row.get("kind")?;
            let name = canonical(row.get("name")?).ok_or_else(|| row.error("unreadable group name"))?;
            match kind {
                "group" | "correction" | "strain" => {
                    let Some(dhf) = num(&row, "dhf_kj_per_mol")? else {
                        continue;
                    };
                    let mut cp = [None; 7];
                    for (k, c) in CP_COLUMNS.iter().enumerate() {
                        cp[k] = num(&row, c)?;
                    }
                    let thin = row.get("source_file")? == "nitrogenates.yaml";
                    lib.values.insert(
                        name,
                        Values {
                            strain: kind == "strain",
                            dhf,
                            s: num(&row, "s_j_per_mol_k")?,
                            cp,
                            thin,
                        },
                    );
                }
                "remap" => {
                    let mut target = Vec::new();
                    for part in row.get("target")?.split('+') {
                        let (f, g) = part.split_once('*').ok_or_else(|| row.error("remap target is not factor*group"))?;
                        let f: f64 = f.trim().parse().map_err(|_| row.error("remap factor is not a number"))?;
                        let g = canonical(g.trim()).ok_or_else(|| row.error("unreadable remap target"))?;
                        target.push((f, g));
                    }
                    lib.remaps.insert(name, target);
                }
                _ => {}
            }
        }
        Ok(lib)
    }
}

impl Library {
    /// The library's own copy of `name` (so it lives as long as the library) when the name has
    /// a value or a remap.
    fn key(&'static self, name: &str) -> Option<&'static str> {
        self.values
            .get_key_value(name)
            .map(|(k, _)| k.as_str())
            .or_else(|| self.remaps.get_key_value(name).map(|(k, _)| k.as_str()))
    }
}

/// A group name in the one spelling this module uses: the centre, then each distinct ligand in
/// parentheses (sorted by byte order, H last) with its count when above one. Names that are not
/// of that shape (`AlkaneGauche`, `Cyclohexane`) are kept as they are.
pub fn canonical(name: &str) -> Option<String> {
    let Some(open) = name.find('(') else {
        return Some(name.to_string());
    };
    if name.contains(' ') || !name.ends_with(|c: char| c == ')' || c.is_ascii_digit()) {
        return Some(name.to_string());
    }
    let centre = &name[..open];
    let mut ligands: Vec<(&str, u32)> = Vec::new();
    let mut rest = &name[open..];
    while !rest.is_empty() {
        let inner_end = rest.find(')')?;
        let mut inner = &rest[1..inner_end];
        rest = &rest[inner_end + 1..];
        let digits = rest.bytes().take_while(u8::is_ascii_digit).count();
        let mut n: u32 = if digits > 0 { rest[..digits].parse().ok()? } else { 1 };
        rest = &rest[digits..];
        if !rest.is_empty() && !rest.starts_with('(') {
            return None;
        }
        // pgradd writes one remap as `CO(C[B]2)`: a count inside the parentheses.
        let inside = inner.bytes().rev().take_while(u8::is_ascii_digit).count();
        if inside > 0
            && inside < inner.len()
            && inner.ends_with(|c: char| c.is_ascii_digit())
            && inner[..inner.len() - inside].ends_with(']')
        {
            n *= inner[inner.len() - inside..].parse::<u32>().ok()?;
            inner = &inner[..inner.len() - inside];
        }
        match ligands.iter_mut().find(|l| l.0 == inner) {
            Some(l) => l.1 += n,
            None => ligands.push((inner, n)),
        }
    }
    Some(render(centre, &mut ligands))
}

fn render(centre: &str, ligands: &mut [(&str, u32)]) -> String {
    let mut s = String::new();
    render_into(&mut s, centre, ligands);
    s
}

fn render_into(s: &mut String, centre: &str, ligands: &mut [(&str, u32)]) {
    ligands.sort_unstable_by(|a, b| (a.0 == "H", a.0).cmp(&(b.0 == "H", b.0)));
    s.clear();
    s.push_str(centre);
    for (l, n) in ligands.iter() {
        s.push('(');
        s.push_str(l);
        s.push(')');
        if *n > 1 {
            let _ = write!(s, "{n}");
        }
    }
}

/// Why a molecule has no Benson estimate.
#[derive(Clone, Debug, PartialEq, thiserror::Error)]
pub enum BensonError {
    /// An atom of a kind the carried tables do not cover (halogen, sulfur, charged atom,
    /// heteroaromatic ring, …).
    #[error("no Benson group for {0}")]
    Unsupported(String),
    /// Groups or corrections the tables have no ΔfH° for.
    #[error("no Benson value for {}", .0.join(", "))]
    Missing(Vec<String>),
}

/// Atom types of the group scheme.
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
enum Kind {
    /// sp3 carbon.
    C,
    /// Carbon of a C=C or C=N double bond (and the carbons of a furan ring).
    Cd,
    /// Carbon of a triple bond.
    Ct,
    /// Carbon of a benzene ring.
    Cb,
    /// Carbon shared by two fused benzene rings.
    Cbf,
    /// Carbonyl carbon.
    Co,
    /// Central carbon of an allene.
    Ca,
    /// Central carbon of a ketene.
    Cco,
    /// Divalent oxygen.
    O,
    /// Amine nitrogen.
    N,
    /// Nitrogen with a double bond.
    Nd,
    /// Nitrogen with a triple bond.
    Nt,
    /// Part of a composite ligand or a carbonyl oxygen: no group of its own.
    Consumed,
}

impl Kind {
    fn name(self) -> &'static str {
        match self {
            Kind::C => "C",
            Kind::Cd => "C[d]",
            Kind::Ct => "C[t]",
            Kind::Cb => "C[B]",
            Kind::Cbf => "C[BF]",
            Kind::Co => "CO",
            Kind::Ca => "C[a]",
            Kind::Cco => "CCO",
            Kind::O => "O",
            Kind::N => "N",
            Kind::Nd => "N[d]",
            Kind::Nt => "N[t]",
            Kind::Consumed => "",
        }
    }
}

/// The groups, corrections and their sums for one molecule.
#[derive(Clone, Debug, PartialEq)]
pub struct Benson {
    /// Every group and correction after pgradd's remaps, sorted by name, with its count.
    pub contributions: Vec<(&'static str, f64)>,
    pub dhf_gas_kj_per_mol: f64,
    /// Σ group and correction S°, before symmetry and optical isomers; None when a second-tier
    /// row (ΔfH° only) is among the groups.
    pub s_intrinsic_j_per_mol_k: Option<f64>,
    pub symmetry_number: f64,
    pub optical_isomers: f64,
    /// S°(g, 298.15 K) = intrinsic − R ln σ + R ln(optical isomers); None as above (the species
    /// then takes Joback's).
    pub s_gas_j_per_mol_k: Option<f64>,
    /// Cp = a + bT + cT² + dT³, J/(mol·K), fitted to the summed group values 300–1000 K; None
    /// when a second-tier row lacks heat capacities.
    pub cp: Option<[f64; 4]>,
    /// Rows with ΔfH° but no S° or Cp that the molecule needed.
    pub second_tier: Vec<&'static str>,
    pub dhf_sigma_kj_per_mol: f64,
    /// What widened σ, for the notes.
    pub widened: Vec<String>,
}

impl Benson {
    /// # Errors
    /// [`BensonError`] when an atom is outside the scheme or a group or correction has no value.
    pub fn of(m: &Molecule) -> Result<Benson, BensonError> {
        let kinds = atom_kinds(m)?;
        let lib = library();
        // Names as the library spells them (borrowed from it); an unknown one is kept owned for
        // the error.
        let mut terms: Vec<(Cow<'static, str>, f64)> = Vec::with_capacity(m.atoms().len());
        let mut add = |name: Cow<'static, str>, n: f64| match terms.iter_mut().find(|t| t.0 == name) {
            Some(t) => t.1 += n,
            None => terms.push((name, n)),
        };
        let mut buf = String::with_capacity(32);
        for i in 0..m.atoms().len() {
            if kinds[i] != Kind::Consumed {
                group_name_into(&mut buf, m, &kinds, i);
                add(lib.key(&buf).map_or_else(|| Cow::Owned(buf.clone()), Cow::Borrowed), 1.0);
            }
        }
        let mut widened = Vec::new();
        for (name, n) in corrections(m, &kinds) {
            add(Cow::Borrowed(name), n);
        }
        let (strain, ring_notes) = ring_strain(m, &kinds)?;
        // Where a listed ring's row has no S° or Cp, its carbocycle's stand in.
        let mut stand_in: Vec<(&'static str, &'static str)> = Vec::new();
        for (name, carbocycle) in strain {
            if let Some(c) = carbocycle {
                stand_in.push((name, c));
            }
            add(Cow::Borrowed(name), 1.0);
        }
        widened.extend(ring_notes);
        // Remaps, then values; try the short Benson names for aromatic and olefinic centres.
        let mut expanded: Vec<(&'static str, f64)> = Vec::with_capacity(terms.len());
        let mut missing = Vec::new();
        for (name, n) in &terms {
            // pgradd's remaps, except those that count an amide or imide nitrogen as an amine:
            // its scheme maps N(CO)(H)2 to N(C)(H)2 although Benson lists N(CO)(H)2, which
            // costs amides 80 kJ/mol, and N(C)2(CO) to N(C)3, which costs DMF 85 kJ/mol. Those
            // keep their own value or, without one, leave the molecule to Joback.
            let amide_n = name.starts_with("N(") && name.contains("(CO)");
            let one = [(1.0, name.as_ref())];
            let remapped: Vec<(f64, &str)>;
            let resolved: &[(f64, &str)] = match lib.remaps.get(name.as_ref()) {
                Some(t) if !amide_n => {
                    remapped = t.iter().map(|(f, g)| (*f, g.as_str())).collect();
                    &remapped
                }
                _ => &one,
            };
            for &(f, g) in resolved {
                let key = if let Some((k, _)) = lib.values.get_key_value(g) {
                    k.as_str()
                } else if let Some((k, _)) = short_name(g).and_then(|s| lib.values.get_key_value(s.as_str())) {
                    k.as_str()
                } else {
                    missing.push(g.to_string());
                    continue;
                };
                if REJECTED.contains(&key) {
                    missing.push(format!("{key} (value rejected on the rule-setting set)"));
                    continue;
                }
                match expanded.iter_mut().find(|e| e.0 == key) {
                    Some(e) => e.1 += f * n,
                    None => expanded.push((key, f * n)),
                }
            }
        }
        if !missing.is_empty() {
            missing.sort();
            missing.dedup();
            return Err(BensonError::Missing(missing));
        }
        expanded.sort_unstable_by(|a, b| a.0.cmp(b.0));
        let mut dhf = 0.0;
        let mut s = 0.0;
        let mut cp = [0.0; 7];
        let mut no_s = Vec::new();
        let mut no_cp = Vec::new();
        let mut thin = 0.0;
        for (g, n) in &expanded {
            let v = &lib.values[*g];
            dhf += n * v.dhf;
            if v.thin {
                thin += n;
            }
            // Gauche, cis and similar corrections carry ΔfH° only: their S° and Cp are zero. A
            // ring row without them takes its carbocycle's.
            let has_sc = |x: &Values| x.s.is_some() && x.cp.iter().take(6).all(Option::is_some);
            let sc = if v.strain && !has_sc(v) {
                stand_in
                    .iter()
                    .find(|(r, _)| r == g)
                    .and_then(|(_, c)| lib.values.get(*c))
                    .filter(|c| has_sc(c))
                    .unwrap_or(v)
            } else {
                v
            };
            let needed = g.contains('(') || v.strain;
            match sc.s {
                Some(x) => s += n * x,
                None if needed => no_s.push(*g),
                None => {}
            }
            for (sum, value) in cp.iter_mut().zip(&sc.cp).take(6) {
                match value {
                    Some(x) => *sum += n * x,
                    None if needed => {
                        no_cp.push(*g);
                        break;
                    }
                    None => {}
                }
            }
        }
        // A row with ΔfH° but no S° or Cp is one of the table's second-tier values: ΔfH° is still
        // Benson's (on the rule-setting set such molecules came out MAE 10.3 kJ/mol against
        // Joback's 16.8 over 40), S° and Cp then come from Joback, and σ widens per such row.
        let mut second_tier: Vec<&'static str> = no_s.iter().chain(&no_cp).copied().collect();
        second_tier.sort_unstable();
        second_tier.dedup();
        let (classes, automorphisms) = m.symmetry();
        let symmetry_number = symmetry_number(m, classes, automorphisms);
        let optical_isomers = 2f64.powi(chiral_centres(m, &kinds, classes) as i32);
        let heavy = m.heavy_atom_count() as f64;
        let crowding: f64 = expanded
            .iter()
            .filter(|(g, _)| g.ends_with("Gauche") || *g == "Ortho")
            .map(|(_, n)| n)
            .sum();
        let pairs = hetero_pairs(m) as f64;
        let rings = widened.iter().filter(|w| w.starts_with("ring")).count() as f64;
        let quaternary = (0..m.atoms().len()).filter(|&k| kinds[k] == Kind::C && m.degree(k) == 4).count() as f64;
        let ring_substituents = (0..m.atoms().len())
            .filter(|&k| m.atoms()[k].in_ring && !m.atoms()[k].aromatic && m.neighbours(k).any(|(_, b)| !m.bonds()[b].in_ring))
            .count() as f64;
        let second: f64 = expanded.iter().filter(|(g, _)| second_tier.contains(g)).map(|(_, n)| n).sum();
        let mut sigma2 = sigma::BASE.powi(2) + (sigma::PER_HEAVY_ATOM * heavy).powi(2);
        sigma2 += second * sigma::SECOND_TIER.powi(2);
        if second > 0.0 {
            widened.push(format!(
                "{} second-tier group(s) (ΔfH° without S° or Cp in the table)",
                fmt_count(second)
            ));
        }
        sigma2 += thin * sigma::THIN_GROUP.powi(2);
        sigma2 += pairs * sigma::HETERO_PAIR.powi(2) + crowding * sigma::CROWDING.powi(2) + rings * sigma::RING.powi(2);
        sigma2 += quaternary * sigma::QUATERNARY.powi(2) + ring_substituents * sigma::RING_SUBSTITUENT.powi(2);
        if quaternary > 0.0 {
            widened.push(format!("{quaternary} quaternary carbon(s)"));
        }
        if ring_substituents > 0.0 {
            widened.push(format!("{ring_substituents} substituted atom(s) of a non-aromatic ring"));
        }
        if thin > 0.0 {
            widened.push(format!(
                "{} nitrogen or composite group(s) resting on few compounds",
                fmt_count(thin)
            ));
        }
        if pairs > 0.0 {
            widened.push(format!("{pairs} pair(s) of O/N atoms two or three bonds apart"));
        }
        if crowding > 0.0 {
            widened.push(format!("{} gauche or ortho interaction(s)", fmt_count(crowding)));
        }
        Ok(Benson {
            contributions: expanded,
            dhf_gas_kj_per_mol: dhf,
            s_intrinsic_j_per_mol_k: no_s.is_empty().then_some(s),
            symmetry_number,
            optical_isomers,
            s_gas_j_per_mol_k: no_s.is_empty().then(|| s - R * symmetry_number.ln() + R * optical_isomers.ln()),
            cp: no_cp.is_empty().then(|| fit_cubic(&cp)),
            second_tier,
            dhf_sigma_kj_per_mol: sigma2.sqrt(),
            widened,
        })
    }

    /// The groups as one line for notes: `C(C)(H)3 ×2, C(C)2(H)2`.
    pub fn groups_text(&self) -> String {
        let mut s = String::new();
        for (g, n) in &self.contributions {
            if !s.is_empty() {
                s.push_str(", ");
            }
            s.push_str(g);
            if (n - 1.0).abs() > 1e-9 {
                let _ = write!(s, " ×{}", fmt_count(*n));
            }
        }
        s
    }
}

fn fmt_count(n: f64) -> String {
    if (n - n.round()).abs() < 1e-9 {
        format!("{}", n.round() as i64)
    } else {
        format!("{n}")
    }
}

/// Heat capacities at 300..1000 K (the first six tabulated temperatures) fitted by least squares
/// to a cubic in T (scaled to keep the normal equations well conditioned).
fn fit_cubic(cp: &[f64; 7]) -> [f64; 4] {
    const SCALE: f64 = 1000.0;
    let pts: Vec<(f64, f64)> = CP_T_K.iter().zip(cp).take(6).map(|(&t, &c)| (t / SCALE, c)).collect();
    let mut a = [[0.0f64; 5]; 4];
    for &(x, y) in &pts {
        let p = [1.0, x, x * x, x * x * x];
        for r in 0..4 {
            for c in 0..4 {
                a[r][c] += p[r] * p[c];
            }
            a[r][4] += p[r] * y;
        }
    }
    // Gaussian elimination with partial pivoting.
    for col in 0..4 {
        let piv = (col..4).max_by(|&i, &j| a[i][col].abs().total_cmp(&a[j][col].abs())).unwrap_or(col);
        a.swap(col, piv);
        for r in 0..4 {
            if r != col && a[col][col] != 0.0 {
                let f = a[r][col] / a[col][col];
                let pivot = a[col];
                for (x, p) in a[r].iter_mut().zip(pivot).skip(col) {
                    *x -= f * p;
                }
            }
        }
    }
    let x: Vec<f64> = (0..4).map(|i| if a[i][i] != 0.0 { a[i][4] / a[i][i] } else { 0.0 }).collect();
    [x[0], x[1] / SCALE, x[2] / (SCALE * SCALE), x[3] / (SCALE * SCALE * SCALE)]
}

/// Benson's own short names for centres whose ring or double-bond partner the table leaves out:
/// `C[B](C[B])2(N)` → `C[B](N)`, `C[d](CN)(C[d])(H)` → `C[d](CN)(H)`.
fn short_name(name: &str) -> Option<String> {
    let (centre, partner) = if let Some(r) = name.strip_prefix("C[B]") {
        ("C[B]", r.strip_prefix("(C[B])2").map(|r| r.to_string()))
    } else if let Some(r) = name.strip_prefix("C[d]") {
        ("C[d]", Some(r.replacen("(C[d])", "", 1)).filter(|s| s.len() < r.len()))
    } else {
        return None;
    };
    partner.filter(|r| !r.is_empty()).map(|r| format!("{centre}{r}"))
}

fn kbonds(m: &Molecule, i: usize) -> impl Iterator<Item = (usize, u8)> + '_ {
    m.neighbours(i).map(move |(w, b)| (w, m.bonds()[b].kekule_order))
}

/// Is atom `i` a carbon of a six-membered all-carbon aromatic ring; how many such rings hold it.
fn benzene_rings(m: &Molecule, i: usize) -> usize {
    m.rings()
        .iter()
        .filter(|r| r.len() == 6 && r.contains(&i) && r.iter().all(|&k| m.atoms()[k].aromatic && m.atoms()[k].element == 6))
        .count()
}

fn is_furan_ring(m: &Molecule, r: &[usize]) -> bool {
    r.len() == 5
        && r.iter().all(|&k| m.atoms()[k].aromatic)
        && r.iter().filter(|&&k| m.atoms()[k].element == 8).count() == 1
        && r.iter().filter(|&&k| m.atoms()[k].element == 6).count() == 4
}

/// Nitro nitrogen: N bonded to two oxygens that have no other neighbour (charge-separated or
/// written with two double bonds) and one other atom.
fn is_nitro_n(m: &Molecule, i: usize) -> bool {
    let a = &m.atoms()[i];
    a.element == 7
        && m.degree(i) == 3
        && m.neighbours(i)
            .filter(|&(w, _)| m.atoms()[w].element == 8 && m.degree(w) == 1)
            .count()
            == 2
}

/// Nitrite nitrogen (–O–N=O): N with one terminal =O and one other oxygen.
fn is_nitrite_n(m: &Molecule, i: usize) -> bool {
    let a = &m.atoms()[i];
    a.element == 7
        && a.charge == 0
        && m.degree(i) == 2
        && a.hydrogens == 0
        && kbonds(m, i).any(|(w, o)| o == 2 && m.atoms()[w].element == 8 && m.degree(w) == 1)
        && kbonds(m, i).any(|(w, o)| o == 1 && m.atoms()[w].element == 8)
}

/// Nitrile carbon: C≡N with a terminal N and one other neighbour.
fn is_nitrile_c(m: &Molecule, i: usize) -> bool {
    m.atoms()[i].element == 6 && m.degree(i) == 2 && kbonds(m, i).any(|(w, o)| o == 3 && m.atoms()[w].element == 7 && m.degree(w) == 1)
}

fn atom_kinds(m: &Molecule) -> Result<Vec<Kind>, BensonError> {
    let n = m.atoms().len();
    if m.heavy_atom_count() < 2 || m.component_count() != 1 {
        return Err(BensonError::Unsupported(
            "a molecule of fewer than two heavy atoms or of several parts".into(),
        ));
    }
    let mut kinds = vec![Kind::C; n];
    // Composite ligands first: their atoms have no group of their own.
    for i in 0..n {
        if is_nitro_n(m, i) || is_nitrite_n(m, i) {
            kinds[i] = Kind::Consumed;
            for (w, o) in kbonds(m, i) {
                if m.atoms()[w].element == 8 && m.degree(w) == 1 {
                    kinds[w] = Kind::Consumed;
                }
                let _ = o;
            }
        } else if is_nitrile_c(m, i) && m.neighbours(i).all(|(w, _)| !is_nitrile_c(m, w)) {
            kinds[i] = Kind::Consumed;
            for (w, o) in kbonds(m, i) {
                if o == 3 {
                    kinds[w] = Kind::Consumed;
                }
            }
        }
    }
    for (i, a) in m.atoms().iter().enumerate() {
        if kinds[i] == Kind::Consumed {
            continue;
        }
        let what = |s: &str| BensonError::Unsupported(format!("{s} (atom at byte {})", a.position));
        if a.charge != 0 {
            return Err(what("a charged atom"));
        }
        if a.isotope.is_some() {
            return Err(what("an isotope-labelled atom"));
        }
        let bond_sum: usize = kbonds(m, i).map(|(_, o)| o as usize).sum::<usize>() + a.hydrogens as usize;
        let full = match a.element {
            6 => 4,
            7 => 3,
            8 => 2,
            _ => bond_sum,
        };
        if bond_sum != full {
            return Err(what(
                "an atom with an unpaired or missing electron (radicals are outside the tables used)",
            ));
        }
        let doubles: Vec<Z> = kbonds(m, i).filter(|&(_, o)| o == 2).map(|(w, _)| m.atoms()[w].element).collect();
        let triples = kbonds(m, i).filter(|&(_, o)| o == 3).count();
        kinds[i] = match a.element {
            6 if a.aromatic && triples > 0 => return Err(what("an aryne carbon")),
            6 if a.aromatic => {
                let rings = benzene_rings(m, i);
                let aromatic_neighbours = m
                    .neighbours(i)
                    .filter(|&(w, b)| m.atoms()[w].aromatic && m.bonds()[b].in_ring)
                    .count();
                if rings >= 2 && aromatic_neighbours == 3 {
                    Kind::Cbf
                } else if rings >= 1 {
                    Kind::Cb
                } else if m.rings().iter().any(|r| r.contains(&i) && is_furan_ring(m, r)) {
                    Kind::Cd
                } else {
                    return Err(what("a carbon of a heteroaromatic ring"));
                }
            }
            6 => match (doubles.as_slice(), triples) {
                ([], 0) => Kind::C,
                ([], 1) => Kind::Ct,
                ([8], 0) => Kind::Co,
                ([6], 0) | ([7], 0) => Kind::Cd,
                ([6, 6], 0) => Kind::Ca,
                ([6, 8], 0) | ([8, 6], 0) => Kind::Cco,
                _ => return Err(what("a carbon with these multiple bonds")),
            },
            8 if a.aromatic => {
                if m.rings().iter().any(|r| r.contains(&i) && is_furan_ring(m, r)) {
                    Kind::O
                } else {
                    return Err(what("an oxygen of a heteroaromatic ring"));
                }
            }
            8 => match (doubles.len(), m.degree(i) + a.hydrogens as usize) {
                (1, 1) => Kind::Consumed,
                (0, 2) => Kind::O,
                _ => return Err(what("an oxygen of this kind")),
            },
            7 if a.aromatic => return Err(what("an aromatic nitrogen")),
            7 => match (doubles.len(), triples) {
                (0, 0) if m.degree(i) + a.hydrogens as usize == 3 => Kind::N,
                (1, 0) => Kind::Nd,
                (0, 1) => Kind::Nt,
                _ => return Err(what("a nitrogen of this kind")),
            },
            1 => return Err(what("a hydrogen written as an atom")),
            z => {
                return Err(BensonError::Unsupported(format!(
                    "{} (the carried tables cover C, H, O and N)",
                    crate::elements::symbol(z)
                )))
            }
        };
    }
    Ok(kinds)
}

/// The ligand name atom `w` shows to a neighbouring centre.
fn ligand_name(m: &Molecule, kinds: &[Kind], w: usize) -> &'static str {
    if kinds[w] != Kind::Consumed {
        return kinds[w].name();
    }
    if is_nitro_n(m, w) {
        "NO2"
    } else if is_nitrite_n(m, w) {
        "NO"
    } else if is_nitrile_c(m, w) {
        "CN"
    } else {
        "?"
    }
}

fn group_name_into(buf: &mut String, m: &Molecule, kinds: &[Kind], i: usize) {
    let mut ligands: Vec<(&str, u32)> = Vec::with_capacity(5);
    for (w, b) in m.neighbours(i) {
        // A carbonyl oxygen is part of its CO centre, not a ligand.
        if kinds[w] == Kind::Consumed && m.atoms()[w].element == 8 && m.bonds()[b].kekule_order == 2 && m.atoms()[i].element == 6 {
            continue;
        }
        let mut l = ligand_name(m, kinds, w);
        // Benson's benzene groups name only the substituent: a ring neighbour that is a fusion
        // carbon is still the ring's (Cb–(H) next to naphthalene's fusion, not a group of its own).
        if kinds[i] == Kind::Cb && kinds[w] == Kind::Cbf && m.bonds()[b].in_ring {
            l = Kind::Cb.name();
        }
        match ligands.iter_mut().find(|x| x.0 == l) {
            Some(x) => x.1 += 1,
            None => ligands.push((l, 1)),
        }
    }
    if m.atoms()[i].hydrogens > 0 {
        ligands.push(("H", m.atoms()[i].hydrogens as u32));
    }
    render_into(buf, kinds[i].name(), &mut ligands)
}

/// Carbon neighbours of atom `i` through single (non-aromatic) bonds.
fn single_c(m: &Molecule, i: usize) -> usize {
    single_c_of(m, i).count()
}

fn single_c_of(m: &Molecule, i: usize) -> impl Iterator<Item = usize> + '_ {
    m.neighbours(i)
        .filter(move |&(w, b)| {
            m.atoms()[w].element == 6
                && m.bonds()[b].kekule_order == 1
                && !(m.atoms()[i].aromatic && m.atoms()[w].aromatic && m.bonds()[b].in_ring)
        })
        .map(|(w, _)| w)
}

/// Carbon neighbours of `i` through single bonds, other than `except`, that lie on no ring.
fn open_c(m: &Molecule, i: usize, except: usize) -> usize {
    single_c_of(m, i).filter(|&w| w != except && !m.atoms()[w].in_ring).count()
}

/// A tert-butyl-like carbon seen from `from`: sp3, off any ring, with three more open carbons.
fn tertiary_from(m: &Molecule, kinds: &[Kind], c: usize, from: usize) -> bool {
    kinds[c] == Kind::C && !m.atoms()[c].in_ring && open_c(m, c, from) == 3
}

/// Next-nearest-neighbour corrections — alkane and alkene gauche, cis, tert-butyl cis, ether
/// gauche, ditertiary ether — by pgradd's patterns (scheme.yaml `other_descriptors`) with the
/// double-bond stereo unspecified, each pattern counted once per distinct set of atoms; and
/// Benson's ortho correction, one per pair of adjacent ring carbons that both carry a carbon.
fn corrections(m: &Molecule, kinds: &[Kind]) -> Vec<(&'static str, f64)> {
    let mut out: Vec<(&'static str, f64)> = Vec::new();
    let mut add = |name: &'static str, n: f64| {
        if n == 0.0 {
            return;
        }
        match out.iter_mut().find(|o| o.0 == name) {
            Some(o) => o.1 += n,
            None => out.push((name, n)),
        }
    };
    for b in m.bonds() {
        let (i, j) = (b.a, b.b);
        if b.kekule_order == 2
            && !b.in_ring
            && kinds[i] == Kind::Cd
            && kinds[j] == Kind::Cd
            && m.atoms()[i].element == 6
            && m.atoms()[j].element == 6
            && !m.atoms()[i].in_ring
            && !m.atoms()[j].in_ring
        {
            // Cis, stereo unspecified: half a cis for CH=CH, one for a trisubstituted and two
            // plus a double cis for a tetrasubstituted bond, counting open-chain carbons only.
            let (ni, nj) = (single_c(m, i), single_c(m, j));
            let (oi, oj) = (open_c(m, i, j), open_c(m, j, i));
            let all_open = oi == ni && oj == nj;
            if all_open {
                match (ni.min(nj), ni.max(nj)) {
                    (1, 1) => add("Cis", 0.5),
                    (1, 2) => add("Cis", 1.0),
                    (2, 2) => {
                        add("Cis", 2.0);
                        add("Double Cis", 1.0);
                    }
                    _ => {}
                }
            }
            // tert-Butyl cis: a tert-butyl on one carbon facing a carbon on the other.
            for (p, q) in [(i, j), (j, i)] {
                let (np, nq) = (single_c(m, p), single_c(m, q));
                let open = open_c(m, p, q) == np && open_c(m, q, p) == nq;
                let tbu = |x: usize, on: usize| tertiary_from(m, kinds, x, on);
                let q_tbu = single_c_of(m, q).filter(|&x| tbu(x, q)).count();
                if !open || q_tbu == 0 {
                    continue;
                }
                match (np, nq) {
                    (1, 1) => add("tbCis", 0.5 * q_tbu as f64),
                    (1, 2) => add("tbCis", 0.5 * q_tbu as f64),
                    (2, 2) => add("tbCis", 1.0 * q_tbu as f64),
                    _ => {}
                }
            }
            let tbu_i = single_c_of(m, i).filter(|&x| tertiary_from(m, kinds, x, i)).count();
            let tbu_j = single_c_of(m, j).filter(|&x| tertiary_from(m, kinds, x, j)).count();
            if tbu_i > 0 && tbu_j > 0 {
                add("Double tbCis", 0.5 * (tbu_i * tbu_j) as f64);
            }
        }
        // Ortho (Benson): adjacent benzene carbons that both carry a carbon.
        if matches!(kinds[i], Kind::Cb) && matches!(kinds[j], Kind::Cb) && b.in_ring && single_c(m, i) == 1 && single_c(m, j) == 1 {
            add("Ortho", 1.0);
        }
    }
    add("AlkaneGauche", alkane_gauche(m, kinds));
    add("AlkeneGauche", alkene_gauche(m, kinds));
    for (i, a) in m.atoms().iter().enumerate() {
        if kinds[i] != Kind::O || a.in_ring {
            continue;
        }
        let cs: Vec<usize> = m
            .neighbours(i)
            .filter(|&(w, _)| m.atoms()[w].element == 6 && !m.atoms()[w].in_ring)
            .map(|(w, _)| w)
            .collect();
        if cs.len() != 2 {
            continue;
        }
        // Ether oxygen gauche: a C–O–C off any ring with a carbon of fewer than three carbons.
        if cs.iter().any(|&c| single_c(m, c) < 3) {
            add("Ether oxygen gauche", 1.0);
        }
        // Ditertiary ether: both carbons on the oxygen carry three more open carbons.
        if cs.iter().all(|&c| open_c(m, c, i) == 3) {
            add("Ditertiary ether", 1.0);
        }
    }
    out
}

/// Every way to pick `any` carbons of `from` and then `open` more that lie on no ring, all
/// distinct and outside `taken`; each pick as a list of atoms.
fn picks(m: &Molecule, from: &[usize], any: usize, open: usize, taken: &[usize]) -> Vec<Vec<usize>> {
    let mut out = Vec::new();
    let mut cur = Vec::new();
    fn go(m: &Molecule, from: &[usize], any: usize, open: usize, taken: &[usize], cur: &mut Vec<usize>, out: &mut Vec<Vec<usize>>) {
        if cur.len() == any + open {
            out.push(cur.clone());
            return;
        }
        let need_open = cur.len() >= any;
        for &w in from {
            if taken.contains(&w) || cur.contains(&w) || (need_open && m.atoms()[w].in_ring) {
                continue;
            }
            cur.push(w);
            go(m, from, any, open, taken, cur, out);
            cur.pop();
        }
    }
    go(m, from, any, open, taken, &mut cur, &mut out);
    out
}

/// Distinct atom sets of one pattern: pgradd counts a pattern once per set of atoms it covers.
fn count_sets(sets: &mut Vec<Vec<usize>>) -> usize {
    for s in sets.iter_mut() {
        s.sort_unstable();
    }
    sets.sort();
    sets.dedup();
    sets.len()
}

/// Alkane gauche interactions by pgradd's five patterns (AlkaneGauchex1 … x6): about an
/// sp3–sp3 bond whose ends carry (2,3), (2,4), (3,3), (3,4) or (4,4) carbons, with branches off
/// any ring where the pattern asks for them.
fn alkane_gauche(m: &Molecule, kinds: &[Kind]) -> f64 {
    // (carbons on c1, on c2, open branches needed on c1, on c2, gauche interactions)
    const PATTERNS: [(usize, usize, usize, usize, f64); 5] = [
        (2, 3, 0, 1, 1.0),
        (2, 4, 0, 2, 2.0),
        (3, 3, 1, 1, 2.0),
        (3, 4, 1, 2, 4.0),
        (4, 4, 2, 2, 6.0),
    ];
    let mut sets: [Vec<Vec<usize>>; 5] = Default::default();
    for b in m.bonds() {
        if b.kekule_order != 1 || kinds[b.a] != Kind::C || kinds[b.b] != Kind::C {
            continue;
        }
        for (c1, c2) in [(b.a, b.b), (b.b, b.a)] {
            let (n1, n2) = (single_c(m, c1), single_c(m, c2));
            let Some(k) = PATTERNS.iter().position(|p| p.0 == n1 && p.1 == n2) else {
                continue;
            };
            let (_, _, o1, o2, _) = PATTERNS[k];
            let side1: Vec<usize> = single_c_of(m, c1).filter(|&w| w != c2).collect();
            let side2: Vec<usize> = single_c_of(m, c2).filter(|&w| w != c1).collect();
            for p1 in picks(m, &side1, 1, o1, &[c1, c2]) {
                let mut taken = vec![c1, c2];
                taken.extend(&p1);
                for p2 in picks(m, &side2, 1, o2, &taken) {
                    let mut set = taken.clone();
                    set.extend(p2);
                    sets[k].push(set);
                }
            }
        }
    }
    PATTERNS.iter().zip(sets.iter_mut()).map(|(p, s)| p.4 * count_sets(s) as f64).sum()
}

/// Alkene gauche (pgradd's two patterns): an sp3 carbon with three (four) carbons, one (two) of
/// them off any ring, on an olefinic carbon with one more open-chain carbon.
fn alkene_gauche(m: &Molecule, kinds: &[Kind]) -> f64 {
    let mut sets = Vec::new();
    for b in m.bonds() {
        for (c1, c2) in [(b.a, b.b), (b.b, b.a)] {
            if b.kekule_order != 1 || kinds[c1] != Kind::C || kinds[c2] != Kind::Cd || m.atoms()[c2].element != 6 || single_c(m, c2) != 2 {
                continue;
            }
            let doubles: Vec<usize> = kbonds(m, c2)
                .filter(|&(w, o)| o == 2 && m.atoms()[w].element == 6)
                .map(|(w, _)| w)
                .collect();
            if doubles.len() != 1 {
                continue;
            }
            let open = match single_c(m, c1) {
                3 => 1,
                4 => 2,
                _ => continue,
            };
            let side1: Vec<usize> = single_c_of(m, c1).filter(|&w| w != c2).collect();
            let side2: Vec<usize> = single_c_of(m, c2).filter(|&w| w != c1).collect();
            for p1 in picks(m, &side1, 1, open, &[c1, c2]) {
                let mut taken = vec![c1, c2];
                taken.extend(&p1);
                for p2 in picks(m, &side2, 0, 1, &taken) {
                    let mut set = taken.clone();
                    set.extend(p2);
                    if open == 1 {
                        set.push(doubles[0]);
                    }
                    sets.push(set);
                }
            }
        }
    }
    count_sets(&mut sets) as f64
}

/// Pairs of O or N atoms two or three bonds apart.
fn hetero_pairs(m: &Molecule) -> usize {
    let hetero = |k: usize| {
        matches!(m.atoms()[k].element, 7 | 8) && !(m.atoms()[k].element == 8 && m.degree(k) == 1 && kbonds(m, k).any(|(_, o)| o == 2))
    };
    let sites: Vec<usize> = (0..m.atoms().len()).filter(|&k| hetero(k)).collect();
    if sites.len() < 2 {
        return 0;
    }
    let mut n = 0;
    let mut near: Vec<(usize, u8)> = Vec::new();
    for &a in &sites {
        // Atoms within three bonds of a, with their distance (breadth-first, a short list).
        near.clear();
        near.push((a, 0));
        let mut head = 0;
        while head < near.len() {
            let (v, d) = near[head];
            head += 1;
            if d == 3 {
                continue;
            }
            for (w, _) in m.neighbours(v) {
                if !near.iter().any(|&(x, _)| x == w) {
                    near.push((w, d + 1));
                }
            }
        }
        n += near.iter().filter(|&&(b, d)| b > a && (d == 2 || d == 3) && hetero(b)).count();
    }
    n
}

/// Ring-strain corrections, one per smallest ring (benzene rings have none), and notes for the
/// rings whose value is borrowed or whose system is fused.
#[allow(clippy::type_complexity)]
fn ring_strain(m: &Molecule, kinds: &[Kind]) -> Result<(Vec<(&'static str, Option<&'static str>)>, Vec<String>), BensonError> {
    let mut names = Vec::new();
    let mut notes = Vec::new();
    let rings = m.rings();
    // A ring of more than the ring finder's eight atoms has no strain value here.
    if m.bonds()
        .iter()
        .any(|b| b.in_ring && !rings.iter().any(|r| r.binary_search(&b.a).is_ok() && r.binary_search(&b.b).is_ok()))
    {
        return Err(BensonError::Missing(vec!["the strain of a ring of more than eight atoms".into()]));
    }
    for r in rings {
        if r.len() == 6 && r.iter().all(|&k| matches!(kinds[k], Kind::Cb | Kind::Cbf)) {
            continue;
        }
        let in_ring = |k: usize| r.binary_search(&k).is_ok();
        let oxygens: Vec<usize> = r.iter().copied().filter(|&k| m.atoms()[k].element == 8).collect();
        let others = r.iter().filter(|&&k| !matches!(m.atoms()[k].element, 6 | 8)).count();
        let mut doubles: Vec<(usize, usize)> = Vec::new();
        for &k in r.iter() {
            for (w, b) in m.neighbours(k) {
                if k < w && in_ring(w) && m.bonds()[b].kekule_order == 2 {
                    doubles.push((k, w));
                }
            }
        }
        let carbonyls = r
            .iter()
            .filter(|&&k| {
                m.atoms()[k].element == 6
                    && m.neighbours(k)
                        .any(|(w, b)| !in_ring(w) && m.atoms()[w].element == 8 && m.bonds()[b].kekule_order == 2)
            })
            .count();
        let n = r.len();
        let conjugated = doubles.len() == 2 && {
            let (a, b) = (doubles[0], doubles[1]);
            [a.0, a.1]
                .iter()
                .any(|&x| [b.0, b.1].iter().any(|&y| m.neighbours(x).any(|(w, _)| w == y)))
        };
        if r.iter().any(|&k| kbonds(m, k).any(|(w, o)| o == 3 && in_ring(w))) {
            return Err(BensonError::Missing(vec![format!(
                "the strain of a {}-membered ring with a triple bond",
                r.len()
            )]));
        }
        let furan = is_furan_ring(m, r);
        let tabulated: Option<&str> = match (oxygens.len(), others, doubles.len(), carbonyls, n) {
            _ if furan => Some("Furan"),
            (0, 0, 0, 0, 3) => Some("Cyclopropane"),
            (0, 0, 1, 0, 3) => Some("Cyclopropene"),
            (0, 0, 0, 0, 4) => Some("Cyclobutane"),
            (0, 0, 1, 0, 4) => Some("Cyclobutene"),
            (0, 0, 0, 0, 5) => Some("Cyclopentane"),
            (0, 0, 0, 1, 5) => Some("cyclopentanone"),
            (0, 0, 1, 0, 5) => Some("Cyclopentene"),
            (0, 0, 2, 0, 5) => Some("Cyclopentadiene"),
            (0, 0, 0, 0, 6) => Some("Cyclohexane"),
            (0, 0, 0, 1, 6) => Some("cyclohexanone"),
            (0, 0, 1, 0, 6) => Some("Cyclohexene"),
            (0, 0, 2, 0, 6) => Some(if conjugated { "Cyclohexadiene-1,3" } else { "Cyclohexadiene-1,4" }),
            (0, 0, 0, 0, 7) => Some("Cycloheptane"),
            (0, 0, 1, 0, 7) => Some("Cycloheptene"),
            (0, 0, 2, 0, 7) if conjugated => Some("Cycloheptadiene-1,3"),
            (0, 0, 3, 0, 7) => Some("Cycloheptatriene-1,3,5"),
            (0, 0, 0, 0, 8) => Some("Cyclooctane"),
            (0, 0, 1, 0, 8) => Some("cis-Cyclooctene"),
            (0, 0, 3, 0, 8) => Some("Cyclooctatriene-1,3,5"),
            (0, 0, 4, 0, 8) => Some("Cyclooctatetraene"),
            (1, 0, 0, 0, 3) => Some("Oxirane"),
            (1, 0, 0, 0, 4) => Some("Oxetane"),
            (1, 0, 0, 0, 5) => Some("Tetrahydrofuran"),
            (1, 0, 0, 0, 6) => Some("Tetrahydro-2H-pyran"),
            (1, 0, 1, 0, 6) => Some("3,4-dihydro-2H-pyran"),
            (1, 0, 0, 2, 5) => Some("dihydrofuran-2,5-dione"),
            (1, 0, 1, 2, 5) => Some("furan-2,5-dione"),
            (1, 0, 0, 2, 6) => Some("dihydro-2H-pyran-2,6(3H)-dione"),
            (2, 0, 0, 0, 6) => {
                let (a, b) = (oxygens[0], oxygens[1]);
                let one_three = m.neighbours(a).any(|(w, _)| m.neighbours(w).any(|(x, _)| x == b));
                Some(if one_three { "Dioxane-1,3" } else { "Dioxane-1,4" })
            }
            (3, 0, 0, 0, 6) => Some("Trioxane-1,3,5"),
            _ => None,
        };
        // The carbocycle of the same size and unsaturation: the strain of a ring the table does
        // not list, and the S° and Cp of a listed ring whose row has ΔfH° only (project rule,
        // no source).
        let carbocycle = match (doubles.len(), n) {
            (0, 3) => Some("Cyclopropane"),
            (0, 4) => Some("Cyclobutane"),
            (0, 5) => Some("Cyclopentane"),
            (0, 6) => Some("Cyclohexane"),
            (0, 7) => Some("Cycloheptane"),
            (0, 8) => Some("Cyclooctane"),
            (1, 3) => Some("Cyclopropene"),
            (1, 4) => Some("Cyclobutene"),
            (1, 5) => Some("Cyclopentene"),
            (1, 6) => Some("Cyclohexene"),
            (1, 7) => Some("Cycloheptene"),
            (1, 8) => Some("cis-Cyclooctene"),
            (2, 5) => Some("Cyclopentadiene"),
            (2, 6) if conjugated => Some("Cyclohexadiene-1,3"),
            (2, 6) => Some("Cyclohexadiene-1,4"),
            _ => None,
        };
        let name = match (tabulated, carbocycle) {
            (Some(t), _) => t,
            (None, Some(c)) => {
                notes.push(format!(
                    "ring strain of a {n}-membered heterocycle or ring ketone taken from {c} (project rule, no source)"
                ));
                c
            }
            (None, None) => {
                return Err(BensonError::Missing(vec![format!(
                    "the strain of a {n}-membered ring with {} double bond(s)",
                    doubles.len()
                )]))
            }
        };
        names.push((name, carbocycle));
    }
    // Fused and bridged systems: a strain per smallest ring is an approximation.
    let shared = m
        .atoms()
        .iter()
        .enumerate()
        .filter(|(k, _)| rings.iter().filter(|r| r.contains(k)).count() > 1)
        .count();
    if shared > 0
        && rings
            .iter()
            .any(|r| !(r.len() == 6 && r.iter().all(|&k| matches!(kinds[k], Kind::Cb | Kind::Cbf))))
    {
        notes.push("ring system fused or bridged: strain summed ring by ring".into());
    }
    Ok((names, notes))
}

/// σ of the molecule: automorphisms of the heavy-atom graph, times 3 for each terminal XH3 top,
/// divided by 2 at each pyramidal or tetrahedral atom whose equal branches the graph may swap
/// by a mirror image only — every pattern of equal neighbours (counting H as one class) except
/// two pairs, which a C2 rotation swaps (propane's CH2). Exact for chains and planar molecules;
/// non-planar rings can be off by a factor of 2.
fn symmetry_number(m: &Molecule, classes: &[u32], automorphisms: f64) -> f64 {
    let mut sigma = automorphisms;
    for (i, a) in m.atoms().iter().enumerate() {
        let heavy = m.degree(i);
        if a.hydrogens == 3 && heavy == 1 {
            sigma *= 3.0;
        }
        let connections = heavy + a.hydrogens as usize;
        let saturated = kbonds(m, i).all(|(_, o)| o == 1) && !a.aromatic;
        // Tetrahedral carbon, or a pyramidal amine nitrogen (no π neighbour to flatten it).
        let pyramidal = a.element == 7
            && connections == 3
            && m.neighbours(i)
                .all(|(w, _)| kbonds(m, w).all(|(_, o)| o == 1) && !m.atoms()[w].aromatic);
        if !(saturated && (connections == 4 || pyramidal)) {
            continue;
        }
        let mut counts: Vec<(u32, usize)> = Vec::new();
        for (w, _) in m.neighbours(i) {
            match counts.iter_mut().find(|c| c.0 == classes[w]) {
                Some(c) => c.1 += 1,
                None => counts.push((classes[w], 1)),
            }
        }
        let equal_heavy = counts.iter().any(|c| c.1 >= 2);
        let mut pattern: Vec<usize> = counts.iter().map(|c| c.1).collect();
        if a.hydrogens > 0 {
            pattern.push(a.hydrogens as usize);
        }
        pattern.sort_unstable();
        if equal_heavy && pattern != [2, 2] {
            sigma /= 2.0;
        }
    }
    sigma.max(1.0)
}

/// sp3 carbons with four different substituents (at most one H, heavy neighbours in distinct
/// symmetry classes).
fn chiral_centres(m: &Molecule, kinds: &[Kind], classes: &[u32]) -> usize {
    (0..m.atoms().len())
        .filter(|&i| {
            let a = &m.atoms()[i];
            if kinds[i] != Kind::C || a.hydrogens > 1 || m.degree(i) + a.hydrogens as usize != 4 {
                return false;
            }
            let mut seen: Vec<u32> = m.neighbours(i).map(|(w, _)| classes[w]).collect();
            seen.sort_unstable();
            seen.windows(2).all(|w| w[0] != w[1])
        })
        .count()
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn names_are_spelled_one_way() {
        assert_eq!(canonical("C(H)3(N)").unwrap(), "C(N)(H)3");
        assert_eq!(canonical("C(C)(N)(H)2").unwrap(), "C(C)(N)(H)2");
        assert_eq!(canonical("CO(C[B]2)").unwrap(), "CO(C[B])2");
        assert_eq!(canonical("C[d](C)2(C[d])").unwrap(), "C[d](C)2(C[d])");
        assert_eq!(canonical("Double Cis").unwrap(), "Double Cis");
        assert_eq!(canonical("Cyclohexadiene-1,3").unwrap(), "Cyclohexadiene-1,3");
    }

    fn groups(s: &str) -> String {
        Benson::of(&Molecule::parse(s, 0).unwrap())
            .unwrap_or_else(|e| panic!("{s}: {e}"))
            .groups_text()
    }

    #[test]
    fn groups_of_simple_molecules() {
        assert_eq!(groups("CCC"), "C(C)(H)3 ×2, C(C)2(H)2");
        assert_eq!(groups("CC(C)=O"), "C(C)(H)3 ×2, CO(C)2");
        assert_eq!(groups("Cc1ccccc1"), "C(C)(H)3, C[B](C)(C[B])2, C[B](C[B])2(H) ×5");
    }

    #[test]
    fn symmetry_numbers_by_hand() {
        // σ = external (rotations of the rigid frame) × internal (each methyl top 3), counted
        // by hand from the point groups: ethane D3d 6 × 3 = 18; propane C2v 2 × 3² = 18; benzene
        // D6h 12; toluene 2 (ring flip about the C–CH3 axis with the methyl) × 3 = 6; acetone
        // C2v 2 × 3² = 18; neopentane Td 12 × 3⁴ = 972; isobutane C3v 3 × 3³ = 81;
        // 2-methylbutane C1 × 3³ = 27; isopropylamine Cs 1 × 3² = 9; trimethylamine C3v 3 × 3³ = 81.
        for (s, sigma) in [
            ("CC", 18.0),
            ("CCC", 18.0),
            ("c1ccccc1", 12.0),
            ("Cc1ccccc1", 6.0),
            ("CC(C)=O", 18.0),
            ("CC(C)(C)C", 972.0),
            ("CC(C)C", 81.0),
            ("CCC(C)C", 27.0),
            ("CC(C)N", 9.0),
            ("CN(C)C", 81.0),
        ] {
            let m = Molecule::parse(s, 0).unwrap();
            let (classes, aut) = m.symmetry();
            assert_eq!(symmetry_number(&m, classes, aut), sigma, "{s}");
        }
    }
}
