#!/usr/bin/env python3
"""Benson second-order group values, and pgradd's own Benson estimates as a test reference.

Source: the PyPI package `pgradd` 2.9.14 (Python Group Additivity, Vlachos Research Group,
University of Delaware; MIT licence, see scripts/README-open-data.md). Its gas-phase Benson
library `pgradd/data/BensonGA/library.yaml` loads gas_benson/original.yaml (which includes
hydrocarbons.yaml, oxygenates.yaml, nitrogenates.yaml, radicals.yaml, strain.yaml,
corrections.yaml) and gas_benson/extra.yaml. The numbers in those files are Benson's published
group values (S. W. Benson, Thermochemical Kinetics, 2nd ed., Wiley 1976, pp. 272-279, and
Benson et al., Chem. Rev. 69 (1969) 279), typed in by the pgradd authors; extra.yaml adds
heat-capacity points for O(C)(CO). The group-assignment rules are pgradd's scheme.yaml.
hydrocarbons_original.yaml and index.yaml ship in the package but library.yaml does not load
them, so they are not used here.

Writes:
1. worker/engine/data/benson_groups.tsv: every group / correction / ring-strain / radical
   value of that library (kcal -> kJ by 4.184; Cp in J/mol/K), and every remap rule of
   scheme.yaml with its target.
2. worker/engine/tests/reference/benson_pgradd.tsv: pgradd's Benson estimate, driven by RDKit,
   for the neutral closed-shell C/H/O/N molecules of atct_hfg.tsv, crc_hfg.tsv,
   condensed_dhf.tsv and data/structures.tsv that pgradd can handle, with the groups it
   assigned (after remaps).
   worker/engine/tests/reference/benson_pgradd_refused.tsv: the ones it refuses, and why.

Two pgradd defects are worked around in memory (the numbers are not changed, only made
usable): table values that are exactly 0.0 (Cyclohexane H_ref; Cis and Double Cis Cp at
1500 K) are loaded by pgradd as unit-carrying zero Quantity objects, which makes every
enthalpy sum with a Cyclohexane descriptor fail with a UnitsError. They are replaced by float 0.

Deterministic; runs in about a minute on one core.

Usage:
  python3 -m venv .venv-benson
  .venv-benson/bin/pip install -r scripts/requirements-benson.txt
  .venv-benson/bin/python scripts/gen_benson.py
"""
import contextlib
import csv
import importlib.metadata
import io
import math
import pathlib
import warnings

import pgradd
import pgradd.ThermoChem  # noqa: F401  (registers the 'thermochem' property set)
import rdkit
import yaml
from pgradd.GroupAdd.Library import GroupLibrary
from pgradd.Units.qty import GenericQuantity
from pmutt import constants as pmutt_c
from rdkit import Chem, RDLogger
from rdkit.Chem import Descriptors

RDLogger.DisableLog("rdApp.*")
warnings.filterwarnings("ignore")

ROOT = pathlib.Path(__file__).resolve().parents[1]
PGRADD_VERSION = "2.9.14"
BENSON = pathlib.Path(pgradd.__file__).parent / "data" / "BensonGA"
GAS = BENSON / "gas_benson"
OUT_GROUPS = ROOT / "worker/engine/data/benson_groups.tsv"
REF = ROOT / "worker/engine/tests/reference"
OUT_REF = REF / "benson_pgradd.tsv"
OUT_REFUSED = REF / "benson_pgradd_refused.tsv"
SOURCES = [
    (REF / "atct_hfg.tsv", "atct_hfg"),
    (REF / "crc_hfg.tsv", "crc_hfg"),
    (REF / "condensed_dhf.tsv", "condensed_dhf"),
    (ROOT / "worker/engine/data/structures.tsv", "structures"),
]
CAL = 4.184
CP_T = [300, 400, 500, 600, 800, 1000, 1500]
KIND = {
    "hydrocarbons.yaml": "group",
    "oxygenates.yaml": "group",
    "nitrogenates.yaml": "group",
    "radicals.yaml": "radical",
    "strain.yaml": "strain",
    "corrections.yaml": "correction",
}
# pgradd converts table values to dimensionless form with its own R (pgradd.Consts, 8.314472)
# and converts back with pmutt's R (8.3144598): outputs are table * R_OUT/R_IN.
R_IN = 8.314472
R_OUT = pmutt_c.R("J/mol/K")
T_TABLE = 298.0  # T_ref written in every gas_benson entry


