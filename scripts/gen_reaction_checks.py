#!/usr/bin/env python3
"""Independent experimental checks for reaction enthalpies of fine-chemical reaction types.

Writes two test references (worker/engine/tests/reference/):

1. fine_chem_reactions.tsv: balanced reactions (hydrogenations, nitro reductions, amidations,
   acetylations, esterifications, ester hydrolyses, nitrations, sulfonations, oxidations, quenches,
   peroxide decompositions, chlorinations, Diels-Alder, condensations, decarboxylations,
   isomerisations, hydrations, alkylations) as reaction SMILES, with
     - the standard reaction enthalpy at 298.15 K, every species in its stable state at 298.15 K
       and 1 bar (solid / liquid / gas from tabulated melting and boiling points), and
     - the reaction enthalpy with every species as an ideal gas.
2. condensed_dhf.tsv: per-species ΔfH° of the stable condensed phase (liquid or crystal) and of
   the ideal gas, both from the CRC table, for calibrating vaporisation / sublimation estimates.

Reference values come ONLY from experimental tables inside the PyPI package `chemicals` that the
engine does not bundle (the engine bundles NASA/Cantera, ATcT 1.112 and ChemSep 8.32 values;
none of those is used here for any ΔfH°):
  CRC     'CRC Standard Thermodynamic Properties of Chemical Substances.tsv'
          (CRC Handbook of Chemistry and Physics, section 5; chemicals.heat_capacity.CRC_standard_data)
  WebBook 'Misc/webbook_constants.tsv' (NIST Chemistry WebBook, SRD 69; chemicals.miscdata.webbook_data),
          used only where CRC has no value for that species and phase.
Both are copyrighted compilations: they are used here as test references, never bundled in the
engine's data.

Melting / boiling points (for the stable state) come from chemicals.phase_change with an explicit
method order: CRC_ORG, CRC_INORG (CRC Handbook physical constants tables), WEBBOOK, then
OPEN_NTBKM, COMMON_CHEMISTRY, HEOS, YAWS, WIKIDATA. Estimates (JOBACK) are never used.
State rule: Tm > 298.15 K -> s; else Tb < 298.15 K -> g; else (Tm <= 298.15 K < Tb) -> l.
(Tb is the normal boiling point at 1 atm; species with Tm or Tb within BORDER_K of 298.15 K
are named in the output header.)

Structures: each species is given by CAS; its SMILES is the one chemicals' identifier database
(from PubChem) gives for that CAS, and the script asserts that RDKit's InChIKey of that SMILES
equals the database's InChIKey. Each reaction is asserted balanced in atoms (with implicit
hydrogens) and charge with RDKit.

Split: sha256 of the reaction id (or of the CAS for condensed_dhf.tsv); the first byte mod 3 == 0
is 'rule' (about 1/3), otherwise 'heldout'. Only the rule rows may be used to tune the engine's
uncertainty rules.

Usage (from the repository root; versions pinned in scripts/requirements-structures.txt):
  python3 -m venv .venv-checks
  .venv-checks/bin/pip install -r scripts/requirements-structures.txt
  .venv-checks/bin/python scripts/gen_reaction_checks.py
"""
import hashlib
import math
import pathlib
import sys

import chemicals
import pandas as pd
import rdkit
from chemicals import heat_capacity, miscdata, phase_change
from chemicals.identifiers import search_chemical
from rdkit import Chem, RDLogger
from rdkit.Chem import Descriptors

RDLogger.DisableLog("rdApp.*")
ROOT = pathlib.Path(__file__).resolve().parents[1]
REF = ROOT / "worker/engine/tests/reference"
T0 = 298.15

CRC = heat_capacity.CRC_standard_data
WEBBOOK = miscdata.webbook_data  # index: CAS as an integer without dashes
TM_METHODS = ["CRC_ORG", "CRC_INORG", "WEBBOOK", "OPEN_NTBKM", "COMMON_CHEMISTRY", "WIKIDATA"]
TB_METHODS = ["CRC_ORG", "CRC_INORG", "WEBBOOK", "HEOS", "COMMON_CHEMISTRY", "YAWS", "WIKIDATA"]
COLUMN = {"s": "Hfs", "l": "Hfl", "g": "Hfg"}

