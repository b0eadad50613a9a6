#!/usr/bin/env python3
"""Write examples/nightly_screen.csv: an invented nightly route screen.

Scenario (fictional): Tarnwick Fells Chemicals screens route options every night for its
made-up intermediate TFC-2208, here a substituted acetanilide (methyl 4-acetamido-3-methyl-
benzoate, COC(=O)c1ccc(NC(C)=O)c(C)c1). Every route is an ordered list of 3-7 steps toward it,
built from real reaction types of fine-chemical routes: nitration of an arene (m-toluic acid,
its methyl ester, m-xylene), reduction of the nitro group (liquid-phase hydrogenation, transfer
hydrogenation with hydrazine, vapour-phase hydrogenation over a fixed bed), N-acetylation
(acetic anhydride, acetyl chloride with HCl off-gas or with caustic, acetic acid with water
removal), Fischer esterification, acid chlorides (oxalyl chloride, phosgene) and their
methanolysis, ester hydrolysis, side-chain oxidation (air, hydrogen peroxide), quenches
(acetic anhydride + water, HCl + NaOH, spent sulfuric acid + NaOH), peroxide decompositions
(excess hydrogen peroxide, the di-tert-butyl peroxide initiator), solvent strips and a cooling
crystallisation of the product. Routes are grouped in seven families (A-G below); each route
draws its reagents, solvents, scale and conditions.

Species are written as reaction SMILES (intermediates, with a state where it matters) or as
names and formulas in equations (tabulated solvents, reagents and salts). Each molecule is
always written the same way, so its label does not depend on which case a screener meets
first. The `phase` column is the step's phase (liquid for solution steps, gas for the
vapour-phase hydrogenation, standard for steps with salts, empty for named equations whose
species all carry a state); species whose state in that phase differs from their standard
state carry their own tag (`{l}`, `{g}`, `{s}`), so the case screens the same whether or not a
reader applies the phase column.

Conditions per step: process temperature, pressure, scale (mol of reaction as balanced), reaction
mass, cp, batch (dosing_time_h 0, accumulation_fraction empty) or semi-batch (dosing time and
accumulated fraction), MTT = boiling point of the step's solvent at the working pressure
(Clausius-Clapeyron from the normal boiling point; a set limit for the fixed bed), and the
thermal stability of the mass as T_D24 (adiabatic calorimetry) or a DSC onset (T_D24 from it).

Five rows are bad on purpose, each a different error kind (unknown element, unbalanceable,
missing reaction, a non-number, an isomer formula), so the output shows error rows.

Standard library only, fixed seed: the output is the same on every run.

    python3 examples/make_demo.py        # writes examples/nightly_screen.csv
"""

import csv
import math
import os
import random

SEED = 2208
ROUTES = 380
OUT = os.path.join(os.path.dirname(os.path.abspath(__file__)), "nightly_screen.csv")

# Steps left out because the engine refuses them today (checked with `thermosieve eval`):
# - saponification of the esters with NaOH and acidification of the sodium carboxylate
#   (CC(=O)Nc1ccc(cc1C)C(=O)[O-].[Na+]): salts are not estimated, only bundled salts are known;
# - the same for amine hydrochlorides (COC(=O)c1ccc([NH3+])c(C)c1.[Cl-]) and triethylamine
#   hydrochloride as an HCl scavenger, and for a sulfite quench of hydrogen peroxide (Na2SO3);
# - acid chlorides with thionyl chloride (O=S(Cl)Cl): no Joback group for S(IV), not tabulated;
# - Bechamp reduction with iron: [Fe] in a SMILES is not matched to the bundled Fe(cr), and the
#   nitro intermediates have no names to write it as a formula equation with Fe(cr) and Fe3O4(s);
# - permanganate oxidation of the methyl group (KMnO4, MnO2): no bundled record for KMnO4.
# Solids: the steps that were waiting on solid estimates (an estimated species asked as a solid,
# e.g. COC(=O)c1ccc(NC(C)=O)c(C)c1{s}) are in, because the engine now estimates solids (gas -
# vaporization - Joback fusion): the crystallisation of TFC-2208 (liquid -> solid) and the
# Schotten-Baumann step that drops the product as a solid. None is left out for that reason;
# intermediates stay in solution (tagged {l}) in their steps by choice, not by necessity.

