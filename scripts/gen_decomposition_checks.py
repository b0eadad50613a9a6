#!/usr/bin/env python3
"""Measured heats of explosion of energetic compounds, with their condensed-phase ΔfH°, to check
the engine's maximum heat of decomposition (worker/engine/src/decomposition.rs).

Writes worker/engine/tests/reference/energetic_heats.tsv.

Heats of explosion, kJ/kg, copied by hand from published tables (the script does not fetch them):
- "Roempp": Chemgapedia, "Explosivstoffe - Einleitung", Tab. 1 "Explosionswaermen und
  Detonationsgeschwindigkeiten von gaengigen Explosivstoffen", values sourced there to Roempp
  Online (http://www.chemgapedia.de/vsengine/vlu/vsc/de/ch/16/oc/explosivstoffe/explosivstoffe.vlu/
  Page/vsc/de/ch/16/oc/explosivstoffe/01_einleitung.vscml.html). The water state of the products
  is not stated.
- "sp-tnt": the table "heats of explosion of common condensed-phase energetic materials" in the
  README of github.com/z41z/sp-tnt (original publication not named: a weaker, secondary source).
ΔfH° of the condensed compound: chemicals 1.5.2 (CRC Handbook where it has one, else the NIST
WebBook constants it ships), by CAS.

Usage: .venv-benson/bin/python scripts/gen_decomposition_checks.py (pins: requirements-benson.txt)
"""
import pathlib

import chemicals
import chemicals.reaction as R

ROOT = pathlib.Path(__file__).resolve().parents[1]
OUT = ROOT / "worker/engine/tests/reference/energetic_heats.tsv"

# name, CAS, SMILES, formula, state, heat of explosion kJ/kg, source
COMPOUNDS = [
    ("nitroglycerin", "55-63-0", "C(C(CO[N+](=O)[O-])O[N+](=O)[O-])O[N+](=O)[O-]", "C3H5N3O9", "l", 6770, "Roempp"),
    ("TNT", "118-96-7", "Cc1c(cc(cc1[N+](=O)[O-])[N+](=O)[O-])[N+](=O)[O-]", "C7H5N3O6", "s", 4520, "Roempp"),
    ("picric acid", "88-89-1", "Oc1c(cc(cc1[N+](=O)[O-])[N+](=O)[O-])[N+](=O)[O-]", "C6H3N3O7", "s", 4520, "Roempp"),
    ("PETN", "78-11-5", "C(C(CO[N+](=O)[O-])(CO[N+](=O)[O-])CO[N+](=O)[O-])O[N+](=O)[O-]", "C5H8N4O12", "s", 6400, "Roempp"),
    ("RDX", "121-82-4", "C1N(CN(CN1[N+](=O)[O-])[N+](=O)[O-])[N+](=O)[O-]", "C3H6N6O6", "s", 5720, "Roempp"),
    ("HMX", "2691-41-0", "C1N(CN(CN(CN1[N+](=O)[O-])[N+](=O)[O-])[N+](=O)[O-])[N+](=O)[O-]", "C4H8N8O8", "s", 5680, "Roempp"),
    ("tetryl", "479-45-8", "CN(c1c(cc(cc1[N+](=O)[O-])[N+](=O)[O-])[N+](=O)[O-])[N+](=O)[O-]", "C7H5N5O8", "s", 4520, "sp-tnt"),
]


def dhf(cas, state):
    fn = R.Hfs if state == "s" else R.Hfl
    methods = (R.Hfs_methods if state == "s" else R.Hfl_methods)(cas)
    for m in ("CRC", "WEBBOOK"):
        if m in methods:
            return fn(cas, method=m) / 1000.0, "CRC" if m == "CRC" else "NIST WebBook"
    raise SystemExit(f"no condensed dHf for {cas}")


def main():
    with OUT.open("w") as out:
        out.write("# energetic_heats.tsv - written by scripts/gen_decomposition_checks.py; do not edit by hand.\n")
        out.write(f"# chemicals {chemicals.__version__}; heats of explosion copied from the tables named in the script.\n")
        out.write("name\tcas\tsmiles\tformula\tstate\tdhf_condensed_kj_per_mol\tdhf_source\theat_of_explosion_kj_per_kg\theat_source\n")
        for name, cas, smi, formula, state, q, src in COMPOUNDS:
            h, hsrc = dhf(cas, state)
            out.write(f"{name}\t{cas}\t{smi}\t{formula}\t{state}\t{h:.2f}\t{hsrc}\t{q}\t{src}\n")
    print(f"wrote {len(COMPOUNDS)} rows to {OUT.relative_to(ROOT)}")


if __name__ == "__main__":
    main()