# Species by short key -> CAS number. Names are only for reading; identity is the CAS.
SPECIES = {
    "H2": "1333-74-0", "O2": "7782-44-7", "N2": "7727-37-9", "Cl2": "7782-50-5", "Br2": "7726-95-6",
    "H2O": "7732-18-5", "H2O2": "7722-84-1", "HCl": "7647-01-0", "NH3": "7664-41-7",
    "CO": "630-08-0", "CO2": "124-38-9", "SO2": "7446-09-5", "SO3": "7446-11-9",
    "H2SO4": "7664-93-9", "HNO3": "7697-37-2", "H3PO4": "7664-38-2", "H3PO3": "13598-36-2",
    "SOCl2": "7719-09-7", "SO2Cl2": "7791-25-5", "POCl3": "10025-87-3", "PCl3": "7719-12-2",
    "COCl2": "75-44-5", "NH2OH": "7803-49-8",
    # hydrocarbons
    "methane": "74-82-8", "ethane": "74-84-0", "ethylene": "74-85-1", "acetylene": "74-86-2",
    "propene": "115-07-1", "propane": "74-98-6", "cyclopropane": "75-19-4", "butane": "106-97-8",
    "isobutane": "75-28-5", "1-butene": "106-98-9", "trans-2-butene": "624-64-6",
    "isobutene": "115-11-7", "butadiene": "106-99-0", "1-hexene": "592-41-6", "hexane": "110-54-3",
    "cyclohexene": "110-83-8", "cyclohexane": "110-82-7", "cyclopentadiene": "542-92-7",
    "norbornene": "498-66-8", "vinylcyclohexene": "100-40-3", "1,4-cyclohexadiene": "628-41-1",
    "benzene": "71-43-2", "toluene": "108-88-3", "o-xylene": "95-47-6", "p-xylene": "106-42-3",
    "ethylbenzene": "100-41-4", "styrene": "100-42-5", "cumene": "98-82-8",
    "naphthalene": "91-20-3", "tetralin": "119-64-2", "biphenyl": "92-52-4",
    "trans-stilbene": "103-30-0", "cis-stilbene": "645-49-8", "bibenzyl": "103-29-7",
    # O compounds
    "methanol": "67-56-1", "ethanol": "64-17-5", "1-propanol": "71-23-8", "2-propanol": "67-63-0",
    "1-butanol": "71-36-3", "2-butanol": "78-92-2", "tert-butanol": "75-65-0",
    "allyl alcohol": "107-18-6", "ethylene glycol": "107-21-1", "propylene glycol": "57-55-6",
    "glycerol": "56-81-5", "benzyl alcohol": "100-51-6", "phenol": "108-95-2",
    "hydroquinone": "123-31-9", "p-benzoquinone": "106-51-4", "4-tert-butylphenol": "98-54-4",
    "bisphenol A": "80-05-7", "2-phenyl-2-propanol": "617-94-7", "furfuryl alcohol": "98-00-0",
    "formaldehyde": "50-00-0", "acetaldehyde": "75-07-0", "propanal": "123-38-6",
    "crotonaldehyde": "123-73-9", "benzaldehyde": "100-52-7", "furfural": "98-01-1",
    "acetone": "67-64-1", "2-butanone": "78-93-3", "acetophenone": "98-86-2",
    "benzophenone": "119-61-9", "benzhydrol": "91-01-0", "cyclohexanone": "108-94-1",
    "diacetone alcohol": "123-42-2", "mesityl oxide": "141-79-7", "benzalacetone": "122-57-6",
    "ketene": "463-51-4", "dimethyl ether": "115-10-6", "diethyl ether": "60-29-7",
    "anisole": "100-66-3", "ethylene oxide": "75-21-8", "propylene oxide": "75-56-9",
    "cyclohexene oxide": "286-20-4",
    "formic acid": "64-18-6", "acetic acid": "64-19-7", "chloroacetic acid": "79-11-8",
    "oxalic acid": "144-62-7", "malonic acid": "141-82-2", "succinic acid": "110-15-6",
    "maleic acid": "110-16-7", "fumaric acid": "110-17-8", "adipic acid": "124-04-9",
    "benzoic acid": "65-85-0", "phthalic acid": "88-99-3", "terephthalic acid": "100-21-0",
    "salicylic acid": "69-72-7", "4-hydroxybenzoic acid": "99-96-7", "cinnamic acid": "140-10-3",
    "acetic anhydride": "108-24-7", "succinic anhydride": "108-30-5", "maleic anhydride": "108-31-6",
    "phthalic anhydride": "85-44-9", "methyl formate": "107-31-3", "ethyl formate": "109-94-4",
    "methyl acetate": "79-20-9", "ethyl acetate": "141-78-6", "butyl acetate": "123-86-4",
    "methyl benzoate": "93-58-3", "phenyl acetate": "122-79-2", "aspirin": "50-78-2",
    "diethyl oxalate": "95-92-1", "diethyl carbonate": "105-58-8", "diphenyl carbonate": "102-09-0",
    "gamma-butyrolactone": "96-48-0", "caprolactone": "502-44-3",
    # peroxides
    "di-tert-butyl peroxide": "110-05-4", "tert-butyl hydroperoxide": "75-91-2",
    "cumene hydroperoxide": "80-15-9", "benzoyl peroxide": "94-36-0",
    # N compounds
    "methylamine": "74-89-5", "dimethylamine": "124-40-3", "ethylamine": "75-04-7",
    "propylamine": "107-10-8", "hexamethylenediamine": "124-09-4", "benzylamine": "100-46-9",
    "aniline": "62-53-3", "N,N-dimethylaniline": "121-69-7", "p-toluidine": "106-49-0",
    "4-chloroaniline": "106-47-8", "4-aminophenol": "123-30-8", "2-aminophenol": "95-55-6",
    "m-phenylenediamine": "108-45-2", "p-phenylenediamine": "106-50-3", "1-naphthylamine": "134-32-7",
    "3-aminobenzoic acid": "99-05-8", "anthranilic acid": "118-92-3", "glycine": "56-40-6",
    "6-aminohexanoic acid": "60-32-2", "hexamine": "100-97-0",
    "acetonitrile": "75-05-8", "propionitrile": "107-12-0", "acrylonitrile": "107-13-1",
    "adiponitrile": "111-69-3", "benzonitrile": "100-47-0", "HCN": "74-90-8",
    "acetone cyanohydrin": "75-86-5", "N-benzylideneaniline": "538-51-2",
    "cyclohexanone oxime": "100-64-1",
    "formamide": "75-12-7", "DMF": "68-12-2", "acetamide": "60-35-5", "N-methylacetamide": "79-16-3",
    "DMAc": "127-19-5", "paracetamol": "103-90-2", "acrylamide": "79-06-1", "benzamide": "55-21-0", "acetanilide": "103-84-4",
    "urea": "57-13-6", "phenylurea": "64-10-8", "urethane": "51-79-6", "oxamide": "471-46-5",
    "succinimide": "123-56-8", "caprolactam": "105-60-2", "diketopiperazine": "106-57-0",
    "nitromethane": "75-52-5", "methyl nitrate": "598-58-3", "nitroglycerin": "55-63-0",
    "nitrobenzene": "98-95-3", "4-nitrotoluene": "99-99-0", "1,3-dinitrobenzene": "99-65-0",
    "4-nitroaniline": "100-01-6", "4-nitrophenol": "100-02-7", "2-nitrophenol": "88-75-5",
    "4-chloronitrobenzene": "100-00-5", "1-nitronaphthalene": "86-57-7",
    "3-nitrobenzoic acid": "121-92-6",
    # S compounds
    "dimethyl sulfide": "75-18-3", "DMSO": "67-68-5", "dimethyl sulfone": "67-71-0",
    "ethanethiol": "75-08-1", "diethyl disulfide": "110-81-6", "dimethyl sulfate": "77-78-1",
    "diethyl sulfate": "64-67-5", "dimethyl sulfite": "616-42-2", "sulfanilic acid": "121-57-3",
    "metanilic acid": "121-47-1", "sulfanilamide": "63-74-1", "sulfacetamide": "144-80-9",
    "3-sulfolene": "77-79-2",
    # halogen compounds
    "chloromethane": "74-87-3", "dichloromethane": "75-09-2", "chloroform": "67-66-3",
    "chloroethane": "75-00-3", "1,2-dichloroethane": "107-06-2", "vinyl chloride": "75-01-4",
    "1-chlorobutane": "109-69-3", "tert-butyl chloride": "507-20-0", "1,2-dibromoethane": "106-93-4",
    "chlorobenzene": "108-90-7", "benzyl chloride": "100-44-7", "4-chlorophenol": "106-48-9",
    "acetyl chloride": "75-36-5", "benzoyl chloride": "98-88-4",
}

# (id, family, reactants, products); each side is a list of (coefficient, species key).
R = []


def rx(rid, family, left, right):
    R.append((rid, family, left, right))


# --- hydrogenations (C=C, C#C, arene, C=O, C#N) -------------------------------------------
rx("hyd-ethylene", "hydrogenation", [(1, "ethylene"), (1, "H2")], [(1, "ethane")])
rx("hyd-propene", "hydrogenation", [(1, "propene"), (1, "H2")], [(1, "propane")])
rx("hyd-acetylene", "hydrogenation", [(1, "acetylene"), (1, "H2")], [(1, "ethylene")])
rx("hyd-cyclohexene", "hydrogenation", [(1, "cyclohexene"), (1, "H2")], [(1, "cyclohexane")])
rx("hyd-1-hexene", "hydrogenation", [(1, "1-hexene"), (1, "H2")], [(1, "hexane")])
rx("hyd-styrene", "hydrogenation", [(1, "styrene"), (1, "H2")], [(1, "ethylbenzene")])
rx("hyd-stilbene", "hydrogenation", [(1, "trans-stilbene"), (1, "H2")], [(1, "bibenzyl")])
rx("hyd-maleic-acid", "hydrogenation", [(1, "maleic acid"), (1, "H2")], [(1, "succinic acid")])
rx("hyd-benzene", "hydrogenation", [(1, "benzene"), (3, "H2")], [(1, "cyclohexane")])
rx("hyd-naphthalene", "hydrogenation", [(1, "naphthalene"), (2, "H2")], [(1, "tetralin")])
rx("hyd-acetone", "hydrogenation", [(1, "acetone"), (1, "H2")], [(1, "2-propanol")])
rx("hyd-2-butanone", "hydrogenation", [(1, "2-butanone"), (1, "H2")], [(1, "2-butanol")])
rx("hyd-benzaldehyde", "hydrogenation", [(1, "benzaldehyde"), (1, "H2")], [(1, "benzyl alcohol")])
rx("hyd-acetaldehyde", "hydrogenation", [(1, "acetaldehyde"), (1, "H2")], [(1, "ethanol")])
rx("hyd-benzophenone", "hydrogenation", [(1, "benzophenone"), (1, "H2")], [(1, "benzhydrol")])
rx("hyd-furfural", "hydrogenation", [(1, "furfural"), (1, "H2")], [(1, "furfuryl alcohol")])
rx("hyd-crotonaldehyde", "hydrogenation", [(1, "crotonaldehyde"), (2, "H2")], [(1, "1-butanol")])
rx("hyd-benzoquinone", "hydrogenation", [(1, "p-benzoquinone"), (1, "H2")], [(1, "hydroquinone")])
rx("hyd-co-methanol", "hydrogenation", [(1, "CO"), (2, "H2")], [(1, "methanol")])
rx("hyd-acetophenone-ethylbenzene", "hydrogenation", [(1, "acetophenone"), (2, "H2")],
   [(1, "ethylbenzene"), (1, "H2O")])
rx("hyd-benzyl-alcohol-toluene", "hydrogenation", [(1, "benzyl alcohol"), (1, "H2")],
   [(1, "toluene"), (1, "H2O")])
