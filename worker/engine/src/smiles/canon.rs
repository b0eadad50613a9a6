//! Canonical ranking (iterated neighbourhood refinement with tie-breaking), symmetry classes,
//! automorphism counts and the canonical identity key.

use super::write::push_number;
use super::*;

/// Rank = number of atoms with a smaller key (tied atoms share the lowest position).
pub(super) fn ranks_from_keys(keys: &[u64]) -> Vec<u32> {
    let mut idx: Vec<u32> = (0..keys.len() as u32).collect();
    idx.sort_unstable_by_key(|&i| keys[i as usize]);
    let mut rank = vec![0u32; keys.len()];
    for k in 0..idx.len() {
        let i = idx[k] as usize;
        rank[i] = if k > 0 && keys[idx[k - 1] as usize] == keys[i] {
            rank[idx[k - 1] as usize]
        } else {
            k as u32
        };
    }
    rank
}

// Scratch buffers live per thread so a batch does not allocate them per molecule.
thread_local! {
    static SCRATCH: std::cell::RefCell<Refiner> = std::cell::RefCell::new(Refiner::default());
}

#[derive(Default)]
pub(super) struct Refiner {
    counts: Vec<u32>,
    leaf: Vec<u32>,
    order: Vec<u32>,
    next: Vec<u32>,
    packed: Vec<(u128, u32)>,
    seen: Vec<bool>,
    sig: Vec<u32>,
    start: Vec<usize>,
    idx: Vec<u32>,
}

/// Refine ranks by (rank, sorted neighbour ranks) until the number of classes stops growing.
/// Ranks are below 1024 (at most [`MAX_ATOMS`] atoms), so an atom of degree ≤ 11 packs its
/// signature into one u128 (rank in the top bits, then the sorted neighbour ranks); within one
/// rank class degrees are equal, so comparing packed values is comparing the lists.
pub(super) fn refine(m: &Molecule, rank: &mut [u32], s: &mut Refiner) {
    let n = rank.len();
    let packable = n <= 1024 && (0..n).all(|i| m.degree(i) <= 11);
    if packable {
        refine_packed(m, rank, s);
        return;
    }
    let mut classes = count_classes(rank, &mut s.seen);
    loop {
        if classes == n {
            return;
        }
        let new_classes = if packable {
            s.packed.clear();
            for i in 0..n {
                let mut nb = [0u32; 11];
                let d = m.degree(i);
                for (slot, (w, _)) in nb.iter_mut().zip(m.neighbours(i)) {
                    *slot = rank[w];
                }
                nb[..d].sort_unstable();
                let mut key = (rank[i] as u128) << 110;
                for (j, &r) in nb[..d].iter().enumerate() {
                    key |= (r as u128) << (100 - 10 * j);
                }
                s.packed.push((key, i as u32));
            }
            s.packed.sort_unstable();
            let mut c = 0;
            for k in 0..n {
                let (key, i) = s.packed[k];
                if k == 0 || s.packed[k - 1].0 != key {
                    c += 1;
                    rank[i as usize] = k as u32;
                } else {
                    rank[i as usize] = rank[s.packed[k - 1].1 as usize];
                }
            }
            c
        } else {
            s.sig.clear();
            s.start.clear();
            for i in 0..n {
                s.start.push(s.sig.len());
                s.sig.push(rank[i]);
                let from = s.sig.len();
                s.sig.extend(m.neighbours(i).map(|(w, _)| rank[w]));
                s.sig[from..].sort_unstable();
            }
            s.start.push(s.sig.len());
            s.idx.clear();
            s.idx.extend(0..n as u32);
            let (sig, start) = (&s.sig, &s.start);
            let slice = |i: u32| &sig[start[i as usize]..start[i as usize + 1]];
            s.idx.sort_unstable_by(|&a, &b| slice(a).cmp(slice(b)));
            let mut c = 0;
            for k in 0..n {
                let i = s.idx[k];
                if k > 0 && slice(s.idx[k - 1]) == slice(i) {
                    rank[i as usize] = rank[s.idx[k - 1] as usize];
                } else {
                    c += 1;
                    rank[i as usize] = k as u32;
                }
            }
            c
        };
        if new_classes == classes {
            return;
        }
        classes = new_classes;
    }
}