# --- Species: one written form each (SMILES, or a name/formula in equations) -----------------
S = {
    # starting materials and intermediates (estimated by Joback unless bundled)
    "MTA": "Cc1cccc(c1)C(=O)O",                       # m-toluic acid
    "MMT": "COC(=O)c1cccc(C)c1",                      # methyl m-toluate
    "NTA": "Cc1cc(ccc1[N+](=O)[O-])C(=O)O",           # 3-methyl-4-nitrobenzoic acid
    "NTC": "Cc1cc(ccc1[N+](=O)[O-])C(=O)Cl",          # 3-methyl-4-nitrobenzoyl chloride
    "MNE": "COC(=O)c1ccc([N+](=O)[O-])c(C)c1",        # methyl 3-methyl-4-nitrobenzoate
    "ENE": "CCOC(=O)c1ccc([N+](=O)[O-])c(C)c1",       # ethyl 3-methyl-4-nitrobenzoate
    "AMA": "Cc1cc(ccc1N)C(=O)O",                      # 4-amino-3-methylbenzoic acid
    "MAE": "COC(=O)c1ccc(N)c(C)c1",                   # methyl 4-amino-3-methylbenzoate
    "EAE": "CCOC(=O)c1ccc(N)c(C)c1",                  # ethyl 4-amino-3-methylbenzoate
    "AAA": "CC(=O)Nc1ccc(cc1C)C(=O)O",                # 4-acetamido-3-methylbenzoic acid
    "TFC": "COC(=O)c1ccc(NC(C)=O)c(C)c1",             # TFC-2208
    "ETF": "CCOC(=O)c1ccc(NC(C)=O)c(C)c1",            # ethyl analogue of TFC-2208
    "MX": "Cc1cccc(C)c1",                             # m-xylene
    "NX": "Cc1ccc([N+](=O)[O-])c(C)c1",               # 4-nitro-m-xylene
    "DMA": "Cc1ccc(N)c(C)c1",                         # 2,4-dimethylaniline
    "DMAC": "CC(=O)Nc1ccc(C)cc1C",                    # N-(2,4-dimethylphenyl)acetamide
    # reagents, solvents, by-products (mostly tabulated)
    "HNO3": "O=[N+]([O-])O",
    "H2": "[H][H]{g}",
    "O2": "O=O{g}",
    "N2": "N#N{g}",
    "CO": "[C-]#[O+]{g}",
    "CO2": "O=C=O{g}",
    "HCl": "Cl{g}",
    "H2O": "O",
    "MeOH": "CO",
    "EtOH": "CCO",
    "AcOH": "CC(=O)O",
    "Ac2O": "CC(=O)OC(C)=O",
    "AcCl": "CC(=O)Cl",
    "OXCL": "O=C(Cl)C(=O)Cl",
    "COCL2": "ClC(Cl)=O{g}",
    "N2H4": "NN",
    "H2O2": "OO",
    "NaOH": "[Na+].[OH-]",
    "NaCl": "[Na+].[Cl-]",
}
AROMATICS = {"MTA", "MMT", "NTA", "NTC", "MNE", "ENE", "AMA", "MAE", "EAE", "AAA", "TFC", "ETF", "MX", "NX", "DMA", "DMAC"}


def sp(key, state=None):
    """A species as written in a reaction SMILES. Aromatics carry the state of the step
    (`{l}` in solution) because most of them are solids in their standard state."""
    s = S[key]
    if state and key in AROMATICS:
        return f"{s}{{{state}}}"
    return s


def rxn(lhs, rhs, state="l"):
    return ".".join(sp(k, state) for k in lhs) + ">>" + ".".join(sp(k, state) for k in rhs)


