#!/usr/bin/env python3
"""Names and CAS numbers of compounds, resolved to a structure: worker/engine/data/names.tsv.

Columns (one row per compound): `smiles inchikey cas formula names melting_k melting_source
boiling_k boiling_source`.

Source: the identifier tables that ship in the PyPI package `chemicals` (Identifiers/: `chemical
identifiers pubchem large.tsv`, `... pubchem small.tsv`, `... example user db.tsv`,
`Inorganic db.tsv`), derived from PubChem (NCBI/NLM, public domain; terms in
scripts/README-open-data.md). A row's SMILES, InChIKey, CAS number and names are that table's;
nothing is taken from elsewhere.

Which compounds
---------------
1. every compound with a bundled record: each row of data/structures.tsv (gen_structures.py)
   whose InChIKey the identifier tables hold;
2. every compound of `chemical identifiers pubchem small.tsv`;
3. every compound of ChemSep 8.32 (Misc/ChemSep8.32.xml, 431 industrial chemicals) and of the
   DIPPR 2014 compound list that chemicals ships (Identifiers/dippr_2014.csv: CAS numbers only,
   used here only to choose rows; no DIPPR value is used);
4. from the other (larger) tables, the common solvents, reagents and intermediates: at most
   MAX_HEAVY heavy atoms, no radical, in one of CLASSES (nitroarenes, anilines, anilides,
   amides, esters, acids, anhydrides, acid halides, alcohols, phenols, ketones, aldehydes,
   amines, nitriles, peroxides, halobenzenes, heterocycles, ethers, ...), inorganic, or a salt or
   organometallic of Na, K, Li, Ca, Mg; and "common": at least as many human names (after the
   filters below) as MIN_NAMES asks for its size (small molecules have fewer synonyms than
   drugs), MIN_NAMES_SALT for salts (NaH, n-BuLi). These thresholds keep the file near 3 MB.
Only the elements C H N O S P F Cl Br I B Si Na K Li Ca Mg; no isotopic labels; net charge 0;
no hydrates and adducts (a neutral part next to other parts) in groups 3 and 4.

Checks (a row that fails is dropped and counted in the header)
--------------------------------------------------------------
* RDKit reads the table's SMILES and its standard InChIKey equals the table's InChIKey;
* the formula from the SMILES equals the table's formula.
One row per InChIKey: where two CAS numbers share one, the bundled record's CAS, else chemicals'
preferred CAS, else the one in the small table, else the one with more names is kept.
Every CAS number written passes the CAS check digit.

Names
-----
Lower case, spaces single, typographic dashes and primes as ASCII (as the engine compares them).
The first is the table's common name, then its IUPAC name (PubChem's, with ';' between ions read
as a space), then up to MAX_ABBREVIATIONS abbreviations (dmf, dmso, thf), then the synonyms
that read as chemical names, then the others (trade names), each in the table's order.
Left out: names that look like registry numbers or codes (CAS- and EC-like numbers, runs of three
or more digits, a letter followed by a digit as in `ai3-01234`, `schembl123`, a number standing
alone after a word as in `nsc 1234`), isotope-labelled names (`(14c)methanol`), names over 60
characters, vendor grades and solutions (`%`, `solution`, `reagent`, `in hexanes`, ...), names
of other forms (`radical` for a molecule, `polymer`, `hydrochloride` or `sodium` where the
formula has no Cl or Na, metals the compound lacks, deuterated `-d5`); trailing tags like
`[inn]`, `(9ci)` or `[german]` are cut off. Radicals keep only their common name (PubChem's IUPAC
name and synonyms of a radical are often the parent's: `methanol` for hydroxymethyl, `butane`
for the butyl radicals). A name given to two compounds of the file is dropped from both. At most
MAX_NAMES names a compound (MAX_NAMES_LARGE for group 4).

Melting and boiling points (K, 1 atm), only from openly licensed tables in chemicals:
* melting: `OpenNotebook Melting Points.tsv` (Jean-Claude Bradley Open Melting Point Dataset, CC0),
  else Wikidata (`Misc/wikidata_properties.tsv`, CC0);
* boiling: ChemSep 8.32 (`Misc/ChemSep8.32.xml`, Artistic-2.0), else Wikidata.
Not used: CRC, Yaws, Perry, VDI, WebBook, Common Chemistry (not open), Joback (estimates).

The script asserts that the names and CAS numbers chemists use for common compounds resolve
(REQUIRED). Usage: .venv-smiles/bin/python scripts/gen_names.py  (pins: requirements-structures.txt)
"""
import collections
import pathlib
import re
import sys
import xml.etree.ElementTree as ET

