#!/usr/bin/env python3
"""Write worker/engine/data/open_species.tsv: organic liquids (and their gases where the NASA
table has none) from openly licensed tables shipped in the PyPI package ``chemicals``.

Reads (all inside the installed ``chemicals`` package, version pinned in
scripts/requirements-open.txt; see scripts/README-open-data.md for every table and its terms):
  Reactions/ATcT 1.112 (l).tsv, Reactions/ATcT 1.112 (g).tsv
      Active Thermochemical Tables (Ruscic et al., Argonne National Laboratory), ver. 1.112:
      dHf(298.15 K) with ATcT's own uncertainty. Used for dHf wherever ATcT has the species.
  Misc/ChemSep8.32.xml
      ChemSep v8.3 pure component data, (c) Harry Kooijman and Ross Taylor (2021),
      Artistic License 2.0. Used for: liquid and ideal-gas Cp(T) correlations, ideal-gas
      dHf and absolute entropy, vapour pressure, enthalpy of vaporization, melting and
      normal boiling points.
  Identifiers (chemicals' PubChem-derived identifier table): molecular formula from CAS.
  Misc/webbook_constants.tsv (NIST WebBook, SRD 69): ONLY as an independent cross-check of the
      derived liquid S and dHf (printed, asserted loosely); no NIST value is written.
Writes:  worker/engine/data/open_species.tsv (nasa_species.tsv layout plus the columns
         source, dhf_uncertainty_kj_per_mol, cas).

Per liquid (standard state: pure liquid at 1 bar):
  dHf(l)  = ATcT dHf(l) if ATcT has the liquid; else ATcT dHf(g) - dvapH(298.15);
            else ChemSep dHf(ig) - dvapH(298.15).
  S(l)    = S(ig, 1 bar) + R ln(1 bar / Psat) - dvapH/T at 298.15 K, with S(ig, 1 bar) =
            ChemSep S(ig, 1 atm) + R ln(1.01325) (ChemSep, like DIPPR, tabulates 1 atm: its
            water value 188.724 is the 1 atm value, 1 bar is 188.835). Psat and dvapH from
            ChemSep (DIPPR eq. 101 and 106). The vapour is taken as ideal and dvapH at
            saturation as dvapH at P: adequate near 298 K where Psat << 1 bar.
  Cp(T)   = ChemSep liquid Cp correlation. Its form (eq. 16, A + exp(B/T + C + DT + ET^2)) is not a
            polynomial, so it cannot be converted exactly: it is least-squares fitted by the
            quartic a3 + a4 T + ... + a7 T^4 (NASA9 with a1 = a2 = 0) over the record's
            range; the largest relative deviation is asserted <= CP_FIT_TOL and written in
            the note. An eq. 100 polynomial (degree <= 4) is converted exactly.
  range   = [max(Cp Tmin, melting point), min(Cp Tmax, normal boiling point)]; a liquid whose
            range does not contain 298.15 K is skipped (acetaldehyde boils at 294 K, phenol
            melts at 314 K).
Per gas (only compounds the NASA table lacks; ideal gas at 1 bar):
  dHf(g)  = ATcT dHf(g) if present, else ChemSep dHf(ig);  S = ChemSep S(ig) + R ln(1.01325).
  Cp(T)   = ChemSep ideal-gas Cp (eq. 16) fitted by a quartic (a3..a7) on [Tmin, 1000 K] and
            [1000 K, Tmax], each split at rounded midpoints until within CP_FIT_TOL; H and S are continuous at 1000 K by construction of b1, b2.
Validation (asserts): H(298.15) and S(298.15) recomputed from the written coefficients equal
the anchors within 1e-6 kJ/mol and 1e-6 J/mol/K; H and S continuous at segment joins; Cp at
three temperatures (tmin, 298.15, tmax) within CP_FIT_TOL (fitted) or 1e-6 relative (exact) of
the ChemSep correlation; composition equals the formula read from the base name and the
PubChem formula of the CAS; no record duplicates a NASA record of the same formula and phase
unless listed as a distinct isomer.

Run from the repository root:
    .venv-open/bin/python scripts/gen_open_species.py
"""

from __future__ import annotations

import collections
import math
import os
import re
import sys
import xml.etree.ElementTree as ET

import chemicals
import numpy as np
from chemicals import identifiers, miscdata
from chemicals import reaction as rx
from chemicals.dippr import EQ101, EQ106
from chemicals.thermal_conductivity import Chemsep_16

