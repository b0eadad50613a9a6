#!/usr/bin/env python3
"""Assign SMILES to the organic (and simple inorganic) species of the bundled NASA table.

Writes worker/engine/data/structures.tsv: one row per table base name with a structure.
The name -> SMILES map below is written by hand, only for names that fix one compound; each
entry is checked with RDKit: the molecular formula RDKit computes from the SMILES (explicit
hydrogens included, radicals as written in brackets) must equal the record's composition in
worker/engine/data/nasa_species.tsv, and the script fails otherwise. Names left out on purpose:
mixtures (C7H8O,cresol 'mx', Jet-A), dimers ((HCOOH)2, (CH3COOH)2), deuterated species,
carbides and salts, and carbenes/atoms/clusters (C, C2, C3, CH, CH2, CCL2, CF2, C2H2,vinylidene).

Identification notes: C3H6O is methyloxirane (propylene oxide): its ΔfH°(298 K) in the record
is -93.7 kJ/mol (acetone -217, propanal -186); C2H4O,ethylen is ethylene oxide (-52.6 kJ/mol);
C7H8 is toluene (+50.2 kJ/mol); the liquid records C6H6(L), C7H8(L) and C8H18(L),n-octa share
the bases C6H6, C7H8 and C8H18 (n-octane).

Usage: .venv-smiles/bin/python scripts/gen_structures.py   (versions: requirements-structures.txt)
"""
import csv
import pathlib
import sys

import rdkit
from rdkit import Chem
from rdkit.Chem.rdMolDescriptors import CalcMolFormula

ROOT = pathlib.Path(__file__).resolve().parents[1]
TABLE = ROOT / "worker/engine/data/nasa_species.tsv"
OUT = ROOT / "worker/engine/data/structures.tsv"

STRUCTURES = {
    # Inorganic molecules
    "H2": "[H][H]", "O2": "O=O", "N2": "N#N", "F2": "FF", "CL2": "ClCl", "Br2": "BrBr", "I2": "II",
    "H2O": "O", "H2O2": "OO", "NH3": "N", "N2H4": "NN", "H2S": "S", "HCL": "Cl", "HF": "F",
    "HBr": "Br", "HI": "I", "CO": "[C-]#[O+]", "CO2": "O=C=O", "COS": "O=C=S", "CS2": "S=C=S",
    "HCN": "C#N", "HNC": "[C-]#[NH+]", "HNCO": "N=C=O", "SO2": "O=S=O", "SO3": "O=S(=O)=O",
    "N2O": "[N-]=[N+]=O", "O3": "[O-][O+]=O", "C2N2": "N#CC#N", "CLCN": "ClC#N", "FCN": "FC#N",
    "COCL2": "ClC(Cl)=O", "COF2": "FC(F)=O", "COCLF": "FC(Cl)=O", "C3O2": "O=C=C=C=O",
    "C4N2": "N#CC#CC#N",
    # Radicals, written with bracket atoms and explicit hydrogens
    "OH": "[OH]", "CH3": "[CH3]", "CH2OH": "[CH2]O", "CH3O": "C[O]", "HCO": "[CH]=O",
    "COOH": "O[C]=O", "C2H": "[C]#C", "C2H3,vinyl": "[CH]=C", "C2H5": "C[CH2]",
    "CH3CO,acetyl": "C[C]=O", "CHCO,ketyl": "[CH]=C=O", "C3H3,propargyl": "[CH2]C#C",
    "C3H5,allyl": "[CH2]C=C", "C3H7,n-propyl": "CC[CH2]", "C3H7,i-propyl": "C[CH]C",
    "C4H9,n-butyl": "CCC[CH2]", "C4H9,i-butyl": "CC(C)[CH2]", "C4H9,s-butyl": "CC[CH]C",
    "C4H9,t-butyl": "C[C](C)C", "C5H11,pentyl": "CCCC[CH2]", "C5H11,t-pentyl": "CC[C](C)C",
    "C6H13,n-hexyl": "CCCCC[CH2]", "C7H15,n-heptyl": "CCCCCC[CH2]", "C8H17,n-octyl": "CCCCCCC[CH2]",
    "C9H19,n-nonyl": "CCCCCCCC[CH2]", "C10H21,n-decyl": "CCCCCCCCC[CH2]",
    "C6H5,phenyl": "[c]1ccccc1", "C6H5O,phenoxy": "[O]c1ccccc1", "C7H7,benzyl": "[CH2]c1ccccc1",
    "C12H9,o-bipheny": "[c]1ccccc1-c1ccccc1", "CCL3": "Cl[C](Cl)Cl", "CF3": "F[C](F)F",
    # Hydrocarbons
    "CH4": "C", "C2H2,acetylene": "C#C", "C2H4": "C=C", "C2H6": "CC", "C3H4,allene": "C=C=C",
    "C3H4,propyne": "CC#C", "C3H4,cyclo-": "C1=CC1", "C3H6,propylene": "CC=C", "C3H6,cyclo-": "C1CC1",
    "C3H8": "CCC", "C4H2": "C#CC#C", "C4H4,1,3-cyclo-": "C1=CC=C1", "C4H6,butadiene": "C=CC=C",
    "C4H6,2-butyne": "CC#CC", "C4H6,cyclo-": "C1=CCC1", "C4H8,1-butene": "C=CCC",
    "C4H8,cis2-buten": "C/C=C\\C", "C4H8,tr2-butene": "C/C=C/C", "C4H8,isobutene": "C=C(C)C",
    "C4H8,cyclo-": "C1CCC1", "C4H10,n-butane": "CCCC", "C4H10,isobutane": "CC(C)C",
    "C5H6,1,3cyclo-": "C1=CCC=C1", "C5H8,cyclo-": "C1=CCCC1", "C5H10,1-pentene": "C=CCCC",
    "C5H10,cyclo-": "C1CCCC1", "C5H12,n-pentane": "CCCCC", "C5H12,i-pentane": "CCC(C)C",
    "CH3C(CH3)2CH3": "CC(C)(C)C", "C6H2": "C#CC#CC#C", "C6H6": "c1ccccc1", "C6H10,cyclo-": "C1=CCCCC1",
    "C6H12,1-hexene": "C=CCCCC", "C6H12,cyclo-": "C1CCCCC1", "C7H8": "Cc1ccccc1",
    "C7H14,1-heptene": "C=CCCCCC", "C7H16,n-heptane": "CCCCCCC", "C8H8,styrene": "C=Cc1ccccc1",
    "C8H10,ethylbenz": "CCc1ccccc1", "C8H16,1-octene": "C=CCCCCCC", "C8H18,n-octane": "CCCCCCCC",
    "C8H18": "CCCCCCCC", "C8H18,isooctane": "CC(C)CC(C)(C)C", "C10H8,naphthale": "c1ccc2ccccc2c1",
    "C12H10,bipheny": "c1ccc(cc1)-c1ccccc1",
    # Halocarbons
    "CH3CL": "CCl", "CH2CL2": "ClCCl", "CHCL3": "ClC(Cl)Cl", "CCL4": "ClC(Cl)(Cl)Cl", "CH3F": "CF",
    "CH2F2": "FCF", "CHF3": "FC(F)F", "CF4": "FC(F)(F)F", "CH2CLF": "FCCl", "CHCLF2": "FC(F)Cl",
    "CHCL2F": "FC(Cl)Cl", "CCL2F2": "FC(F)(Cl)Cl", "CCL3F": "FC(Cl)(Cl)Cl", "CCLF3": "FC(F)(F)Cl",
    "C2CL2": "ClC#CCl", "C2CL4": "ClC(Cl)=C(Cl)Cl", "C2CL6": "ClC(Cl)(Cl)C(Cl)(Cl)Cl", "C2F2": "FC#CF",
    "C2F4": "FC(F)=C(F)F", "C2HCL": "ClC#C", "C2HF": "FC#C",
    # Oxygen and nitrogen compounds
    "CH3OH": "CO", "C2H5OH": "CCO", "CH3OCH3": "COC", "HCHO,formaldehy": "C=O", "CH3CHO,ethanal": "CC=O",
    "HCOOH": "OC=O", "CH3COOH": "CC(=O)O", "CH2CO,ketene": "C=C=O", "C2H4O,ethylen": "C1CO1",
    "C3H6O": "CC1CO1", "C3H8O,1propanol": "CCCO", "C3H8O,2propanol": "CC(C)O",
    "C6H5OH,phenol": "Oc1ccccc1", "CH3CN": "CC#N", "CH3N2CH3": "C/N=N/C", "HCCN": "[CH]=C=N",
}
# HCCN is a radical-like carbene (cyanomethylene); kept out of estimation by its valence.
STRUCTURES.pop("HCCN")


