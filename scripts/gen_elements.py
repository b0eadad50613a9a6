#!/usr/bin/env python3
"""Write worker/engine/data/elements.tsv: the 118 elements and their atomic weights.

Reads:   nothing on disk; the tables built into the PyPI package ``periodictable``
         (version pinned in scripts/requirements-data.txt).
Writes:  worker/engine/data/elements.tsv (UTF-8, tab separated, ``#`` comment header).

Columns: z, symbol, name, standard_atomic_weight, weight_kind.

Source data and its provenance (checked in periodictable/mass.py of the pinned version):
  * Standard atomic weights: CIAAW/IUPAC "Standard atomic weights of the elements 2021",
    T. Prohaska et al., Pure Appl. Chem. 94 (2022) 573-600, DOI 10.1515/pac-2019-0603,
    taken by periodictable from ciaaw.org on 2023-07-06. For the elements that IUPAC gives as
    an interval (H, Li, B, C, N, O, Mg, Si, S, Cl, Ar, Br, Tl, Pb) periodictable stores the
    abridged (conventional) value of that report, e.g. H 1.0080, C 12.011, Ar 39.95, Pb 207.2.
  * Elements without a standard atomic weight (Tc, Pm, Po..Ac, Np..Og): periodictable keeps
    the bracketed mass number from the NIST "Atomic Weights and Isotopic Compositions" table
    (Coursey, Schwab & Dragoset, downloaded c. 2010); written here as an integer with
    weight_kind = mass_number_of_longest_lived_isotope. For some superheavy elements these
    numbers predate later discoveries (see scripts/README.md).
  * Terms: periodictable is public domain (its package metadata); the atomic weights are
    published reference values of IUPAC/CIAAW.

Other PyPI tables were checked and are older: mendeleev 1.3.0 (e.g. Ar 39.948, Al 26.9815385,
Hf 178.49: the 2013/2015 tables) and chemicals 1.5.2 (e.g. C 12.0107, Cl 35.453: 2005-era).

Run from the repository root:
    .venv-data/bin/python scripts/gen_elements.py
"""

from __future__ import annotations

import os
import sys

import periodictable
from periodictable import mass as pt_mass

ROOT = os.path.dirname(os.path.dirname(os.path.abspath(__file__)))
OUT = os.path.join(ROOT, "worker", "engine", "data", "elements.tsv")

# Values recalled from memory for interval elements; compared, never used to overwrite.
EXPECTED_CONVENTIONAL = {
    "H": 1.008, "C": 12.011, "N": 14.007, "O": 15.999, "Li": 6.94, "B": 10.81,
    "Mg": 24.305, "Si": 28.085, "S": 32.06, "Cl": 35.45, "Br": 79.904, "Tl": 204.38,
}


def standard_weight_table() -> dict[int, str]:
    """Z -> weight text of periodictable's CIAAW 2021 element table (only elements listed there)."""
    out = {}
    for line in pt_mass.element_mass.split("\n"):
        parts = line.split()
        if len(parts) < 4:
            continue
        z, _sym, _name, val = parts[:4]
        if val != "-":
            out[int(z)] = val
    return out


def fmt_weight(w: float) -> str:
    r = repr(float(w))
    return r[:-2] if r.endswith(".0") else r


def main() -> int:
    std = standard_weight_table()
    rows = []
    notes = []
    for z in range(1, 119):
        el = periodictable.elements[z]
        w = float(el.mass)
        if z in std:
            kind = "standard"
        else:
            kind = "mass_number_of_longest_lived_isotope"
            if w != round(w):
                raise SystemExit(f"Z={z} {el.symbol}: expected an integer mass number, got {w!r}")
        rows.append((z, el.symbol, el.name, fmt_weight(w), kind))
        if el.symbol in EXPECTED_CONVENTIONAL and abs(EXPECTED_CONVENTIONAL[el.symbol] - w) > 1e-12:
            notes.append(f"{el.symbol}: periodictable {w!r} vs expected {EXPECTED_CONVENTIONAL[el.symbol]!r}")

    assert [r[0] for r in rows] == list(range(1, 119))
    assert len({r[1] for r in rows}) == 118

    header = [
        "# elements.tsv - written by scripts/gen_elements.py; do not edit by hand.",
        f"# Source: Python package periodictable {periodictable.__version__} (public domain).",
        "# Standard atomic weights: CIAAW/IUPAC 'Standard atomic weights of the elements 2021',",
        "#   T. Prohaska et al., Pure Appl. Chem. 94 (2022) 573-600, DOI 10.1515/pac-2019-0603",
        "#   (abridged/conventional value for the elements IUPAC gives as an interval).",
        "#   The CIAAW 2024 revisions (Gd, Lu, Zr) are not in this table.",
        "# weight_kind = mass_number_of_longest_lived_isotope: no standard atomic weight; value is the",
        "#   bracketed mass number carried by periodictable (NIST Coursey et al. table, c. 2010).",
        "z\tsymbol\tname\tstandard_atomic_weight\tweight_kind",
    ]
    with open(OUT, "w", encoding="utf-8", newline="\n") as f:
        f.write("\n".join(header) + "\n")
        for r in rows:
            f.write("\t".join(str(x) for x in r) + "\n")

    n_std = sum(r[4] == "standard" for r in rows)
    print(f"wrote {os.path.relpath(OUT, ROOT)}: 118 elements, {n_std} standard, {118 - n_std} mass numbers")
    for n in notes:
        print("DISCREPANCY", n)
    if not notes:
        print("conventional values of the 12 listed interval elements match periodictable")
    return 0


if __name__ == "__main__":
    sys.exit(main())