rx("hyd-maleic-anhydride-gbl", "hydrogenation", [(1, "maleic anhydride"), (3, "H2")],
   [(1, "gamma-butyrolactone"), (1, "H2O")])
rx("hyd-acrylonitrile", "hydrogenation", [(1, "acrylonitrile"), (1, "H2")], [(1, "propionitrile")])
rx("hyd-acetonitrile", "hydrogenation", [(1, "acetonitrile"), (2, "H2")], [(1, "ethylamine")])
rx("hyd-propionitrile", "hydrogenation", [(1, "propionitrile"), (2, "H2")], [(1, "propylamine")])
rx("hyd-benzonitrile", "hydrogenation", [(1, "benzonitrile"), (2, "H2")], [(1, "benzylamine")])
rx("hyd-adiponitrile", "hydrogenation", [(1, "adiponitrile"), (4, "H2")], [(1, "hexamethylenediamine")])

# --- nitro-group reductions ------------------------------------------------------------------
rx("red-nitrobenzene", "nitro_reduction", [(1, "nitrobenzene"), (3, "H2")], [(1, "aniline"), (2, "H2O")])
rx("red-4-nitrotoluene", "nitro_reduction", [(1, "4-nitrotoluene"), (3, "H2")], [(1, "p-toluidine"), (2, "H2O")])
rx("red-1,3-dinitrobenzene", "nitro_reduction", [(1, "1,3-dinitrobenzene"), (6, "H2")],
   [(1, "m-phenylenediamine"), (4, "H2O")])
rx("red-4-nitroaniline", "nitro_reduction", [(1, "4-nitroaniline"), (3, "H2")],
   [(1, "p-phenylenediamine"), (2, "H2O")])
rx("red-4-nitrophenol", "nitro_reduction", [(1, "4-nitrophenol"), (3, "H2")], [(1, "4-aminophenol"), (2, "H2O")])
rx("red-2-nitrophenol", "nitro_reduction", [(1, "2-nitrophenol"), (3, "H2")], [(1, "2-aminophenol"), (2, "H2O")])
rx("red-4-chloronitrobenzene", "nitro_reduction", [(1, "4-chloronitrobenzene"), (3, "H2")],
   [(1, "4-chloroaniline"), (2, "H2O")])
rx("red-1-nitronaphthalene", "nitro_reduction", [(1, "1-nitronaphthalene"), (3, "H2")],
   [(1, "1-naphthylamine"), (2, "H2O")])
rx("red-3-nitrobenzoic-acid", "nitro_reduction", [(1, "3-nitrobenzoic acid"), (3, "H2")],
   [(1, "3-aminobenzoic acid"), (2, "H2O")])
rx("red-nitromethane", "nitro_reduction", [(1, "nitromethane"), (3, "H2")], [(1, "methylamine"), (2, "H2O")])

# --- nitrations (C- and O-nitration with nitric acid) ----------------------------------------
rx("nit-benzene", "nitration", [(1, "benzene"), (1, "HNO3")], [(1, "nitrobenzene"), (1, "H2O")])
rx("nit-toluene-4", "nitration", [(1, "toluene"), (1, "HNO3")], [(1, "4-nitrotoluene"), (1, "H2O")])
rx("nit-nitrobenzene", "nitration", [(1, "nitrobenzene"), (1, "HNO3")], [(1, "1,3-dinitrobenzene"), (1, "H2O")])
rx("nit-chlorobenzene", "nitration", [(1, "chlorobenzene"), (1, "HNO3")],
   [(1, "4-chloronitrobenzene"), (1, "H2O")])
rx("nit-naphthalene", "nitration", [(1, "naphthalene"), (1, "HNO3")], [(1, "1-nitronaphthalene"), (1, "H2O")])
rx("nit-phenol-4", "nitration", [(1, "phenol"), (1, "HNO3")], [(1, "4-nitrophenol"), (1, "H2O")])
rx("nit-phenol-2", "nitration", [(1, "phenol"), (1, "HNO3")], [(1, "2-nitrophenol"), (1, "H2O")])
rx("nit-benzoic-acid", "nitration", [(1, "benzoic acid"), (1, "HNO3")], [(1, "3-nitrobenzoic acid"), (1, "H2O")])
rx("nit-methane", "nitration", [(1, "methane"), (1, "HNO3")], [(1, "nitromethane"), (1, "H2O")])
rx("nit-methanol", "nitration", [(1, "methanol"), (1, "HNO3")], [(1, "methyl nitrate"), (1, "H2O")])
rx("nit-glycerol", "nitration", [(1, "glycerol"), (3, "HNO3")], [(1, "nitroglycerin"), (3, "H2O")])

# --- sulfonations and sulfations ---------------------------------------------------------------
rx("sul-aniline-para", "sulfonation", [(1, "aniline"), (1, "H2SO4")], [(1, "sulfanilic acid"), (1, "H2O")])
rx("sul-aniline-meta", "sulfonation", [(1, "aniline"), (1, "H2SO4")], [(1, "metanilic acid"), (1, "H2O")])
rx("sul-methanol-dms", "sulfonation", [(2, "methanol"), (1, "H2SO4")], [(1, "dimethyl sulfate"), (2, "H2O")])
rx("sul-ethanol-des", "sulfonation", [(2, "ethanol"), (1, "H2SO4")], [(1, "diethyl sulfate"), (2, "H2O")])
rx("sul-methanol-sulfite", "sulfonation", [(2, "methanol"), (1, "SOCl2")],
   [(1, "dimethyl sulfite"), (2, "HCl")])
rx("sul-so3-hydration", "sulfonation", [(1, "SO3"), (1, "H2O")], [(1, "H2SO4")])
rx("sul-butadiene-so2", "sulfonation", [(1, "butadiene"), (1, "SO2")], [(1, "3-sulfolene")])

# --- oxidations (O2, H2O2) ---------------------------------------------------------------------
rx("ox-methanol-formaldehyde", "oxidation", [(2, "methanol"), (1, "O2")], [(2, "formaldehyde"), (2, "H2O")])
rx("ox-ethanol-acetaldehyde", "oxidation", [(2, "ethanol"), (1, "O2")], [(2, "acetaldehyde"), (2, "H2O")])
rx("ox-ethanol-acetic-acid", "oxidation", [(1, "ethanol"), (1, "O2")], [(1, "acetic acid"), (1, "H2O")])
rx("ox-acetaldehyde-acetic-acid", "oxidation", [(2, "acetaldehyde"), (1, "O2")], [(2, "acetic acid")])
rx("ox-2-propanol-h2o2", "oxidation", [(1, "2-propanol"), (1, "H2O2")], [(1, "acetone"), (2, "H2O")])
rx("ox-2-butanol-h2o2", "oxidation", [(1, "2-butanol"), (1, "H2O2")], [(1, "2-butanone"), (2, "H2O")])
rx("ox-benzyl-alcohol-h2o2", "oxidation", [(1, "benzyl alcohol"), (1, "H2O2")],
   [(1, "benzaldehyde"), (2, "H2O")])
rx("ox-benzaldehyde-o2", "oxidation", [(2, "benzaldehyde"), (1, "O2")], [(2, "benzoic acid")])
rx("ox-toluene-o2", "oxidation", [(2, "toluene"), (3, "O2")], [(2, "benzoic acid"), (2, "H2O")])
rx("ox-p-xylene-o2", "oxidation", [(1, "p-xylene"), (3, "O2")], [(1, "terephthalic acid"), (2, "H2O")])
rx("ox-cyclohexanone-adipic", "oxidation", [(2, "cyclohexanone"), (3, "O2")], [(2, "adipic acid")])
rx("ox-hydroquinone-o2", "oxidation", [(2, "hydroquinone"), (1, "O2")], [(2, "p-benzoquinone"), (2, "H2O")])
rx("ox-dms-h2o2", "oxidation", [(1, "dimethyl sulfide"), (1, "H2O2")], [(1, "DMSO"), (1, "H2O")])
rx("ox-dmso-h2o2", "oxidation", [(1, "DMSO"), (1, "H2O2")], [(1, "dimethyl sulfone"), (1, "H2O")])
rx("ox-ethanethiol-o2", "oxidation", [(4, "ethanethiol"), (1, "O2")], [(2, "diethyl disulfide"), (2, "H2O")])
rx("ox-ethylene-epoxide", "oxidation", [(2, "ethylene"), (1, "O2")], [(2, "ethylene oxide")])
rx("ox-propene-h2o2", "oxidation", [(1, "propene"), (1, "H2O2")], [(1, "propylene oxide"), (1, "H2O")])
rx("ox-cyclohexene-h2o2", "oxidation", [(1, "cyclohexene"), (1, "H2O2")],
   [(1, "cyclohexene oxide"), (1, "H2O")])