def composition_of(cell):
    out = {}
    for part in cell.split():
        el, n = part.split(":")
        out[el] = int(float(n))
    return out


def rdkit_composition(mol):
    mh = Chem.AddHs(mol)
    out = {}
    for a in mh.GetAtoms():
        out[a.GetSymbol()] = out.get(a.GetSymbol(), 0) + 1
    return out


def main():
    rows = [r for r in csv.reader((l for l in TABLE.open() if not l.startswith("#")), delimiter="\t")]
    header, rows = rows[0], rows[1:]
    col = {c: i for i, c in enumerate(header)}
    comp = {}
    for r in rows:
        if r[col["charge"]] == "0":
            comp.setdefault(r[col["base"]], composition_of(r[col["composition"]]))
    failures = []
    out = []
    for name, smi in STRUCTURES.items():
        if name not in comp:
            failures.append(f"{name}: not a neutral base name of the table")
            continue
        mol = Chem.MolFromSmiles(smi)
        if mol is None:
            failures.append(f"{name}: RDKit cannot read {smi}")
            continue
        got = rdkit_composition(mol)
        if got != comp[name]:
            failures.append(f"{name}: {smi} gives {got}, the record has {comp[name]}")
            continue
        out.append((name, smi, Chem.MolToSmiles(mol), CalcMolFormula(mol)))
    if failures:
        sys.exit("structure check failed:\n" + "\n".join(failures))
    with OUT.open("w") as f:
        f.write("# structures.tsv - written by scripts/gen_structures.py; do not edit by hand.\n")
        f.write(f"# SMILES assigned by hand to NASA table names (data/nasa_species.tsv); each checked with RDKit {rdkit.__version__}:\n")
        f.write("#   the formula from the SMILES equals the record's composition. rdkit_smiles is RDKit's canonical SMILES.\n")
        f.write("name\tsmiles\trdkit_smiles\tformula\n")
        for row in out:
            f.write("\t".join(row) + "\n")
    print(f"wrote {len(out)} structures to {OUT.relative_to(ROOT)}")


if __name__ == "__main__":
    main()