/// The packed form of [`refine`]: only classes with more than one atom are re-sorted, by their
/// atoms' sorted neighbour ranks packed into a u128 (10 bits a rank, up to 11 neighbours), and a
/// class that splits keeps its place before and after the other classes. Same result as sorting
/// every atom by (rank, neighbour ranks).
pub(super) fn refine_packed(m: &Molecule, rank: &mut [u32], s: &mut Refiner) {
    let n = rank.len();
    s.order.clear();
    s.order.extend(0..n as u32);
    s.order.sort_unstable_by_key(|&i| rank[i as usize]);
    s.next.clear();
    s.next.extend_from_slice(rank);
    loop {
        let mut changed = false;
        let mut k = 0;
        while k < n {
            let r = rank[s.order[k] as usize];
            let mut e = k + 1;
            while e < n && rank[s.order[e] as usize] == r {
                e += 1;
            }
            if e - k > 1 {
                s.packed.clear();
                for &i in &s.order[k..e] {
                    let i = i as usize;
                    let mut nb = [0u32; 11];
                    let d = m.degree(i);
                    for (slot, (w, _)) in nb.iter_mut().zip(m.neighbours(i)) {
                        *slot = rank[w];
                    }
                    nb[..d].sort_unstable();
                    let mut key = 0u128;
                    for (j, &x) in nb[..d].iter().enumerate() {
                        key |= (x as u128) << (110 - 10 * j);
                    }
                    s.packed.push((key, i as u32));
                }
                s.packed.sort_unstable();
                let mut first = k;
                for (j, &(key, i)) in s.packed.iter().enumerate() {
                    if j > 0 && s.packed[j - 1].0 != key {
                        first = k + j;
                        changed = true;
                    }
                    s.next[i as usize] = first as u32;
                    s.order[k + j] = i;
                }
            }
            k = e;
        }
        rank.copy_from_slice(&s.next);
        if !changed {
            return;
        }
    }
}

pub(super) fn count_classes(rank: &[u32], seen: &mut Vec<bool>) -> usize {
    seen.clear();
    seen.resize(rank.len(), false);
    let mut c = 0;
    for &r in rank {
        if !seen[r as usize] {
            seen[r as usize] = true;
            c += 1;
        }
    }
    c
}

impl Molecule {
    /// What ranking starts from: element, isotope, charge, hydrogens, valence, degree.
    pub(super) fn invariant(&self, i: usize) -> u64 {
        let a = &self.atoms[i];
        ((a.element as u64) << 48)
            | ((a.isotope.unwrap_or(0) as u64) << 36)
            | (((a.charge as i64 + 128) as u64) << 28)
            | ((a.hydrogens as u64) << 20)
            | ((a.valence as u64) << 12)
            | (self.degree(i) as u64).min(4095)
    }

    /// Canonical ranks 0..n: equal for no two atoms, and the same for any atom order of one graph
    /// (up to automorphism, which leaves the key unchanged).
    pub fn canonical_ranks(&self) -> Vec<u32> {
        self.ranked().1.clone()
    }

    /// (symmetry classes, canonical ranks, automorphisms), computed on first use.
    pub(super) fn ranked(&self) -> &(Vec<u32>, Vec<u32>, f64) {
        self.ranked.0.get_or_init(|| {
            let n = self.atoms.len();
            let keys: Vec<u64> = (0..n).map(|i| self.invariant(i)).collect();
            let mut rank = ranks_from_keys(&keys);
            SCRATCH.with(|cell| {
                let mut scratch = cell.borrow_mut();
                refine(self, &mut rank, &mut scratch);
                let classes = rank.clone();
                let automorphisms = self.rank_with(&mut rank, &mut scratch);
                (classes, rank, automorphisms)
            })
        })
    }

    /// Symmetry classes (atoms no invariant of the graph tells apart: the orbits of its
    /// automorphisms for chemical graphs) and the number of automorphisms of the heavy-atom graph
    /// (hydrogens as counts), as the product of the orbit sizes met while individualizing atoms
    /// one by one — exact where refinement finds the orbits. Shares its work with
    /// [`Molecule::canonical_key`].
    pub fn symmetry(&self) -> (&[u32], f64) {
        let r = self.ranked();
        (&r.0, r.2)
    }