# --- Solvents: normal boiling point (°C), ΔvapH (kJ/mol) for the boiling point at pressure, cp --
SOLVENTS = {
    "methanol": (64.7, 37.4, (2.3, 2.6)),
    "ethanol": (78.4, 40.5, (2.2, 2.5)),
    "toluene": (110.6, 35.0, (1.7, 1.85)),
    "acetic acid": (118.0, 40.0, (2.0, 2.2)),
    "water": (100.0, 40.7, (3.3, 3.9)),
    "dichloromethane": (39.6, 29.0, (1.2, 1.4)),
    "ethyl acetate": (77.1, 33.5, (1.9, 2.1)),
    "toluene/water": (84.1, 40.0, (2.6, 3.1)),  # heteroazeotrope of the biphasic mass
    "sulfuric acid/dichloromethane": (39.6, 29.0, (1.4, 1.6)),
}
R_GAS = 8.314462618e-3  # kJ/(mol K)


def boiling_c(solvent, p_bar):
    """Boiling point of the solvent at p_bar (Clausius-Clapeyron from the normal boiling point)."""
    tb, dh, _ = SOLVENTS[solvent]
    inv = 1.0 / (tb + 273.15) - R_GAS * math.log(p_bar / 1.01325) / dh
    return 1.0 / inv - 273.15


# --- Step kinds ------------------------------------------------------------------------------
# Each kind gives: reaction text, phase column, substrate moles per mol of reaction (nu), and a
# condition profile: T (°C), pressure (bar), solvents, mode ('batch', 'semi', or a probability
# of semi-batch), dosing hours, accumulation, concentration (mol substrate per kg mass), T_D24
# range (°C) of the mass, scale factor on the route's moles, reactor pool.
def profile(t, solvents, mode, conc, td24, p=(1.013, 1.013), dose=(0.0, 0.0), acc=(1.0, 1.0),
            scale=None, reactors=("R-101", "R-102", "R-205"), side=False):
    """scale: None for a main step (the route's moles); a range for a step on part of the batch
    (a quench of the excess, a strip, an initiator): moles = range x route moles, and the mass
    is the previous step's (side=False) or its own from conc (side=True: a scrubber or the
    separated spent acid, which leave the main mass and its solvent alone)."""
    return dict(t=t, p=p, solvents=solvents, mode=mode, dose=dose, acc=acc, conc=conc,
                td24=td24, scale=scale, reactors=reactors, side=side)


class Inherit(list):
    """Solvents of a step that works on the previous step's mass: that solvent when listed here,
    else one of these."""


def esterify(acid, ester, alcohol):
    solvent = "methanol" if alcohol == "MeOH" else "ethanol"
    t = (55.0, 63.5) if alcohol == "MeOH" else (68.0, 77.5)
    return ("esterification", rxn([acid, alcohol], [ester, "H2O"]), "liquid", 1,
            profile(t, [solvent], "batch", (1.2, 2.2), (185, 240)))


def nitrate(arene, nitro):
    if arene == "MX":  # activated arene: milder
        prof = profile((15.0, 35.0), ["sulfuric acid/dichloromethane", "acetic acid"], "semi",
                       (1.2, 2.0), (120, 165), dose=(2.0, 5.0), acc=(0.08, 0.3))
    else:
        prof = profile((5.0, 30.0), ["sulfuric acid/dichloromethane", "acetic acid"], "semi",
                       (0.9, 1.6), (105, 160), dose=(3.0, 7.0), acc=(0.1, 0.35))
    return ("nitration", rxn([arene, "HNO3"], [nitro, "H2O"]), "liquid", 1, prof)


def hydrogenate(nitro, amine):
    return ("hydrogenation", rxn([nitro, "H2"], [amine, "H2O"]), "liquid", 1,
            profile((40.0, 70.0), ["methanol", "ethanol", "ethyl acetate"], "semi", (0.6, 1.2),
                    (130, 190), p=(3.0, 10.0), dose=(2.0, 6.0), acc=(0.02, 0.12),
                    reactors=("H-301", "H-302")))