def fmt(x, nd=3):
    if x is None:
        return ""
    s = f"{x:.{nd}f}"
    return "0." + "0" * nd if s == "-0." + "0" * nd else s


def fmt_count(v):
    return str(int(v)) if float(v).is_integer() else repr(float(v))


def canonical(name):
    """pgradd's canonical group name (Group.parse -> _canonical_name): ligands sorted."""
    from pgradd.GroupAdd.Group import Group
    return Group.parse(None, name).name


# ---------------------------------------------------------------- group table

def load_tables():
    """Rows of the library exactly as pgradd merges them (original.yaml, then extra.yaml)."""
    lib = yaml.safe_load((BENSON / "library.yaml").read_text())
    assert lib["include"] == ["gas_benson/original.yaml", "gas_benson/extra.yaml"], lib
    original = yaml.safe_load((GAS / "original.yaml").read_text())
    files = list(original["include"])
    assert set(files) == set(KIND), files
    rows, notes = {}, []
    for fname in files:
        data = yaml.safe_load((GAS / fname).read_text())
        u = data["units"]
        assert u["molar enthalpy"] == "kcal/mol" and u["molar entropy"] == "cal/(mol*K)", fname
        assert u["molar heat capacity"] == "cal/(mol*K)" and u["temperature"] == "K", fname
        for section in ("groups", "other_descriptors"):
            for raw_name, entry in (data.get(section) or {}).items():
                tc = entry["thermochem"]
                assert float(tc["T_ref"]) == T_TABLE, (raw_name, tc["T_ref"])
                name = canonical(raw_name) if section == "groups" else raw_name
                assert name not in rows, f"duplicate {name}"
                cp = {float(t): float(v) * CAL for t, v in (tc.get("Cp_data") or [])}
                rows[name] = {
                    "kind": KIND[fname],
                    "name": name,
                    "h": None if tc.get("H_ref") is None else float(tc["H_ref"]) * CAL,
                    "s": None if tc.get("S_ref") is None else float(tc["S_ref"]) * CAL,
                    "cp": cp,
                    "file": fname,
                    "cp_scale": R_OUT / R_IN,
                    "yaml_name": raw_name,
                }
    extra = yaml.safe_load((GAS / "extra.yaml").read_text())
    for raw_name, entry in extra["groups"].items():
        name = canonical(raw_name)
        tc = entry["thermochem"]
        assert set(tc) <= {"T_ref", "ND_Cp_data", "range"}, tc
        row = rows[name]
        assert not row["cp"], name  # pgradd would refuse differing duplicates
        for t, v in tc["ND_Cp_data"]:
            row["cp"][float(str(t).split()[0])] = float(v) * R_OUT
        row["file"] += "+extra.yaml"
        row["cp_scale"] = 1.0  # dimensionless in extra.yaml: pgradd returns Cp/R * R_OUT
        extra_t = sorted(t for t in row["cp"] if t not in CP_T)
        notes.append(
            f"{name}: H and S from {row['file'].split('+')[0]}; Cp from extra.yaml (dimensionless Cp/R there, "
            f"times R = {R_OUT} J/mol/K), which pgradd merges in; extra.yaml also has points at "
            + ", ".join(f"{t:g} K = {row['cp'][t]:.3f}" for t in extra_t)
            + " J/mol/K, not in the columns (Cp(T) is a spline through all points)."
        )
    for r in rows.values():
        if r["yaml_name"] != r["name"]:
            notes.append(f"{r['name']}: written in {r['file']} as '{r['yaml_name']}' (same group; pgradd sorts ligands).")
    return rows, notes


def load_remaps():
    scheme = yaml.safe_load((BENSON / "scheme.yaml").read_text())
    return scheme["remaps"]