rx("ox-baeyer-villiger", "oxidation", [(1, "cyclohexanone"), (1, "H2O2")], [(1, "caprolactone"), (1, "H2O")])
rx("ox-cumene-o2", "oxidation", [(1, "cumene"), (1, "O2")], [(1, "cumene hydroperoxide")])

# --- peroxide decompositions -------------------------------------------------------------------
rx("per-h2o2", "peroxide_decomposition", [(2, "H2O2")], [(2, "H2O"), (1, "O2")])
rx("per-dtbp", "peroxide_decomposition", [(1, "di-tert-butyl peroxide")], [(2, "acetone"), (1, "ethane")])
rx("per-tbhp", "peroxide_decomposition", [(2, "tert-butyl hydroperoxide")], [(2, "tert-butanol"), (1, "O2")])
rx("per-chp-hock", "peroxide_decomposition", [(1, "cumene hydroperoxide")], [(1, "phenol"), (1, "acetone")])
rx("per-chp-o2", "peroxide_decomposition", [(2, "cumene hydroperoxide")],
   [(2, "2-phenyl-2-propanol"), (1, "O2")])
rx("per-benzoyl-peroxide", "peroxide_decomposition", [(1, "benzoyl peroxide")], [(1, "biphenyl"), (2, "CO2")])

# --- amidations (amine + acid / acid chloride / anhydride / ester / CO2 / phosgene) -----------
rx("ami-nh3-acetic-acid", "amidation", [(1, "NH3"), (1, "acetic acid")], [(1, "acetamide"), (1, "H2O")])
rx("ami-nh3-acetyl-chloride", "amidation", [(1, "NH3"), (1, "acetyl chloride")], [(1, "acetamide"), (1, "HCl")])
rx("ami-nh3-ethyl-acetate", "amidation", [(1, "NH3"), (1, "ethyl acetate")], [(1, "acetamide"), (1, "ethanol")])
rx("ami-nh3-benzoyl-chloride", "amidation", [(1, "NH3"), (1, "benzoyl chloride")],
   [(1, "benzamide"), (1, "HCl")])
rx("ami-nh3-methyl-benzoate", "amidation", [(1, "NH3"), (1, "methyl benzoate")],
   [(1, "benzamide"), (1, "methanol")])
rx("ami-nh3-benzoic-acid", "amidation", [(1, "NH3"), (1, "benzoic acid")], [(1, "benzamide"), (1, "H2O")])
rx("ami-nh3-formic-acid", "amidation", [(1, "NH3"), (1, "formic acid")], [(1, "formamide"), (1, "H2O")])
rx("ami-nh3-methyl-formate", "amidation", [(1, "NH3"), (1, "methyl formate")],
   [(1, "formamide"), (1, "methanol")])
rx("ami-aniline-acetyl-chloride", "amidation", [(1, "aniline"), (1, "acetyl chloride")],
   [(1, "acetanilide"), (1, "HCl")])
rx("ami-aniline-acetic-acid", "amidation", [(1, "aniline"), (1, "acetic acid")], [(1, "acetanilide"), (1, "H2O")])
rx("ami-methylamine-acetic-acid", "amidation", [(1, "methylamine"), (1, "acetic acid")],
   [(1, "N-methylacetamide"), (1, "H2O")])
rx("ami-dimethylamine-acetyl-chloride", "amidation", [(1, "dimethylamine"), (1, "acetyl chloride")],
   [(1, "DMAc"), (1, "HCl")])
rx("ami-dimethylamine-formic-acid", "amidation", [(1, "dimethylamine"), (1, "formic acid")],
   [(1, "DMF"), (1, "H2O")])
rx("ami-urea-co2", "amidation", [(2, "NH3"), (1, "CO2")], [(1, "urea"), (1, "H2O")])
rx("ami-urea-phosgene", "amidation", [(2, "NH3"), (1, "COCl2")], [(1, "urea"), (2, "HCl")])
rx("ami-phenylurea", "amidation", [(1, "aniline"), (1, "urea")], [(1, "phenylurea"), (1, "NH3")])
rx("ami-urethane", "amidation", [(1, "NH3"), (1, "diethyl carbonate")], [(1, "urethane"), (1, "ethanol")])
rx("ami-oxamide", "amidation", [(2, "NH3"), (1, "diethyl oxalate")], [(1, "oxamide"), (2, "ethanol")])
rx("ami-succinimide", "amidation", [(1, "NH3"), (1, "succinic anhydride")], [(1, "succinimide"), (1, "H2O")])
rx("ami-caprolactam-cyclisation", "amidation", [(1, "6-aminohexanoic acid")], [(1, "caprolactam"), (1, "H2O")])
rx("ami-glycine-dkp", "amidation", [(2, "glycine")], [(1, "diketopiperazine"), (2, "H2O")])
rx("ami-acrylonitrile-hydration", "amidation", [(1, "acrylonitrile"), (1, "H2O")], [(1, "acrylamide")])
rx("ami-acetonitrile-hydration", "amidation", [(1, "acetonitrile"), (1, "H2O")], [(1, "acetamide")])
rx("ami-benzonitrile-hydration", "amidation", [(1, "benzonitrile"), (1, "H2O")], [(1, "benzamide")])

# --- acetylations (acetic anhydride, acetyl chloride, ketene) ----------------------------------
rx("ace-aniline-ac2o", "acetylation", [(1, "aniline"), (1, "acetic anhydride")],
   [(1, "acetanilide"), (1, "acetic acid")])
rx("ace-nh3-ac2o", "acetylation", [(1, "NH3"), (1, "acetic anhydride")], [(1, "acetamide"), (1, "acetic acid")])
rx("ace-methylamine-ac2o", "acetylation", [(1, "methylamine"), (1, "acetic anhydride")],
   [(1, "N-methylacetamide"), (1, "acetic acid")])
rx("ace-aminophenol-ac2o", "acetylation", [(1, "4-aminophenol"), (1, "acetic anhydride")],
   [(1, "paracetamol"), (1, "acetic acid")])
rx("ace-sulfanilamide-ac2o", "acetylation", [(1, "sulfanilamide"), (1, "acetic anhydride")],
   [(1, "sulfacetamide"), (1, "acetic acid")])
rx("ace-salicylic-acid-ac2o", "acetylation", [(1, "salicylic acid"), (1, "acetic anhydride")],
   [(1, "aspirin"), (1, "acetic acid")])
rx("ace-phenol-ac2o", "acetylation", [(1, "phenol"), (1, "acetic anhydride")],
   [(1, "phenyl acetate"), (1, "acetic acid")])
rx("ace-ethanol-ac2o", "acetylation", [(1, "ethanol"), (1, "acetic anhydride")],
   [(1, "ethyl acetate"), (1, "acetic acid")])
rx("ace-methanol-acetyl-chloride", "acetylation", [(1, "methanol"), (1, "acetyl chloride")],
   [(1, "methyl acetate"), (1, "HCl")])
rx("ace-ethanol-ketene", "acetylation", [(1, "ethanol"), (1, "ketene")], [(1, "ethyl acetate")])
rx("ace-aniline-ketene", "acetylation", [(1, "aniline"), (1, "ketene")], [(1, "acetanilide")])
rx("ace-friedel-crafts-acetyl-chloride", "acetylation", [(1, "benzene"), (1, "acetyl chloride")],
   [(1, "acetophenone"), (1, "HCl")])