def transfer_hydrogenate(nitro, amine):
    # 2 ArNO2 + 3 N2H4 -> 2 ArNH2 + 4 H2O + 3 N2 (balanced by the engine)
    return ("transfer hydrogenation", rxn([nitro, "N2H4"], [amine, "H2O", "N2"]), "liquid", 2,
            profile((60.0, 76.0), ["ethanol"], "semi", (0.6, 1.1), (115, 165),
                    dose=(2.0, 4.0), acc=(0.1, 0.3)))


def vapour_hydrogenate():
    # Fixed bed, 40-80 mol H2 per mol nitro compound as heat carrier: the "reaction mass" is the
    # feed (0.27-0.45 kg per mol nitro compound, cp of the hydrogen-rich gas 7-9 kJ/(kg K)).
    r = f"{S['NX']}{{g}}.{S['H2']}>>{S['DMA']}{{g}}.O{{g}}"
    return ("vapour-phase hydrogenation", r, "gas", 1,
            profile((220.0, 270.0), ["none (fixed bed)"], "semi", (2.2, 3.7), (245, 285),
                    p=(2.0, 6.0), dose=(8.0, 14.0), acc=(0.01, 0.05), reactors=("FB-401",)))


def acetylate_ac2o(amine, amide):
    return ("acetylation (Ac2O)", rxn([amine, "Ac2O"], [amide, "AcOH"]), "liquid", 1,
            profile((50.0, 90.0), ["toluene", "acetic acid"], 0.75, (1.0, 2.0), (170, 230),
                    dose=(1.0, 3.0), acc=(0.05, 0.25)))


def acetylate_accl(amine, amide):
    return ("acetylation (AcCl)", rxn([amine, "AcCl"], [amide, "HCl"]), "liquid", 1,
            profile((10.0, 35.0), ["dichloromethane", "toluene"], "semi", (0.9, 1.8), (165, 225),
                    dose=(1.0, 3.0), acc=(0.05, 0.2)))


def acetylate_schotten_baumann(amine, amide):
    # the amide drops out of the biphasic mass as a solid
    r = f"{sp(amine, 'l')}.{S['AcCl']}.{S['NaOH']}>>{S[amide]}{{s}}.{S['NaCl']}.O"
    return ("acetylation (Schotten-Baumann)", r, "standard", 1,
            profile((5.0, 25.0), ["toluene/water"], "semi", (0.6, 1.2), (180, 240),
                    dose=(1.5, 4.0), acc=(0.03, 0.15)))


def acetylate_acoh(amine, amide):
    return ("amidation (AcOH)", rxn([amine, "AcOH"], [amide, "H2O"]), "liquid", 1,
            profile((105.0, 117.0), ["acetic acid", "toluene"], "batch", (1.0, 2.0), (175, 230)))


def ac2o_quench():
    return ("quench (Ac2O + water)", "{acetic anhydride}(l) + H2O(l) -> 2 {acetic acid}(l)", "", 1,
            profile((20.0, 60.0), Inherit(["toluene", "acetic acid"]), 0.7, (0.9, 1.8), (190, 250),
                    dose=(0.5, 2.0), acc=(0.3, 0.7), scale=(0.05, 0.3)))


def hcl_scrub(smiles):
    r = "Cl.[Na+].[OH-]>>[Na+].[Cl-].O" if smiles else "HCl(g) + NaOH(s) -> NaCl(s) + H2O(l)"
    return ("quench (HCl + NaOH)", r, "standard" if smiles else "", 1,
            profile((15.0, 35.0), ["water"], "semi", (1.5, 3.0), (200, 260),
                    dose=(1.0, 2.5), acc=(0.02, 0.06), scale=(0.8, 1.1), reactors=("S-501",), side=True))


