//! Writing a molecule back as SMILES, in canonical order when given canonical ranks.

use super::*;

/// Decimal digits of `v` appended without a temporary string.
pub(super) fn push_number(out: &mut String, mut v: u32) {
    let mut buf = [0u8; 10];
    let mut k = buf.len();
    loop {
        k -= 1;
        buf[k] = b'0' + (v % 10) as u8;
        v /= 10;
        if v == 0 {
            break;
        }
    }
    for &d in &buf[k..] {
        out.push(d as char);
    }
}

pub(super) fn push_bond(out: &mut String, order: u8) {
    match order {
        2 => out.push('='),
        3 => out.push('#'),
        4 => out.push('$'),
        _ => {}
    }
}

pub(super) fn push_ring(out: &mut String, id: usize) {
    if id < 10 {
        out.push((b'0' + id as u8) as char);
    } else {
        out.push('%');
        out.push_str(&format!("{id:02}"));
    }
}

impl Molecule {
    /// A SMILES of this graph in canonical atom order, every atom in brackets and every bond in
    /// its Kekulé order, so it reads back to the same graph. Depth-first from the lowest-ranked
    /// atom of each part, branches in rank order.
    pub fn to_smiles(&self) -> String {
        self.write_smiles(&self.canonical_ranks())
    }

    /// SMILES written with the atoms visited in the order `rank` gives (lowest first).
    pub fn write_smiles(&self, rank: &[u32]) -> String {
        let n = self.atoms.len();
        let mut visited = vec![false; n];
        let mut out = String::new();
        let mut starts: Vec<usize> = (0..n).collect();
        starts.sort_by_key(|&i| rank[i]);
        let mut ring_id: Vec<Option<usize>> = vec![None; self.bonds.len()];
        let mut free_ids: Vec<usize> = (1..100).rev().collect();
        // First pass: DFS tree to find ring-closure bonds.
        let mut tree_bond = vec![false; self.bonds.len()];
        let mut order_seen = vec![false; n];
        for &s in &starts {
            if order_seen[s] {
                continue;
            }
            order_seen[s] = true;
            self.dfs_tree(s, rank, &mut order_seen, &mut tree_bond);
        }
        for &s in &starts {
            if visited[s] {
                continue;
            }
            if !out.is_empty() {
                out.push('.');
            }
            self.write_from(s, usize::MAX, rank, &tree_bond, &mut visited, &mut ring_id, &mut free_ids, &mut out);
        }
        out
    }

    pub(super) fn sorted_neighbours(&self, v: usize, rank: &[u32]) -> Vec<(usize, usize)> {
        let mut nb: Vec<(usize, usize)> = self.neighbours(v).collect();
        nb.sort_by_key(|&(w, _)| rank[w]);
        nb
    }

    /// Mark the bonds of a depth-first tree from `v`, visiting neighbours in rank order (the
    /// order [`Molecule::write_from`] writes them in); the other bonds become ring closures.
    pub(super) fn dfs_tree(&self, v: usize, rank: &[u32], seen: &mut [bool], tree: &mut [bool]) {
        // Each frame: the atom's neighbours in rank order and the next one to look at.
        let mut stack: Vec<(Vec<(usize, usize)>, usize)> = vec![(self.sorted_neighbours(v, rank), 0)];
        while let Some((nbs, next)) = stack.last_mut() {
            if *next >= nbs.len() {
                stack.pop();
                continue;
            }
            let (w, b) = nbs[*next];
            *next += 1;
            if !seen[w] {
                seen[w] = true;
                tree[b] = true;
                stack.push((self.sorted_neighbours(w, rank), 0));
            }
        }
    }

    #[allow(clippy::too_many_arguments)]
    pub(super) fn write_from(
        &self,
        v: usize,
        via: usize,
        rank: &[u32],
        tree: &[bool],
        visited: &mut [bool],
        ring_id: &mut [Option<usize>],
        free: &mut Vec<usize>,
        out: &mut String,
    ) {
        visited[v] = true;
        self.write_atom(v, out);
        let nbs = self.sorted_neighbours(v, rank);
        // Ring closures at this atom: open new ones (non-tree bonds to unvisited-later atoms) and
        // close ones opened earlier.
        for &(_, b) in &nbs {
            if b == via || tree[b] {
                continue;
            }
            match ring_id[b] {
                Some(id) => {
                    push_bond(out, self.bonds[b].kekule_order);
                    push_ring(out, id);
                    free.push(id);
                    free.sort_unstable_by(|a, b| b.cmp(a));
                }
                None => {
                    let id = free.pop().unwrap_or(99);
                    ring_id[b] = Some(id);
                    push_bond(out, self.bonds[b].kekule_order);
                    push_ring(out, id);
                }
            }
        }
        let children: Vec<(usize, usize)> = nbs.into_iter().filter(|&(_, b)| b != via && tree[b]).collect();
        for (k, &(w, b)) in children.iter().enumerate() {
            let last = k + 1 == children.len();
            if !last {
                out.push('(');
            }
            push_bond(out, self.bonds[b].kekule_order);
            self.write_from(w, b, rank, tree, visited, ring_id, free, out);
            if !last {
                out.push(')');
            }
        }
    }

    pub(super) fn write_atom(&self, i: usize, out: &mut String) {
        let a = &self.atoms[i];
        out.push('[');
        if let Some(iso) = a.isotope {
            out.push_str(&iso.to_string());
        }
        out.push_str(elements::symbol(a.element));
        match a.hydrogens {
            0 => {}
            1 => out.push('H'),
            h => {
                out.push('H');
                out.push_str(&h.to_string());
            }
        }
        match a.charge {
            0 => {}
            q => out.push_str(&format!("{q:+}")),
        }
        out.push(']');
    }
}
