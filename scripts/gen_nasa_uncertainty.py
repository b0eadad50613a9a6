#!/usr/bin/env python3
"""Write worker/engine/data/nasa_uncertainty.tsv: ATcT dHf(298.15 K) and its uncertainty for the
NASA records of worker/engine/data/nasa_species.tsv that map unambiguously to an ATcT entry.

Reads:  worker/engine/data/nasa_species.tsv; the ATcT 1.112 tables shipped in chemicals
        (Reactions/ATcT 1.112 (g).tsv, Reactions/ATcT 1.112 (l).tsv; chemicals has no ATcT
        solid table). ATcT: B. Ruscic et al., Argonne National Laboratory (ATcT.anl.gov);
        uncertainties as ATcT states them (J/mol in the files; written in kJ/mol).
Mapping (printed in full, and written as the name/cas columns): a NASA record maps to an
ATcT row when, within one phase (g or l) and charge, exactly one ATcT row and exactly one NASA
record have that elemental composition (ATcT formula strings parsed, e.g. 'CH3C(O)OH (l)',
'[CN]- (g)'). Where several NASA isomers share a composition, NAME_TO_CAS below fixes the
mapping by name -> CAS, checked against chemicals' identifier table (PubChem) formula. Deuterated
species are left out.
nasa_dhf_kj_per_mol = H(298.15 K) of the NASA record from its polynomial (NASA convention:
H(298.15) = dHf); records whose first segment starts at 300 K are evaluated at 298.15 K (1.85 K
extrapolation, as the engine does).

Run from the repository root:
    .venv-open/bin/python scripts/gen_nasa_uncertainty.py
"""

from __future__ import annotations

import collections
import os
import sys

sys.path.insert(0, os.path.dirname(os.path.abspath(__file__)))
import chemicals  # noqa: E402
from chemicals import identifiers  # noqa: E402
from chemicals import reaction as rx  # noqa: E402
from gen_open_species import (NASA_TSV, R, ROOT, T_REF, h_rt, parse_composition,  # noqa: E402
                              parse_formula, read_tsv, segment_at, segments_nasa9)

OUT = os.path.join(ROOT, "worker", "engine", "data", "nasa_uncertainty.tsv")
COLUMNS = ("name", "cas", "atct_dhf_kj_per_mol", "atct_uncertainty_kj_per_mol", "nasa_dhf_kj_per_mol",
           "difference_kj_per_mol")
# NASA isomer names resolved by CAS (checked: PubChem formula of the CAS = record composition).
NAME_TO_CAS = {
    "C2H2,acetylene": "74-86-2", "C3H8O,1propanol": "71-23-8", "C3H8O,2propanol": "67-63-0",
    "C4H10,n-butane": "106-97-8", "C4H10,isobutane": "75-28-5", "CH3CHO,ethanal": "75-07-0",
    "C2H4O,ethylen": "75-21-8", "C3H6,propylene": "115-07-1", "C3H6,cyclo-": "75-19-4",
    "C3H4,allene": "463-49-0", "C3H4,propyne": "74-99-7", "C4H6,butadiene": "106-99-0",
    "C4H8,isobutene": "115-11-7", "C4H8,1-butene": "106-98-9", "C6H12,cyclo-": "110-82-7",
    "C7H16,n-heptane": "142-82-5", "C8H18,n-octane": "111-65-9", "C8H18,isooctane": "540-84-1",
    "C5H12,n-pentane": "109-66-0", "C5H12,i-pentane": "78-78-4", "C6H5OH,phenol": "108-95-2",
    "HCHO,formaldehy": "50-00-0", "CH2CO,ketene": "463-51-4", "C8H10,ethylbenz": "100-41-4",
    "C8H8,styrene": "100-42-5", "C10H8,naphthale": "91-20-3", "C2H6": "74-84-0",
    "C7H8": "108-88-3", "C8H18,n-octa": "111-65-9",  # toluene (g and C7H8(L)), n-octane liquid
}