def spent_acid():
    return ("neutralisation (spent acid)", "{sulfuric acid}(l) + 2 NaOH(s) -> Na2SO4(s) + 2 H2O(l)", "", 1,
            profile((20.0, 40.0), ["water"], "semi", (0.8, 1.6), (190, 250),
                    dose=(1.0, 3.0), acc=(0.02, 0.06), scale=(0.3, 0.8), reactors=("N-601",), side=True))


def acid_chloride(acid, chloride, reagent):
    if reagent == "oxalyl":
        r = rxn([acid, "OXCL"], [chloride, "CO", "CO2", "HCl"])
        prof = profile((20.0, 45.0), ["toluene", "dichloromethane"], "semi", (1.0, 1.8), (95, 130),
                       dose=(1.0, 3.0), acc=(0.1, 0.3))
    else:
        r = rxn([acid, "COCL2"], [chloride, "CO2", "HCl"])
        prof = profile((60.0, 90.0), ["toluene"], "semi", (1.0, 1.8), (90, 125),
                       dose=(2.0, 5.0), acc=(0.05, 0.2))
    return (f"acid chloride ({reagent})", r, "liquid", 1, prof)


def methanolysis(chloride, ester):
    return ("methanolysis", rxn([chloride, "MeOH"], [ester, "HCl"]), "liquid", 1,
            profile((20.0, 50.0), ["toluene", "dichloromethane"], "semi", (1.0, 1.8), (110, 150),
                    dose=(0.5, 2.0), acc=(0.05, 0.2)))


def air_oxidise(substrate, acid):
    # 2 ArCH3 + 3 O2 -> 2 ArCOOH + 2 H2O (Co/Mn/Br in acetic acid, air fed)
    return ("oxidation (air)", rxn([substrate, "O2"], [acid, "H2O"]), "liquid", 2,
            profile((125.0, 160.0), ["acetic acid"], "semi", (0.5, 1.0), (135, 185),
                    p=(10.0, 25.0), dose=(4.0, 10.0), acc=(0.05, 0.15), reactors=("R-410",)))


def peroxide_oxidise(substrate, acid):
    # ArCH3 + 3 H2O2 -> ArCOOH + 4 H2O (tungstate catalyst, H2O2 dosed)
    return ("oxidation (H2O2)", rxn([substrate, "H2O2"], [acid, "H2O"]), "liquid", 1,
            profile((70.0, 90.0), ["acetic acid", "water"], "semi", (0.5, 0.9), (95, 130),
                    dose=(4.0, 8.0), acc=(0.15, 0.4), reactors=("R-102", "R-205")))


def initiator_decomposition():
    return ("initiator decomposition (DTBP)", "{di-tert-butyl peroxide}(l) -> 2 acetone(l) + ethane(g)", "", 1,
            profile((125.0, 150.0), Inherit(["acetic acid"]), "batch", (1.0, 2.0), (150, 190),
                    p=(10.0, 25.0), scale=(0.005, 0.03), reactors=("R-410",)))


def peroxide_quench():
    # 2 H2O2 -> 2 H2O + O2 over MnO2 (excess peroxide destroyed before work-up)
    return ("peroxide decomposition (H2O2)", "OO>>O.O=O{g}", "liquid", 2,
            profile((30.0, 60.0), Inherit(["acetic acid", "water"]), "batch", (0.8, 1.4), (100, 140),
                    scale=(0.1, 0.6)))


def hydrolyse(ester, acid, alcohol):
    return ("ester hydrolysis", rxn([ester, "H2O"], [acid, alcohol]), "liquid", 1,
            profile((80.0, 98.0), ["water"], "batch", (0.8, 1.5), (190, 240)))


# Solvent strips: the step's own solvent is stripped under vacuum, at pressures that put the
# boiling mass at about 40-85 °C. The solvent is the previous step's where it can be stripped.
STRIP = {
    "methanol": ("methanol(l) -> methanol(g)", (0.35, 0.8)),
    "ethanol": ("ethanol(l) -> ethanol(g)", (0.25, 0.6)),
    "toluene": ("toluene(l) -> toluene(g)", (0.1, 0.3)),
    "ethyl acetate": ("{ethyl acetate}(l) -> {ethyl acetate}(g)", (0.25, 0.6)),
    "acetic acid": ("{acetic acid}(l) -> {acetic acid}(g)", (0.1, 0.3)),
}