rx("ace-friedel-crafts-ac2o", "acetylation", [(1, "benzene"), (1, "acetic anhydride")],
   [(1, "acetophenone"), (1, "acetic acid")])

# --- esterifications --------------------------------------------------------------------------
rx("est-acetic-methanol", "esterification", [(1, "acetic acid"), (1, "methanol")],
   [(1, "methyl acetate"), (1, "H2O")])
rx("est-acetic-ethanol", "esterification", [(1, "acetic acid"), (1, "ethanol")],
   [(1, "ethyl acetate"), (1, "H2O")])
rx("est-acetic-butanol", "esterification", [(1, "acetic acid"), (1, "1-butanol")],
   [(1, "butyl acetate"), (1, "H2O")])
rx("est-benzoic-methanol", "esterification", [(1, "benzoic acid"), (1, "methanol")],
   [(1, "methyl benzoate"), (1, "H2O")])
rx("est-formic-ethanol", "esterification", [(1, "formic acid"), (1, "ethanol")],
   [(1, "ethyl formate"), (1, "H2O")])
rx("est-oxalic-ethanol", "esterification", [(1, "oxalic acid"), (2, "ethanol")],
   [(1, "diethyl oxalate"), (2, "H2O")])
rx("est-benzoyl-chloride-methanol", "esterification", [(1, "benzoyl chloride"), (1, "methanol")],
   [(1, "methyl benzoate"), (1, "HCl")])
rx("est-phosgene-phenol", "esterification", [(2, "phenol"), (1, "COCl2")],
   [(1, "diphenyl carbonate"), (2, "HCl")])
rx("est-phosgene-ethanol", "esterification", [(2, "ethanol"), (1, "COCl2")],
   [(1, "diethyl carbonate"), (2, "HCl")])

# --- ester hydrolyses --------------------------------------------------------------------------
rx("hyl-methyl-formate", "ester_hydrolysis", [(1, "methyl formate"), (1, "H2O")],
   [(1, "formic acid"), (1, "methanol")])
rx("hyl-phenyl-acetate", "ester_hydrolysis", [(1, "phenyl acetate"), (1, "H2O")],
   [(1, "acetic acid"), (1, "phenol")])
rx("hyl-aspirin", "ester_hydrolysis", [(1, "aspirin"), (1, "H2O")], [(1, "salicylic acid"), (1, "acetic acid")])
rx("hyl-diethyl-carbonate", "ester_hydrolysis", [(1, "diethyl carbonate"), (1, "H2O")],
   [(2, "ethanol"), (1, "CO2")])
rx("hyl-dimethyl-sulfate", "ester_hydrolysis", [(1, "dimethyl sulfate"), (2, "H2O")],
   [(2, "methanol"), (1, "H2SO4")])

# --- quenches: hydrolysis of reagents (molecular species only, no salts) ---------------------
rx("qu-acetic-anhydride", "quench", [(1, "acetic anhydride"), (1, "H2O")], [(2, "acetic acid")])
rx("qu-acetyl-chloride", "quench", [(1, "acetyl chloride"), (1, "H2O")], [(1, "acetic acid"), (1, "HCl")])
rx("qu-benzoyl-chloride", "quench", [(1, "benzoyl chloride"), (1, "H2O")], [(1, "benzoic acid"), (1, "HCl")])
rx("qu-phosgene", "quench", [(1, "COCl2"), (1, "H2O")], [(1, "CO2"), (2, "HCl")])
rx("qu-thionyl-chloride", "quench", [(1, "SOCl2"), (1, "H2O")], [(1, "SO2"), (2, "HCl")])
rx("qu-sulfuryl-chloride", "quench", [(1, "SO2Cl2"), (2, "H2O")], [(1, "H2SO4"), (2, "HCl")])
rx("qu-pocl3", "quench", [(1, "POCl3"), (3, "H2O")], [(1, "H3PO4"), (3, "HCl")])
rx("qu-pcl3", "quench", [(1, "PCl3"), (3, "H2O")], [(1, "H3PO3"), (3, "HCl")])
rx("qu-succinic-anhydride", "quench", [(1, "succinic anhydride"), (1, "H2O")], [(1, "succinic acid")])
rx("qu-maleic-anhydride", "quench", [(1, "maleic anhydride"), (1, "H2O")], [(1, "maleic acid")])
rx("qu-phthalic-anhydride", "quench", [(1, "phthalic anhydride"), (1, "H2O")], [(1, "phthalic acid")])

# --- chlorinations and other halogenations ---------------------------------------------------
rx("chl-methane", "chlorination", [(1, "methane"), (1, "Cl2")], [(1, "chloromethane"), (1, "HCl")])
rx("chl-chloromethane", "chlorination", [(1, "chloromethane"), (1, "Cl2")], [(1, "dichloromethane"), (1, "HCl")])
rx("chl-dichloromethane", "chlorination", [(1, "dichloromethane"), (1, "Cl2")], [(1, "chloroform"), (1, "HCl")])
rx("chl-benzene", "chlorination", [(1, "benzene"), (1, "Cl2")], [(1, "chlorobenzene"), (1, "HCl")])
rx("chl-toluene-side-chain", "chlorination", [(1, "toluene"), (1, "Cl2")], [(1, "benzyl chloride"), (1, "HCl")])
rx("chl-phenol", "chlorination", [(1, "phenol"), (1, "Cl2")], [(1, "4-chlorophenol"), (1, "HCl")])
rx("chl-acetic-acid", "chlorination", [(1, "acetic acid"), (1, "Cl2")], [(1, "chloroacetic acid"), (1, "HCl")])
rx("chl-ethylene", "chlorination", [(1, "ethylene"), (1, "Cl2")], [(1, "1,2-dichloroethane")])
rx("chl-ethylene-hcl", "chlorination", [(1, "ethylene"), (1, "HCl")], [(1, "chloroethane")])
rx("chl-edc-cracking", "chlorination", [(1, "1,2-dichloroethane")], [(1, "vinyl chloride"), (1, "HCl")])
rx("chl-tert-butanol-hcl", "chlorination", [(1, "tert-butanol"), (1, "HCl")],
   [(1, "tert-butyl chloride"), (1, "H2O")])
rx("chl-butanol-hcl", "chlorination", [(1, "1-butanol"), (1, "HCl")], [(1, "1-chlorobutane"), (1, "H2O")])
rx("chl-benzyl-alcohol-hcl", "chlorination", [(1, "benzyl alcohol"), (1, "HCl")],
   [(1, "benzyl chloride"), (1, "H2O")])
rx("chl-ethanol-socl2", "chlorination", [(1, "ethanol"), (1, "SOCl2")],
   [(1, "chloroethane"), (1, "SO2"), (1, "HCl")])
rx("chl-acetic-acid-socl2", "chlorination", [(1, "acetic acid"), (1, "SOCl2")],
   [(1, "acetyl chloride"), (1, "SO2"), (1, "HCl")])
rx("chl-benzoic-acid-socl2", "chlorination", [(1, "benzoic acid"), (1, "SOCl2")],
   [(1, "benzoyl chloride"), (1, "SO2"), (1, "HCl")])
rx("chl-benzene-so2cl2", "chlorination", [(1, "benzene"), (1, "SO2Cl2")],
   [(1, "chlorobenzene"), (1, "SO2"), (1, "HCl")])
rx("chl-phosgene", "chlorination", [(1, "CO"), (1, "Cl2")], [(1, "COCl2")])
rx("bro-ethylene", "chlorination", [(1, "ethylene"), (1, "Br2")], [(1, "1,2-dibromoethane")])

# --- Diels-Alder and related cycloadditions --------------------------------------------------
rx("da-butadiene-ethylene", "diels_alder", [(1, "butadiene"), (1, "ethylene")], [(1, "cyclohexene")])
rx("da-butadiene-dimer", "diels_alder", [(2, "butadiene")], [(1, "vinylcyclohexene")])
rx("da-cyclopentadiene-ethylene", "diels_alder", [(1, "cyclopentadiene"), (1, "ethylene")], [(1, "norbornene")])
rx("da-butadiene-acetylene", "diels_alder", [(1, "butadiene"), (1, "acetylene")], [(1, "1,4-cyclohexadiene")])