import chemicals
import rdkit
from chemicals.identifiers import search_chemical
from rdkit import Chem, RDLogger
from rdkit.Chem.rdMolDescriptors import CalcMolFormula

RDLogger.DisableLog("rdApp.*")
ROOT = pathlib.Path(__file__).resolve().parents[1]
STRUCTURES = ROOT / "worker/engine/data/structures.tsv"
OUT = ROOT / "worker/engine/data/names.tsv"
PKG = pathlib.Path(chemicals.__file__).parent
IDENT = PKG / "Identifiers"
LARGE, SMALL = "chemical identifiers pubchem large.tsv", "chemical identifiers pubchem small.tsv"
ID_TABLES = [LARGE, SMALL, "chemical identifiers example user db.tsv", "Inorganic db.tsv"]  # chemicals' load order
ONS = PKG / "Phase Change" / "OpenNotebook Melting Points.tsv"
WIKIDATA = PKG / "Misc" / "wikidata_properties.tsv"
CHEMSEP = PKG / "Misc" / "ChemSep8.32.xml"
DIPPR = IDENT / "dippr_2014.csv"

ALLOWED = set("C H N O S P F Cl Br I B Si Na K Li Ca Mg".split())
METALS = {"Na", "K", "Li", "Ca", "Mg"}
MAX_HEAVY = 24        # heavy atoms of a compound chosen from the large table
# Human names a compound of the large table needs to count as common, by size (heavy atoms):
# small molecules (reagents, solvents, building blocks) have fewer synonyms than drugs.
MIN_NAMES = ((10, 9), (16, 13), (24, 20))
MIN_NAMES_SALT = 3    # salts and organometallics of Na, K, Li, Ca, Mg (NaH, n-BuLi, ...)
MAX_NAMES = 10        # names written per compound ...
MAX_NAMES_LARGE = 6   # ... and per compound chosen from the large table
MAX_NAME_LEN = 60

CLASSES = {
    "nitroarene": "c[N+](=O)[O-]",
    "aniline": "c[NX3;!$(N-[C,S]=[O,S,N]);!$(N-S(=O)=O)]",
    "anilide": "c[NX3][CX3](=O)",
    "amide": "[NX3][CX3]=[OX1]",
    "ester": "[#6][CX3](=O)[OX2][#6]",
    "carboxylic acid": "[CX3](=O)[OX2H1]",
    "anhydride": "[CX3](=O)[OX2][CX3](=O)",
    "acid halide": "[CX3](=O)[F,Cl,Br,I]",
    "alcohol": "[CX4][OX2H]",
    "phenol": "c[OX2H]",
    "ketone": "[#6][CX3](=O)[#6]",
    "aldehyde": "[CX3H1](=O)",
    "amine": "[NX3;!$(N-[#6]=[O,S,N]);!$(N-a);!$(N-S)]([CX4])",
    "nitrile": "C#N",
    "peroxide": "[OX2][OX2]",
    "halobenzene": "c[F,Cl,Br,I]",
    "heterocycle": "[!#6;R]",
    "ether": "[OD2]([#6])[#6]",
    "haloalkane": "[CX4][F,Cl,Br,I]",
    "nitroalkane": "[CX4][N+](=O)[O-]",
    "sulfonyl": "[#6]S(=O)(=O)",
    "thiol or sulfide": "[#6][SX2]",
    "isocyanate": "N=C=[O,S]",
    "organo-B, Si or P": "[#6]~[B,Si,P]",
    "imine, amidine or carbodiimide": "[#6]=[NX2]",
    "alkene or alkyne": "[#6]=,#[#6]",
    "arene": "c",
}
CLASS_PATTERNS = {k: Chem.MolFromSmarts(v) for k, v in CLASSES.items()}
CARBON = Chem.MolFromSmarts("[#6]")