    /// Ranks until every atom has its own; returns the product of the sizes of the classes split
    /// on the way (the automorphism count of [`Molecule::symmetry`]).
    pub(super) fn rank_with(&self, rank: &mut [u32], scratch: &mut Refiner) -> f64 {
        let n = rank.len();
        let mut counts = std::mem::take(&mut scratch.counts);
        let mut automorphisms = 1.0;
        loop {
            refine(self, rank, scratch);
            counts.clear();
            counts.resize(n, 0);
            for &r in rank.iter() {
                counts[r as usize] += 1;
            }
            // Tied leaves of one parent (the methyls of a t-butyl, the F of a CF3) are swapped by
            // an automorphism: give them consecutive ranks in input order, no refinement needed
            // (their parent's class holds only that parent, or the class would span parents).
            if self.split_leaf_ties(rank, &counts, &mut scratch.leaf, &mut automorphisms) {
                counts.clear();
                counts.resize(n, 0);
                for &r in rank.iter() {
                    counts[r as usize] += 1;
                }
            }
            // Tie-break: the lowest tied rank keeps one atom (the first in input order), the rest
            // move up by one; refine again until every rank is distinct.
            let Some(tied) = (0..n).find(|&r| counts[r] > 1) else {
                break;
            };
            automorphisms *= counts[tied] as f64;
            let chosen = (0..n).find(|&i| rank[i] as usize == tied).expect("a tied rank has atoms");
            for (i, r) in rank.iter_mut().enumerate() {
                if *r as usize == tied && i != chosen {
                    *r += 1;
                }
            }
        }
        scratch.counts = counts;
        automorphisms
    }

    /// Split every tied class made only of leaves on one parent; true when any was split. Each
    /// split class of m leaves multiplies `automorphisms` by m!.
    pub(super) fn split_leaf_ties(&self, rank: &mut [u32], counts: &[u32], parent: &mut Vec<u32>, automorphisms: &mut f64) -> bool {
        const UNSET: u32 = u32::MAX;
        const MIXED: u32 = u32::MAX - 1;
        let n = rank.len();
        parent.clear();
        parent.resize(n, UNSET);
        for (i, &r) in rank.iter().enumerate() {
            let r = r as usize;
            if counts[r] < 2 {
                continue;
            }
            let p = if self.degree(i) == 1 {
                self.neighbours(i).next().map_or(MIXED, |(w, _)| w as u32)
            } else {
                MIXED
            };
            parent[r] = match parent[r] {
                UNSET => p,
                q if q == p => q,
                _ => MIXED,
            };
        }
        let splits = |r: usize| counts[r] >= 2 && parent[r] < MIXED;
        if !(0..n).any(splits) {
            return false;
        }
        let mut offset = vec![0u32; n];
        for r in rank.iter_mut() {
            let c = *r as usize;
            if splits(c) {
                *r = c as u32 + offset[c];
                offset[c] += 1;
                *automorphisms *= offset[c] as f64;
            }
        }
        true
    }

    /// The identity of the structure: atoms in canonical order with element, isotope, charge,
    /// hydrogens and valence, then the bonds between canonical indices. Equal for every way of
    /// writing one molecule (stereo marks aside), different for different graphs.
    pub fn canonical_key(&self) -> String {
        let rank = &self.ranked().1;
        let n = self.atoms.len();
        let mut order = vec![0usize; n];
        for (i, &r) in rank.iter().enumerate() {
            order[r as usize] = i;
        }
        let mut out = String::with_capacity(8 * n + 6 * self.bonds.len());
        for (k, &i) in order.iter().enumerate() {
            let a = &self.atoms[i];
            if k > 0 {
                out.push(';');
            }
            if let Some(iso) = a.isotope {
                push_number(&mut out, iso as u32);
            }
            out.push_str(elements::symbol(a.element));
            if a.hydrogens > 0 {
                out.push('H');
                push_number(&mut out, a.hydrogens as u32);
            }
            out.push('v');
            push_number(&mut out, a.valence as u32);
            if a.charge != 0 {
                out.push(if a.charge > 0 { '+' } else { '-' });
                push_number(&mut out, a.charge.unsigned_abs() as u32);
            }
        }
        out.push('|');
        let mut edges: Vec<(u32, u32)> = self
            .bonds
            .iter()
            .map(|b| (rank[b.a].min(rank[b.b]), rank[b.a].max(rank[b.b])))
            .collect();
        edges.sort_unstable();
        for (k, (x, y)) in edges.iter().enumerate() {
            if k > 0 {
                out.push(',');
            }
            push_number(&mut out, *x);
            out.push('-');
            push_number(&mut out, *y);
        }
        out
    }
}
