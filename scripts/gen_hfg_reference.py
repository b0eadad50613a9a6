#!/usr/bin/env python3
"""Experimental gas-phase ΔfH°(298.15 K) of organic molecules, two independent sets.

1. worker/engine/tests/reference/atct_hfg.tsv: the Active Thermochemical Tables 1.112 gas-phase
   table shipped in `chemicals` (`chemicals/Reactions/ATcT 1.112 (g).tsv`; B. Ruscic et al.,
   Active Thermochemical Tables, version 1.112). This set was used to choose the engine's
   uncertainty rules for Joback estimates (joback.rs): it is the rule-setting set.
2. worker/engine/tests/reference/crc_hfg.tsv: the CRC Handbook gas-phase values shipped in
   `chemicals` (heat_capacity.CRC_standard_data, 'Hfg'), for molecules not in set 1. It was not
   looked at while choosing the Joback rules: the held-out set of the Joback coverage test. For
   Benson's σ rules its rows with an even CAS check digit join the rule-setting set; the rows
   with an odd one are Benson's held-out set. S°(g) from the same table checks Benson's
   entropies (symmetry numbers, optical isomers).

Structures: the SMILES chemicals' identifier database gives for the CAS number. Kept: neutral,
closed-shell molecules of C, H, N, O, S, F, Cl, Br, I with a carbon and 2+ heavy atoms, whose
composition from the SMILES equals the source's formula (ATcT lists radicals and ions under CAS
numbers whose PubChem structure is the parent molecule; those are dropped by this check).

Usage: .venv-smiles/bin/python scripts/gen_hfg_reference.py   (versions: requirements-structures.txt)
"""
import pathlib
import re

import chemicals
from chemicals import heat_capacity
from chemicals.identifiers import search_chemical
from rdkit import Chem, RDLogger
from rdkit.Chem import Descriptors

RDLogger.DisableLog("rdApp.*")
ROOT = pathlib.Path(__file__).resolve().parents[1]
ATCT = pathlib.Path(chemicals.__file__).parent / "Reactions" / "ATcT 1.112 (g).tsv"
REF = ROOT / "worker/engine/tests/reference"
ALLOWED = {"C", "H", "N", "O", "S", "F", "Cl", "Br", "I"}


def parse_formula(text):
    """Condensed formulas as ATcT writes them: CH3CH2OH, (CH3)2CO, C6H5OH. None for ions."""
    text = text.split(" (")[0].strip()
    if re.search(r"[+\-\[\]]", text):
        return None
    pos = 0

    def group():
        nonlocal pos
        out = {}
        while pos < len(text) and text[pos] != ")":
            if text[pos] == "(":
                pos += 1
                inner = group()
                pos += 1
                m = re.match(r"\d*", text[pos:]).group()
                pos += len(m)
                for k, v in inner.items():
                    out[k] = out.get(k, 0) + v * int(m or 1)
                continue
            m = re.match(r"([A-Z][a-z]?)(\d*)", text[pos:])
            if not m:
                raise ValueError(text)
            pos += len(m.group())
            out[m.group(1)] = out.get(m.group(1), 0) + int(m.group(2) or 1)
        return out

    try:
        return group()
    except ValueError:
        return None


def structure(cas):
    try:
        smi = search_chemical(cas).smiles
    except Exception:
        return None, None
    mol = Chem.MolFromSmiles(smi) if smi else None
    if mol is None or "." in smi or mol.GetNumHeavyAtoms() < 2:
        return None, None
    syms = {a.GetSymbol() for a in mol.GetAtoms()}
    if not syms <= ALLOWED or "C" not in syms or Descriptors.NumRadicalElectrons(mol):
        return None, None
    if sum(a.GetFormalCharge() for a in mol.GetAtoms()):
        return None, None
    comp = {}
    for a in Chem.AddHs(mol).GetAtoms():
        comp[a.GetSymbol()] = comp.get(a.GetSymbol(), 0) + 1
    return smi, comp


def write(path, source, rows):
    with path.open("w") as out:
        out.write(f"# {path.name} - written by scripts/gen_hfg_reference.py; do not edit by hand.\n")
        out.write(f"# {source}, as bundled in chemicals {chemicals.__version__}; SMILES from chemicals' identifier database by CAS.\n")
        out.write("# Gas-phase standard enthalpy of formation at 298.15 K, kJ/mol; standard entropy of the ideal gas\n")
        out.write("# at 298.15 K and 1 bar, J/(mol K), where the source has one (empty otherwise).\n")
        out.write("cas\tname\tsmiles\tdhf_gas_kj_per_mol\ts_gas_j_per_mol_k\n")
        for r in rows:
            out.write("\t".join(r) + "\n")
    print(f"wrote {len(rows)} molecules to {path.relative_to(ROOT)}")


def main():
    lines = ATCT.open(encoding="utf-8").read().splitlines()
    col = {c: i for i, c in enumerate(lines[0].split("\t"))}
    atct, seen = [], set()
    for line in lines[1:]:
        f = line.split("\t")
        smi, comp = structure(f[col["CAS"]])
        if smi is None or parse_formula(f[col["Formula"]]) != comp:
            continue
        seen.add(f[col["CAS"]])
        atct.append((f[col["CAS"]], f[col["Chemical"]], smi, f"{float(f[col['Hfg']]) / 1000:.3f}", ""))
    write(REF / "atct_hfg.tsv", "Active Thermochemical Tables 1.112, gas phase (rule-setting set)", atct)
    crc = []
    d = heat_capacity.CRC_standard_data
    for cas, row in d[d["Hfg"].notna()].iterrows():
        if cas in seen:
            continue
        smi, comp = structure(cas)
        if smi is None:
            continue
        s0g = "" if row["S0g"] != row["S0g"] else f"{row['S0g']:.2f}"
        crc.append((cas, row["Chemical"], smi, f"{row['Hfg'] / 1000:.3f}", s0g))
    write(
        REF / "crc_hfg.tsv",
        "CRC Handbook of Chemistry and Physics gas-phase values (held out for Joback; for Benson, rows with an even CAS check digit join the rule-setting set and odd ones are held out)",
        crc,
    )


if __name__ == "__main__":
    main()
