#!/usr/bin/env python3
"""Assign SMILES to the molecular species of the bundled NASA table and to every open record.

Writes worker/engine/data/structures.tsv: one row per table base name with a structure, columns
`name smiles rdkit_smiles formula inchikey cas`.

Which names get a structure
---------------------------
* worker/engine/data/nasa_species.tsv: every neutral base name that fixes one molecular compound:
  carbon compounds, closed-shell molecules of the non-metals (H B C N O F Si P S Cl Br I), and
  the doublet radicals of H, C, N, O, S and the halogens (OH, CH3, NO2, ClO ...; written with
  bracket atoms so that RDKit counts one unpaired electron). O2, S2 and SO (triplet ground states)
  are written closed-shell, as usual. The one metal compound kept is FeC5O5 (iron pentacarbonyl),
  a carbon-containing molecule.
* worker/engine/data/open_species.tsv (ATcT + ChemSep liquids and gases): every base name.

The name -> SMILES maps below are written by hand. Each entry is checked:
1. the molecular formula RDKit computes from the SMILES (explicit hydrogens included, radicals as
   written in brackets) equals the record's composition;
2. where a CAS number is known, the InChIKey RDKit computes from the SMILES equals the InChIKey of
   the entry for that CAS in chemicals' identifier database (`chemicals.identifiers.search_chemical`,
   the PubChem-derived tables shipped in the package). Open records carry their CAS. For NASA
   records the CAS comes from a hand-given compound name (`LOOKUP`) that must name exactly one
   entry of the identifier tables; without one, the formula is used when exactly one entry of the
   tables has it and its InChIKey is the structure's (otherwise the record gets no CAS: the only
   entry of that formula is another isomer or radical, e.g. CH3O -> hydroxymethyl, not methoxy).
The script fails on any mismatch, on a name in no table, and on a neutral NASA base name that is
neither given a structure nor excluded below.

Excluded NASA base names (neutral), with the reason
----------------------------------------------------
By rule:
* any metal (every element but H B C N O F Si P S Cl Br I; D): salts, oxides, carbides, halides,
  hydroxides, metal vapours and clusters (NaCL, K2CO3, ALCL3, AL2CL6, TiCL4, Fe2O3, Cu ...),
  except FeC5O5 (iron pentacarbonyl, kept);
* deuterium (D2, D2O, HDO, C6D6, C12D10, C6D5, O-C12D9, ND3, OD, cis-N2D2 ...): deuterated species;
* single atoms (H, O, N, C, CL, F, Br, I, S, P, B, Si, Ar, He, Ne, Kr, Xe).
By name (`EXCLUDED`):
* mixtures: C7H8O,cresol (o/m/p mixture), Jet-A, Jet-A(g);
* dimers and clusters: (HCOOH)2, (CH3COOH)2, H2F2..H7F7 ((HF)n), C2, C3, C4, C5, B2, Si2, Si3,
  Si2C, SiC2, Si2N;
* salts and network solids: NH4CL (salt), SiO2, B2O3, Si3N4, Si2N2O (network oxides/nitrides: the
  condensed records are polymeric), SiC (carbide);
* carbenes, carbynes, nitrenes and other triplet or subvalent carbon/nitrogen species: CH, CH2,
  CF, CF2, CCL, CCL2, CHCL, C2H2,vinylidene, C2O, CCN, CNC, CNN, NCN, HCCN, NH, NF;
* subvalent radicals of B, Si and P (no compound a chemist names): BH, BH2, BF, BF2, BCL, BCL2,
  BCLF, BO, BO2, BOF2, BS, BN, B2O, SiH, SiH2, SiH3, SiF, SiF2, SiF3, SiCL, SiCL2, SiCL3, SiBr,
  SiBr2, SiBr3, SiI, SiI2, SiN, PH, PF, PF2, PO, PO2, CP (SiO and SiS, closed shell like CO, are kept);
* isomer not fixed by the name: N2H2 (trans-, cis- or iso-diazene), N2F2 (cis or trans).

Identification notes: C3H6O is methyloxirane (propylene oxide): its dHf(298 K) in the record is
-93.7 kJ/mol (acetone -217, propanal -186); C2H4O,ethylen is ethylene oxide (-52.6 kJ/mol); C7H8 is
toluene (+50.2 kJ/mol); the liquid records C6H6(L), C7H8(L) and C8H18(L),n-octa share the bases
C6H6, C7H8 and C8H18 (n-octane). CH3N2CH3 is written trans (E)-azomethane; the identifier tables
hold azomethane only without double-bond stereo (4143-41-3), so it gets no CAS.

ClF3 is hypervalent; RDKit reads it without its valence check (HYPERVALENT).

Usage: .venv-smiles/bin/python scripts/gen_structures.py   (versions: requirements-structures.txt)
"""
import collections
import pathlib
import re
import sys

