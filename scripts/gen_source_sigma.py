#!/usr/bin/env python3
"""Source-typical standard uncertainties of ΔfH°(298.15 K) for bundled tables that state none.

A table without a stated uncertainty still has one. It is estimated here from comparisons of the
table with an independent source over the compounds both carry:
- NASA (McBride et al., via Cantera) against ATcT 1.112: the neutral rows of
  worker/engine/data/nasa_uncertainty.tsv (NASA - ATcT differences).
- ChemSep 8.32 ideal-gas ΔfH° against ATcT 1.112 (g), by CAS.
- ChemSep liquid ΔfH° (ChemSep ΔfH°(ig) - ChemSep ΔvapH(298.15 K)) against ATcT 1.112 (l), by CAS.
- ChemSep ΔvapH(298.15 K) against ATcT (g) - ATcT (l), by CAS: the error a liquid made of an
  ATcT gas value and a ChemSep vaporization carries.
For each comparison σ = max(RMS of differences, half the 95th percentile of |differences|): a
promise that about 95% of the table's errors lie within 2σ, not a fit to the average. The ATcT
side's own σ (its ± / 2) is small next to these and is not subtracted.

Writes worker/engine/data/source_sigma.tsv. Deterministic.
Usage: .venv-open/bin/python scripts/gen_source_sigma.py   (pins: scripts/requirements-open.txt)
"""
import csv
import math
import os
import pathlib
import sys
import xml.etree.ElementTree as ET

import chemicals
import numpy as np
from chemicals import reaction as rx
from chemicals.dippr import EQ106

ROOT = pathlib.Path(__file__).resolve().parents[1]
OUT = ROOT / "worker/engine/data/source_sigma.tsv"
NASA_UNC = ROOT / "worker/engine/data/nasa_uncertainty.tsv"
CHEMSEP_XML = os.path.join(os.path.dirname(chemicals.__file__), "Misc", "ChemSep8.32.xml")


def summary(diffs):
    d = np.asarray(diffs, dtype=float)
    rms = math.sqrt(float(np.mean(d * d)))
    p95 = float(np.percentile(np.abs(d), 95))
    return len(d), rms, p95, max(rms, p95 / 2)


def nasa_vs_atct():
    diffs = []
    with open(NASA_UNC) as f:
        rows = [l for l in f if not l.startswith("#")]
    for r in csv.DictReader(rows, delimiter="\t"):
        name = r["name"]
        if name.endswith(("+", "-")) or name == "Electron":
            continue
        d = float(r["difference_kj_per_mol"])
        if float(r["atct_dhf_kj_per_mol"]) == 0.0 and abs(d) < 1e-9:
            continue  # elements in their reference state agree by definition
        diffs.append(d)
    return diffs


def chemsep():
    root = ET.parse(CHEMSEP_XML).getroot()
    out = {}
    for c in root.findall("compound"):
        cas = c.find("CAS").get("value")
        hf = c.find("HeatOfFormation")
        tc = c.find("CriticalTemperature")
        hv = c.find("HeatOfVaporization")
        if hf is None or hf.get("value") is None:
            continue
        dhvap = None
        if hv is not None and tc is not None:
            k = {x: float(hv.find(x).get("value")) for x in "ABCDE" if hv.find(x) is not None}
            if int(hv.find("eqno").get("value")) == 106:
                g = lambda x: k.get(x, 0.0)  # noqa: E731
                dhvap = EQ106(298.15, float(tc.get("value")), g("A"), g("B"), g("C"), g("D"), g("E")) / 1e6
        out[cas] = (float(hf.get("value")) / 1e6, dhvap)  # J/kmol -> kJ/mol
    return out


def main() -> int:
    rx.Hfl_ATcT_data  # noqa: B018  (chemicals loads its tables lazily)
    atct_g = rx.Hfg_ATcT_data["Hfg"] / 1000.0
    atct_l = rx.Hfl_ATcT_data["Hfl"] / 1000.0
    cs = chemsep()
    gas, liq, vap = [], [], []
    for cas, (hf_ig, dhvap) in sorted(cs.items()):
        if cas in atct_g.index and not math.isnan(atct_g[cas]):
            gas.append(hf_ig - atct_g[cas])
        if dhvap is not None and cas in atct_l.index and not math.isnan(atct_l[cas]):
            liq.append(hf_ig - dhvap - atct_l[cas])
            if cas in atct_g.index and not math.isnan(atct_g[cas]):
                vap.append(dhvap - (atct_g[cas] - atct_l[cas]))
    rows = [
        ("nasa", nasa_vs_atct(), "NASA (McBride et al. 1993, via Cantera 3.2.0) - ATcT 1.112, neutral species of nasa_uncertainty.tsv"),
        ("chemsep_gas", gas, "ChemSep 8.32 dHf(ig) - ATcT 1.112 dHf(g), by CAS"),
        ("chemsep_liquid", liq, "ChemSep 8.32 dHf(ig) - ChemSep dvapH(298.15 K) - ATcT 1.112 dHf(l), by CAS"),
        ("chemsep_vaporization", vap, "ChemSep 8.32 dvapH(298.15 K) - (ATcT 1.112 dHf(g) - dHf(l)), by CAS"),
    ]
    with open(OUT, "w", newline="") as f:
        f.write("# source_sigma.tsv - written by scripts/gen_source_sigma.py; do not edit by hand.\n")
        f.write(f"# chemicals {chemicals.__version__}, numpy {np.__version__}. Source-typical standard uncertainty of dHf(298.15 K)\n")
        f.write("# for tables that state none, from comparisons with an independent source over shared compounds:\n")
        f.write("# sigma = max(RMS of differences, 95th percentile of |differences| / 2).\n")
        f.write("source\tsigma_kj_per_mol\tcompared\trms_kj_per_mol\tp95_abs_kj_per_mol\tcomparison\n")
        for key, diffs, how in rows:
            n, rms, p95, sigma = summary(diffs)
            if n < 8:
                print(f"{key}: only {n} shared compounds", file=sys.stderr)
                return 1
            f.write(f"{key}\t{sigma:.2f}\t{n}\t{rms:.2f}\t{p95:.2f}\t{how}\n")
            print(key, n, round(rms, 2), round(p95, 2), round(sigma, 2))
    return 0


if __name__ == "__main__":
    sys.exit(main())