# Unique-composition pairs whose written formulas differ but name the same compound (read by
# hand from ATcT's structural formula). Left out on purpose: C3H6O (NASA: propylene oxide;
# ATcT: acetone), CH3COOH (ATcT: methyl formate), N2H2 (ATcT: isodiazene H2NN).
SAME_COMPOUND = {
    "C2CL2": "ClCCCl", "C2F2": "FCCF", "C2H5": "CH3CH2", "C2HCL": "HCCCl", "C2HF": "HCCF",
    "C3H8": "CH3CH2CH3", "C3O2": "OCCCO", "C4H2": "HCCCCH", "CCL2F2": "CF2Cl2", "CCLF3": "CF3Cl",
    "CH2CLF": "CH2FCl", "CHCL2F": "CHFCl2", "CHCL3": "CCl3H", "CHCO,ketyl": "HCCO", "CHF3": "CF3H",
    "COF": "FCO", "HNO2": "HONO", "N2H4": "H2NNH2", "N2O+": "[NNO]+", "N2O4": "O2NNO2",
    "N2O5": "O2NONO2", "N3H": "HNNN", "NOCL": "ClNO",
}


def atct_rows():
    rx.Hfl_ATcT_data  # noqa: B018  (chemicals' lazy load)
    out = []
    for phase, df, col in (("g", rx.Hfg_ATcT_data, "Hfg"), ("l", rx.Hfl_ATcT_data, "Hfl")):
        for cas, r in df.iterrows():
            f = str(r["Formula"]).rsplit(" (", 1)[0].strip()
            charge = 0
            core = f
            for sign in ("+", "-"):
                if f.rstrip("0123456789").endswith(sign):
                    head, _, tail = f.rpartition(sign)
                    charge = (1 if sign == "+" else -1) * int(tail or 1)
                    core = head
            comp = parse_formula(core)
            if comp is None or "D" in comp:
                continue
            out.append(dict(cas=cas, chem=r["Chemical"], formula=f, phase=phase, charge=charge, comp=comp,
                            h=float(r[col]) / 1000.0, u=float(r["uncertainty"]) / 1000.0))
    return out


def written(text):
    """A formula as written, brackets dropped and NASA's AL/CL spelling undone: '[OH]+' -> 'OH+'."""
    t = text.split(",")[0].replace("(L)", "").replace("AL", "Al").replace("CL", "Cl")
    return t.replace("[", "").replace("]", "")


def key(comp, phase, charge):
    return (tuple(sorted((k, float(v)) for k, v in comp.items() if v)), phase, int(charge))