import chemicals
import rdkit
from chemicals.identifiers import search_chemical
from rdkit import Chem, RDLogger
from rdkit.Chem.rdMolDescriptors import CalcMolFormula

RDLogger.DisableLog("rdApp.*")
ROOT = pathlib.Path(__file__).resolve().parents[1]
NASA = ROOT / "worker/engine/data/nasa_species.tsv"
OPEN = ROOT / "worker/engine/data/open_species.tsv"
OUT = ROOT / "worker/engine/data/structures.tsv"
IDENTIFIERS = pathlib.Path(chemicals.__file__).parent / "Identifiers"
# The identifier tables chemicals loads, in its load order (a later row for a CAS replaces an earlier one).
ID_TABLES = ["chemical identifiers pubchem large.tsv", "chemical identifiers pubchem small.tsv",
             "chemical identifiers example user db.tsv", "Inorganic db.tsv"]

NONMETALS = set("H B C N O F Si P S Cl Br I".split())

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
    "C6H5OH,phenol": "Oc1ccccc1", "CH3CN": "CC#N", "CH3N2CH3": "C/N=N/C",
    # --- added: carbon compounds and carbon radicals
    "SiC4H12": "C[Si](C)(C)C", "FeC5O5": "[C-]#[O+].[C-]#[O+].[C-]#[O+].[C-]#[O+].[C-]#[O+].[Fe]",
    "CS": "[C-]#[S+]", "CN": "[C]#N", "NCO": "[N]=C=O", "COCL": "Cl[C]=O", "COF": "F[C]=O",
    # --- added: nitrogen, oxygen and halogen molecules
    "HNO": "N=O", "HNO2": "ON=O", "HNO3": "O[N+](=O)[O-]", "N2O3": "O=N[N+](=O)[O-]",
    "N2O4": "O=[N+]([O-])[N+](=O)[O-]", "N2O5": "O=[N+]([O-])O[N+](=O)[O-]", "N3H": "N=[N+]=[N-]",
    "NH2OH": "NO", "NH2NO2": "N[N+](=O)[O-]", "NF3": "FN(F)F", "N2F4": "FN(F)N(F)F", "NH2F": "NF",
    "NHF2": "FNF", "NOCL": "ClN=O", "NOF": "FN=O", "NO2CL": "Cl[N+](=O)[O-]", "NO2F": "F[N+](=O)[O-]",
    "NO3F": "FO[N+](=O)[O-]", "NOF3": "[O-][N+](F)(F)F", "HOCL": "OCl", "HOF": "OF", "CL2O": "ClOCl",
    "F2O": "FOF", "CLF": "FCl", "CLF3": "F[Cl](F)F",
    # --- added: radicals of N, O, S and the halogens
    "NO": "[N]=O", "NO2": "[O]N=O", "NO3": "[O][N+](=O)[O-]", "NH2": "[NH2]", "NHF": "F[NH]",
    "NF2": "F[N]F", "N3": "[N]=[N+]=[N-]", "HO2": "[O]O", "CLO": "[O]Cl", "CLO2": "O=Cl[O]",
    "FO": "[O]F", "FO2": "FO[O]", "SH": "[SH]", "SN": "[N]=S", "SCL": "Cl[S]", "S2CL": "ClS[S]",
    "SF": "F[S]", "SF3": "F[S](F)F", "SF5": "F[S](F)(F)(F)F",
    # --- added: sulfur and phosphorus molecules
    "S2": "S=S", "S8": "S1SSSSSSS1", "SO": "O=S", "S2O": "O=S=S", "H2SO4": "OS(=O)(=O)O",
    "HSO3F": "OS(=O)(=O)F", "SCL2": "ClSCl", "S2CL2": "ClSSCl", "SF2": "FSF", "SF4": "FS(F)(F)F",
    "SF6": "FS(F)(F)(F)(F)F", "SO2CL2": "O=S(=O)(Cl)Cl", "SO2CLF": "O=S(=O)(F)Cl", "SO2F2": "O=S(=O)(F)F",
    "SOF2": "O=S(F)F", "FS2F,fluorodisu": "FSSF", "S2F2,thiothiony": "FS(F)=S",
    "P2": "P#P", "P4": "P12P3P1P23", "PH3": "P", "PCL3": "ClP(Cl)Cl", "PF3": "FP(F)F",
    "PF5": "FP(F)(F)(F)F", "P4O10": "O=P12OP3(=O)OP(=O)(O1)OP(=O)(O2)O3",
    # --- added: boron and silicon molecules
    "BH3": "B", "BF3": "FB(F)F", "BCL3": "ClB(Cl)Cl", "BHF2": "FBF", "HBO": "B=O", "HBO2": "OB=O",
    "HBS": "B=S", "BOCL": "O=BCl", "BOF": "O=BF", "B2O2": "O=BB=O", "B3O3H3": "B1OBOBO1",
    "B3O3F3": "FB1OB(F)OB(F)O1", "B3O3CL3": "ClB1OB(Cl)OB(Cl)O1", "H3B3O6": "OB1OB(O)OB(O)O1",
    "SiH4": "[SiH4]", "SiH3F": "F[SiH3]", "SiH3CL": "Cl[SiH3]", "SiH3Br": "Br[SiH3]", "SiH3I": "I[SiH3]",
    "SiH2F2": "F[SiH2]F", "SiH2CL2": "Cl[SiH2]Cl", "SiH2Br2": "Br[SiH2]Br", "SiH2I2": "I[SiH2]I",
    "SiHF3": "F[SiH](F)F", "SiHCL3": "Cl[SiH](Cl)Cl", "SiHBr3": "Br[SiH](Br)Br", "SiHI3": "I[SiH](I)I",
    "SiF4": "F[Si](F)(F)F", "SiCL4": "Cl[Si](Cl)(Cl)Cl", "SiBr4": "Br[Si](Br)(Br)Br",
    "SiO": "[Si-]#[O+]", "SiS": "[Si-]#[S+]",
}

