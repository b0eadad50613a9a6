#!/usr/bin/env python3
"""Write worker/engine/tests/reference/cantera_reactions.tsv: reaction thermodynamics by Cantera.

Reads:   nasa_gas.yaml and nasa_condensed.yaml from the installed Cantera package (version
         pinned in scripts/requirements-data.txt), via ``cantera.Species.list_from_file``.
Writes:  worker/engine/tests/reference/cantera_reactions.tsv (UTF-8, tab separated, ``#`` header):
         one row per reaction and temperature with dH, dS, dG and log10 K, computed from each
         species' ``thermo.h(T)`` [J/kmol] and ``thermo.s(T)`` [J/kmol/K] (NASA convention:
         H(298.15 K) of a species is its standard enthalpy of formation).

Source data and terms: NASA thermodynamic data (McBride, Gordon & Reno, NASA TM-4513, 1993),
public domain (work of the US Government), as distributed in Cantera (BSD-3-Clause). The
numbers written here are computed by Cantera from those data.

Rules:
  * A temperature is used for a reaction only when it lies inside [min_temp, max_temp] of every
    participating species record (no extrapolation). Some records start at 300 K (e.g. SO2,
    SO3, HCL, AL2O3(a), Fe2O3(s), CaO(s), MgO(s)); reactions with them have no 298.15 K row and
    start at 300 K instead.
  * Equation text: gases as their formula + "(g)", liquids base + "(l)", solids base + "(s)",
    graphite "C(gr)". The NASA names spell Al and Cl as "AL" and "CL" (CHEMKIN style); the
    equation uses real element symbols (Al, Cl), and the column cantera_species gives the exact
    record names. Gases named with an isomer label keep the NASA name ("C6H12,cyclo-(g)").
  * "X(s)" means the one solid record of base X that covers 298.15 K. Because so many solid
    records start at 300 K, a record starting at or below 300 K counts as covering 298.15 K for
    this choice (tolerance RESOLVE_SLACK_K); the script asserts that exactly one solid record of
    every solid used qualifies and warns about any base where several do.
  * R = cantera.gas_constant / 1000 = 8.314462618... J/mol/K (CODATA 2018 exact value).

Run from the repository root:
    .venv-data/bin/python scripts/gen_cantera_reference.py
"""

from __future__ import annotations

import collections
import math
import os
import re
import sys
from fractions import Fraction

import cantera as ct

ROOT = os.path.dirname(os.path.dirname(os.path.abspath(__file__)))
OUT = os.path.join(ROOT, "worker", "engine", "tests", "reference", "cantera_reactions.tsv")
T_STD = 298.15
RESOLVE_SLACK_K = 300.0 - T_STD
R = ct.gas_constant / 1000.0  # J/mol/K
COLUMNS = ("id", "kind", "equation", "cantera_species", "temperature_k", "delta_h_kj_per_mol",
           "delta_s_j_per_mol_k", "delta_g_kj_per_mol", "log10_k")

GAS_T = (298.15, 300.0, 400.0, 600.0, 800.0, 1000.0, 1500.0)
LIQUID_WATER_T = (298.15, 300.0, 320.0, 350.0, 373.15)
ORGANIC_LIQUID_T = (298.15, 300.0, 320.0, 350.0, 400.0)
SOLID_T = (298.15, 300.0, 400.0, 600.0, 800.0, 1000.0, 1200.0)