ROOT = os.path.dirname(os.path.dirname(os.path.abspath(__file__)))
OUT = os.path.join(ROOT, "worker", "engine", "data", "open_species.tsv")
PKG = os.path.dirname(os.path.abspath(chemicals.__file__))
CHEMSEP_XML = os.path.join(PKG, "Misc", "ChemSep8.32.xml")
ATCT_L_FILE = "ATcT 1.112 (l).tsv"
ATCT_G_FILE = "ATcT 1.112 (g).tsv"
ONE_BAR = 100000.0
ONE_ATM = 101325.0
CP_FIT_TOL = 3e-3          # largest relative Cp deviation of a fit from the ChemSep correlation
ANCHOR_TOL = 1e-6
COLUMNS = ("name", "base", "phase", "tag", "charge", "composition", "model", "segments",
           "reference_pressure_pa", "note", "file", "source", "dhf_uncertainty_kj_per_mol", "cas")

R = 8.314462618  # J/(mol K), CODATA 2018 exact; the engine's value
T_REF = 298.15
NASA_TSV = os.path.join(ROOT, "worker", "engine", "data", "nasa_species.tsv")


def cp_r(a, t):
    return a[0] / t**2 + a[1] / t + a[2] + t * (a[3] + t * (a[4] + t * (a[5] + t * a[6])))


def h_rt(a, t):
    return (-a[0] / t**2 + a[1] * math.log(t) / t + a[2] + t * (a[3] / 2 + t * (a[4] / 3 + t * (a[5] / 4 + t * a[6] / 5)))
            + a[7] / t)


def s_r(a, t):
    return (-a[0] / (2 * t**2) - a[1] / t + a[2] * math.log(t) + t * (a[3] + t * (a[4] / 2 + t * (a[5] / 3 + t * a[6] / 4)))
            + a[8])


def nasa9_from_nasa7(c):
    return [0.0, 0.0, *c[0:5], c[5], c[6]]


def read_tsv(path):
    """Rows (dicts) and header comment lines of a nasa_species.tsv-layout file."""
    comments, rows, header = [], [], None
    with open(path, encoding="utf-8") as f:
        for line in f:
            line = line.rstrip("\n")
            if line.startswith("#"):
                comments.append(line)
                continue
            if not line.strip():
                continue
            fields = line.split("\t")
            if header is None:
                header = fields
                continue
            rows.append(dict(zip(header, fields)))
    return header, rows, comments


def segments_nasa9(row):
    """Segments of a TSV row as (tmin, tmax, [a1..a7, b1, b2]), ascending."""
    out = []
    for seg in row["segments"].split(";"):
        v = [float(x) for x in seg.split(",")]
        if row["model"] == "nasa7":
            assert len(v) == 9, row["name"]
            out.append((v[0], v[1], nasa9_from_nasa7(v[2:])))
        else:
            assert row["model"] == "nasa9" and len(v) == 11, row["name"]
            out.append((v[0], v[1], v[2:]))
    return sorted(out, key=lambda s: s[0])


def segment_at(segs, t, slack_below=0.0):
    """The segment covering t (the lowest one may start up to slack_below above t)."""
    for i, (t0, t1, a) in enumerate(segs):
        if t0 <= t <= t1 or (i == 0 and t < t0 <= t + slack_below):
            return a
    return None


def parse_formula(text):
    """Element counts of a formula with () and [] groups, e.g. 'CH3C(O)OH', '[HC(O)O]-',
    '(CH3CO)2O'. Trailing charge signs (+, -, +2) are ignored; returns None if unreadable."""
    t = re.sub(r"[+-]\d*$", "", text.strip())
    counts = collections.Counter()
    stack = [counts]
    i = 0
    while i < len(t):
        m = re.match(r"([A-Z][a-z]?)(\d*)", t[i:])
        if m:
            stack[-1][m.group(1)] += int(m.group(2) or 1)
            i += m.end()
        elif t[i] in "([":
            stack.append(collections.Counter())
            i += 1
        elif t[i] in ")]" and len(stack) > 1:
            m = re.match(r"[)\]](\d*)", t[i:])
            inner = stack.pop()
            for k, v in inner.items():
                stack[-1][k] += v * int(m.group(1) or 1)
            i += m.end()
        else:
            return None
    return dict(counts) if len(stack) == 1 else None


def nasa_formula(base):
    """Formula of a NASA-style base name (NASA spells Al, Cl as AL, CL; isomer label after ',')."""
    t = base.split(",")[0]
    t = re.sub(r"AL", "Al", re.sub(r"CL", "Cl", t))
    return parse_formula(t)


def composition_str(comp):
    return " ".join(f"{el}:{n}" for el, n in sorted(comp.items()))