# Base names of open_species.tsv not already above (the others share a NASA base name).
OPEN_STRUCTURES = {
    "(CH3CO)2O": "CC(=O)OC(C)=O", "C2H5OC2H5": "CCOCC", "C4H10O,1butanol": "CCCCO",
    "C4H10O,isobutanol": "CC(C)CO", "C4H8O,tetrahydrofuran": "C1CCOC1", "C4H8O2,dioxane": "C1COCCO1",
    "C5H5N": "c1ccncc1", "C6H14,n-hexane": "CCCCCC", "C6H5Cl": "Clc1ccccc1", "C6H5NH2": "Nc1ccccc1",
    "C6H5NO2": "O=[N+]([O-])c1ccccc1", "C8H10,m-xylene": "Cc1cccc(C)c1", "C8H10,o-xylene": "Cc1ccccc1C",
    "C8H10,p-xylene": "Cc1ccc(C)cc1", "CH2ClCH2Cl": "ClCCCl", "CH3COC2H5": "CCC(C)=O",
    "CH3COCH3": "CC(C)=O", "CH3COOC2H5": "CCOC(C)=O", "CH3COOCH3": "COC(C)=O",
    "CH3OC(CH3)3": "COC(C)(C)C", "HCON(CH3)2": "CN(C)C=O",
}