# Names (and CAS numbers) that must resolve, with the compound's CAS.
REQUIRED = {
    "nitrobenzene": "98-95-3", "aniline": "62-53-3", "acetic anhydride": "108-24-7", "acetic acid": "64-19-7",
    "acetanilide": "103-84-4", "propan-2-ol": "67-63-0", "isopropanol": "67-63-0", "2-propanol": "67-63-0",
    "isopropyl alcohol": "67-63-0", "toluene": "108-88-3", "methanol": "67-56-1", "ethanol": "64-17-5",
    "water": "7732-18-5", "acetone": "67-64-1", "ethyl acetate": "141-78-6", "N-methylacetamide": "79-16-3",
    "N,N-dimethylformamide": "68-12-2", "benzyl alcohol": "100-51-6", "p-cresol": "106-44-5",
    "4-nitrotoluene": "99-99-0", "4-aminophenol": "123-30-8", "paracetamol": "103-90-2",
    "acetaminophen": "103-90-2", "benzoyl chloride": "98-88-4", "benzamide": "55-21-0",
    "benzoic acid": "65-85-0", "di-tert-butyl peroxide": "110-05-4", "tert-butyl hydroperoxide": "75-91-2",
    "hydrogen peroxide": "7722-84-1", "sodium hydroxide": "1310-73-2", "sodium chloride": "7647-14-5",
    "ammonium chloride": "12125-02-9", "sodium bicarbonate": "144-55-8", "potassium carbonate": "584-08-7",
    "triethylamine": "121-44-8", "pyridine": "110-86-1", "dichloromethane": "75-09-2",
    "tetrahydrofuran": "109-99-9", "2-methyltetrahydrofuran": "96-47-9", "sulfuric acid": "7664-93-9",
    "nitric acid": "7697-37-2", "acetyl chloride": "75-36-5", "chlorobenzene": "108-90-7",
    "4-chloronitrobenzene": "100-00-5", "1,4-dioxane": "123-91-1", "hydrogen": "1333-74-0",
    "oxygen": "7782-44-7", "nitrogen": "7727-37-9", "carbon dioxide": "124-38-9",
    "carbon monoxide": "630-08-0",
}
REQUIRED_PREFERRED = {"98-95-3": "nitrobenzene", "108-24-7": "acetic anhydride", "67-63-0": "isopropanol"}

# ---------------------------------------------------------------------------------------------
# Names

DASHES = str.maketrans({"‐": "-", "‑": "-", "‒": "-", "–": "-", "−": "-", "′": "'", "’": "'"})
CAS_LIKE = re.compile(r"\b\d{2,7}-\d{2}-\d\b")
EC_LIKE = re.compile(r"\b\d{3}-\d{3}-\d\b")
CODE = [
    re.compile(r"\d{3,}"),                  # registry and catalogue numbers
    re.compile(r"[a-z]\d"),                 # nsc1234, ai3-, schembl1, h1406, c18, n1-locants
    re.compile(r"(^|\s)\d+[a-z]?(\s|$)"),   # a number standing alone: 'nsc 1234', 'w 32'
    re.compile(r"\b\d+[a-z]{2,}"),           # 'agn-pc-0cqjxk' (locants carry one letter: 1h-, 2h-)
    re.compile(r"[;_@#$\\|\t]|:"),          # merged lists, codes, ratios
    re.compile(r"(?<![0-9a-z])\((?:[23]h|1[134]c|15n|1[78]o|18f|3[23]p|35s|36cl|82br|12[35]i|131i)\d*[,)]|"
               r"\b(?:13c|14c|15n|18o|18f|32p|35s|36cl|82br|125i|131i)\b"),  # isotopes: (3h), (14c)methanol
]
# After the common and IUPAC names: up to MAX_ABBREVIATIONS abbreviations (2-4 letters, at most
# one vowel: dmf, dmso, dmap, thf, tfa), then synonyms that read as chemical names, then the rest
# (trade names), each in the table's order.
ABBREVIATION = re.compile(r"[a-z]{2,4}")
MAX_ABBREVIATIONS = 2
CHEMICAL_LOOKING = re.compile(
    r"yl|ane\b|ene\b|yne\b|ol\b|one\b|al\b|ide\b|ate\b|ite\b|acid|amine|amide|hydr|oxy|chlor|brom|iod|"
    r"fluor|nitr|sulf|sulph|phosph|benz|phen|meth|eth|prop|but|pent|hex|hept|oct|carb|cyan|ium\b|salt|"
    r"ester|ether|anhydride|oxide|azol|azin|pyr|furan|thio|boron|silane")