def parse_composition(s):
    out = {}
    for part in s.split():
        el, n = part.split(":")
        out[el] = float(n)
    return out


# (CAS, base, add_gas, isomer_note)
#   base: a name the engine's formula parser reads (formula + optional NASA-style ',label').
#         Where the NASA table has the compound's gas, the liquid takes the NASA gas base
#         exactly (NASA spelling CL for Cl), so the engine pairs the two phases by name.
#   add_gas: also write the ideal gas (True only where the NASA table has no gas record of it).
#   isomer_note: why a record of a formula NASA already has (same phase) is a different compound.
SPECIES = [
    ("67-56-1", "CH3OH", False, ""),                   # methanol
    ("64-17-5", "C2H5OH", False, ""),                  # ethanol
    ("71-23-8", "C3H8O,1propanol", False, ""),         # 1-propanol
    ("67-63-0", "C3H8O,2propanol", False, ""),         # 2-propanol
    ("71-36-3", "C4H10O,1butanol", True, ""),          # 1-butanol
    ("78-83-1", "C4H10O,isobutanol", True, ""),        # 2-methyl-1-propanol
    ("67-64-1", "CH3COCH3", True, "NASA 'C3H6O' gas is propylene oxide (dHf(298) = -93.7 kJ/mol), not acetone"),
    ("78-93-3", "CH3COC2H5", True, ""),                # 2-butanone
    ("64-18-6", "HCOOH", False, ""),                   # formic acid
    ("64-19-7", "CH3COOH", False, ""),                 # acetic acid
    ("108-24-7", "(CH3CO)2O", True, ""),               # acetic anhydride
    ("79-20-9", "CH3COOCH3", True, ""),                # methyl acetate
    ("141-78-6", "CH3COOC2H5", True, ""),              # ethyl acetate
    ("60-29-7", "C2H5OC2H5", True, ""),                # diethyl ether
    ("1634-04-4", "CH3OC(CH3)3", True, ""),            # MTBE
    ("109-99-9", "C4H8O,tetrahydrofuran", True, ""),   # THF
    ("123-91-1", "C4H8O2,dioxane", True, ""),          # 1,4-dioxane
    ("68-12-2", "HCON(CH3)2", True, ""),               # DMF
    ("872-50-4", "C5H9NO,methylpyrrolidone", True, ""),  # NMP
    ("75-05-8", "CH3CN", False, ""),                   # acetonitrile
    ("110-86-1", "C5H5N", True, ""),                   # pyridine
    ("75-09-2", "CH2CL2", False, ""),                  # dichloromethane
    ("67-66-3", "CHCL3", False, ""),                   # chloroform
    ("56-23-5", "CCL4", False, ""),                    # carbon tetrachloride
    ("107-06-2", "CH2ClCH2Cl", True, ""),              # 1,2-dichloroethane
    ("75-15-0", "CS2", False, ""),                     # carbon disulfide
    ("109-66-0", "C5H12,n-pentane", False, ""),
    ("110-54-3", "C6H14,n-hexane", True, ""),
    ("142-82-5", "C7H16,n-heptane", False, ""),
    ("110-82-7", "C6H12,cyclo-", False, ""),           # cyclohexane
    ("100-41-4", "C8H10,ethylbenz", False, ""),        # ethylbenzene
    ("106-42-3", "C8H10,p-xylene", True, "NASA 'C8H10,ethylbenz' gas is ethylbenzene"),
    ("108-38-3", "C8H10,m-xylene", True, "NASA 'C8H10,ethylbenz' gas is ethylbenzene"),
    ("95-47-6", "C8H10,o-xylene", True, "NASA 'C8H10,ethylbenz' gas is ethylbenzene"),
    ("100-42-5", "C8H8,styrene", False, ""),
    ("108-90-7", "C6H5Cl", True, ""),                  # chlorobenzene
    ("98-95-3", "C6H5NO2", True, ""),                  # nitrobenzene
    ("62-53-3", "C6H5NH2", True, ""),                  # aniline
    ("100-52-7", "C6H5CHO", True, ""),                 # benzaldehyde
    ("108-95-2", "C6H5OH,phenol", False, ""),          # phenol: solid at 298.15 K, skipped
    ("75-07-0", "CH3CHO,ethanal", False, ""),          # acetaldehyde: boils at 294 K, skipped
    ("7697-37-2", "HNO3", False, ""),                  # nitric acid (nitrations)
]
# Left out after the cross-check below (the derivation or a ChemSep value fails):
#   acetic acid (l): its vapour dimerizes, so S(ig) - dvapS misses by 80 J/mol/K;
#   ethylene glycol (l, g): derived S(l) 12.5 below WebBook and ChemSep S(ig) 7 below WebBook S0g;
#   DMSO (l, g): ChemSep dHf(ig) -209.2 kJ/mol against WebBook -150.5.
SKIP_LIQUID = {"64-19-7": "vapour dimerizes: ideal-vapour derivation of S(l) invalid (80 J/mol/K off)"}
# Differences > XCHECK_TOL from the WebBook-constants table that were examined and kept:
XCHECK_TOL = 6.0
ACCEPTED = {
    ("CH3COCH3(L)", "S"): "WebBook-constants S0l 208.2 exceeds S(ig) - dvapS (its own dvapH 31.28 ~ ChemSep 31.36)",
    ("C6H5Cl(L)", "S"): "WebBook-constants S0l 197.5 would imply S(ig) 300 against ChemSep 314.1 (its dvapH 41.0 ~ ChemSep 40.9)",
    ("C2H5OC2H5(L)", "H"): "WebBook-constants Hfg - Hfl = 19.8 kJ/mol disagrees with its own Hvap 27.1",
    ("C8H10,ethylbenz(L)", "H"): "ChemSep dHf(ig) 29.92 agrees with the NASA C8H10,ethylbenz gas record (29.92); WebBook-constants Hfg 48.8 does not",
    ("C8H8,styrene(L)", "H"): "ChemSep dHf(ig) 147.4 agrees with the NASA C8H8,styrene gas record (148.30); WebBook-constants Hfg 136.5 does not",
}
# Compounds whose liquid the NASA table already has (not written): water H2O(L), benzene
# C6H6(L), toluene C7H8(L), n-octane C8H18(L),n-octa.