def strip(solvent=None):
    """A solvent strip; without a solvent, the previous step's (resolved in `main`)."""
    if solvent is None:
        return ("solvent strip", None, "", 1, None)
    eq, p = STRIP[solvent]
    return (f"solvent strip ({solvent})", eq, "", 1,
            profile(None, [solvent], "batch", (0.8, 1.6), (180, 240), p=p,
                    scale=(2.0, 6.0), reactors=("R-101", "R-102", "D-701")))


def crystallise():
    # cooling crystallisation: the process temperature is the seeding point (then cooled to 0-5 °C)
    return ("crystallisation (TFC-2208)", f"{S['TFC']}{{l}}>>{S['TFC']}{{s}}", "standard", 1,
            profile((35.0, 50.0), Inherit(["methanol", "toluene", "ethanol", "ethyl acetate"]), "batch", (0.5, 1.0), (200, 250),
                    reactors=("K-801", "K-802")))


# --- Route families --------------------------------------------------------------------------
def reduce_step(rng, nitro, amine):
    return transfer_hydrogenate(nitro, amine) if rng.random() < 0.25 else hydrogenate(nitro, amine)


def acetylate_step(rng, amine, amide, allow_sb=True):
    u = rng.random()
    if u < 0.5:
        return [acetylate_ac2o(amine, amide)] + ([ac2o_quench()] if rng.random() < 0.6 else [])
    if u < 0.7:
        return [acetylate_accl(amine, amide)] + ([hcl_scrub(rng.random() < 0.5)] if rng.random() < 0.6 else [])
    if u < 0.85 and allow_sb:
        return [acetylate_schotten_baumann(amine, amide)]
    return [acetylate_acoh(amine, amide)]


def maybe(rng, p, steps):
    return steps if rng.random() < p else []


def family_a(rng):  # ester first, then nitration, reduction, acetylation
    return ([esterify("MTA", "MMT", "MeOH")] + maybe(rng, 0.3, [strip()])
            + [nitrate("MMT", "MNE")] + maybe(rng, 0.3, [spent_acid()])
            + [reduce_step(rng, "MNE", "MAE")] + acetylate_step(rng, "MAE", "TFC")
            + maybe(rng, 0.3, [crystallise()]))


def family_b(rng):  # nitration first, Fischer esterification (methyl, or ethyl then swap)
    steps = [nitrate("MTA", "NTA")] + maybe(rng, 0.3, [spent_acid()])
    if rng.random() < 0.7:
        steps += [esterify("NTA", "MNE", "MeOH"), reduce_step(rng, "MNE", "MAE")]
        steps += acetylate_step(rng, "MAE", "TFC")
    else:
        steps += [esterify("NTA", "ENE", "EtOH"), reduce_step(rng, "ENE", "EAE")]
        steps += [acetylate_ac2o("EAE", "ETF"), hydrolyse("ETF", "AAA", "EtOH"), esterify("AAA", "TFC", "MeOH")]
    return steps + maybe(rng, 0.25, [crystallise()])


def family_c(rng):  # nitration first, acid chloride, methanolysis
    reagent = "oxalyl" if rng.random() < 0.6 else "phosgene"
    return ([nitrate("MTA", "NTA"), acid_chloride("NTA", "NTC", reagent), methanolysis("NTC", "MNE")]
            + maybe(rng, 0.4, [hcl_scrub(rng.random() < 0.5)])
            + [reduce_step(rng, "MNE", "MAE")] + acetylate_step(rng, "MAE", "TFC", allow_sb=False))


def oxidation_steps(rng, substrate, acid):
    if rng.random() < 0.55:
        return [air_oxidise(substrate, acid)] + maybe(rng, 0.6, [initiator_decomposition()])
    return [peroxide_oxidise(substrate, acid)] + maybe(rng, 0.7, [peroxide_quench()])