def main() -> int:
    _, nasa, _ = read_tsv(NASA_TSV)
    atct = atct_rows()
    a_by = collections.defaultdict(list)
    a_cas = {}
    for a in atct:
        a_by[key(a["comp"], a["phase"], a["charge"])].append(a)
        a_cas[(a["cas"], a["phase"])] = a
    n_by = collections.defaultdict(list)
    for r in nasa:
        if r["phase"] not in ("g", "l"):
            continue
        comp = parse_composition(r["composition"])
        if "D" in comp:
            continue
        n_by[key(comp, r["phase"], r["charge"])].append(r)
    mapped, how, rejected = [], {}, []
    for k, recs in n_by.items():
        cands = a_by.get(k, [])
        if len(recs) == 1 and len(cands) == 1 and recs[0]["name"] not in NAME_TO_CAS:
            # ATcT's table is a subset, so a unique composition is not proof of the same
            # compound (NASA C3H6O is propylene oxide, ATcT's only C3H6O is acetone): also
            # require NASA's name and ATcT's written formula to be the same string.
            if SAME_COMPOUND.get(recs[0]["name"]) == cands[0]["formula"]:
                mapped.append((recs[0], cands[0]))
                how[recs[0]["name"]] = f"unique composition+phase+charge; ATcT formula {cands[0]['formula']} (SAME_COMPOUND)"
            elif written(recs[0]["base"]) == written(cands[0]["formula"]):
                mapped.append((recs[0], cands[0]))
                how[recs[0]["name"]] = "unique composition+phase+charge on both sides, same written formula"
            else:
                rejected.append((recs[0]["name"], cands[0]["cas"], cands[0]["chem"], cands[0]["formula"]))
            continue
        for r in recs:
            cas = NAME_TO_CAS.get(r["name"].replace("(L)", ""))
            if cas and (cas, r["phase"]) in a_cas:
                hill = identifiers.search_chemical(cas).formula
                comp = parse_composition(r["composition"])
                assert parse_formula(hill) == {e: int(v) for e, v in comp.items()}, (r["name"], cas, hill)
                mapped.append((r, a_cas[(cas, r["phase"])]))
                how[r["name"]] = f"name -> CAS {cas} (PubChem formula {hill})"
    rows = []
    for r, a in mapped:
        segs = segments_nasa9(r)
        coef = segment_at(segs, T_REF, slack_below=1.85 + 1e-9)
        assert coef is not None, r["name"]
        h = h_rt(coef, T_REF) * R * T_REF / 1000.0
        rows.append((r["name"], a["cas"], a["h"], a["u"], h, h - a["h"], a["chem"], int(r["charge"])))
    rows.sort(key=lambda x: x[0])
    header = [
        "# nasa_uncertainty.tsv - written by scripts/gen_nasa_uncertainty.py; do not edit by hand.",
        f"# chemicals {chemicals.__version__}: Active Thermochemical Tables ver. 1.112 (B. Ruscic et al., Argonne",
        "#   National Laboratory, ATcT.anl.gov; freely available, cite the ATcT version), tables",
        "#   'ATcT 1.112 (g).tsv' and 'ATcT 1.112 (l).tsv'. No ATcT solid table ships with chemicals.",
        "# name: the nasa_species.tsv record; cas: the ATcT entry it is mapped to (mapping rule in the script).",
        "# atct_uncertainty_kj_per_mol: ATcT's stated uncertainty (ATcT quotes ~95% confidence intervals).",
        "# nasa_dhf_kj_per_mol: H(298.15 K) of the NASA polynomial; difference = NASA - ATcT.",
        "# Ions: NASA (McBride et al.) and ATcT may use different electron conventions (thermal vs",
        "#   stationary electron; 5/2 RT = 6.197 kJ/mol per unit charge at 298.15 K): compare ions with care.",
        "\t".join(COLUMNS),
    ]
    with open(OUT, "w", encoding="utf-8", newline="\n") as f:
        f.write("\n".join(header) + "\n")
        for name, cas, ha, ua, hn, d, _, _ in rows:
            f.write("\t".join([name, cas, repr(ha), repr(ua), f"{hn:.4f}", f"{d:.4f}"]) + "\n")
    print(f"wrote {os.path.relpath(OUT, ROOT)}: {len(rows)} NASA records with an ATcT uncertainty")
    print("mapping:")
    for name, cas, ha, ua, hn, d, chem, _ in rows:
        print(f"  {name:18s} -> {cas:12s} {chem:32s} {how[name]}")
    print(f"not mapped (unique composition, different written formula: possibly another isomer): {len(rejected)}")
    for name, cas, chem, form in sorted(rejected):
        print(f"  {name:18s} x {cas:12s} {chem:32s} ATcT formula {form}")
    for label, sel in (("neutral", lambda x: x[7] == 0), ("ions", lambda x: x[7] != 0)):
        sub = [x for x in rows if sel(x)]
        w = sum(abs(x[5]) <= 2 * x[3] for x in sub)
        b = collections.Counter("<1" if abs(x[5]) < 1 else "1-2" if abs(x[5]) < 2 else "2-5" if abs(x[5]) < 5
                                else "5-10" if abs(x[5]) < 10 else ">=10" for x in sub)
        print(f"{label}: {len(sub)} records, within 2x ATcT uncertainty {w}; |diff| kJ/mol "
              f"{ {k: b[k] for k in ('<1', '1-2', '2-5', '5-10', '>=10')} }")
    print("worst 10 neutral:")
    for x in sorted([x for x in rows if x[7] == 0], key=lambda x: -abs(x[5]))[:10]:
        print(f"  {x[0]:18s} {x[6]:30s} NASA {x[4]:10.3f} ATcT {x[2]:10.3f} +/- {x[3]:.3f}  diff {x[5]:+8.3f}")
    within = sum(abs(x[5]) <= 2 * x[3] for x in rows)
    bins = collections.Counter()
    for x in rows:
        ad = abs(x[5])
        bins["<1" if ad < 1 else "1-2" if ad < 2 else "2-5" if ad < 5 else "5-10" if ad < 10 else ">=10"] += 1
    print(f"|NASA - ATcT| within 2x ATcT uncertainty: {within} of {len(rows)}")
    print("|NASA - ATcT| kJ/mol:", {b: bins[b] for b in ("<1", "1-2", "2-5", "5-10", ">=10")})
    print("worst 10:")
    for name, cas, ha, ua, hn, d, chem, _ in sorted(rows, key=lambda x: -abs(x[5]))[:10]:
        print(f"  {name:18s} {chem:30s} NASA {hn:10.3f} ATcT {ha:10.3f} +/- {ua:.3f}  diff {d:+8.3f}")
    return 0


if __name__ == "__main__":
    sys.exit(main())