# A compound name for each NASA base name, naming exactly one entry of the identifier tables.
LOOKUP = {
    "H2": "hydrogen", "O2": "oxygen", "N2": "nitrogen", "F2": "fluorine", "CL2": "chlorine",
    "Br2": "bromine", "I2": "iodine", "H2O": "water", "H2O2": "hydrogen peroxide", "NH3": "ammonia",
    "N2H4": "hydrazine", "H2S": "hydrogen sulfide", "HCL": "hydrogen chloride", "HF": "hydrogen fluoride",
    "HBr": "hydrogen bromide", "HI": "hydrogen iodide", "CO": "carbon monoxide", "CO2": "carbon dioxide",
    "COS": "carbonyl sulfide", "CS2": "carbon disulfide", "HCN": "hydrogen cyanide",
    "HNC": "hydrogen isocyanide", "HNCO": "isocyanic acid", "SO2": "sulfur dioxide",
    "SO3": "sulfur trioxide", "N2O": "nitrous oxide", "O3": "ozone", "C2N2": "cyanogen",
    "CLCN": "cyanogen chloride", "FCN": "cyanogen fluoride", "COCL2": "phosgene",
    "COF2": "carbonyl fluoride", "COCLF": "carbonyl chloride fluoride", "C3O2": "carbon suboxide",
    "C4N2": "dicyanoacetylene",
    "CH3": "methyl radical", "CH2OH": "hydroxymethyl radical", "CH3CO,acetyl": "acetyl radical",
    "C3H3,propargyl": "propargyl radical", "C3H7,i-propyl": "methylethyl",
    "C4H9,n-butyl": "1-butyl radical", "C4H9,s-butyl": "2-butyl radical",
    "C4H9,t-butyl": "tert-butyl radical", "C5H11,pentyl": "pentyl",
    "C5H11,t-pentyl": "2-methylbut-2-yl radical", "C6H13,n-hexyl": "n-hexyl",
    "C7H15,n-heptyl": "1-heptyl radical", "C6H5O,phenoxy": "phenoxy radical",
    "C7H7,benzyl": "phenylmethyl", "CF3": "trifluoromethyl radical",
    "CH4": "methane", "C2H2,acetylene": "acetylene", "C2H4": "ethylene", "C2H6": "ethane",
    "C3H4,allene": "allene", "C3H4,propyne": "propyne", "C3H4,cyclo-": "1-cyclopropene",
    "C3H6,propylene": "propylene", "C3H6,cyclo-": "trimethylene", "C3H8": "propane",
    "C4H2": "butadiyne", "C4H4,1,3-cyclo-": "cyclobutadiene", "C4H6,butadiene": "1,3-butadiene",
    "C4H6,2-butyne": "2-butyne", "C4H6,cyclo-": "cyclobutene", "C4H8,1-butene": "1-butene",
    "C4H8,cis2-buten": "cis-2-butene", "C4H8,tr2-butene": "trans-2-butene", "C4H8,isobutene": "isobutylene",
    "C4H8,cyclo-": "tetramethylene", "C4H10,n-butane": "n-butane", "C4H10,isobutane": "isobutane",
    "C5H6,1,3cyclo-": "cyclopentadiene", "C5H8,cyclo-": "1-cyclopentene", "C5H10,1-pentene": "1-pentene",
    "C5H10,cyclo-": "pentamethylene", "C5H12,n-pentane": "n-pentane", "C5H12,i-pentane": "isopentane",
    "CH3C(CH3)2CH3": "neopentane", "C6H2": "triacetylene", "C6H6": "benzene", "C6H10,cyclo-": "cyclohexene",
    "C6H12,1-hexene": "1-hexene", "C6H12,cyclo-": "hexahydrobenzene", "C7H8": "toluene",
    "C7H14,1-heptene": "1-heptene", "C7H16,n-heptane": "n-heptane", "C8H8,styrene": "styrene",
    "C8H10,ethylbenz": "ethylbenzol", "C8H16,1-octene": "1-octene", "C8H18,n-octane": "octane",
    "C8H18": "octane", "C8H18,isooctane": "isooctane", "C10H8,naphthale": "naphthalene",
    "C12H10,bipheny": "biphenyl",
    "CH3CL": "chloromethane", "CH2CL2": "dichloromethane", "CHCL3": "chloroform",
    "CCL4": "carbon tetrachloride", "CH3F": "fluoromethane", "CH2F2": "difluoromethane",
    "CHF3": "fluoroform", "CF4": "tetrafluoromethane", "CH2CLF": "chlorofluoromethane",
    "CHCLF2": "chlorodifluoromethane", "CHCL2F": "dichlorofluoromethane",
    "CCL2F2": "dichlorodifluoromethane", "CCL3F": "trichlorofluoromethane",
    "CCLF3": "chlorotrifluoromethane", "C2CL2": "dichloroacetylene", "C2CL4": "tetrachloroethylene",
    "C2CL6": "hexachloroethane", "C2F2": "difluoroacetylene", "C2F4": "tetrafluoroethylene",
    "C2HCL": "chloroethyne", "C2HF": "fluoroacetylene",
    "CH3OH": "methyl alcohol", "C2H5OH": "ethanol", "CH3OCH3": "dimethyl ether", "HCHO,formaldehy": "formaldehyde",
    "CH3CHO,ethanal": "acetaldehyde", "HCOOH": "formic acid", "CH3COOH": "acetic acid",
    "CH2CO,ketene": "ketene", "C2H4O,ethylen": "ethylene oxide", "C3H6O": "propylene oxide",
    "C3H8O,1propanol": "1-propanol", "C3H8O,2propanol": "isopropanol", "C6H5OH,phenol": "phenol",
    "CH3CN": "acetonitrile",
    "SiC4H12": "tetramethylsilane", "CS": "carbon monosulfide", "NCO": "nco radical", "COCL": "clco",
    "HNO": "nitroxyl", "HNO2": "nitrous acid", "HNO3": "nitric acid", "N2O3": "dinitrogen trioxide",
    "N2O4": "dinitrogen tetroxide", "N2O5": "nitrogen pentoxide", "N3H": "hydrazoic acid",
    "NH2OH": "hydroxylamine", "NH2NO2": "nitramide", "NF3": "nitrogen trifluoride",
    "N2F4": "tetrafluorohydrazine", "NH2F": "monofluoroamine", "NHF2": "difluoroamine",
    "NOCL": "nitrosyl chloride", "NOF": "nitrosyl fluoride", "NO2F": "nitryl fluoride",
    "NO3F": "fluorine nitrate", "NOF3": "trifluoroamine oxide", "HOCL": "hypochlorous acid",
    "HOF": "hypofluorous acid", "CL2O": "chlorine monoxide", "F2O": "oxygen difluoride",
    "CLF": "chlorine monofluoride", "CLF3": "chlorine trifluoride",
    "NO": "nitric oxide", "NO2": "nitrogen dioxide", "NF2": "difluoroamidogen", "HO2": "hydroperoxy",
    "CLO2": "chlorine dioxide", "SN": "nitrogen sulfide",
    "S8": "cyclooctasulfur", "H2SO4": "sulfuric acid", "HSO3F": "fluorosulfonic acid",
    "SCL2": "sulfur dichloride", "S2CL2": "sulfur monochloride", "SF2": "sulfur difluoride",
    "SF4": "sulfur tetrafluoride", "SF6": "sulfur hexafluoride", "SO2CL2": "sulfuryl chloride",
    "SO2CLF": "sulfuryl chloride fluoride", "SO2F2": "sulfuryl fluoride", "SOF2": "thionyl fluoride",
    "FS2F,fluorodisu": "difluorodisulfane", "S2F2,thiothiony": "thiothionyl fluoride",
    "P2": "diphosphorus", "PH3": "phosphine", "PCL3": "phosphorus trichloride",
    "PF3": "phosphorus trifluoride", "PF5": "phosphorus pentafluoride", "P4O10": "phosphorus pentoxide",
    "BH3": "borane", "BF3": "boron trifluoride", "BCL3": "boron trichloride", "HBO2": "metaboric acid",
    "B2O2": "diboron dioxide", "B3O3F3": "trifluoroboroxine",
    "B3O3CL3": "trichloroboroxin", "H3B3O6": "trihydroxy boroxine",
    "SiH4": "silane", "SiH3CL": "chlorosilane", "SiH2CL2": "dichlorosilane", "SiHCL3": "trichlorosilane",
    "SiF4": "silicon tetrafluoride", "SiCL4": "silicon tetrachloride", "SiBr4": "silicon tetrabromide",
    "SiO": "silicon monoxide",
}

