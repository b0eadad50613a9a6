#!/usr/bin/env python3
"""Write examples/nightly_screen.csv: an invented nightly route screen.

Scenario (fictional): Tarnwick Fells Chemicals screens route options every night for its
made-up intermediate TFC-2208. Each route is an ordered list of steps built from real reaction
types (hydrogenations, partial and total oxidations, methanol synthesis, reforming and the
water-gas shift, acid/base quenches with solids, sulfuric acid chemistry, ammonia and nitric
oxide chemistry, calcinations), each written with species the engine's bundled data resolves
today (checked with `thermosieve eval`). Every route carries its own process conditions. A few
rows are bad on purpose (unknown element, unbalanceable, missing reaction, a non-number, an
ambiguous isomer) so the output shows error rows.

Standard library only, fixed seed: the output is the same on every run.

    python3 examples/make_demo.py        # writes examples/nightly_screen.csv
"""

import csv
import os
import random

SEED = 2208
ROUTES = 380
OUT = os.path.join(os.path.dirname(os.path.abspath(__file__)), "nightly_screen.csv")

# (family, reaction) - every one resolves and balances with the bundled NASA data.
STEPS = [
    ("hydrogenation", "C2H4(g) + H2(g) -> C2H6(g)"),
    ("hydrogenation", "C3H6,propylene + H2(g) -> C3H8(g)"),
    ("hydrogenation", "C6H6(g) + H2(g) -> C6H12,cyclo-"),
    ("hydrogenation", "C8H8(g) + H2(g) -> C8H10,ethylbenz(g)"),
    ("oxidation", "C2H4(g) + O2(g) -> C2H4O,ethylen"),
    ("oxidation", "C2H4(g) + O2(g) -> CO2(g) + H2O(g)"),
    ("oxidation", "CH4(g) + O2(g) -> CO(g) + H2(g)"),
    ("oxidation", "CH3OH(g) + O2(g) -> CH2O(g) + H2O(g)"),
    ("oxidation", "H2S(g) + O2(g) -> SO2(g) + H2O(g)"),
    ("oxidation", "C2H6(g) + O2(g) -> CO2(g) + H2O(l)"),
    ("methanol", "CO(g) + H2(g) -> CH3OH(g)"),
    ("methanol", "CO2(g) + H2(g) -> CH3OH(g) + H2O(g)"),
    ("reforming", "CH4(g) + H2O(g) -> CO(g) + H2(g)"),
    ("reforming", "CH4(g) + CO2(g) -> CO(g) + H2(g)"),
    ("shift", "CO(g) + H2O(g) -> CO2(g) + H2(g)"),
    ("quench", "NaOH(s) + HCl(g) -> NaCl(s) + H2O(l)"),
    ("quench", "KOH(s) + HCl(g) -> KCl(s) + H2O(l)"),
    ("quench", "Na2CO3(s) + HCl(g) -> NaCl(s) + H2O(l) + CO2(g)"),
    ("quench", "NH3(g) + HCl(g) -> NH4Cl(s)"),
    ("quench", "CaO(s) + H2O(l) -> Ca(OH)2(s)"),
    ("sulfur", "SO2(g) + O2(g) -> SO3(g)"),
    ("sulfur", "SO3(g) + H2O(l) -> H2SO4(l)"),
    ("nitrogen", "N2(g) + H2(g) -> NH3(g)"),
    ("nitrogen", "NH3(g) + O2(g) -> NO(g) + H2O(g)"),
    ("nitrogen", "NO(g) + O2(g) -> NO2(g)"),
    ("nitrogen", "NO2(g) -> N2O4(g)"),
    ("calcination", "CaCO3(s) -> CaO(s) + CO2(g)"),
    ("calcination", "MgCO3(s) -> MgO(s) + CO2(g)"),
]

# Hook for the estimation branch: SMILES steps (nitrations, acylations, esterifications) need
# Joback estimates that the engine does not have yet. When it does, add entries such as
#   ("nitration", "c1ccccc1.O=[N+]([O-])O>>O=[N+]([O-])c1ccccc1.O"),
#   ("esterification", "CC(=O)O.CCO>>CC(=O)OCC.O"),
# to STEPS (and set the `phase` column for them, e.g. "liquid").

# Deliberately bad rows: (reaction text, scale_mol text) - each must become an error row.
BAD = [
    ("Xq(g) + O2(g) -> XqO(g)", None),              # unknown element
    ("CO(g) + O2(g) -> CO2(g) + H2O(g)", None),     # cannot be balanced
    ("", None),                                      # missing reaction
    ("CO(g) + H2O(g) -> CO2(g) + H2(g)", "about 40"),  # scale_mol is not a number
    ("C3H6(g) + H2(g) -> C3H8(g)", None),           # ambiguous isomer (propylene or cyclopropane)
]

COLUMNS = [
    "case_id", "route_id", "step", "reaction", "phase",
    "process_temperature_c", "pressure_bar", "scale_mol", "reaction_mass_kg",
    "cp_kj_per_kg_k", "dosing_time_h", "accumulation_fraction", "mtt_c", "t_d24_c", "reactor",
]


def main() -> None:
    rng = random.Random(SEED)
    rows = []
    bad_routes = set(rng.sample(range(ROUTES), len(BAD)))
    bad_iter = iter(BAD)
    for r in range(ROUTES):
        route_id = f"TFC-2208-R{r + 1:04d}"
        n_steps = rng.randint(3, 8)
        cond = {
            "process_temperature_c": round(rng.uniform(20, 180), 1),
            "pressure_bar": round(rng.choice([1.0, 1.0, 2.5, 5.0, 10.0, 30.0]), 1),
            "scale_mol": round(rng.uniform(50, 2500), 0),
            "reaction_mass_kg": round(rng.uniform(40, 1800), 0),
            "cp_kj_per_kg_k": round(rng.uniform(1.7, 2.4), 2),
            "dosing_time_h": round(rng.choice([0.0, 1.0, 2.0, 4.0, 6.0]), 1),
            "accumulation_fraction": round(rng.uniform(0.05, 1.0), 2),
            "mtt_c": round(rng.uniform(80, 220), 0),
            "t_d24_c": round(rng.uniform(150, 320), 0),
            "reactor": rng.choice(["R-101", "R-102", "R-205", "R-310"]),
        }
        bad_step = rng.randint(1, n_steps) if r in bad_routes else None
        for s in range(1, n_steps + 1):
            _, reaction = rng.choice(STEPS)
            row = {"case_id": f"{route_id}-S{s}", "route_id": route_id, "step": s, "reaction": reaction, "phase": ""}
            row.update(cond)
            if s == bad_step:
                reaction, scale = next(bad_iter)
                row["reaction"] = reaction
                if scale is not None:
                    row["scale_mol"] = scale
            rows.append(row)
    with open(OUT, "w", newline="", encoding="utf-8") as f:
        w = csv.DictWriter(f, fieldnames=COLUMNS, lineterminator="\n")
        w.writeheader()
        w.writerows(rows)
    print(f"wrote {os.path.relpath(OUT)}: {len(rows)} cases over {ROUTES} routes ({len(BAD)} bad on purpose)")


if __name__ == "__main__":
    main()