TRAILING_TAG = re.compile(
    r"\s*(\[[a-z][a-z .:/\-]*\]|\((?:\d+ci[, ]*)+\)|\((?:van|tn|usan|inn|jan|ban|usp|nf|fcc|ep|jp\d*|mart\.|iupac|inci|"
    r"acd/name[^)]*|ii|mi|iso|8ci,? 9ci)\))$")
JUNK_WORDS = re.compile(
    r"%|\bsolution\b|\bsoln\b|\breagent\b|\bgrade\b|\bstandard\b|\bpurum\b|\bpuriss|\bpestanal\b|\btechnical\b|"
    r"\btech\b|\banalytical\b|\bcertified\b|aldrich|sigma|fluka|\bvetec\b|\bmixture\b|\bmixt\b|\bisomers\b|"
    r"\bmixed\b|\bradical\b|\banion\b|\bcation\b|\bion\b|\bdimer\b|\btrimer\b|\bpolymer\b|\bdeuter|"
    r"[-\s(]d\d+\b|\bcompd\b|\bcompound with\b|\bspectrophotometric\b|\bhplc\b|\bacs\b|\busp\b|\bbiotech|"
    r"\blabell?ed\b|\sin\s|tritium|tritiated|\bredistilled\b|\bextra pure\b|\bfor synthesis\b|\banhydrous,|\bampule\b|^poly|\bpoly[a-z]")
# An element named in a name must be in the compound (a salt's or another compound's name).
ELEMENT_WORDS = [
    ("Na", r"sodium|natrium|\bsoda\b"), ("K", r"potassium|kalium|\bpotash\b"), ("Li", r"lithium"),
    ("Ca", r"calcium"), ("Mg", r"magnesium"), ("Cl", r"chlor|\bhcl\b"), ("Br", r"brom|\bhbr\b"),
    ("I", r"iod"), ("F", r"fluor(?!en|esc|anth)"), ("S", r"sulf|sulph|thio|mercapt|sulfon"), ("P", r"phosph"),
    ("B", r"\bbor(?:on|ate|ic|ane|ide|o)|boron"), ("Si", r"silic|silan|silyl|silox"),
]
ELEMENT_RE = [(el, re.compile(rx)) for el, rx in ELEMENT_WORDS]
OTHER_METALS = re.compile(
    r"alumin|\bzinc\b|copper|cupr|\biron\b|ferr(?:ic|ous|o)|\btin\b|stann|titan|zircon|barium|strontium|"
    r"mercur[iy]|\blead\b|plumb|nickel|cobalt|chromium|chromate|dichromate|mangan|silver|argent|\bgold\b|"
    r"platin|pallad|caesium|cesium|rubidium|arsen|antimon|bismuth|selen|tellur|thall|cadmium|tungst|molybd")


def normalise(name):
    return " ".join(name.translate(DASHES).lower().split())


def clean_name(raw, elements, is_radical):
    """The name as written in the table, or None when it is not a human name of this compound."""
    n = normalise(raw).strip("'\"")
    prev = None
    while prev != n:
        prev = n
        n = TRAILING_TAG.sub("", n).strip()
    if not n or len(n) > MAX_NAME_LEN:
        return None
    if CAS_LIKE.search(n) or EC_LIKE.search(n) or any(p.search(n) for p in CODE):
        return None
    if not is_radical and JUNK_WORDS.search(n):
        return None
    if OTHER_METALS.search(n):
        return None
    for el, rx in ELEMENT_RE:
        if el not in elements and rx.search(n):
            return None
    if not re.search(r"[a-z]{2}", n) or (n.endswith("-") and ", " not in n) or re.fullmatch(r"\d+[a-z]+", n):
        return None
    return n


