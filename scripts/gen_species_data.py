#!/usr/bin/env python3
"""Write worker/engine/data/nasa_species.tsv: every species of Cantera's NASA thermo files.

Reads:   nasa_gas.yaml and nasa_condensed.yaml from the data directory of the installed
         Cantera package (version pinned in scripts/requirements-data.txt), both parsed twice:
         raw, with ruamel.yaml (YAML 1.2; PyYAML's YAML 1.1 would turn the species name ``NO``
         into ``False``) for coefficients, notes and the file headers, and through
         ``cantera.Species.list_from_file`` to cross-check every record.
Writes:  worker/engine/data/nasa_species.tsv (UTF-8, tab separated, ``#`` comment header).

Columns: name, base, phase, tag, charge, composition, model, segments,
         reference_pressure_pa, note, file  (see scripts/README.md).

Source data and terms:
  NASA thermodynamic polynomials (NASA Lewis, now Glenn, Research Center): the files say their
  source is B.J. McBride, S. Gordon and M.A. Reno, "Coefficients for Calculating Thermodynamic
  and Transport Properties of Individual Species", NASA TM-4513 (1993), as distributed in
  the SDT thermo files (shepherd.caltech.edu) and converted to YAML by Cantera's ck2yaml.
  Work of the US Government: public domain. Cantera and its bundled data files: BSD-3-Clause.
  These are mostly 7-coefficient (NASA7) fits; only four condensed species are NASA9, built by
  Cantera by joining 7-coefficient segments. This is not the NASA9 database of
  McBride, Zehe & Gordon, NASA/TP-2002-211556.

Reference pressure: the two files give no ``reference-pressure``, so Cantera reports its
default of one atmosphere (101325 Pa). The NASA data are for a standard state of 1 bar; the
script checks that against S(O2, 298.15 K) and writes 100000.

Run from the repository root:
    .venv-data/bin/python scripts/gen_species_data.py
"""

from __future__ import annotations

import collections
import math
import os
import re
import sys

import cantera as ct
from ruamel.yaml import YAML

ROOT = os.path.dirname(os.path.dirname(os.path.abspath(__file__)))
OUT = os.path.join(ROOT, "worker", "engine", "data", "nasa_species.tsv")
FILES = ("nasa_gas.yaml", "nasa_condensed.yaml")
ONE_BAR = 100000.0
COLUMNS = ("name", "base", "phase", "tag", "charge", "composition", "model", "segments",
           "reference_pressure_pa", "note", "file")

# Condensed names end in a phase tag, "AL2O3(a)"; one has an isomer label after it,
# "C8H18(L),n-octa" (n-octane liquid), whose base is taken to be "C8H18".
CONDENSED_NAME = re.compile(r"^(?P<base>.+)\((?P<tag>[^()]+)\)(?P<suffix>,[^()]*)?$")


def find_data_file(fname: str) -> str:
    for d in ct.get_data_directories():
        p = os.path.join(d, fname)
        if os.path.isfile(p):
            return os.path.abspath(p)
    raise SystemExit(f"{fname} not found in {ct.get_data_directories()}")


def one_line(text) -> str:
    if text is None:
        return ""
    return re.sub(r"[\t\r\n]", " ", str(text)).strip()


def fmt_count(v) -> str:
    f = float(v)
    return str(int(f)) if f.is_integer() else repr(f)


def formula_from_name(text: str):
    """Element counts of a NASA name read as a formula, with the NASA spelling AL/CL read as
    Al/Cl; None where the name is not a plain formula (isomer labels, 'Jet-A', 'Electron')."""
    t = re.sub(r"AL", "Al", re.sub(r"CL", "Cl", text))
    t = re.sub(r"[+-]+$", "", t)
    counts = collections.Counter()
    stack = [counts]
    i = 0
    while i < len(t):
        m = re.match(r"([A-Z][a-z]?)(\d*)", t[i:])
        if m:
            stack[-1][m.group(1)] += int(m.group(2) or 1)
            i += m.end()
        elif t[i] == "(":
            stack.append(collections.Counter())
            i += 1
        elif t[i] == ")" and len(stack) > 1:
            m = re.match(r"\)(\d*)", t[i:])
            inner = stack.pop()
            for k, v in inner.items():
                stack[-1][k] += v * int(m.group(1) or 1)
            i += m.end()
        else:
            return None
    return dict(counts) if len(stack) == 1 else None