def family_d(rng):  # m-xylene: nitration, oxidation of the para methyl, ester, reduction, acetylation
    return ([nitrate("MX", "NX")] + oxidation_steps(rng, "NX", "NTA")
            + [esterify("NTA", "MNE", "MeOH"), reduce_step(rng, "MNE", "MAE")]
            + acetylate_step(rng, "MAE", "TFC"))


def family_e(rng):  # xylidine route: reduce, protect, oxidise the protected xylidine, esterify
    u = rng.random()
    red = vapour_hydrogenate() if u < 0.4 else reduce_step(rng, "NX", "DMA")
    acetyl = acetylate_ac2o("DMA", "DMAC") if rng.random() < 0.7 else acetylate_acoh("DMA", "DMAC")
    return ([nitrate("MX", "NX"), red, acetyl] + oxidation_steps(rng, "DMAC", "AAA")
            + [esterify("AAA", "TFC", "MeOH")] + maybe(rng, 0.35, [strip()]))


def family_f(rng):  # purchased 4-amino-3-methylbenzoic acid
    if rng.random() < 0.5:
        steps = [esterify("AMA", "MAE", "MeOH")] + acetylate_step(rng, "MAE", "TFC")
    else:
        steps = [acetylate_ac2o("AMA", "AAA")] + maybe(rng, 0.6, [ac2o_quench()]) + [esterify("AAA", "TFC", "MeOH")]
    steps += maybe(rng, 0.6, [strip()])
    return steps + maybe(rng, 0.6, [crystallise()])


def family_g(rng):  # purchased nitro ester (methyl or ethyl)
    if rng.random() < 0.6:
        steps = [reduce_step(rng, "MNE", "MAE")] + acetylate_step(rng, "MAE", "TFC")
    else:
        steps = [reduce_step(rng, "ENE", "EAE"), acetylate_ac2o("EAE", "ETF"),
                 hydrolyse("ETF", "AAA", "EtOH"), esterify("AAA", "TFC", "MeOH")]
    steps += maybe(rng, 0.5, [strip()])
    return steps + maybe(rng, 0.5, [crystallise()])


FAMILIES = [("A", family_a, 0.2), ("B", family_b, 0.17), ("C", family_c, 0.13), ("D", family_d, 0.15),
            ("E", family_e, 0.13), ("F", family_f, 0.11), ("G", family_g, 0.11)]

# Deliberately bad rows: (reaction text or None to keep the step's, scale_mol text or None).
BAD = [
    ("{m-xylene}(l) + {nitric acid} -> C8H9NO2Xq(l) + H2O(l)", None),         # unknown element
    (f"{S['MNE']}{{l}}.{S['H2']}>>{S['MAE']}{{l}}", None),                  # cannot be balanced (no water)
    ("", None),                                                               # missing reaction
    (None, "about 40"),                                                       # scale_mol is not a number
    ("C3H6O(l) -> C3H6O(g)", None),                                           # isomer formula (acetone or ...)
]

COLUMNS = [
    "case_id", "route_id", "step", "reaction", "phase",
    "process_temperature_c", "pressure_bar", "scale_mol", "reaction_mass_kg",
    "cp_kj_per_kg_k", "dosing_time_h", "accumulation_fraction", "mtt_c", "t_d24_c", "dsc_onset_c",
    "solvent", "reactor",
]


def pick_family(rng):
    u, acc = rng.random(), 0.0
    for name, fn, w in FAMILIES:
        acc += w
        if u < acc:
            return name, fn
    return FAMILIES[-1][0], FAMILIES[-1][1]