# id, kind, equation terms (coefficient, species in our syntax), temperatures to try.
REACTIONS = [
    # combustion
    ("ch4_combustion_gas_water", "combustion", "CH4(g) + 2 O2(g) -> CO2(g) + 2 H2O(g)", GAS_T),
    ("ch4_combustion_liquid_water", "combustion", "CH4(g) + 2 O2(g) -> CO2(g) + 2 H2O(l)", LIQUID_WATER_T),
    ("c2h6_combustion", "combustion", "2 C2H6(g) + 7 O2(g) -> 4 CO2(g) + 6 H2O(g)", GAS_T),
    ("c3h8_combustion", "combustion", "C3H8(g) + 5 O2(g) -> 3 CO2(g) + 4 H2O(g)", GAS_T),
    ("c3h8_combustion_liquid_water", "combustion", "C3H8(g) + 5 O2(g) -> 3 CO2(g) + 4 H2O(l)", LIQUID_WATER_T),
    ("ch3oh_combustion_gas", "combustion", "2 CH3OH(g) + 3 O2(g) -> 2 CO2(g) + 4 H2O(g)", GAS_T),
    ("c2h5oh_combustion_gas", "combustion", "C2H5OH(g) + 3 O2(g) -> 2 CO2(g) + 3 H2O(g)", GAS_T),
    ("c6h6_liquid_combustion", "combustion", "2 C6H6(l) + 15 O2(g) -> 12 CO2(g) + 6 H2O(l)", LIQUID_WATER_T),
    ("c7h8_liquid_combustion", "combustion", "C7H8(l) + 9 O2(g) -> 7 CO2(g) + 4 H2O(l)", LIQUID_WATER_T),
    ("co_combustion", "combustion", "2 CO(g) + O2(g) -> 2 CO2(g)", GAS_T),
    ("h2_combustion_liquid_water", "combustion", "2 H2(g) + O2(g) -> 2 H2O(l)", LIQUID_WATER_T),
    ("h2_combustion_gas_water", "combustion", "2 H2(g) + O2(g) -> 2 H2O(g)", GAS_T),
    # hydrogenation
    ("ethylene_hydrogenation", "hydrogenation", "C2H4(g) + H2(g) -> C2H6(g)", GAS_T),
    ("benzene_hydrogenation", "hydrogenation", "C6H6(g) + 3 H2(g) -> C6H12,cyclo-(g)", GAS_T),
    ("co_methanation", "hydrogenation", "CO(g) + 3 H2(g) -> CH4(g) + H2O(g)", GAS_T),
    ("co2_to_methanol", "hydrogenation", "CO2(g) + 3 H2(g) -> CH3OH(g) + H2O(g)", GAS_T),
    ("co_to_methanol", "hydrogenation", "CO(g) + 2 H2(g) -> CH3OH(g)", GAS_T),
    ("ammonia_synthesis", "hydrogenation", "N2(g) + 3 H2(g) -> 2 NH3(g)", GAS_T),
    ("hcl_formation", "hydrogenation", "H2(g) + Cl2(g) -> 2 HCl(g)", GAS_T),
    # oxidation
    ("so2_oxidation", "oxidation", "2 SO2(g) + O2(g) -> 2 SO3(g)", GAS_T),
    ("ammonia_oxidation", "oxidation", "4 NH3(g) + 5 O2(g) -> 4 NO(g) + 6 H2O(g)", GAS_T),
    ("no_oxidation", "oxidation", "2 NO(g) + O2(g) -> 2 NO2(g)", GAS_T),
    ("water_gas_shift", "oxidation", "CO(g) + H2O(g) -> CO2(g) + H2(g)", GAS_T),
    ("steam_reforming", "oxidation", "CH4(g) + H2O(g) -> CO(g) + 3 H2(g)", GAS_T),
    # decomposition
    ("caco3_calcination", "decomposition", "CaCO3(s) -> CaO(s) + CO2(g)", SOLID_T),
    ("mgco3_calcination", "decomposition", "MgCO3(s) -> MgO(s) + CO2(g)", SOLID_T),
    ("n2o_decomposition", "decomposition", "2 N2O(g) -> 2 N2(g) + O2(g)", GAS_T),
    ("n2o4_dissociation", "decomposition", "N2O4(g) -> 2 NO2(g)", GAS_T),
    ("h2o2_decomposition", "decomposition", "2 H2O2(g) -> 2 H2O(g) + O2(g)", GAS_T),
    ("nh4cl_decomposition", "decomposition", "NH4Cl(s) -> NH3(g) + HCl(g)", (298.15, 300.0, 350.0, 400.0, 450.0)),
    # reactions of solids
    ("thermite", "solids", "2 Al(s) + Fe2O3(s) -> Al2O3(s) + 2 Fe(s)", SOLID_T),
    ("graphite_combustion", "solids", "C(gr) + O2(g) -> CO2(g)", SOLID_T),
    ("iron_to_hematite", "solids", "4 Fe(s) + 3 O2(g) -> 2 Fe2O3(s)", SOLID_T),
    ("iron_to_magnetite", "solids", "3 Fe(s) + 2 O2(g) -> Fe3O4(s)", SOLID_T),
    ("magnesium_oxidation", "solids", "2 Mg(s) + O2(g) -> 2 MgO(s)", (298.15, 300.0, 400.0, 600.0, 800.0, 900.0)),
    ("silicon_oxidation", "solids", "Si(s) + O2(g) -> SiO2(s)", SOLID_T),
    ("boudouard", "solids", "C(gr) + CO2(g) -> 2 CO(g)", SOLID_T),
    ("lime_slaking", "solids", "CaO(s) + H2O(g) -> CaO2H2(s)", SOLID_T),
    # reactions of liquids
    ("water_vaporization", "liquids", "H2O(l) -> H2O(g)", LIQUID_WATER_T),
    ("benzene_vaporization", "liquids", "C6H6(l) -> C6H6(g)", ORGANIC_LIQUID_T),
    ("bromine_vaporization", "liquids", "Br2(l) -> Br2(g)", (298.15, 300.0, 320.0, 332.0, 350.0)),
    ("water_gas_shift_liquid_water", "liquids", "CO(g) + H2O(l) -> CO2(g) + H2(g)", LIQUID_WATER_T),
    ("steam_reforming_liquid_water", "liquids", "CH4(g) + H2O(l) -> CO(g) + 3 H2(g)", LIQUID_WATER_T),
]



