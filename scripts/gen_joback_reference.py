#!/usr/bin/env python3
"""Reference Joback estimates from `thermo` (its Joback class, RDKit-driven SMARTS fragmentation).

Molecules: SMILES from `chemicals`' bundled 'chemical identifiers pubchem small.tsv' with only
C (required), H, N, O, S, F, Cl, Br, I, neutral, closed-shell, one component, 2 to 40 heavy atoms, for which
thermo's fragmentation reports status 'OK' (every heavy atom in exactly one group) and every
property below has a value. Group counts are thermo's (`Joback(...).counts`, 1-based group
numbers as in Poling et al. Table 2-2). Values: ΔfH°(g), ΔfG°(g) (kJ/mol), Tb, Tc with the Joback
Tb (K), ideal-gas Cp at 298.15 and 500 K (J/mol/K).

Writes worker/engine/tests/reference/joback_thermo.tsv.
Usage: .venv-smiles/bin/python scripts/gen_joback_reference.py   (versions: requirements-structures.txt)
"""
import pathlib

import chemicals
import rdkit
import thermo
from rdkit import Chem, RDLogger
from rdkit.Chem import Descriptors
from thermo.group_contribution.joback import Joback

RDLogger.DisableLog("rdApp.*")
ROOT = pathlib.Path(__file__).resolve().parents[1]
SRC = pathlib.Path(chemicals.__file__).parent / "Identifiers" / "chemical identifiers pubchem small.tsv"
OUT = ROOT / "worker/engine/tests/reference/joback_thermo.tsv"
ALLOWED = {"C", "H", "N", "O", "S", "F", "Cl", "Br", "I"}


def main():
    rows = []
    seen = set()
    for line in SRC.open(encoding="utf-8"):
        f = line.rstrip("\n").split("\t")
        if len(f) < 5 or not f[4] or f[4] in seen:
            continue
        smi = f[4]
        mol = Chem.MolFromSmiles(smi)
        if mol is None or "." in smi or not 2 <= mol.GetNumHeavyAtoms() <= 40:
            continue
        if all(a.GetSymbol() != "C" for a in mol.GetAtoms()):
            continue
        if any(a.GetSymbol() not in ALLOWED or a.GetFormalCharge() != 0 and a.GetSymbol() not in ("N", "O") for a in mol.GetAtoms()):
            continue
        if Descriptors.NumRadicalElectrons(mol) or sum(a.GetFormalCharge() for a in mol.GetAtoms()):
            continue
        seen.add(smi)
        try:
            j = Joback(mol)
        except Exception:
            continue
        if j.status != "OK":
            continue
        e = j.estimate(callables=False)
        cp = e["Cpig_coeffs"]
        if None in (e["Hf"], e["Gf"], e["Tb"], e["Tc"]) or cp is None:
            continue
        cpf = lambda t: cp[0] + cp[1] * t + cp[2] * t * t + cp[3] * t ** 3
        counts = ",".join(f"{k}:{v}" for k, v in sorted(j.counts.items()))
        rows.append((f[1], smi, counts, f"{e['Hf'] / 1000:.4f}", f"{e['Gf'] / 1000:.4f}", f"{e['Tb']:.4f}", f"{e['Tc']:.4f}", f"{cpf(298.15):.5f}", f"{cpf(500.0):.5f}"))
    with OUT.open("w") as out:
        out.write("# joback_thermo.tsv - written by scripts/gen_joback_reference.py; do not edit by hand.\n")
        out.write(f"# Joback estimates by thermo {thermo.__version__} (Joback class; SMARTS fragmentation with RDKit {rdkit.__version__}),\n")
        out.write(f"# molecules from chemicals {chemicals.__version__} 'chemical identifiers pubchem small.tsv'; status 'OK' only.\n")
        out.write("# units: kJ/mol (dhf, dgf), K (tb, tc), J/mol/K (cp); groups: 'number:count' (Poling et al. Table 2-2 numbering).\n")
        out.write("cas\tsmiles\tgroups\tdhf_gas_kj_per_mol\tdgf_gas_kj_per_mol\ttb_k\ttc_k\tcp_298_j_per_mol_k\tcp_500_j_per_mol_k\n")
        for r in rows:
            out.write("\t".join(r) + "\n")
    print(f"wrote {len(rows)} molecules to {OUT.relative_to(ROOT)}")


if __name__ == "__main__":
    main()