def chemsep_compounds():
    root = ET.parse(CHEMSEP_XML).getroot()
    header = root.attrib.get("library", "")
    by_cas = {}
    for c in root.findall("compound"):
        cas = c.find("CAS").get("value")
        by_cas[cas] = c
    return header, by_cas


def cs_value(c, tag):
    e = c.find(tag)
    return None if e is None or e.get("value") is None else float(e.get("value"))


def cs_corr(c, tag):
    """(eqno, coefficient dict, Tmin, Tmax) of a ChemSep temperature correlation."""
    e = c.find(tag)
    if e is None:
        return None
    coef = {k: float(e.find(k).get("value")) for k in "ABCDE" if e.find(k) is not None}
    return (int(e.find("eqno").get("value")), coef, float(e.find("Tmin").get("value")),
            float(e.find("Tmax").get("value")))


def cs_eval(corr, t, tc=None):
    """Value of a ChemSep correlation in its units (per kmol)."""
    eq, k, _, _ = corr
    g = lambda x: k.get(x, 0.0)  # noqa: E731
    if eq == 16:
        return Chemsep_16(t, g("A"), g("B"), g("C"), g("D"), g("E"))
    if eq == 100:
        return g("A") + t * (g("B") + t * (g("C") + t * (g("D") + t * g("E"))))
    if eq == 101:
        return EQ101(t, g("A"), g("B"), g("C"), g("D"), g("E"))
    if eq == 106:
        return EQ106(t, tc, g("A"), g("B"), g("C"), g("D"), g("E"))
    raise ValueError(f"ChemSep eqno {eq} not handled")


def fit_cp(cp_fn, t0, t1, degree):
    """Least-squares polynomial Cp/R = sum c_k T^k, k = 0..degree, on [t0, t1]; returns
    ([a1..a7] with a1 = a2 = 0, largest relative deviation on a dense grid)."""
    ts = np.linspace(t0, t1, 400)
    y = np.array([cp_fn(t) for t in ts]) / R
    x = (ts - t0) / (t1 - t0)                      # scaled for conditioning
    vx = np.vander(x, degree + 1, increasing=True)
    c_scaled, *_ = np.linalg.lstsq(vx, y, rcond=None)
    # back to powers of T: sum c_j ((T - t0)/w)^j
    w = t1 - t0
    poly = np.polynomial.polynomial
    p = np.zeros(1)
    for j, cj in enumerate(c_scaled):
        p = poly.polyadd(p, cj * poly.polypow([-t0 / w, 1.0 / w], j))
    coeffs = [0.0, 0.0] + [float(v) for v in p] + [0.0] * (5 - len(p))
    dense = np.linspace(t0, t1, 2001)
    dev = max(abs(cp_r(coeffs, t) * R / cp_fn(t) - 1.0) for t in dense)
    return coeffs, dev