# ---------------------------------------------------------------------------------------------
# Tables

def formula_counts(formula):
    counts = collections.Counter()
    for el, k in re.findall(r"([A-Z][a-z]?)(\d*)", formula):
        counts[el] += int(k) if k else 1
    return counts


def int_to_cas(i):
    s = str(int(i))
    return f"{s[:-3]}-{s[-3:-1]}-{s[-1]}"


def read_identifiers():
    rows, origin = {}, collections.defaultdict(set)
    for fn in ID_TABLES:
        for line in (IDENT / fn).open(encoding="utf-8"):
            v = line.rstrip("\n").split("\t")
            rows[v[1]] = v
            origin[v[1]].add(fn)
    return rows, origin


def read_melting_boiling():
    tm_ons = {}
    for i, line in enumerate(ONS.open(encoding="utf-8")):
        cas, t = line.rstrip("\n").split("\t")[:2]
        if i and t:
            tm_ons[cas] = float(t)
    tm_wd, tb_wd = {}, {}
    lines = WIKIDATA.open(encoding="utf-8").read().splitlines()
    head = lines[0].split("\t")
    i_tm, i_tb = head.index("Tm"), head.index("Tb")
    for line in lines[1:]:
        v = line.split("\t")
        cas = int_to_cas(v[0])
        if len(v) > i_tm and v[i_tm]:
            tm_wd[cas] = float(v[i_tm])
        if len(v) > i_tb and v[i_tb]:
            tb_wd[cas] = float(v[i_tb])
    root = ET.parse(CHEMSEP).getroot()
    tb_cs = {}
    for c in root.findall("compound"):
        cas = c.find("CAS").get("value")
        e = c.find("NormalBoilingPointTemperature")
        if e is not None and e.get("value"):
            tb_cs[cas] = float(e.get("value"))
    return tm_ons, tm_wd, tb_cs, tb_wd, root.attrib.get("library", "")


def fmt_t(t):
    return f"{t:.2f}".rstrip("0").rstrip(".")


# ---------------------------------------------------------------------------------------------