# --- condensations -----------------------------------------------------------------------------
rx("con-ethanol-ether", "condensation", [(2, "ethanol")], [(1, "diethyl ether"), (1, "H2O")])
rx("con-methanol-ether", "condensation", [(2, "methanol")], [(1, "dimethyl ether"), (1, "H2O")])
rx("con-acetic-anhydride", "condensation", [(2, "acetic acid")], [(1, "acetic anhydride"), (1, "H2O")])
rx("con-aldol-acetone", "condensation", [(2, "acetone")], [(1, "diacetone alcohol")])
rx("con-dehydration-daa", "condensation", [(1, "diacetone alcohol")], [(1, "mesityl oxide"), (1, "H2O")])
rx("con-aldol-acetaldehyde", "condensation", [(2, "acetaldehyde")], [(1, "crotonaldehyde"), (1, "H2O")])
rx("con-claisen-schmidt", "condensation", [(1, "benzaldehyde"), (1, "acetone")],
   [(1, "benzalacetone"), (1, "H2O")])
rx("con-bisphenol-a", "condensation", [(2, "phenol"), (1, "acetone")], [(1, "bisphenol A"), (1, "H2O")])
rx("con-hexamine", "condensation", [(6, "formaldehyde"), (4, "NH3")], [(1, "hexamine"), (6, "H2O")])
rx("con-imine", "condensation", [(1, "benzaldehyde"), (1, "aniline")], [(1, "N-benzylideneaniline"), (1, "H2O")])
rx("con-oxime", "condensation", [(1, "cyclohexanone"), (1, "NH2OH")], [(1, "cyclohexanone oxime"), (1, "H2O")])
rx("con-cyanohydrin", "condensation", [(1, "acetone"), (1, "HCN")], [(1, "acetone cyanohydrin")])
rx("con-anisole", "condensation", [(1, "phenol"), (1, "methanol")], [(1, "anisole"), (1, "H2O")])
rx("con-dimethylaniline", "condensation", [(1, "aniline"), (2, "methanol")],
   [(1, "N,N-dimethylaniline"), (2, "H2O")])
rx("con-methylamine", "condensation", [(1, "NH3"), (1, "methanol")], [(1, "methylamine"), (1, "H2O")])

# --- alkylations (Friedel-Crafts) --------------------------------------------------------------
rx("alk-benzene-ethylene", "alkylation", [(1, "benzene"), (1, "ethylene")], [(1, "ethylbenzene")])
rx("alk-benzene-propene", "alkylation", [(1, "benzene"), (1, "propene")], [(1, "cumene")])
rx("alk-phenol-isobutene", "alkylation", [(1, "phenol"), (1, "isobutene")], [(1, "4-tert-butylphenol")])

# --- decarboxylations --------------------------------------------------------------------------
rx("dec-malonic-acid", "decarboxylation", [(1, "malonic acid")], [(1, "acetic acid"), (1, "CO2")])
rx("dec-oxalic-acid", "decarboxylation", [(1, "oxalic acid")], [(1, "formic acid"), (1, "CO2")])
rx("dec-salicylic-acid", "decarboxylation", [(1, "salicylic acid")], [(1, "phenol"), (1, "CO2")])
rx("dec-4-hydroxybenzoic-acid", "decarboxylation", [(1, "4-hydroxybenzoic acid")], [(1, "phenol"), (1, "CO2")])
rx("dec-anthranilic-acid", "decarboxylation", [(1, "anthranilic acid")], [(1, "aniline"), (1, "CO2")])
rx("dec-cinnamic-acid", "decarboxylation", [(1, "cinnamic acid")], [(1, "styrene"), (1, "CO2")])
rx("dec-benzoic-acid", "decarboxylation", [(1, "benzoic acid")], [(1, "benzene"), (1, "CO2")])
rx("dec-phthalic-acid", "decarboxylation", [(1, "phthalic acid")], [(1, "benzoic acid"), (1, "CO2")])

# --- isomerisations ----------------------------------------------------------------------------
rx("iso-butane", "isomerisation", [(1, "butane")], [(1, "isobutane")])
rx("iso-1-butene", "isomerisation", [(1, "1-butene")], [(1, "trans-2-butene")])
rx("iso-maleic-fumaric", "isomerisation", [(1, "maleic acid")], [(1, "fumaric acid")])
rx("iso-stilbene", "isomerisation", [(1, "cis-stilbene")], [(1, "trans-stilbene")])
rx("iso-xylene", "isomerisation", [(1, "o-xylene")], [(1, "p-xylene")])
rx("iso-allyl-alcohol", "isomerisation", [(1, "allyl alcohol")], [(1, "propanal")])
rx("iso-propylene-oxide", "isomerisation", [(1, "propylene oxide")], [(1, "acetone")])
rx("iso-ethylene-oxide", "isomerisation", [(1, "ethylene oxide")], [(1, "acetaldehyde")])
rx("iso-cyclopropane", "isomerisation", [(1, "cyclopropane")], [(1, "propene")])
rx("iso-beckmann", "isomerisation", [(1, "cyclohexanone oxime")], [(1, "caprolactam")])
rx("iso-cyclohexene-oxide", "isomerisation", [(1, "cyclohexene oxide")], [(1, "cyclohexanone")])
rx("iso-methyl-formate", "isomerisation", [(1, "methyl formate")], [(1, "acetic acid")])

# --- hydrations --------------------------------------------------------------------------------
rx("hydr-ethylene", "hydration", [(1, "ethylene"), (1, "H2O")], [(1, "ethanol")])
rx("hydr-propene", "hydration", [(1, "propene"), (1, "H2O")], [(1, "2-propanol")])
rx("hydr-isobutene", "hydration", [(1, "isobutene"), (1, "H2O")], [(1, "tert-butanol")])
rx("hydr-ethylene-oxide", "hydration", [(1, "ethylene oxide"), (1, "H2O")], [(1, "ethylene glycol")])
rx("hydr-propylene-oxide", "hydration", [(1, "propylene oxide"), (1, "H2O")], [(1, "propylene glycol")])
rx("hydr-ketene", "hydration", [(1, "ketene"), (1, "H2O")], [(1, "acetic acid")])
rx("hydr-acetylene", "hydration", [(1, "acetylene"), (1, "H2O")], [(1, "acetaldehyde")])

# Species whose only values (WebBook constants; CRC has none) fail a consistency check; every
# reaction containing one is dropped and the reason is written to the header.
EXCLUDE = {
    "diacetone alcohol": "WebBook dHf(l) -592.8 and dHf(g) -494.8 imply dvapH(298) = 98 kJ/mol, about twice a "
                         "plausible value; the acetone aldol would come out -96 kJ/mol. CRC has no value",
    "ethyl formate": "WebBook dHf(l) -403.3 is ~16 kJ/mol above CRC methyl formate (-386.1) plus CRC's methyl->ethyl "
                     "ester increment (acetates: -33.4); formic acid + ethanol would come out +13.5 kJ/mol. CRC has no value",
}
# Condensed-phase rows whose implied dvapH / dsubH (gas - condensed) lies outside this window (kJ/mol)
# are left out of condensed_dhf.tsv as inconsistent (sign errors in the source) and listed in its header.
PHASE_CHANGE_WINDOW = (10.0, 300.0)

# A species whose Tm or Tb lies within BORDER_K of 298.15 K is named in the header (its state
# could flip with the source of Tm/Tb or with 1 atm vs 1 bar).
BORDER_K = 1.5


def cas_int(cas):
    return int(cas.replace("-", ""))


def lookup(df, key, col):
    try:
        v = df.loc[key, col]
    except KeyError:
        return None
    if isinstance(v, pd.Series):
        vals = [x for x in v if not pd.isna(x)]
        if len({float(x) for x in vals}) > 1:
            raise SystemExit(f"conflicting duplicate rows for {key} {col}: {vals}")
        v = vals[0] if vals else None
    return None if v is None or pd.isna(v) else float(v)