def nasa_base(formula: str) -> str:
    """NASA/CHEMKIN spelling of a formula: Al -> AL, Cl -> CL."""
    return formula.replace("Al", "AL").replace("Cl", "CL")


def parse_equation(eq: str):
    lhs, rhs = eq.split(" -> ")
    terms = []
    for side, sign in ((lhs, -1), (rhs, 1)):
        for t in side.split(" + "):
            parts = t.split(" ")
            coef, sp = (Fraction(parts[0]), parts[1]) if len(parts) == 2 else (Fraction(1), parts[0])
            terms.append((sign * coef, sp))
    return terms


class Library:
    def __init__(self) -> None:
        self.gas = {s.name: s for s in ct.Species.list_from_file("nasa_gas.yaml")}
        self.cond = {s.name: s for s in ct.Species.list_from_file("nasa_condensed.yaml")}
        self.by_base = collections.defaultdict(list)  # base -> [(phase, species)]
        for s in self.cond.values():
            m = re.match(r"^(.+)\(([^()]+)\)(,[^()]*)?$", s.name)
            self.by_base[m.group(1)].append(("l" if m.group(2) == "L" else "s", s))

    @staticmethod
    def covers_std(s: ct.Species, slack: float) -> bool:
        return s.thermo.min_temp <= T_STD + slack and T_STD <= s.thermo.max_temp

    def solids_covering_std(self, base: str, slack: float):
        return [s for ph, s in self.by_base.get(base, []) if ph == "s" and self.covers_std(s, slack)]

    def resolve(self, text: str) -> ct.Species:
        m = re.match(r"^(.+)\((g|l|s|gr)\)$", text)
        formula, tag = m.group(1), m.group(2)
        if tag == "g":
            name = nasa_base(formula)
            assert name in self.gas, f"no gas record {name} for {text}"
            return self.gas[name]
        if tag == "gr":
            assert text == "C(gr)"
            return self.cond["C(gr)"]
        base = nasa_base(formula)
        if tag == "l":
            liq = [s for ph, s in self.by_base.get(base, []) if ph == "l"]
            assert len(liq) == 1, f"{text}: liquid records {[s.name for s in liq]}"
            return liq[0]
        sol = self.solids_covering_std(base, RESOLVE_SLACK_K)
        assert len(sol) == 1, f"{text}: solid records covering {T_STD} K: {[s.name for s in sol]}"
        return sol[0]


def fmt(x: float) -> str:
    return format(x, ".12g")


def element_balance(terms) -> None:
    tot = collections.defaultdict(Fraction)
    for nu, s in terms:
        for el, n in s.composition.items():
            tot[el] += nu * Fraction(n).limit_denominator(1000)
    bad = {el: v for el, v in tot.items() if v != 0}
    assert not bad, f"unbalanced: {bad}"