def main():
    rows, origin = read_identifiers()
    tm_ons, tm_wd, tb_cs, tb_wd, chemsep_header = read_melting_boiling()
    dippr = {l.strip() for l in DIPPR.open() if l.strip()}
    from chemicals.identifiers import load_chemical_preferences
    preferred, unpreferred = load_chemical_preferences()

    # Group 1: bundled structures, by InChIKey.
    bundled_keys, bundled_missing = {}, []
    for line in STRUCTURES.open(encoding="utf-8"):
        if line.startswith("#") or line.startswith("name\t"):
            continue
        name, smi, _, _, ikey, cas = line.rstrip("\n").split("\t")
        bundled_keys.setdefault(ikey, name)
        try:
            obj = search_chemical("InChIKey=" + ikey)
        except ValueError:
            obj = None
        if obj is None:
            bundled_missing.append(name)
    small = {v[1] for v in (l.rstrip("\n").split("\t") for l in (IDENT / SMALL).open(encoding="utf-8"))}
    chemsep = {c.find("CAS").get("value") for c in ET.parse(CHEMSEP).getroot().findall("compound")}

    stats = collections.Counter()
    dropped_check = []
    cand = {}   # InChIKey -> list of (cas, row, mol, group)
    for cas, v in rows.items():
        ikey_db, smi = v[6], v[4]
        if ikey_db in bundled_keys:
            group = "bundled"
        elif cas in small:
            group = "small"
        elif cas in chemsep or cas in dippr:
            group = "industrial"
        else:
            group = "large"
        els = set(formula_counts(v[2]))
        if not els <= ALLOWED:
            if group != "large":
                stats[f"{group}: element outside the allowed set"] += 1
            continue
        if not smi or "*" in smi:
            stats[f"{group}: no SMILES"] += 1
            continue
        if group == "large" and ("." not in smi and len(re.findall(r"[A-Z]", smi)) > 3 * MAX_HEAVY):
            continue
        mol = Chem.MolFromSmiles(smi)
        if mol is None:
            stats["dropped_unreadable"] += 1
            dropped_check.append((cas, v[8], "RDKit cannot read " + smi))
            continue
        if group == "large" and mol.GetNumHeavyAtoms() > MAX_HEAVY:
            continue
        if any(a.GetIsotope() for a in mol.GetAtoms()):
            stats[f"{group}: isotope label"] += 1
            continue
        if Chem.GetFormalCharge(mol) != 0:
            stats[f"{group}: net charge"] += 1
            continue
        frags = Chem.GetMolFrags(mol, asMols=True)
        if len(frags) > 1 and group in ("large", "industrial"):
            if any(Chem.GetFormalCharge(f) == 0 for f in frags):
                continue   # hydrate or adduct
        ikey = Chem.MolToInchiKey(mol)
        if ikey != ikey_db:
            stats["dropped_inchikey"] += 1
            dropped_check.append((cas, v[8], f"{smi}: RDKit {ikey}, table {ikey_db}"))
            continue
        if formula_counts(CalcMolFormula(mol)) != formula_counts(v[2]):
            stats["dropped_formula"] += 1
            dropped_check.append((cas, v[8], f"{smi}: RDKit {CalcMolFormula(mol)}, table {v[2]}"))
            continue
        cand.setdefault(ikey, []).append((cas, v, mol, group))

    # One CAS per InChIKey.
    def rank(entry):
        cas, v, _, group = entry
        return (group != "bundled", cas not in preferred, cas in unpreferred, SMALL not in origin[cas],
                -len(v), int(cas.replace("-", "")))
    chosen = {}
    for ikey, entries in cand.items():
        entries.sort(key=rank)
        chosen[ikey] = entries[0]
        stats["rows: another CAS with the same InChIKey left out"] += len(entries) - 1

    # Names.
    def names_of(v, mol):
        els = set(formula_counts(v[2]))
        radical = any(a.GetNumRadicalElectrons() for a in mol.GetAtoms())
        raw = [v[8]] if radical else [v[8], v[7].replace(";", " ")] + v[9:]
        out = []
        for r in raw:
            n = clean_name(r, els, radical)
            if n and n not in out:
                out.append(n)
        head, rest = out[:2], out[2:]
        abbrev = [n for n in rest if ABBREVIATION.fullmatch(n) and len(re.findall("[aeiou]", n)) <= 1
                  and not CHEMICAL_LOOKING.search(n)][:MAX_ABBREVIATIONS]
        rest = [n for n in rest if n not in abbrev]
        return head + abbrev + sorted(rest, key=lambda n: 0 if CHEMICAL_LOOKING.search(n) else 1)

    def min_names(mol, v):
        frags = Chem.GetMolFrags(mol, asMols=True)
        metal = set(formula_counts(v[2])) & METALS
        if metal or (len(frags) > 1 and "[NH4+]" in v[4]):
            return MIN_NAMES_SALT
        ha = mol.GetNumHeavyAtoms()
        return next(k for h, k in MIN_NAMES if ha <= h)

    compounds = []
    for ikey, (cas, v, mol, group) in chosen.items():
        names = names_of(v, mol)
        if group == "large":
            if len(names) < min_names(mol, v):
                continue
            radical = any(a.GetNumRadicalElectrons() for a in mol.GetAtoms())
            classes = [k for k, p in CLASS_PATTERNS.items() if mol.HasSubstructMatch(p)]
            inorganic = not mol.HasSubstructMatch(CARBON)
            metal = bool(set(formula_counts(v[2])) & METALS)
            if radical or not (classes or inorganic or metal):
                continue
        compounds.append({"cas": cas, "v": v, "mol": mol, "group": group, "names": names, "ikey": ikey})
    compounds.sort(key=lambda c: (c["group"] != "bundled", c["group"] != "small", int(c["cas"].replace("-", ""))))

    owners = collections.defaultdict(set)
    for i, c in enumerate(compounds):
        for n in c["names"]:
            owners[n].add(i)
    shared = {n for n, s in owners.items() if len(s) > 1}
    n_name_drops = 0
    for c in compounds:
        keep = [n for n in c["names"] if n not in shared]
        n_name_drops += len(c["names"]) - len(keep)
        c["names"] = keep[:MAX_NAMES_LARGE if c["group"] == "large" else MAX_NAMES]

    # Melting and boiling points.
    n_tm, n_tb = collections.Counter(), collections.Counter()
    tm_disagree, tb_disagree, tb_below_tm = [], [], []
    for c in compounds:
        cas = c["cas"]
        c["tm"] = ("", "")
        if cas in tm_ons:
            c["tm"] = (fmt_t(tm_ons[cas]), ONS.name)
        elif cas in tm_wd:
            c["tm"] = (fmt_t(tm_wd[cas]), "wikidata_properties.tsv")
        c["tb"] = ("", "")
        if cas in tb_cs:
            c["tb"] = (fmt_t(tb_cs[cas]), CHEMSEP.name)
        elif cas in tb_wd:
            c["tb"] = (fmt_t(tb_wd[cas]), "wikidata_properties.tsv")
        if c["tm"][1]:
            n_tm[c["tm"][1]] += 1
        if c["tb"][1]:
            n_tb[c["tb"][1]] += 1
        if cas in tm_ons and cas in tm_wd and abs(tm_ons[cas] - tm_wd[cas]) > 10:
            tm_disagree.append(cas)
        if cas in tb_cs and cas in tb_wd and abs(tb_cs[cas] - tb_wd[cas]) > 10:
            tb_disagree.append(cas)
        if c["tm"][0] and c["tb"][0] and float(c["tb"][0]) <= float(c["tm"][0]):
            tb_below_tm.append(cas)
    n_tm_both = sum(1 for c in compounds if c["cas"] in tm_ons and c["cas"] in tm_wd)
    n_tb_both = sum(1 for c in compounds if c["cas"] in tb_cs and c["cas"] in tb_wd)

    # Checks: the names and CAS numbers that must resolve.
    by_name, by_cas = {}, {}
    for i, c in enumerate(compounds):
        for n in c["names"]:
            assert n not in by_name, n
            by_name[n] = i
        assert c["cas"] not in by_cas
        by_cas[c["cas"]] = i
    problems = []
    for c in compounds:
        d = [int(x) for x in c["cas"] if x.isdigit()]
        if not re.fullmatch(r"\d{2,7}-\d{2}-\d", c["cas"]) or \
                sum((i + 1) * x for i, x in enumerate(reversed(d[:-1]))) % 10 != d[-1]:
            problems.append(f"{c['cas']}: not a valid CAS number")
    for name, cas in REQUIRED.items():
        i = by_name.get(normalise(name))
        if i is None:
            problems.append(f"name {name!r} does not resolve")
        elif compounds[i]["cas"] != cas:
            problems.append(f"name {name!r} resolves to {compounds[i]['cas']}, not {cas}")
        if cas not in by_cas:
            problems.append(f"CAS {cas} ({name}) is not in the table")
    for cas, name in REQUIRED_PREFERRED.items():
        if cas in by_cas and compounds[by_cas[cas]]["names"][:1] != [name]:
            problems.append(f"{cas}: preferred name {compounds[by_cas[cas]]['names'][:1]}, not {name!r}")
    if problems:
        sys.exit("names check failed:\n" + "\n".join(problems))

    groups = collections.Counter(c["group"] for c in compounds)
    class_counts = collections.Counter()
    for c in compounds:
        for k, p in CLASS_PATTERNS.items():
            if c["mol"].HasSubstructMatch(p):
                class_counts[k] += 1
    n_salts = sum(1 for c in compounds if "." in c["v"][4])

    lines = []
    w = lines.append
    w("# names.tsv - written by scripts/gen_names.py; do not edit by hand.")
    w(f"# Source: the identifier tables of the PyPI package chemicals {chemicals.__version__} (Identifiers/: pubchem large,")
    w("#   pubchem small, example user db, Inorganic db), derived from PubChem (NCBI/NLM; public domain, see")
    w("#   scripts/README-open-data.md). smiles, inchikey, cas, formula and names are the table's.")
    w(f"# Checked with RDKit {rdkit.__version__}: the InChIKey from the SMILES equals the table's and the formula")
    w("#   from the SMILES equals the table's formula; rows that fail are dropped: "
      + f"{stats['dropped_inchikey']} InChIKey, {stats['dropped_formula']} formula, "
      + f"{stats['dropped_unreadable']} unreadable SMILES (of all rows looked at).")
    w(f"# Rows: {len(compounds)}: {groups['bundled']} with a bundled record (data/structures.tsv), {groups['small']} more"
      f" from pubchem small, {groups['industrial']} more from the ChemSep 8.32 and DIPPR-2014 compound lists,")
    tiers = ", ".join(f">= {k} for <= {h}" for h, k in MIN_NAMES)
    w(f"#   {groups['large']} more common compounds from the large table (human names: {tiers} heavy atoms; salts >= {MIN_NAMES_SALT});")
    w(f"#   {n_salts} salts (ions separated by '.'). Elements: C H N O S P F Cl Br I B Si Na K Li Ca Mg; no isotope labels.")
    w(f"#   {len(bundled_missing)} bundled structures have no entry in the identifier tables and no row.")
    w(f"# names: '|'-separated, lower case, the preferred (common) name first, then PubChem's IUPAC name and synonyms;")
    w(f"#   codes, registry numbers and names over {MAX_NAME_LEN} characters left out; at most {MAX_NAMES} a compound")
    w(f"#   ({MAX_NAMES_LARGE} for those from the large table); radicals keep only their common name;")
    w(f"#   {n_name_drops} name entries dropped because the name was given to two or more compounds ({len(shared)} names).")
    w("# melting_k, boiling_k: K at 1 atm, from openly licensed tables only:")
    w(f"#   OpenNotebook Melting Points.tsv (Bradley, Williams, Lang: Jean-Claude Bradley Open Melting Point Dataset, CC0): {n_tm[ONS.name]} Tm;")
    w(f"#   wikidata_properties.tsv (Wikidata, CC0; no pressure qualifier kept by chemicals): {n_tm['wikidata_properties.tsv']} Tm, {n_tb['wikidata_properties.tsv']} Tb;")
    w(f"#   ChemSep8.32.xml ({chemsep_header.replace('glycerol', '', 1)}): {n_tb[CHEMSEP.name]} Tb.")
    w(f"#   Preference: Tm OpenNotebook then Wikidata ({len(tm_disagree)} of {n_tm_both} with both differ by > 10 K);")
    w(f"#   Tb ChemSep then Wikidata ({len(tb_disagree)} of {n_tb_both} with both differ by > 10 K). {len(tb_below_tm)} rows have Tb <= Tm.")
    w("#   Not used: CRC Handbook, Yaws, Perry, VDI, NIST WebBook, CAS Common Chemistry, Joback estimates.")
    w("smiles\tinchikey\tcas\tformula\tnames\tmelting_k\tmelting_source\tboiling_k\tboiling_source")
    for c in compounds:
        v = c["v"]
        w("\t".join([v[4], c["ikey"], c["cas"], CalcMolFormula(c["mol"]), "|".join(c["names"]),
                     c["tm"][0], c["tm"][1], c["tb"][0], c["tb"][1]]))
    OUT.write_text("\n".join(lines) + "\n", encoding="utf-8")

    print(f"wrote {len(compounds)} compounds, {OUT.stat().st_size} bytes, to {OUT.relative_to(ROOT)}")
    for k, n in sorted(stats.items()):
        print(f"  {k}: {n}")
    print("  groups:", dict(groups))
    print("  classes:", dict(class_counts))
    print("  bundled without a table entry:", " ".join(bundled_missing))
    print(f"  names dropped (shared): {n_name_drops} entries, {len(shared)} names")
    for cas in tb_below_tm:
        c = compounds[by_cas[cas]]
        print(f"  Tb <= Tm: {cas} {c['names'][:1]} Tm {c['tm']} Tb {c['tb']}")
    for d in dropped_check:
        print("  dropped:", *d)


if __name__ == "__main__":
    main()