def dhf(cas, phase):
    """(kJ/mol rounded to 0.01 as written, table) for the phase, CRC first, then WebBook constants;
    (None, None) if neither. Reaction sums use the rounded values, so species_sources adds up exactly."""
    v = lookup(CRC, cas, COLUMN[phase])
    if v is not None:
        return round(v / 1000.0, 2), "CRC"
    v = lookup(WEBBOOK, cas_int(cas), COLUMN[phase])
    if v is not None:
        return round(v / 1000.0, 2), "WebBook"
    return None, None


def first_point(cas, fn, methods_fn, order):
    avail = set(methods_fn(cas))
    for m in order:
        if m in avail:
            v = fn(cas, method=m)
            if v is not None and not (isinstance(v, float) and math.isnan(v)):
                return float(v), m
    return None, None


def state_of(cas):
    tm, tm_src = first_point(cas, phase_change.Tm, phase_change.Tm_methods, TM_METHODS)
    tb, tb_src = first_point(cas, phase_change.Tb, phase_change.Tb_methods, TB_METHODS)
    if tm is not None and tm > T0:
        st = "s"
    elif tb is not None and tb < T0:
        st = "g"
    elif tm is not None and tb is not None:
        st = "l"
    else:
        st = None
    return st, tm, tm_src, tb, tb_src


def identity(cas):
    """SMILES from chemicals' identifier DB; asserts RDKit InChIKey == the DB's InChIKey."""
    meta = search_chemical(cas)
    if meta.CASs != cas:
        raise SystemExit(f"{cas}: DB returned {meta.CASs}")
    mol = Chem.MolFromSmiles(meta.smiles)
    if mol is None:
        raise SystemExit(f"{cas}: RDKit cannot read {meta.smiles}")
    key = Chem.MolToInchiKey(mol)
    if key != meta.InChI_key:
        raise SystemExit(f"{cas}: InChIKey {key} != DB {meta.InChI_key} for {meta.smiles}")
    return meta.smiles, meta.common_name, mol


def composition(mol):
    comp = {}
    for a in Chem.AddHs(mol).GetAtoms():
        comp[a.GetSymbol()] = comp.get(a.GetSymbol(), 0) + 1
    return comp, sum(a.GetFormalCharge() for a in mol.GetAtoms())


def split_of(key):
    return "rule" if hashlib.sha256(key.encode()).digest()[0] % 3 == 0 else "heldout"


def fmt(x):
    return f"{x:.2f}"


def build_species(keys):
    info = {}
    for k in sorted(keys):
        cas = SPECIES[k]
        smi, name, mol = identity(cas)
        st, tm, tm_src, tb, tb_src = state_of(cas)
        info[k] = dict(cas=cas, smiles=smi, name=name, mol=mol, state=st, tm=tm, tm_src=tm_src,
                       tb=tb, tb_src=tb_src, std=dhf(cas, st) if st else (None, None), gas=dhf(cas, "g"))
    return info


def reactions():
    used = {k for _, _, l, r in R for _, k in l + r}
    missing = sorted(k for k in used if k not in SPECIES)
    dropped = []
    valid = []
    for rid, fam, left, right in R:
        miss = [k for _, k in left + right if k not in SPECIES]
        bad = sorted({k for _, k in left + right if k in EXCLUDE})
        if miss:
            dropped.append((rid, f"no CAS-identified species with data for {', '.join(miss)}"))
        elif bad:
            dropped.append((rid, "; ".join(f"{k} ({SPECIES[k]}): {EXCLUDE[k]}" for k in bad)))
        else:
            valid.append((rid, fam, left, right))
    info = build_species({k for _, _, l, r in valid for _, k in l + r})
    rows = []
    for rid, fam, left, right in valid:
        sides = []
        tot = {}
        for sign, side in ((-1, left), (1, right)):
            for n, k in side:
                comp, charge = composition(info[k]["mol"])
                for el, c in comp.items():
                    tot[el] = tot.get(el, 0) + sign * n * c
                tot["charge"] = tot.get("charge", 0) + sign * n * charge
        if any(tot.values()):
            raise SystemExit(f"{rid} not balanced: {tot}")
        undetermined = [k for _, k in left + right if info[k]["state"] is None]
        if undetermined:
            dropped.append((rid, f"stable state unknown (no Tm/Tb) for {', '.join(undetermined)}"))
            continue
        smi = ">>".join(".".join(info[k]["smiles"] for n, k in side for _ in range(n)) for side in (left, right))
        states = ">>".join(".".join(info[k]["state"] for n, k in side for _ in range(n)) for side in (left, right))
        std = gas = 0.0
        for sign, side in ((-1, left), (1, right)):
            for n, k in side:
                s = info[k]["std"][0]
                g = info[k]["gas"][0]
                std = None if std is None or s is None else std + sign * n * s
                gas = None if gas is None or g is None else gas + sign * n * g
        if std is None and gas is None:
            lack = sorted({k for _, k in left + right if info[k]["std"][0] is None or info[k]["gas"][0] is None})
            dropped.append((rid, f"no standard-state or gas value for {', '.join(lack)}"))
            continue
        src = []
        seen = set()
        for _, k in left + right:
            if k in seen:
                continue
            seen.add(k)
            d = info[k]
            (sv, st_tab), (gv, g_tab) = d["std"], d["gas"]
            src.append(f"{d['smiles']}={fmt(sv)}({d['state']},{st_tab})" if sv is not None
                       else f"{d['smiles']}=NA({d['state']})")
            if d["state"] != "g":
                src.append(f"{d['smiles']}={fmt(gv)}(g,{g_tab})" if gv is not None else f"{d['smiles']}=NA(g)")
        rows.append(dict(id=rid, family=fam, smiles=smi, states=states,
                         std="" if std is None else fmt(std), gas="" if gas is None else fmt(gas),
                         split=split_of(rid), sources=";".join(src), keys=[k for _, k in left + right]))
    return rows, dropped, info, missing


def write_reactions(rows, dropped, info):
    path = REF / "fine_chem_reactions.tsv"
    tables_used = sorted({t for d in info.values() for t in (d["std"][1], d["gas"][1]) if t})
    with path.open("w") as out:
        w = out.write
        w("# fine_chem_reactions.tsv - written by scripts/gen_reaction_checks.py; do not edit by hand.\n")
        w(f"# Python packages: chemicals {chemicals.__version__}, rdkit {rdkit.__version__}, pandas {pd.__version__} "
          "(pins: scripts/requirements-structures.txt).\n")
        w("# Reference dHf(298.15 K) values (experimental tables inside chemicals, NOT the engine's sources):\n")
        w("#   CRC     = CRC Handbook of Chemistry and Physics, 'Standard Thermodynamic Properties of Chemical\n")
        w("#             Substances' (chemicals: Heat Capacity/CRC Standard Thermodynamic Properties of Chemical Substances.tsv)\n")
        w("#   WebBook = NIST Chemistry WebBook (SRD 69) constants (chemicals: Misc/webbook_constants.tsv), only where CRC\n")
        w("#             has no value for that species and phase.\n")
        w("#   Both are copyrighted compilations, used as test references only (not bundled). No ATcT, ChemSep, NASA/Cantera,\n")
        w("#   Yaws, TRC or estimated value is used for any species.\n")
        w("# States: stable state at 298.15 K, 1 bar from melting/boiling points via chemicals.phase_change, methods in order\n")
        w(f"#   Tm: {', '.join(TM_METHODS)}; Tb: {', '.join(TB_METHODS)} (CRC_ORG/CRC_INORG = CRC Handbook physical\n")
        w("#   constants tables). s if Tm > 298.15 K; g if Tb < 298.15 K; else l.\n")
        w("# SMILES: chemicals' identifier database (PubChem) by CAS, RDKit InChIKey == database InChIKey; a species is\n")
        w("#   repeated for a coefficient > 1. Reactions are asserted balanced in atoms and charge with RDKit.\n")
        w("# delta_h_standard_kj_per_mol: sum nu dHf(products) - sum nu dHf(reactants), each species in its standard state\n")
        w("#   (states column); empty if any species lacks a value in that state. delta_h_gas_kj_per_mol: all species ideal\n")
        w("#   gas; empty if any gas value is missing. kJ/mol of reaction as written, 298.15 K.\n")
        w("# split: sha256(id) first byte mod 3 == 0 -> rule (the only rows the uncertainty rules may be tuned on), else heldout.\n")
        w("# species_sources: items smiles=value(state,table) joined by ';' (split each item at its LAST '='); for a\n")
        w("#   condensed species a second item gives its gas value; NA = no value in either table.\n")
        for k, d in sorted(info.items()):
            for what, t in (("Tm", d["tm"]), ("Tb", d["tb"])):
                if t is not None and abs(t - T0) <= BORDER_K:
                    w(f"# borderline state: {d['smiles']} ({k}, {d['cas']}) {what} = {t:.2f} K ({d[what.lower() + '_src']}) -> {d['state']}\n")
        for rid, why in dropped:
            w(f"# dropped: {rid}: {why}\n")
        w("id\tfamily\treaction_smiles\tstates\tdelta_h_standard_kj_per_mol\tdelta_h_gas_kj_per_mol\tsplit\tspecies_sources\n")
        for r in rows:
            w("\t".join([r["id"], r["family"], r["smiles"], r["states"], r["std"], r["gas"], r["split"], r["sources"]]) + "\n")
    print(f"wrote {len(rows)} reactions to {path.relative_to(ROOT)} (tables used: {', '.join(tables_used)})")