def main() -> int:
    lib = Library()

    # Survey of solid records around 298.15 K, over all condensed bases.
    several_strict = [b for b in sorted(lib.by_base) if len(lib.solids_covering_std(b, 0.0)) > 1]
    several_slack = [b for b in sorted(lib.by_base) if len(lib.solids_covering_std(b, RESOLVE_SLACK_K)) > 1]
    from_300 = [b for b in sorted(lib.by_base)
                if not lib.solids_covering_std(b, 0.0) and lib.solids_covering_std(b, RESOLVE_SLACK_K)]
    for b in several_strict + several_slack:
        print(f"WARNING: several solid records of {b} cover {T_STD} K: "
              f"{[s.name for s in lib.solids_covering_std(b, RESOLVE_SLACK_K)]}")

    rows = []
    temps_per_reaction = {}
    used_solids = set()
    for rid, kind, eq, temps in REACTIONS:
        terms = [(nu, text, lib.resolve(text)) for nu, text in parse_equation(eq)]
        element_balance([(nu, s) for nu, _, s in terms])
        for nu, text, s in terms:
            if text.endswith("(s)") or text.endswith("(gr)"):
                used_solids.add((text, s.name))
        cantera_species = " ".join(f"{s.name}:{nu}" for nu, _, s in terms)
        tmin = max(s.thermo.min_temp for _, _, s in terms)
        tmax = min(s.thermo.max_temp for _, _, s in terms)
        usable = [t for t in temps if tmin <= t <= tmax]
        assert len(usable) >= 3, f"{rid}: only {usable} inside [{tmin}, {tmax}]"
        temps_per_reaction[rid] = usable
        for t in usable:
            dh = sum(float(nu) * s.thermo.h(t) for nu, _, s in terms) / 1e6   # kJ/mol
            ds = sum(float(nu) * s.thermo.s(t) for nu, _, s in terms) / 1e3   # J/mol/K
            dg = dh - t * ds / 1000.0                                          # kJ/mol
            log10_k = -dg * 1000.0 / (R * t * math.log(10.0))
            rows.append((rid, kind, eq, cantera_species, fmt(t), fmt(dh), fmt(ds), fmt(dg), fmt(log10_k)))

    h2o_l = lib.cond["H2O(L)"].thermo.h(T_STD) / 1e6
    co2 = lib.gas["CO2"].thermo.h(T_STD) / 1e6
    header = [
        "# cantera_reactions.tsv - written by scripts/gen_cantera_reference.py; do not edit by hand.",
        f"# Cantera {ct.__version__}; species from nasa_gas.yaml and nasa_condensed.yaml (NASA TM-4513 data,",
        "#   public domain; Cantera BSD-3-Clause). Values from thermo.h(T), thermo.s(T) of each record.",
        f"# R = cantera.gas_constant/1000 = {R!r} J/mol/K; log10_k = -dG/(R T ln 10).",
        "# Standard state: the NASA data's 1 bar (Cantera labels these files 101325 Pa only because they",
        "#   omit reference-pressure). Temperatures only inside every participating record's range.",
        "# Solid X(s): the one solid record of X whose range starts at or below 300 K and reaches 298.15 K.",
        "# equation uses Al/Cl; cantera_species gives the NASA record names (AL/CL spelling).",
        f"# Check: dfH(298.15 K) H2O(L) = {fmt(h2o_l)} kJ/mol; CO2(g) = {fmt(co2)} kJ/mol",
        "#   (= H(298.15 K) of the records; CODATA key values: -285.830 and -393.51 kJ/mol).",
        "\t".join(COLUMNS),
    ]
    with open(OUT, "w", encoding="utf-8", newline="\n") as f:
        f.write("\n".join(header) + "\n")
        for r in rows:
            f.write("\t".join(r) + "\n")

    print(f"wrote {os.path.relpath(OUT, ROOT)}: {len(REACTIONS)} reactions, {len(rows)} rows")
    for kind, n in collections.Counter(k for _, k, _, _ in REACTIONS).items():
        print(f"  {kind}: {n}")
    no_std = [rid for rid, ts in temps_per_reaction.items() if T_STD not in ts]
    print(f"  reactions without a {T_STD} K row (a record starts above it): {no_std}")
    print(f"  solids used: {sorted(used_solids)}")
    print(f"  condensed bases with several solid records covering {T_STD} K: strict {several_strict}, "
          f"with the 300 K allowance {several_slack}")
    print(f"  condensed bases whose solid records all start above {T_STD} K but at <= 300 K: {len(from_300)}")
    print(f"  dfH(298.15) H2O(L) = {h2o_l!r} kJ/mol, CO2 = {co2!r} kJ/mol")
    return 0


if __name__ == "__main__":
    sys.exit(main())