EXCLUDED = {
    "C7H8O,cresol": "mixture (o/m/p-cresol)", "Jet-A": "mixture (kerosene)", "Jet-A(g)": "mixture (kerosene)",
    "(HCOOH)2": "dimer", "(CH3COOH)2": "dimer",
    **{f"H{n}F{n}": "cluster (HF)n" for n in range(2, 8)},
    **{b: "carbon cluster" for b in ["C2", "C3", "C4", "C5"]},
    **{b: "cluster of B or Si" for b in ["B2", "Si2", "Si3", "Si2C", "SiC2", "Si2N"]},
    "NH4CL": "salt", "SiC": "carbide",
    **{b: "network solid (condensed records are polymeric)" for b in ["SiO2", "B2O3", "Si3N4", "Si2N2O"]},
    **{b: "carbene, carbyne, nitrene or other triplet/subvalent C or N species" for b in
       ["CH", "CH2", "CF", "CF2", "CCL", "CCL2", "CHCL", "C2H2,vinylidene", "C2O", "CCN", "CNC", "CNN",
        "NCN", "HCCN", "NH", "NF"]},
    **{b: "subvalent radical of B, Si or P" for b in
       ["BH", "BH2", "BF", "BF2", "BCL", "BCL2", "BCLF", "BO", "BO2", "BOF2", "BS", "BN", "B2O", "SiH",
        "SiH2", "SiH3", "SiF", "SiF2", "SiF3", "SiCL", "SiCL2", "SiCL3", "SiBr", "SiBr2", "SiBr3", "SiI",
        "SiI2", "SiN", "PH", "PF", "PF2", "PO", "PO2", "CP"]},
    "N2H2": "isomer not fixed (trans-, cis- or iso-diazene)", "N2F2": "isomer not fixed (cis or trans)",
}
KEPT_METAL = {"FeC5O5"}