# --- condensed_dhf.tsv ------------------------------------------------------------------------
ORGANIC = {"C", "H", "N", "O", "S", "F", "Cl", "Br", "I"}


def condensed():
    rows = []
    skipped = {}
    inconsistent, borderline = [], []
    for cas in sorted(set(CRC.index)):
        g = lookup(CRC, cas, "Hfg")
        if g is None or (lookup(CRC, cas, "Hfs") is None and lookup(CRC, cas, "Hfl") is None):
            continue
        try:
            smi, name, mol = identity(cas)
        except (SystemExit, Exception) as e:  # not in the DB or InChIKey mismatch
            skipped[cas] = f"identity: {e}"
            continue
        if "." in smi:
            continue
        syms = {a.GetSymbol() for a in mol.GetAtoms()}
        if "C" not in syms or not syms <= ORGANIC:
            continue
        if Descriptors.NumRadicalElectrons(mol) or sum(a.GetFormalCharge() for a in mol.GetAtoms()):
            continue
        # organic: at least one carbon bonded to H, C or a halogen (drops CO, CO2, CS2, COS)
        if not any(a.GetSymbol() == "C" and (a.GetTotalNumHs() > 0 or any(
                n.GetSymbol() in {"C", "F", "Cl", "Br", "I"} for n in a.GetNeighbors())) for a in mol.GetAtoms()):
            continue
        st, tm, _, tb, _ = state_of(cas)
        if st not in ("s", "l"):
            skipped[cas] = f"state {st}"
            continue
        c = lookup(CRC, cas, COLUMN[st])
        if c is None:
            skipped[cas] = f"CRC has no {st} value"
            continue
        lo, hi = PHASE_CHANGE_WINDOW
        if not lo <= (g - c) / 1000 <= hi:
            inconsistent.append(f"{cas} {lookup_name(cas, name)}: dHf({st}) {c / 1000:.1f}, dHf(g) {g / 1000:.1f} "
                                f"-> {'dvapH' if st == 'l' else 'dsubH'} {(g - c) / 1000:.1f} kJ/mol")
            continue
        for what, t in (("Tm", tm), ("Tb", tb)):
            if t is not None and abs(t - T0) <= BORDER_K:
                borderline.append(f"{cas} {lookup_name(cas, name)}: {what} = {t:.2f} K -> {st}")
        rows.append(dict(cas=cas, name=lookup_name(cas, name), smiles=smi, state=st, c=c / 1000, g=g / 1000,
                         tm="" if tm is None else f"{tm:.2f}", tb="" if tb is None else f"{tb:.2f}",
                         split=split_of(cas)))
    path = REF / "condensed_dhf.tsv"
    with path.open("w") as out:
        w = out.write
        w("# condensed_dhf.tsv - written by scripts/gen_reaction_checks.py; do not edit by hand.\n")
        w(f"# Python packages: chemicals {chemicals.__version__}, rdkit {rdkit.__version__} (pins: scripts/requirements-structures.txt).\n")
        w("# dHf(298.15 K) of the stable condensed phase (l or s) and of the ideal gas, BOTH from the CRC Handbook table\n")
        w("#   'Standard Thermodynamic Properties of Chemical Substances' as shipped in chemicals (copyrighted compilation,\n")
        w("#   used as a test reference only). dvapH or dsubH(298.15) = dhf_gas - dhf_condensed.\n")
        w("# Organic molecules of C,H,N,O,S,F,Cl,Br,I (neutral, closed shell); SMILES from chemicals' identifier DB by CAS\n")
        w("#   with RDKit InChIKey == DB InChIKey.\n")
        w(f"# state from Tm/Tb (chemicals.phase_change, Tm methods {', '.join(TM_METHODS)};\n")
        w(f"#   Tb methods {', '.join(TB_METHODS)}): s if Tm > 298.15 K, l if Tm <= 298.15 K < Tb. Rows whose CRC\n")
        w("#   condensed value is not for that state are left out. melting_k / boiling_k: the values used (empty if none).\n")
        w("# split: sha256(cas) first byte mod 3 == 0 -> rule, else heldout.\n")
        w(f"# Left out as inconsistent (gas - condensed outside {PHASE_CHANGE_WINDOW[0]:g}..{PHASE_CHANGE_WINDOW[1]:g} kJ/mol):\n")
        for x in inconsistent:
            w(f"#   {x}\n")
        w(f"# Borderline state (Tm or Tb within {BORDER_K:g} K of 298.15 K):\n")
        for x in borderline:
            w(f"#   {x}\n")
        w("cas\tname\tsmiles\tstate\tdhf_condensed_kj_per_mol\tdhf_gas_kj_per_mol\tmelting_k\tboiling_k\tsplit\n")
        for r in rows:
            w("\t".join([r["cas"], r["name"], r["smiles"], r["state"], fmt(r["c"]), fmt(r["g"]), r["tm"], r["tb"],
                         r["split"]]) + "\n")
    print(f"wrote {len(rows)} species to {path.relative_to(ROOT)}")
    return rows, skipped


def lookup_name(cas, fallback):
    v = CRC.loc[cas, "Chemical"]
    if isinstance(v, pd.Series):
        v = v.iloc[0]
    return str(v) if isinstance(v, str) and v else fallback


def main():
    rows, dropped, info, missing = reactions()
    if missing:
        print("species keys without CAS (reactions dropped):", ", ".join(missing))
    for rid, why in dropped:
        print(f"dropped {rid}: {why}")
    write_reactions(rows, dropped, info)
    crows, _ = condensed()
    # summary and requirement checks
    fams = {}
    for r in rows:
        fams[r["family"]] = fams.get(r["family"], 0) + 1
    n_std = sum(1 for r in rows if r["std"])
    n_gas = sum(1 for r in rows if r["gas"])
    n_solid = sum(1 for r in rows if any(info[k]["state"] == "s" for k in r["keys"]))
    print("families:", fams)
    print(f"standard: {n_std}, gas: {n_gas}, with a solid: {n_solid}, "
          f"rule: {sum(r['split'] == 'rule' for r in rows)}")
    print(f"condensed: {len(crows)}, solids {sum(r['state'] == 's' for r in crows)}, "
          f"rule {sum(r['split'] == 'rule' for r in crows)}")
    ok = (len(rows) >= 70 and n_std >= 60 and n_gas >= 40 and n_solid >= 15 and fams.get("amidation", 0) >= 8
          and fams.get("peroxide_decomposition", 0) >= 3
          and fams.get("nitration", 0) + fams.get("nitro_reduction", 0) >= 5
          and len(crows) >= 200 and sum(r["state"] == "s" for r in crows) >= 60)
    if not ok:
        sys.exit("requirements not met")


if __name__ == "__main__":
    main()