def check_against_cantera(rec: dict, sp: ct.Species, segments: list) -> None:
    """Assert the raw YAML record and Cantera's parsed species agree."""
    name = rec["name"]
    th = sp.thermo
    assert math.isclose(th.min_temp, segments[0][0]) and math.isclose(th.max_temp, segments[-1][1]), name
    c = list(th.coeffs)
    model = rec["thermo"]["model"]
    if model == "NASA7":
        low, high = segments[0][2], segments[-1][2]
        if len(segments) == 2:
            assert math.isclose(c[0], segments[0][1]), name
        assert c[1:8] == high and c[8:15] == low, name
    elif model == "NASA9":
        n = int(c[0])
        assert n == len(segments), name
        for i, (t0, t1, co) in enumerate(segments):
            blk = c[1 + 11 * i: 1 + 11 * (i + 1)]
            assert blk[0] == t0 and blk[1] == t1 and blk[2:] == co, name
    else:
        raise SystemExit(f"{name}: unexpected thermo model {model}")
    comp = {k: float(v) for k, v in rec["composition"].items()}
    assert comp == {k: float(v) for k, v in sp.composition.items()}, name


def main() -> int:
    yaml = YAML(typ="safe", pure=True)
    rows = []
    headers = {}
    stats = collections.Counter()
    by_name = {}
    not_formula, mismatch = [], []
    for fname in FILES:
        path = find_data_file(fname)
        with open(path, encoding="utf-8") as f:
            doc = yaml.load(f)
        headers[fname] = (one_line(doc.get("description")), doc.get("generator"),
                          doc.get("cantera-version"), doc.get("date"))
        cantera_species = {s.name: s for s in ct.Species.list_from_file(path)}
        recs = doc["species"]
        assert len(recs) == len(cantera_species), fname
        for rec in recs:
            name = rec["name"]
            assert isinstance(name, str), f"{fname}: non-string species name {name!r}"
            assert name not in by_name, f"duplicate species name {name}"
            th = rec["thermo"]
            model = th["model"]
            ranges = [float(t) for t in th["temperature-ranges"]]
            data = th["data"]
            ncoef = {"NASA7": 7, "NASA9": 9}[model]
            assert len(data) == len(ranges) - 1, name
            segments = []
            for i, co in enumerate(data):
                co = [float(x) for x in co]
                assert len(co) == ncoef, name
                segments.append((ranges[i], ranges[i + 1], co))
            segments.sort(key=lambda s: s[0])
            check_against_cantera(rec, cantera_species[name], segments)

            comp = dict(rec["composition"])
            electrons = float(comp.pop("E", 0))
            assert electrons.is_integer(), name
            charge = -int(electrons)
            assert charge == round(cantera_species[name].charge), name

            if fname == "nasa_gas.yaml":
                base, phase, tag = name, "g", ""
            else:
                m = CONDENSED_NAME.match(name)
                assert m, f"condensed name without a phase tag: {name}"
                base, tag = m.group("base"), m.group("tag")
                phase = "l" if tag == "L" else "s"
            p_ref = float(th.get("reference-pressure", ONE_BAR))
            stats[(fname, model)] += 1
            if any(not float(v).is_integer() for v in comp.values()):
                stats["non-integer composition"] += 1
                print(f"non-integer composition: {name} {comp}")
            row = {
                "name": name,
                "base": base,
                "phase": phase,
                "tag": tag,
                "charge": str(charge),
                "composition": " ".join(f"{el}:{fmt_count(n)}" for el, n in sorted(comp.items())),
                "model": model.lower(),
                "segments": ";".join(",".join([repr(t0), repr(t1)] + [repr(x) for x in co])
                                     for t0, t1, co in segments),
                "reference_pressure_pa": repr(p_ref).removesuffix(".0"),
                "note": one_line(th.get("note", rec.get("note"))),
                "file": fname,
            }
            for k, v in row.items():
                assert "\t" not in v and "\n" not in v, (name, k)
            rows.append(row)
            parsed = formula_from_name(base.split(",")[0])
            if parsed is None:
                stats["name not a formula"] += 1
                not_formula.append(name)
            elif {k: float(v) for k, v in parsed.items()} != {k: float(v) for k, v in comp.items()}:
                stats["name formula != composition"] += 1
                mismatch.append(name)
            by_name[name] = cantera_species[name]

    # The files carry no reference-pressure, so Cantera assumes 1 atm; the data are 1 bar.
    # S(O2, 298.15 K): 205.152 J/mol/K at 1 bar (CODATA), 205.152 - R ln(1.01325) = 205.043 at 1 atm.
    s_o2 = by_name["O2"].thermo.s(298.15) / 1000.0
    r = ct.gas_constant / 1000.0
    assert abs(s_o2 - 205.152) < abs(s_o2 - (205.152 - r * math.log(1.01325))), s_o2
    cantera_p = sorted({s.thermo.reference_pressure for s in by_name.values()})

    header = [
        "# nasa_species.tsv - written by scripts/gen_species_data.py; do not edit by hand.",
        f"# Cantera {ct.__version__}; source files: {', '.join(FILES)} (Cantera data directory).",
        "# Terms: NASA thermodynamic data, public domain (work of the US Government), as distributed",
        f"#   in Cantera {ct.__version__} (Cantera: BSD-3-Clause). Cited by the source files as:",
        "#   B.J. McBride, S. Gordon, M.A. Reno, 'Coefficients for Calculating Thermodynamic and",
        "#   Transport Properties of Individual Species', NASA TM-4513 (1993) - 7-coefficient fits,",
        "#   not the NASA9 set of McBride, Zehe & Gordon, NASA/TP-2002-211556.",
    ]
    for fname, (desc, gen, cv, date) in headers.items():
        header.append(f"# {fname}: generator {gen}, cantera-version {cv}, date {date}.")
        header.append(f"# {fname} description: {desc}")
    header += [
        f"# reference_pressure_pa: the files give none, so Cantera reports {cantera_p} Pa (its default);",
        f"#   the data are for 1 bar (S(O2,298.15 K) = {s_o2:.4f} J/mol/K here; 1 bar: 205.152,",
        "#   1 atm would be 205.043), so 100000 is written.",
        "# segments: tmin,tmax,coefficients...; per segment; ascending tmin. nasa7: a1..a7;",
        "#   nasa9: a1..a7,b1,b2 (Cp/R = a1/T^2 + a2/T + a3 + a4 T + ... + a7 T^4).",
        "# charge = -(count of element E); composition excludes E.",
        "\t".join(COLUMNS),
    ]
    with open(OUT, "w", encoding="utf-8", newline="\n") as f:
        f.write("\n".join(header) + "\n")
        for row in rows:
            f.write("\t".join(row[c] for c in COLUMNS) + "\n")

    n_gas = sum(r["file"] == "nasa_gas.yaml" for r in rows)
    n_cond = len(rows) - n_gas
    print(f"wrote {os.path.relpath(OUT, ROOT)}: {len(rows)} species")
    print(f"  gas: {n_gas}, condensed: {n_cond} "
          f"(liquid {sum(r['phase'] == 'l' for r in rows)}, solid {sum(r['phase'] == 's' for r in rows)})")
    for (fname, model), n in sorted((k, v) for k, v in stats.items() if isinstance(k, tuple)):
        print(f"  {fname} {model}: {n}")
    print(f"  ions: {sum(r['charge'] != '0' for r in rows)}; "
          f"non-integer compositions: {stats['non-integer composition']}")
    print(f"  gas names with parentheses: {[r['name'] for r in rows if r['phase'] == 'g' and '(' in r['name']]}")
    n_chemkin = sum(("AL" in r["name"] or "CL" in r["name"]) for r in rows)
    print(f"  names spelling Al/Cl as AL/CL: {n_chemkin}")
    print(f"  base (before any ',label') not readable as a formula: {not_formula}")
    print(f"  base read as formula (AL->Al, CL->Cl) disagrees with composition: {mismatch}")
    return 0


if __name__ == "__main__":
    sys.exit(main())