# RDKit's valence model refuses hypervalent halogens (ClF3); these are read without the valence
# check (every other sanitization step is done), all their hydrogens written explicitly.
HYPERVALENT = {"CLF3"}


def read_smiles(name, smi):
    if name not in HYPERVALENT:
        return Chem.MolFromSmiles(smi)
    mol = Chem.MolFromSmiles(smi, sanitize=False)
    if mol is None:
        return None
    Chem.SanitizeMol(mol, Chem.SanitizeFlags.SANITIZE_ALL ^ Chem.SanitizeFlags.SANITIZE_PROPERTIES)
    for a in mol.GetAtoms():
        a.SetNoImplicit(True)
    mol.UpdatePropertyCache(strict=False)
    return mol


def composition_of(cell):
    out = {}
    for part in cell.split():
        el, n = part.split(":")
        out[el] = int(float(n))
    return out


def rdkit_composition(mol):
    out = {}
    for a in Chem.AddHs(mol).GetAtoms():
        out[a.GetSymbol()] = out.get(a.GetSymbol(), 0) + 1
    return out


def read_table(path):
    lines = [l.rstrip("\n").split("\t") for l in path.open(encoding="utf-8") if not l.startswith("#")]
    header = lines[0]
    return [dict(zip(header, r)) for r in lines[1:]]