def split_fit(cp_fn, cuts, degree):
    """Split segments at rounded midpoints until every fit is within CP_FIT_TOL."""
    cuts = list(cuts)
    while True:
        for i in range(len(cuts) - 1):
            if fit_cp(cp_fn, cuts[i], cuts[i + 1], degree)[1] > CP_FIT_TOL:
                mid = round((cuts[i] + cuts[i + 1]) / 2.0 / 50.0) * 50.0
                assert cuts[i] < mid < cuts[i + 1], cuts
                cuts.insert(i + 1, mid)
                break
        else:
            return cuts


def build_segments(cp_fn, cuts, degree, h_ref, s_ref):
    """Fitted segments on cuts; the one holding 298.15 K is anchored to h_ref, s_ref and the
    others are joined to it with H and S continuous. Returns (segments, max deviation)."""
    fits = [fit_cp(cp_fn, cuts[i], cuts[i + 1], degree) for i in range(len(cuts) - 1)]
    k0 = next(i for i in range(len(cuts) - 1) if cuts[i] <= T_REF <= cuts[i + 1])
    coef = {k0: anchor(fits[k0][0], T_REF, h_ref, s_ref)}
    for i in range(k0 + 1, len(fits)):
        prev, tj = coef[i - 1], cuts[i]
        coef[i] = anchor(fits[i][0], tj, h_rt(prev, tj) * R * tj, s_r(prev, tj) * R)
    for i in range(k0 - 1, -1, -1):
        nxt, tj = coef[i + 1], cuts[i + 1]
        coef[i] = anchor(fits[i][0], tj, h_rt(nxt, tj) * R * tj, s_r(nxt, tj) * R)
    segs = [(cuts[i], cuts[i + 1], coef[i]) for i in range(len(fits))]
    return segs, max(f[1] for f in fits)


def anchor(a7, t_ref, h_j, s_j):
    """[a1..a7, b1, b2] with H(t_ref) = h_j (J/mol) and S(t_ref) = s_j (J/mol/K)."""
    a = list(a7) + [0.0, 0.0]
    b1 = h_j / R - h_rt(a, t_ref) * t_ref
    b2 = s_j / R - s_r(a, t_ref)
    return list(a7) + [b1, b2]


def fmt(x):
    return repr(float(x))


def atct_tables():
    rx.Hfl_ATcT_data  # noqa: B018  (triggers chemicals' lazy load)
    return rx.Hfl_ATcT_data, rx.Hfg_ATcT_data


def nasa_index():
    _, rows, _ = read_tsv(NASA_TSV)
    idx = collections.defaultdict(list)
    for r in rows:
        comp = parse_composition(r["composition"])
        key = (tuple(sorted((k, v) for k, v in comp.items())), r["phase"], r["charge"])
        idx[key].append(r["name"])
    names = {r["name"]: r for r in rows}
    return idx, names


def comp_key(comp, phase):
    return (tuple(sorted((k, float(v)) for k, v in comp.items())), phase, "0")