def write_groups(rows, notes, remaps):
    with OUT_GROUPS.open("w") as out:
        out.write("# benson_groups.tsv - written by scripts/gen_benson.py; do not edit by hand.\n")
        out.write(f"# Source: PyPI package pgradd {PGRADD_VERSION}, Copyright (c) 2016 Vlachos Research Group (University of Delaware),\n")
        out.write("#   MIT License (full text in scripts/README-open-data.md); https://github.com/VlachosGroup/PythonGroupAdditivity\n")
        out.write("#   data/BensonGA/library.yaml = gas_benson/original.yaml (+ its includes) + gas_benson/extra.yaml;\n")
        out.write("#   remap rules from data/BensonGA/scheme.yaml. The values are Benson's published group values\n")
        out.write("#   (S. W. Benson, Thermochemical Kinetics, 2nd ed., Wiley 1976, pp. 272-279; Benson et al., Chem. Rev.\n")
        out.write("#   69 (1969) 279), as typed into pgradd; source_file names the yaml file each row came from.\n")
        out.write("# Units: dhf kJ/mol, s and cp J/mol/K (the yaml files are kcal/mol and cal/mol/K; x 4.184 exactly).\n")
        out.write("#   All values are at T_ref = 298 K as the yaml states (Benson's 298 K). s is the intrinsic group entropy\n")
        out.write("#   (no symmetry-number or optical-isomer term). Empty = the source has no value (null, or no Cp point).\n")
        out.write("# kind: group = ordinary Benson group; correction = non-next-nearest-neighbour correction (gauche, cis,\n")
        out.write("#   ortho, ether); strain = ring-strain correction (pgradd 'other_descriptors'); radical = open-shell group\n")
        out.write("#   from radicals.yaml (not for closed-shell use); remap = scheme.yaml rule 'name is counted as target'\n")
        out.write("#   (target = factor*name joined by '+'; applied once, by exact name, to pgradd's group counts).\n")
        out.write("# name: pgradd's canonical name (centre + '(ligand)count' with ligands in Python string order).\n")
        out.write("#   Several rows are unreachable with pgradd's scheme (no pattern makes the atom types N[I], N[A], CN,\n")
        out.write("#   NO2, NO, NCO, or C[B](N)); they are kept because they are Benson's values.\n")
        out.write("# Remap key 'CO(C[B]2)' is copied as pgradd has it (a typo for CO(C[B])2; it never matches).\n")
        for n in notes:
            out.write(f"# Note: {n}\n")
        cols = ["kind", "name", "dhf_kj_per_mol", "s_j_per_mol_k"] + [f"cp{t}" for t in CP_T] + ["source_file", "target"]
        out.write("\t".join(cols) + "\n")
        for r in rows.values():
            vals = [r["kind"], r["name"], fmt(r["h"]), fmt(r["s"])]
            vals += [fmt(r["cp"].get(float(t))) for t in CP_T]
            vals += [r["file"], ""]
            out.write("\t".join(vals) + "\n")
        for name, targets in remaps.items():
            tgt = "+".join(f"{fmt_count(f)}*{t}" for f, t in targets)
            out.write("\t".join(["remap", name, "", ""] + [""] * len(CP_T) + ["scheme.yaml", tgt]) + "\n")
    kinds = {}
    for r in rows.values():
        kinds[r["kind"]] = kinds.get(r["kind"], 0) + 1
    print(f"wrote {len(rows)} values {kinds} + {len(remaps)} remaps to {OUT_GROUPS.relative_to(ROOT)}")


# ---------------------------------------------------------------- pgradd estimates

def load_library():
    with contextlib.redirect_stdout(io.StringIO()):
        lib = GroupLibrary.Load("BensonGA")
    fixed = []
    for group, sets in lib.contents.items():
        tc = sets.get("thermochem")
        if tc is None:
            continue
        changed = False
        for attr in ("ND_H_ref", "ND_S_ref"):
            v = getattr(tc, attr)
            if isinstance(v, GenericQuantity):
                assert v.value == 0.0, (group, attr)
                setattr(tc, attr, 0.0)
                changed = True
        for t, v in list(tc.ND_Cp_data.items()):
            if isinstance(v, GenericQuantity):
                assert v.value == 0.0, (group, t)
                tc.ND_Cp_data[t] = 0.0
                changed = True
        if changed:
            tc._setup_correlation()
            fixed.append(str(group))
    return lib, sorted(fixed)


def candidates():
    seen, out = set(), []
    for path, tag in SOURCES:
        lines = [ln for ln in path.read_text().splitlines() if ln and not ln.startswith("#")]
        for rec in csv.DictReader(lines, delimiter="\t"):
            smi = rec["smiles"]
            mol = Chem.MolFromSmiles(smi)
            if mol is None or "." in smi:
                continue
            if {a.GetSymbol() for a in mol.GetAtoms()} - {"C", "H", "O", "N"}:
                continue
            if Chem.GetFormalCharge(mol) != 0 or Descriptors.NumRadicalElectrons(mol):
                continue
            key = Chem.MolToSmiles(mol)
            if key in seen:
                continue
            seen.add(key)
            out.append((smi, rec["name"], tag))
    return out