def formula_key(formula):
    """Element counts of a formula as a sorted string ('ClHO' and 'HOCl' give one key)."""
    counts = collections.Counter()
    for el, n in re.findall(r"([A-Z][a-z]?)(\d*)", formula):
        counts[el] += int(n) if n else 1
    return " ".join(f"{el}{counts[el]}" for el in sorted(counts))


def identifier_indexes():
    """name -> set of CAS and Hill formula -> set of CAS over chemicals' identifier tables."""
    by_name = collections.defaultdict(set)
    by_formula = collections.defaultdict(set)
    formula_of = {}
    for fn in ID_TABLES:
        for line in (IDENTIFIERS / fn).open(encoding="utf-8"):
            v = line.rstrip("\n").split("\t")
            cas = v[1]
            if cas in formula_of:
                by_formula[formula_of[cas]].discard(cas)
            formula_of[cas] = formula_key(v[2])
            by_formula[formula_of[cas]].add(cas)
            for n in v[7:]:
                by_name[n.lower()].add(cas)
    return by_name, by_formula


def main():
    nasa_comp, nasa_bases = {}, []
    for r in read_table(NASA):
        if r["charge"] == "0" and r["base"] not in nasa_comp:
            nasa_comp[r["base"]] = composition_of(r["composition"])
            nasa_bases.append(r["base"])
    open_comp, open_cas = {}, {}
    for r in read_table(OPEN):
        open_comp.setdefault(r["base"], composition_of(r["composition"]))
        if open_cas.setdefault(r["base"], r["cas"]) != r["cas"]:
            sys.exit(f"{r['base']}: two CAS numbers in open_species.tsv")

    failures = []
    # Every neutral NASA base name is either given a structure or excluded, with a reason.
    for b in nasa_bases:
        els = set(nasa_comp[b])
        if b in STRUCTURES or b in EXCLUDED:
            continue
        if "D" in els or not els <= NONMETALS or sum(nasa_comp[b].values()) == 1:
            continue
        failures.append(f"{b}: neutral NASA base name neither given a structure nor excluded")
    for b in STRUCTURES:
        if b in EXCLUDED:
            failures.append(f"{b}: both given a structure and excluded")
        els = set(nasa_comp.get(b, {}))
        if not els <= NONMETALS and b not in KEPT_METAL:
            failures.append(f"{b}: metal compound not in KEPT_METAL")
    for b in open_comp:
        if b in OPEN_STRUCTURES and b in STRUCTURES:
            failures.append(f"{b}: in both STRUCTURES and OPEN_STRUCTURES")
        if b not in OPEN_STRUCTURES and b not in STRUCTURES:
            failures.append(f"{b}: open record without a structure")
    for b in LOOKUP:
        if b not in STRUCTURES:
            failures.append(f"{b}: LOOKUP name for a base without a structure")

    by_name, by_formula = identifier_indexes()
    entries = list(STRUCTURES.items()) + list(OPEN_STRUCTURES.items())
    out, notes = [], []
    n_cas = collections.Counter()
    for name, smi in entries:
        comp = nasa_comp.get(name) if name in nasa_comp else None
        if name in open_comp:
            if comp is not None and comp != open_comp[name]:
                failures.append(f"{name}: NASA and open compositions differ")
            comp = open_comp[name]
        if comp is None:
            failures.append(f"{name}: not a neutral base name of either table")
            continue
        mol = read_smiles(name, smi)
        if mol is None:
            failures.append(f"{name}: RDKit cannot read {smi}")
            continue
        got = rdkit_composition(mol)
        if got != comp:
            failures.append(f"{name}: {smi} gives {got}, the record has {comp}")
            continue
        ikey = Chem.MolToInchiKey(mol)
        formula = CalcMolFormula(mol)
        # CAS: the open record's; else the compound named in LOOKUP; else a formula held by one entry.
        cas, how = "", ""
        if name in open_cas:
            cas, how = open_cas[name], "open record"
        if name in LOOKUP:
            hits = by_name.get(LOOKUP[name], set())
            if len(hits) != 1:
                failures.append(f"{name}: LOOKUP name {LOOKUP[name]!r} names {len(hits)} entries {sorted(hits)}")
                continue
            (named,) = hits
            if cas and cas != named:
                failures.append(f"{name}: open record CAS {cas}, but {LOOKUP[name]!r} is {named}")
                continue
            cas, how = named, f"name {LOOKUP[name]!r}"
        elif not cas:
            hits = by_formula.get(formula_key(formula), set())
            if len(hits) == 1:
                (only,) = hits
                obj = search_chemical(only)
                if obj.InChI_key == ikey:
                    cas, how = only, f"formula {formula} (one entry)"
                else:
                    notes.append(f"{name}: the one {formula} entry ({only}, {obj.common_name}) is another species")
            else:
                notes.append(f"{name}: no CAS ({len(hits)} entries of formula {formula})")
        if cas:
            obj = search_chemical(cas)
            if obj.InChI_key != ikey:
                failures.append(f"{name}: {smi} has InChIKey {ikey}, chemicals' entry for {cas} "
                                f"({obj.common_name}, {obj.smiles}) has {obj.InChI_key}")
                continue
            n_cas[how.split()[0]] += 1
        out.append((name, smi, Chem.MolToSmiles(mol), formula, ikey, cas))
    if failures:
        sys.exit("structure check failed:\n" + "\n".join(failures))
    keys = collections.Counter(r[4] for r in out)
    shared = {k for k, n in keys.items() if n > 1}
    for k in sorted(shared):
        notes.append("same structure: " + ", ".join(r[0] for r in out if r[4] == k))
    with OUT.open("w") as f:
        f.write("# structures.tsv - written by scripts/gen_structures.py; do not edit by hand.\n")
        f.write("# SMILES assigned by hand to the base names of data/nasa_species.tsv (molecular species) and\n")
        f.write(f"#   data/open_species.tsv (all); each checked with RDKit {rdkit.__version__}: the formula from the\n")
        f.write("#   SMILES equals the record's composition. rdkit_smiles is RDKit's canonical SMILES.\n")
        f.write(f"# inchikey: RDKit's standard InChIKey. cas: where known, checked: chemicals {chemicals.__version__}'s identifier\n")
        f.write("#   database (PubChem-derived, public domain) has the same InChIKey for that CAS. Open records\n")
        f.write("#   carry their CAS; NASA records get it from a compound name or a formula that picks one entry.\n")
        f.write(f"# {len(out)} structures ({len(STRUCTURES)} NASA base names, {len(OPEN_STRUCTURES)} more open ones); "
                f"{sum(n_cas.values())} with a CAS.\n")
        f.write("name\tsmiles\trdkit_smiles\tformula\tinchikey\tcas\n")
        for row in out:
            f.write("\t".join(row) + "\n")
    for n in notes:
        print("note:", n)
    print(f"CAS from: {dict(n_cas)}")
    print(f"wrote {len(out)} structures to {OUT.relative_to(ROOT)}")


if __name__ == "__main__":
    main()