def main() -> int:
    cs_header, cs = chemsep_compounds()
    atl, atg = atct_tables()
    miscdata.webbook_data  # noqa: B018
    wb = miscdata.webbook_data
    nasa_idx, nasa_rows = nasa_index()
    rows, skipped, checks = [], [], []
    versions = f"chemicals {chemicals.__version__}"
    cs_tag = "ChemSep v8.3 (Kooijman & Taylor, Artistic-2.0; Misc/ChemSep8.32.xml in chemicals)"

    for cas, base, add_gas, isomer_note in SPECIES:
        c = cs.get(cas)
        if c is None:
            skipped.append(f"{base} (CAS {cas}): not in the ChemSep table, no open S and Cp")
            continue
        cs_name = c.find("CompoundID").get("value")
        hill = identifiers.search_chemical(cas).formula
        comp = parse_formula(hill)
        comp_base = nasa_formula(base)
        assert comp == comp_base, (base, hill, comp_base)
        tc = cs_value(c, "CriticalTemperature")
        tb = cs_value(c, "NormalBoilingPointTemperature")
        tm = cs_value(c, "NormalMeltingPointTemperature") or cs_value(c, "TriplePointTemperature")
        hvap_c = cs_corr(c, "HeatOfVaporization")
        psat_c = cs_corr(c, "VaporPressure")
        hvap = cs_eval(hvap_c, T_REF, tc) / 1000.0           # J/mol
        psat = cs_eval(psat_c, T_REF)                        # Pa
        s_ig_atm = cs_value(c, "AbsEntropy") / 1000.0        # J/mol/K at 1 atm
        s_ig = s_ig_atm + R * math.log(ONE_ATM / ONE_BAR)
        hf_ig_cs = cs_value(c, "HeatOfFormation") / 1000.0   # J/mol
        hfg_atct = float(atg.at[cas, "Hfg"]) if cas in atg.index else None
        ug_atct = float(atg.at[cas, "uncertainty"]) if cas in atg.index else None
        hfl_atct = float(atl.at[cas, "Hfl"]) if cas in atl.index else None
        ul_atct = float(atl.at[cas, "uncertainty"]) if cas in atl.index else None
        cas_int = identifiers.CAS_to_int(cas)

        # ---------------- liquid ----------------
        cpl = cs_corr(c, "LiquidHeatCapacityCp")
        t_lo = max(cpl[2], tm if tm else cpl[2])
        t_hi = min(cpl[3], tb)
        if cas in SKIP_LIQUID:
            skipped.append(f"{base}(L) ({cs_name}): {SKIP_LIQUID[cas]}")
        elif not (t_lo <= T_REF <= t_hi):
            skipped.append(f"{base}(L) ({cs_name}): liquid range {t_lo:.2f}-{t_hi:.2f} K does not contain 298.15 K")
        else:
            if hfl_atct is not None:
                hf_l, u_l = hfl_atct, ul_atct / 1000.0
                hf_src = f"dHf(l) ATcT 1.112 ({ATCT_L_FILE}) +/- {ul_atct / 1000:g} kJ/mol"
            elif hfg_atct is not None:
                hf_l, u_l = hfg_atct - hvap, None
                hf_src = (f"dHf(l) = ATcT 1.112 dHf(g) {hfg_atct / 1000:.3f} (+/- {ug_atct / 1000:g}) "
                          f"- ChemSep dvapH(298.15) {hvap / 1000:.3f} kJ/mol")
            else:
                hf_l, u_l = hf_ig_cs - hvap, None
                hf_src = (f"dHf(l) = ChemSep dHf(ig) {hf_ig_cs / 1000:.3f} - ChemSep dvapH(298.15) "
                          f"{hvap / 1000:.3f} kJ/mol")
            s_l = s_ig + R * math.log(ONE_BAR / psat) - hvap / T_REF
            cp_fn = lambda t, cpl=cpl: cs_eval(cpl, t) / 1000.0  # noqa: E731
            if cpl[0] == 100 and all(k in "ABCDE" for k in cpl[1]):
                k = cpl[1]
                a7 = [0.0, 0.0] + [k.get(x, 0.0) / 1000.0 / R for x in "ABCDE"]
                exact, dev = True, 0.0
            elif cpl[0] == 16:
                exact = False
            else:
                skipped.append(f"{base}(L): ChemSep liquid Cp eqno {cpl[0]} not handled")
                continue
            if exact:
                segs, dev, cuts = [(t_lo, t_hi, anchor(a7, T_REF, hf_l, s_l))], 0.0, [t_lo, t_hi]
            else:
                cuts = split_fit(cp_fn, [t_lo, t_hi], 4)
                segs, dev = build_segments(cp_fn, cuts, 4, hf_l, s_l)
            assert dev <= CP_FIT_TOL, (base, dev)
            note = (f"{hf_src}; S(l) = ChemSep S(ig) {s_ig_atm:.3f} J/mol/K (1 atm) -> 1 bar "
                    f"+ R ln(1 bar/Psat {psat:.1f} Pa) - dvapH/T = {s_l:.3f} J/mol/K; "
                    + (f"Cp ChemSep eq.{cpl[0]} converted exactly" if exact else
                       (f"Cp ChemSep eq.16 fitted by quartic" + (f" per segment (joins {' '.join(f'{t:g}' for t in cuts[1:-1])} K)" if len(cuts) > 2 else "") + f", max rel. dev. {dev:.1e}"))
                    + f"; range max(Cp Tmin {cpl[2]:g}, Tm {tm:g}) - min(Cp Tmax {cpl[3]:g}, Tb {tb:g}) K")
            src = ("ATcT 1.112 (Argonne) dHf + ChemSep v8.3 S, Cp (via chemicals "
                   f"{chemicals.__version__})") if hfl_atct is not None or hfg_atct is not None else \
                f"ChemSep v8.3 (via chemicals {chemicals.__version__})"
            files = ";".join(x for x in (ATCT_L_FILE if hfl_atct is not None else "",
                                         ATCT_G_FILE if hfl_atct is None and hfg_atct is not None else "",
                                         "ChemSep8.32.xml") if x)
            rows.append(dict(name=f"{base}(L)", base=base, phase="l", tag="L", comp=comp, segs=segs,
                             note=note, file=files, source=src, unc=u_l, cas=cas, h=hf_l, s=s_l,
                             cp_fn=cp_fn, exact=exact, isomer=isomer_note, cs_name=cs_name))
            wb_s = wb.at[cas_int, "S0l"] if cas_int in wb.index else float("nan")
            wb_h = wb.at[cas_int, "Hfl"] if cas_int in wb.index else float("nan")
            checks.append((f"{base}(L)", s_l, wb_s, hf_l, hfl_atct, wb_h))

        # ---------------- gas ----------------
        if add_gas:
            cpg = cs_corr(c, "IdealGasHeatCapacityCp")
            assert cpg[0] == 16, (base, cpg[0])
            g_lo, g_hi = cpg[2], cpg[3]
            assert g_lo <= T_REF, (base, g_lo)
            cpg_fn = lambda t, cpg=cpg: cs_eval(cpg, t) / 1000.0  # noqa: E731
            if hfg_atct is not None:
                hf_g, u_g = hfg_atct, ug_atct / 1000.0
                hf_src = f"dHf(g) ATcT 1.112 ({ATCT_G_FILE}) +/- {ug_atct / 1000:g} kJ/mol"
            else:
                hf_g, u_g = hf_ig_cs, None
                hf_src = "dHf(g) ChemSep dHf(ig)"
            cuts = split_fit(cpg_fn, [g_lo, 1000.0, g_hi] if g_hi > 1100.0 else [g_lo, g_hi], 4)
            segs, gdev = build_segments(cpg_fn, cuts, 4, hf_g, s_ig)
            assert gdev <= CP_FIT_TOL, (base, gdev)
            note = (f"{hf_src}; S(g) = ChemSep S(ig) {s_ig_atm:.3f} J/mol/K (1 atm) -> 1 bar {s_ig:.3f}; "
                    f"Cp ChemSep eq.16 fitted by quartic per segment (joins {' '.join(f'{t:g}' for t in cuts[1:-1])} K), max rel. dev. "
                    f"{gdev:.1e}; range = ChemSep Cp range {g_lo:g}-{g_hi:g} K")
            src = (f"ATcT 1.112 (Argonne) dHf + ChemSep v8.3 S, Cp (via chemicals {chemicals.__version__})"
                   if hfg_atct is not None else f"ChemSep v8.3 (via chemicals {chemicals.__version__})")
            files = ";".join(x for x in (ATCT_G_FILE if hfg_atct is not None else "", "ChemSep8.32.xml") if x)
            rows.append(dict(name=base, base=base, phase="g", tag="", comp=comp, segs=segs, note=note,
                             file=files, source=src, unc=u_g, cas=cas, h=hf_g, s=s_ig, cp_fn=cpg_fn,
                             exact=False, isomer=isomer_note, cs_name=cs_name))

    # ---------------- checks ----------------
    names = set()
    for r in rows:
        assert r["name"] not in names and r["name"] not in nasa_rows, r["name"]
        names.add(r["name"])
        same = nasa_idx.get(comp_key(r["comp"], r["phase"]), [])
        assert not same or r["isomer"], f"{r['name']}: NASA has {same} (same formula and phase)"
        # written strings, parsed back
        seg_txt = ";".join(",".join([fmt(t0), fmt(t1)] + [fmt(x) for x in a]) for t0, t1, a in r["segs"])
        r["segments"] = seg_txt
        back = [list(map(float, s.split(","))) for s in seg_txt.split(";")]
        a0 = next(b[2:] for b in back if b[0] <= T_REF <= b[1])
        assert abs(h_rt(a0, T_REF) * R * T_REF - r["h"]) / 1000.0 <= ANCHOR_TOL, r["name"]
        assert abs(s_r(a0, T_REF) * R - r["s"]) <= ANCHOR_TOL, r["name"]
        for s0, s1 in zip(back, back[1:]):
            tj = s0[1]
            assert tj == s1[0]
            assert abs(h_rt(s0[2:], tj) - h_rt(s1[2:], tj)) * R * tj / 1000.0 <= ANCHOR_TOL, r["name"]
            assert abs(s_r(s0[2:], tj) - s_r(s1[2:], tj)) * R <= ANCHOR_TOL, r["name"]
        tol = 1e-6 if r["exact"] else CP_FIT_TOL
        for t in (back[0][0], T_REF, back[-1][1]):
            a = next(s[2:] for s in back if s[0] <= t <= s[1])
            assert abs(cp_r(a, t) * R / r["cp_fn"](t) - 1.0) <= tol, (r["name"], t)

    header = [
        "# open_species.tsv - written by scripts/gen_open_species.py; do not edit by hand.",
        f"# Python packages: {versions}, numpy {np.__version__} (pins: scripts/requirements-open.txt).",
        "# Sources (tables inside the chemicals package; origins and terms: scripts/README-open-data.md):",
        f"#   {ATCT_L_FILE}, {ATCT_G_FILE}: Active Thermochemical Tables ver. 1.112, B. Ruscic et al.,",
        "#     Argonne National Laboratory (ATcT.anl.gov); dHf(298.15 K) and its ATcT uncertainty.",
        "#     Terms: freely available; Argonne asks that the ATcT version be cited. No licence text ships.",
        f"#   ChemSep8.32.xml: {cs_header}",
        "#     (Artistic License 2.0): S(ig), dHf(ig), Cp(T) liquid and ideal gas, Psat, dvapH, Tm, Tb.",
        "#   Molecular formulas: chemicals' identifier table (from PubChem, public domain).",
        "# Not used for any value: CRC Handbook, Perry, Poling, Zabransky, VDI, Yaws (copyrighted books),",
        "#   NIST WebBook (SRD 69, copyright under 15 U.S.C. 290e; used only to cross-check, see the script).",
        "# Liquid S(298.15) is DERIVED: S(ig, 1 bar) + R ln(1 bar/Psat) - dvapH/T (ideal vapour); liquid",
        "#   dHf is ATcT(l), else ATcT(g) - dvapH, else ChemSep dHf(ig) - dvapH (each record's note says which).",
        "# Cp(T): ChemSep's eq.16 correlations are not polynomials; they are least-squares fitted (liquid: quartic;",
        f"#   gas: quartic per segment, joined at 1000 K and, where needed, lower); max relative deviation <= {CP_FIT_TOL:g}, per record in note.",
        "# Liquid ranges stop at the normal boiling point. ChemSep entropies (1 atm) are converted to 1 bar.",
        "# dhf_uncertainty_kj_per_mol: ATcT's stated uncertainty where dHf is ATcT's value for that phase;",
        "#   empty otherwise (no source states one).",
        "# segments: tmin,tmax,a1..a7,b1,b2 (nasa9: Cp/R = a1/T^2 + a2/T + a3 + a4 T + ... + a7 T^4).",
        "\t".join(COLUMNS),
    ]
    with open(OUT, "w", encoding="utf-8", newline="\n") as f:
        f.write("\n".join(header) + "\n")
        for r in rows:
            out = {
                "name": r["name"], "base": r["base"], "phase": r["phase"], "tag": r["tag"], "charge": "0",
                "composition": composition_str(r["comp"]), "model": "nasa9", "segments": r["segments"],
                "reference_pressure_pa": "100000", "note": r["note"] + (f"; {r['isomer']}" if r["isomer"] else "")
                + f"; ChemSep name: {r['cs_name']}",
                "file": r["file"], "source": r["source"],
                "dhf_uncertainty_kj_per_mol": "" if r["unc"] is None else repr(r["unc"]), "cas": r["cas"],
            }
            for k, v in out.items():
                assert "\t" not in v and "\n" not in v, (r["name"], k)
            f.write("\t".join(out[k] for k in COLUMNS) + "\n")

    nl = sum(r["phase"] == "l" for r in rows)
    print(f"wrote {os.path.relpath(OUT, ROOT)}: {len(rows)} records ({nl} liquids, {len(rows) - nl} gases)")
    print("liquids:", ", ".join(r["name"] for r in rows if r["phase"] == "l"))
    print("gases:  ", ", ".join(r["name"] for r in rows if r["phase"] == "g"))
    for s in skipped:
        print("skipped:", s)
    print("cross-check (not bundled): derived S(l) vs NIST WebBook S0l; dHf(l) written vs ATcT(l), WebBook Hfl")
    big = []
    for name, s_l, wb_s, h_l, at_h, wb_h in checks:
        ds = s_l - wb_s
        dh = (h_l - wb_h) / 1000.0
        print(f"  {name:32s} S {s_l:8.2f}  WebBook {wb_s:8.2f}  diff {ds:+6.2f} J/mol/K | "
              f"dHf {h_l / 1000:9.2f}  WebBook {wb_h / 1000:9.2f}  diff {dh:+6.2f} kJ/mol")
        for q, d in (("S", ds), ("H", dh)):
            if not math.isnan(d) and abs(d) > XCHECK_TOL:
                if (name, q) in ACCEPTED:
                    print(f"    accepted {q} difference: {ACCEPTED[(name, q)]}")
                else:
                    big.append((name, q, d))
    assert not big, f"derived values far from the WebBook cross-check: {big}"
    return 0


if __name__ == "__main__":
    sys.exit(main())