def short(e):
    s = " ".join(str(e).split())
    if type(e).__name__ == "PatternMatchError" and "Sub group not assigned" in s:
        i = s.find("Atom symbol:")
        s = "no pattern for atom " + s[i + len("Atom symbol: "):].split(" Occured")[0]
    return f"{type(e).__name__}: {s[:200]}"


def table_sum(groups, rows, key):
    tot = 0.0
    for g, n in groups.items():
        v = rows[g][key] if g in rows else None
        if v is None:
            return None
        tot += n * v
    return tot


def expected_pgradd_h(groups, rows):
    """pgradd's H(298.15 K) from the table: groups with Cp data are carried from 298 K with their
    lowest Cp point; groups without Cp return H_ref/(R*298) * R*298.15 (its T_ref quirk)."""
    tot = 0.0
    for g, n in groups.items():
        r = rows[g]
        if r["cp"]:
            tot += n * (r["h"] * R_OUT / R_IN + r["cp"][min(r["cp"])] * r["cp_scale"] * (298.15 - T_TABLE) / 1000.0)
        else:
            tot += n * r["h"] * 298.15 / T_TABLE * R_OUT / R_IN
    return tot


def expected_pgradd_s(groups, rows):
    tot = 0.0
    for g, n in groups.items():
        r = rows[g]
        tot += n * r["s"] * R_OUT / R_IN
        if r["cp"]:
            tot += n * r["cp"][min(r["cp"])] * r["cp_scale"] * math.log(298.15 / T_TABLE)
    return tot


def estimate(lib, smi):
    buf = io.StringIO()
    with contextlib.redirect_stdout(buf):
        groups = lib.GetDescriptors(smi)
    if "Max RDKit substructure matches exceeded" in buf.getvalue():
        raise RuntimeError("pgradd: RDKit substructure match limit (10000) hit; groups incomplete")
    groups = {str(g): n for g, n in groups.items() if n}
    with contextlib.redirect_stdout(io.StringIO()):
        th = lib.Estimate(groups, "thermochem")
    res = {}
    for key, fn in (
        ("h", lambda: th.get_H(298.15, "kJ/mol")),
        ("s", lambda: th.get_S(298.15, "J/mol/K")),
        ("cp300", lambda: th.get_Cp(300.0, "J/mol/K")),
        ("cp800", lambda: th.get_Cp(800.0, "J/mol/K")),
    ):
        try:
            with contextlib.redirect_stdout(io.StringIO()):
                v = float(fn())
            res[key] = v if math.isfinite(v) else None
        except Exception:
            res[key] = None
    if res["h"] is None:
        th.get_H(298.15, "kJ/mol")  # raise the real error for the refused list
    return groups, res


