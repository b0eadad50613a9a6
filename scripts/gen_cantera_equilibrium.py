#!/usr/bin/env python3
"""Write worker/engine/tests/reference/cantera_equilibrium.tsv: equilibrium conversions by Cantera.

Reads:   nasa_gas.yaml from the installed Cantera package (version pinned in
         scripts/requirements-data.txt), via ``cantera.Species.list_from_file``.
Writes:  worker/engine/tests/reference/cantera_equilibrium.tsv (UTF-8, tab separated, ``#`` header):
         one row per reaction, temperature and pressure with the equilibrium conversion of the
         reactants from a stoichiometric feed (optionally with an inert gas).

Method, per reaction:
  * An ideal-gas Solution holding ONLY the reaction's species (plus the inert, if any), so the
    element-potential equilibrium has exactly one independent reaction and no side reactions:
    the script asserts species - rank(element matrix) == 1 (the inert is alone in its element).
  * Reference pressure. nasa_gas.yaml gives no ``reference-pressure``, so Cantera takes each
    species' polynomial to be for 101325 Pa; the NASA data are for 1 bar (S(O2, 298.15 K) =
    205.148 J/mol/K, see scripts/README.md). Each species' NasaPoly2 is rebuilt with the same
    coefficients and P_ref = 1e5 Pa, so Cantera and the engine use the same standard state.
    (The header reports how far the conversions would move with the 101325 Pa default.)
  * Feed: |nu_i| mol of each reactant, no products, ``inert`` mol of N2 (or Ar) per mole of
    reaction. ``equilibrate("TP")`` at fixed T and P; the moles after equilibrium come from mass
    conservation (n = mass / mean molecular weight), and the conversion is 1 - n_r/n_r0 for the
    reactants (all equal for a stoichiometric feed; the script asserts they agree to 1e-9).

Source data and terms: NASA thermodynamic data (McBride, Gordon & Reno, NASA TM-4513, 1993),
public domain (work of the US Government), as distributed in Cantera (BSD-3-Clause).

Run from the repository root:
    .venv-data/bin/python scripts/gen_cantera_equilibrium.py
"""

from __future__ import annotations

import math
import os
import sys

import cantera as ct
import numpy as np

ROOT = os.path.dirname(os.path.dirname(os.path.abspath(__file__)))
OUT = os.path.join(ROOT, "worker", "engine", "tests", "reference", "cantera_equilibrium.tsv")
P_REF_PA = 1e5
COLUMNS = ("id", "equation", "cantera_species", "inert", "inert_mol_per_mol_reaction",
           "temperature_k", "pressure_bar", "log10_k", "conversion")

# id, equation (our syntax, balanced as the engine balances it), temperatures (K), pressures (bar),
# inert species and its amount per mole of reaction.
REACTIONS = [
    ("ammonia_synthesis", [(-1, "N2"), (-3, "H2"), (2, "NH3")], (600.0, 700.0), (1.0, 100.0), None, 0.0),
    ("n2o4_dissociation", [(-1, "N2O4"), (2, "NO2")], (300.0, 350.0), (1.0, 10.0), None, 0.0),
    ("so2_oxidation", [(-2, "SO2"), (-1, "O2"), (2, "SO3")], (900.0, 1000.0), (1.0, 10.0), None, 0.0),
    ("water_gas_shift", [(-1, "CO"), (-1, "H2O"), (1, "CO2"), (1, "H2")], (700.0, 1000.0), (1.0, 20.0), None, 0.0),
    ("steam_reforming", [(-1, "CH4"), (-1, "H2O"), (1, "CO"), (3, "H2")], (800.0, 1000.0), (1.0, 20.0), None, 0.0),
    ("co_to_methanol", [(-1, "CO"), (-2, "H2"), (1, "CH3OH")], (450.0, 550.0), (1.0, 50.0), None, 0.0),
    ("ethylene_hydrogenation", [(-1, "C2H4"), (-1, "H2"), (1, "C2H6")], (900.0, 1100.0), (1.0, 10.0), None, 0.0),
    ("so2_oxidation_in_argon", [(-2, "SO2"), (-1, "O2"), (2, "SO3")], (900.0, 1000.0), (1.0, 10.0), "Ar", 4.0),
]


def equation_text(terms) -> str:
    def side(sign):
        parts = []
        for nu, name in terms:
            if (nu < 0) == (sign < 0):
                c = abs(nu)
                parts.append(f"{name}(g)" if c == 1 else f"{c} {name}(g)")
        return " + ".join(parts)
    return f"{side(-1)} -> {side(1)}"


