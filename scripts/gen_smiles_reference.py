#!/usr/bin/env python3
"""Reference formulas and molar masses for SMILES, from RDKit.

Molecules: every SMILES in the `chemicals` package's bundled list
`chemicals/Identifiers/chemical identifiers pubchem small.tsv` (PubChem-derived identifiers,
MIT licence) that RDKit reads and that has at most 500 heavy atoms and no wildcard atom.
For each: the composition RDKit gives after adding hydrogens (isotopes folded into their
element), the net charge, RDKit's average molar mass (Descriptors.MolWt, RDKit's own atomic
weights), RDKit's canonical SMILES and one randomised SMILES (fixed seed), so the engine can check
that three spellings of one molecule share one canonical key.

Writes worker/engine/tests/reference/smiles_rdkit.tsv.
Usage: .venv-smiles/bin/python scripts/gen_smiles_reference.py   (versions: requirements-structures.txt)
"""
import pathlib

import chemicals
import rdkit
from rdkit import Chem, RDLogger
from rdkit.Chem import Descriptors

RDLogger.DisableLog("rdApp.*")
ROOT = pathlib.Path(__file__).resolve().parents[1]
SRC = pathlib.Path(chemicals.__file__).parent / "Identifiers" / "chemical identifiers pubchem small.tsv"
OUT = ROOT / "worker/engine/tests/reference/smiles_rdkit.tsv"


def composition(mol):
    counts = {}
    for a in Chem.AddHs(mol).GetAtoms():
        counts[a.GetSymbol()] = counts.get(a.GetSymbol(), 0) + 1
    return " ".join(f"{k}:{v}" for k, v in sorted(counts.items()))


def main():
    rows = []
    seen = set()
    for line in SRC.open(encoding="utf-8"):
        f = line.rstrip("\n").split("\t")
        if len(f) < 5:
            continue
        cas, smi = f[1], f[4]
        if not smi or smi in seen or "*" in smi or len(smi) > 2000:
            continue
        mol = Chem.MolFromSmiles(smi)
        if mol is None or mol.GetNumHeavyAtoms() > 500:
            continue
        seen.add(smi)
        charge = sum(a.GetFormalCharge() for a in mol.GetAtoms())
        canon = Chem.MolToSmiles(mol)
        rand = Chem.MolToRandomSmilesVect(mol, 1, randomSeed=20261201)[0]
        rows.append((cas, smi, composition(mol), str(charge), f"{Descriptors.MolWt(mol):.5f}", canon, rand))
    with OUT.open("w") as out:
        out.write("# smiles_rdkit.tsv - written by scripts/gen_smiles_reference.py; do not edit by hand.\n")
        out.write(f"# SMILES from chemicals {chemicals.__version__} ('chemical identifiers pubchem small.tsv', MIT);\n")
        out.write(f"# composition, charge, molar mass (Descriptors.MolWt), canonical and random SMILES from RDKit {rdkit.__version__}.\n")
        out.write("cas\tsmiles\tcomposition\tcharge\tmolar_mass_rdkit\trdkit_canonical\trdkit_random\n")
        for r in rows:
            out.write("\t".join(r) + "\n")
    print(f"wrote {len(rows)} molecules to {OUT.relative_to(ROOT)}")


if __name__ == "__main__":
    main()