def conditions(rng, kind, step_mol, prev, thermal):
    """One row's conditions. prev: (mass kg, solvent) of the main mass before this step."""
    family, reaction, phase, nu, pr = kind
    if isinstance(pr["solvents"], Inherit):
        solvent = prev[1] if prev[1] in pr["solvents"] else rng.choice(pr["solvents"])
    else:
        solvent = rng.choice(pr["solvents"])
    p = round(rng.uniform(*pr["p"]), 2) if pr["p"][0] != pr["p"][1] else pr["p"][0]
    if solvent in SOLVENTS:  # MTT: the solvent boils
        mtt = round(boiling_c(solvent, p), 1)
    else:  # fixed bed: the catalyst's set limit
        mtt = float(rng.choice([300, 310, 320]))
    if pr["t"] is None:  # solvent strip: at the boiling point under vacuum, a little below
        t = round(mtt - rng.uniform(1.0, 4.0), 1)
    else:  # never above the boiling point (a reflux step runs just below it)
        t = round(min(rng.uniform(*pr["t"]), mtt - rng.uniform(0.5, 3.0)), 1)
    if pr["scale"] is None:
        scale = round(step_mol / nu, 1)
        mass = round(step_mol / rng.uniform(*pr["conc"]), 0)
    else:
        scale = max(1.0, round(step_mol * rng.uniform(*pr["scale"]) / nu, 1))
        if pr["side"] or prev[0] is None:
            mass = round(scale * nu / rng.uniform(*pr["conc"]), 0)
        else:
            mass = round(prev[0] * rng.uniform(1.0, 1.3), 0)
    lo, hi = SOLVENTS[solvent][2] if solvent in SOLVENTS else (7.0, 9.0)
    cp = round(rng.uniform(lo, hi), 2)
    mode = pr["mode"]
    semi = mode == "semi" or (isinstance(mode, float) and rng.random() < mode)
    dose = round(rng.uniform(*pr["dose"]), 1) if semi else 0.0
    acc = f"{rng.uniform(*pr['acc']):.2f}" if semi else ""
    td24 = rng.uniform(*pr["td24"])
    t_d24, onset = "", ""
    if thermal == "arc":
        t_d24 = f"{td24:.0f}"
    elif thermal == "dsc":
        onset = f"{td24 + 100 + rng.uniform(-5, 15):.0f}"
    row = dict(reaction=reaction, phase=phase, process_temperature_c=t, pressure_bar=p, scale_mol=scale,
               reaction_mass_kg=mass, cp_kj_per_kg_k=cp, dosing_time_h=dose, accumulation_fraction=acc,
               mtt_c=mtt, t_d24_c=t_d24, dsc_onset_c=onset, solvent=solvent,
               reactor=rng.choice(pr["reactors"]))
    return row, prev if pr["side"] else (mass, solvent)


def main() -> None:
    rng = random.Random(SEED)
    rows = []
    bad_routes = set(rng.sample(range(ROUTES), len(BAD)))
    bad_iter = iter(BAD)
    for r in range(ROUTES):
        route_id = f"TFC-2208-R{r + 1:04d}"
        family, fn = pick_family(rng)
        steps = fn(rng)
        while not 3 <= len(steps) <= 7:
            steps = fn(rng)
        mol = round(rng.uniform(150, 1200), 0)  # mol of the first substrate per batch
        # thermal data of the route option: adiabatic calorimetry (T_D24) or DSC screening only
        route_thermal = "arc" if rng.random() < 0.55 else "dsc"
        bad_step = rng.randint(1, len(steps)) if r in bad_routes else None
        prev = (None, None)
        for s, kind in enumerate(steps, start=1):
            if kind[1] is None:  # a strip of the previous step's solvent
                kind = strip(prev[1] if prev[1] in STRIP else rng.choice(["methanol", "toluene"]))
            thermal = route_thermal if rng.random() > 0.04 else "none"
            row, prev = conditions(rng, kind, mol, prev, thermal)
            if kind[4]["scale"] is None:
                mol = round(mol * rng.uniform(0.86, 0.97), 0)  # step yield
            row = {"case_id": f"{route_id}-S{s}", "route_id": route_id, "step": s, **row}
            if s == bad_step:
                reaction, scale = next(bad_iter)
                if reaction is not None:
                    row["reaction"], row["phase"] = reaction, ""
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