def with_reference_pressure(s: ct.Species, p_ref: float) -> ct.Species:
    th = s.thermo
    assert isinstance(th, ct.NasaPoly2), f"{s.name}: {type(th).__name__}"
    out = ct.Species(s.name, s.composition)
    out.thermo = ct.NasaPoly2(th.min_temp, th.max_temp, p_ref, th.coeffs)
    return out


def conversion(species, terms, inert, inert_mol, t, p_bar) -> float:
    gas = ct.Solution(thermo="ideal-gas", species=species)
    feed = {name: float(-nu) for nu, name in terms if nu < 0}
    if inert:
        feed[inert] = inert_mol
    n0 = sum(feed.values())
    gas.TPX = t, p_bar * 1e5, feed
    mass = n0 * gas.mean_molecular_weight  # kg, for n0 kmol of feed
    gas.equilibrate("TP")
    n_total = mass / gas.mean_molecular_weight
    convs = [1.0 - gas[name].X[0] * n_total / (-nu) for nu, name in terms if nu < 0]
    assert max(convs) - min(convs) < 1e-9, f"reactant conversions disagree: {convs}"
    return float(np.mean(convs))


def log10_k(species_by_name, terms, t) -> float:
    dg = 0.0  # J/kmol
    for nu, name in terms:
        th = species_by_name[name].thermo
        dg += nu * (th.h(t) - t * th.s(t))
    return -dg / (ct.gas_constant * t * math.log(10.0))


def fmt(x: float) -> str:
    return format(x, ".12g")


def main() -> int:
    library = {s.name: s for s in ct.Species.list_from_file("nasa_gas.yaml")}
    rows = []
    max_shift = 0.0
    for rid, terms, temps, pressures, inert, inert_mol in REACTIONS:
        names = [name for _, name in terms] + ([inert] if inert else [])
        original = [library[n] for n in names]
        rebuilt = [with_reference_pressure(library[n], P_REF_PA) for n in names]
        assert all(s.thermo.reference_pressure == P_REF_PA for s in rebuilt)
        elements = sorted({e for s in original for e in s.composition})
        matrix = np.array([[s.composition.get(e, 0.0) for s in original] for e in elements])
        assert len(names) - np.linalg.matrix_rank(matrix) == 1, f"{rid}: not a single independent reaction"
        for nu_sum in [sum(nu * library[n].composition.get(e, 0.0) for nu, n in terms) for e in elements]:
            assert abs(nu_sum) < 1e-12, f"{rid}: unbalanced"
        by_name = {s.name: s for s in rebuilt}
        for t in temps:
            for s in original:
                assert s.thermo.min_temp <= t <= s.thermo.max_temp, f"{rid}: {t} K outside {s.name}"
            for p in pressures:
                x = conversion(rebuilt, terms, inert, inert_mol, t, p)
                x_atm = conversion(original, terms, inert, inert_mol, t, p)
                max_shift = max(max_shift, abs(x - x_atm))
                assert 1e-6 < x < 1.0 - 1e-6, f"{rid} at {t} K, {p} bar: conversion {x} is not informative"
                rows.append((rid, equation_text(terms), " ".join(f"{n}:{nu}" for nu, n in terms),
                             inert or "", fmt(inert_mol), fmt(t), fmt(p), fmt(log10_k(by_name, terms, t)), fmt(x)))

    header = [
        "# cantera_equilibrium.tsv - written by scripts/gen_cantera_equilibrium.py; do not edit by hand.",
        f"# Cantera {ct.__version__}, numpy {np.__version__}; species from nasa_gas.yaml (NASA TM-4513 data,",
        "#   public domain; Cantera BSD-3-Clause). Ideal-gas Solution of only the reaction's species (+ inert),",
        "#   equilibrate('TP'); feed |nu| mol of each reactant, no products, inert_mol_per_mol_reaction of inert.",
        "# Standard state 1 bar: each NasaPoly2 rebuilt with P_ref = 1e5 Pa (the file omits reference-pressure,",
        f"#   so Cantera would assume 101325 Pa; left at that, conversions here would move by up to {max_shift:.2g}).",
        "# conversion = 1 - n/n0 of the reactants (all equal, stoichiometric feed); log10_k for 1 bar, the",
        "#   equation as written.",
        "\t".join(COLUMNS),
    ]
    with open(OUT, "w", encoding="utf-8", newline="\n") as f:
        f.write("\n".join(header) + "\n")
        for r in rows:
            f.write("\t".join(r) + "\n")
    print(f"wrote {os.path.relpath(OUT, ROOT)}: {len(REACTIONS)} reactions, {len(rows)} rows; "
          f"shift from the 101325 Pa default up to {max_shift:.3g}")
    return 0


if __name__ == "__main__":
    sys.exit(main())