def write_reference(lib, fixed, rows):
    ok, refused = [], []
    for smi, name, tag in candidates():
        try:
            groups, res = estimate(lib, smi)
        except Exception as e:  # pgradd refuses: unassigned atom, missing group data, RDKit failure
            refused.append((smi, name, tag, short(e)))
            continue
        h_sum = table_sum(groups, rows, "h")
        s_sum = table_sum(groups, rows, "s")
        exp_h = expected_pgradd_h(groups, rows)
        assert abs(res["h"] - exp_h) < 1e-6, (smi, res["h"], exp_h)
        if res["s"] is not None:
            exp_s = expected_pgradd_s(groups, rows)
            assert abs(res["s"] - exp_s) < 1e-6, (smi, res["s"], exp_s)
        for t in (300, 800):
            cp = res[f"cp{t}"]
            if cp is not None:
                exp = sum(n * rows[g]["cp"][float(t)] * rows[g]["cp_scale"] for g, n in groups.items())
                assert abs(cp - exp) < 1e-6, (smi, t, cp, exp)
        gtxt = ";".join(f"{g}*{fmt_count(n)}" for g, n in sorted(groups.items()))
        ok.append((smi, name, gtxt, fmt(res["h"]), fmt(res["s"]), fmt(res["cp300"]), fmt(res["cp800"]),
                   fmt(h_sum), fmt(s_sum), tag))
    head = [
        "# {} - written by scripts/gen_benson.py; do not edit by hand.",
        f"# pgradd {PGRADD_VERSION} GroupLibrary.Load('BensonGA') (gas_benson tables, Benson 1976) driven by RDKit {rdkit.__version__};",
        "# molecules: neutral closed-shell C/H/O/N entries of tests/reference/atct_hfg.tsv, crc_hfg.tsv, condensed_dhf.tsv",
        "#   and data/structures.tsv (first occurrence by RDKit canonical SMILES; smiles column = the source's SMILES,",
        "#   passed to pgradd as is, so stereo as written there; 'source' = which file).",
    ]
    with OUT_REF.open("w") as out:
        out.write("\n".join(head).format(OUT_REF.name) + "\n")
        out.write("# groups: every group and descriptor pgradd assigned, after scheme.yaml remaps, as name*count (sorted; counts\n")
        out.write("#   can be fractional, e.g. Cis*0.5 for an unspecified-stereo CH=CH).\n")
        out.write("# dhf_kj_per_mol, s_j_per_mol_k: pgradd get_H / get_S at 298.15 K; cp300/cp800: get_Cp at 300/800 K.\n")
        out.write("#   Empty where pgradd cannot evaluate (a group has S_ref null, no Cp data, or a Cp range below 800 K).\n")
        out.write("# S: pgradd's S is the plain sum of group entropies. It does NOT subtract R ln(sigma) for the symmetry\n")
        out.write("#   number, does NOT add R ln(n) for optical isomers, and adds no spin term (no such code in pgradd:\n")
        out.write("#   ThermochemGroupAdditive.get_SoR = sum(count*S_group), minus element entropies only if S_elements is\n")
        out.write("#   requested, which it is not here). Benson's intrinsic-entropy convention is therefore NOT completed.\n")
        out.write("# pgradd evaluates each group from its table T_ref = 298 K: a group with Cp data gets H + Cp(300)*0.15 K\n")
        out.write("#   (S + Cp(300)*ln(298.15/298)); a group without Cp data gets H*298.15/298 (pgradd stores H/(R*298) and\n")
        out.write("#   multiplies back by R*298.15); everything is scaled by 8.3144598/8.314472 (pmutt R / pgradd R).\n")
        out.write("#   dhf_table_sum_kj_per_mol and s_table_sum_j_per_mol_k are the plain sums count*value of\n")
        out.write("#   data/benson_groups.tsv (what a Benson estimator at 298 K gives); here pgradd differs from them by\n")
        out.write("#   at most 0.2 kJ/mol and 0.4 J/mol/K. Empty groups (O=O: both O are 'none' centres) -> pgradd gives 0.\n")
        if fixed:
            out.write("# Workaround: pgradd loads the exact-zero table values of " + ", ".join(fixed) + " as unit-carrying\n")
            out.write("#   Quantity(0) objects, so any molecule with a Cyclohexane descriptor fails get_H with a UnitsError; the\n")
            out.write("#   script replaces them by float 0.0 before estimating (values unchanged).\n")
        out.write("# Refused molecules are in benson_pgradd_refused.tsv.\n")
        out.write("smiles\tname\tgroups\tdhf_kj_per_mol\ts_j_per_mol_k\tcp300_j_per_mol_k\tcp800_j_per_mol_k\t"
                  "dhf_table_sum_kj_per_mol\ts_table_sum_j_per_mol_k\tsource\n")
        for r in ok:
            out.write("\t".join(r) + "\n")
    with OUT_REFUSED.open("w") as out:
        out.write("\n".join(head).format(OUT_REFUSED.name) + "\n")
        out.write("# Molecules pgradd's Benson scheme refuses: error type and short text. 'no pattern for atom' =\n")
        out.write("#   PatternMatchError 'Sub group not assigned' (e.g. charged N/O of nitro groups); GroupMissingDataError =\n")
        out.write("#   groups were assigned but the library has no value for them.\n")
        out.write("smiles\tname\tsource\terror\n")
        for r in refused:
            out.write("\t".join(r) + "\n")
    print(f"wrote {len(ok)} molecules to {OUT_REF.relative_to(ROOT)}, {len(refused)} to {OUT_REFUSED.relative_to(ROOT)}")
    assert len(ok) >= 350, len(ok)


def main():
    assert importlib.metadata.version("pgradd") == PGRADD_VERSION, importlib.metadata.version("pgradd")
    rows, notes = load_tables()
    remaps = load_remaps()
    write_groups(rows, notes, remaps)
    lib, fixed = load_library()
    for g in lib.contents:  # our table must be exactly pgradd's library
        assert str(g) in rows, g
    assert len(lib.contents) == len(rows), (len(lib.contents), len(rows))
    write_reference(lib, fixed, rows)


if __name__ == "__main__":
    main()
