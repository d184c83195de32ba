"""pH of the IUPAC primary standard buffer solutions, 0-50 °C, from their molal compositions.

Case: the seven primary standards of R. P. Buck et al., "Measurement of pH. Definition,
standards, and procedures (IUPAC Recommendations 2002)", Pure Appl. Chem. 74 (2002) 2169-2200
-- saturated (25 °C) potassium hydrogen tartrate, 0.05 mol/kg potassium dihydrogen citrate,
0.05 mol/kg potassium hydrogen phthalate, phosphate 1:1 and 1:3.5, 0.01 mol/kg borax and
carbonate 0.025/0.025 -- with their compositions and pH(PS) values as the catalog carries them
(catalog/data/ph_standards.csv, ph_standard_values.csv; one place for the data).

Published values and what was read: the 25 °C values of phthalate (4.005, Hamer et al., J. Res.
NBS 36 (1946) 47), borax (9.180), carbonate (10.012) and citrate (3.776) (J. Res. NBS 73A (1969)
37) were read; the phosphate 25 °C values 6.865 (1:1) and 7.413 (1:3.5) were read as quoted by
Partanen & Minkkinen, Acta Chem. Scand. 50 (1996) 1081, and the 1:3.5 value 7.382 at 38 °C
in the abstract of J. Res. NBS 65A (1961) (doi 10.6028/jres.065A.031, which also gives 7.414 at
25 °C against the IUPAC 7.413 kept here).  The phthalate values at the other
temperatures are computed from the equation of Hetzer, Durst, Robinson & Bates, J. Res. NBS 81A
(1977), pH(S) = 2073.44/T - 13.3270 + 0.045199 T - 3.4846e-5 T² (read), rounded to 0.001; Hamer
et al.'s own 1946 equation, pH = 1336.08/T - 5.2678 + 0.016069 T (T = t + 273.16, read), agrees
with it within 0.003 from 0 to 50 °C (checked below).  Every other cell of the table, and the
0.0341 mol/kg molality of the tartrate solution saturated at 25 °C, are from memory of the IUPAC
table (marked `from-memory` in the catalog).  The Buck et al. 2002 table itself, the NBS/NIST
SRM certificates' tables and Bates 1962 could not be read (searches found their abstracts and
first pages only); the recalled phosphate 1:1, borax and carbonate cells are corroborated to
0.009 pH by the read two-decimal JIS Z 8802 table (JIS_Z8802 below).

Convention: pH(PS) is -log a_H on the molality scale with the single-ion activity of chloride
fixed by the Bates-Guggenheim convention, log γ_Cl = -A √I / (1 + 1.5 √I) (I in mol/kg, valid
for I <= 0.1 mol/kg; Bates & Guggenheim, Pure Appl. Chem. 1 (1960) 163; Buck et al. 2002).  The
engine's default model is the Davies equation, log γ₁ = -A (√I/(1+√I) - 0.3 I) with I in mol/L,
applied to every ion including H+; its pH is -log a_H from thermodynamic (molal, I = 0) pKa.

Molal entry: a standard is a molality; the engine takes mol/L.  The test converts with the
density of water, c = m ρ_w(T) (selector.chemistry.equilibrium.molal_to_molar), which is how a
user preparing the solution by weight would enter it.  Entering the molalities unconverted (the
scale the pKa values and pH(PS) are defined on) moves no standard by more than 0.0012 pH at
0-50 °C (measured), so the entry is not what limits agreement.

Tolerance: the target is 0.010 pH (issue 9) under the model that meets it.  Both activity
models are measured.  A standard that a model does not yet bring within 0.010 is listed in
KNOWN_GAPS[model] with the largest error measured today rounded up by 0.002 pH, checked as a
ceiling (a regression fails) and as a still-open gap (a fix that closes it fails too, so the
entry is removed).  Measured worst errors, 0-50 °C, Davies / Bates-Guggenheim, before -> after
the tartrate ΔCp° below: phthalate +0.0115 / +0.0116, phosphate 1:1 +0.0174 / +0.0108, phosphate
1:3.5 +0.0272 / +0.0207, borax -0.0104 / -0.0098, carbonate -0.0106 / -0.0170 (unchanged), tartrate
-0.0242 / -0.0233 -> +0.0076 / +0.0085, citrate -0.0077 / -0.0079 (unchanged).  Neither model meets
the target for all seven, so no default activity model is declared here.

Why each standard misses (each cause measured by a test below):
- tartrate: its ΔCp° was an assumed 0 (common practice); the recalled (not read) heat capacities
  of the NBS emf study, -175 / -220 J/(K mol), bring it within 0.010 under both models.  Closed.
- phosphate 1:1 and 1:3.5: at equal ionic strength (0.100 mol/kg) the engine gives the same pH
  difference between them at every temperature and under every charge-only activity model
  (0.544, the log of the 3.5 ratio), while the standards differ by 0.548 at 25 °C (read) and by
  0.550 -> 0.534 from 0 to 50 °C (table): a Na⁺/K⁺-specific effect no z²-model carries.  The two
  errors therefore differ by -0.006 at 0 °C and +0.010 at 50 °C whatever pK2(T), which leaves a
  band of a few thousandths in which a pK2(T) would have to put both; none of the published
  ΔH° (3.0-4.2 kJ/mol) or ΔCp° values in step_values.csv does (measured one at a time).  The
  NIST SRD 46 Na⁺/K⁺ pairs carry the difference (+0.003 at 25 °C) but move both standards by
  -0.09: the standards' pK2 already absorbs them.
- phosphate against carbonate: any z²-model moves both by the same 3 g(I) at I = 0.1 mol/kg;
  their 25 °C errors differ by 0.020 against read cells, so one of them misses whatever the
  model (ion-specific non-ideality again, not a constant: the read pK2 alternatives move it
  by less than 0.002 or overshoot).
- borax: with the cell study's own pK(T) (Manov et al. 1944, read: 9.235, ΔH° 14.11 kJ/mol,
  ΔCp° -193) the standard is missed by -0.021 at 0 °C; the catalog's recalled ΔCp° -240 halves
  that.  Not a constants question alone: the standard's values were recalculated after that
  equation with one consistent set of standard potentials (Bates, J. Res. NBS 66A (1962) 179,
  abstract read), and 0.04 mol/L boron is past the polyborate limit the engine does not model
  (polymerisation.csv).
- phthalate: +0.006 to +0.0115 against the read Hetzer et al. curve under both models; the read
  pKa alternatives overshoot (pK1 2.98: +0.026, pK2 5.34: -0.028); both ΔCp° are recalled.
"""

import dataclasses

import numpy as np
import pytest

from catalog import load_catalog
from selector.chemistry.activity import ACTIVITY_MODELS
from selector.chemistry.equilibrium import molal_to_molar, solve_equilibrium
from selector.names import resolve_reagent

TOLERANCE_PH = 0.010

CATALOG = load_catalog()
STANDARDS = CATALOG.ph_standards

MODELS = ("davies", "bates-guggenheim")

#: Largest |pH - pH(PS)| over 0-50 °C today per activity model (molal → molar), rounded up by
#: 0.002 pH, and why the standard misses the 0.010 target.  Figures are from this test's own run.
KNOWN_GAPS = {
    "davies": {
        "phthalate": (0.014, "+0.009 at 0 °C, +0.006 to +0.007 from 10 to 37 °C, +0.0115 at 50 °C "
                             "against the read Hetzer et al. 1977 curve"),
        "phosphate_1_1": (0.020, "+0.008 at 0 °C rising to +0.017 at 50 °C; +0.011 at 25 °C against "
                                 "the read 6.865"),
        "phosphate_1_3_5": (0.030, "+0.002 at 0 °C rising to +0.027 at 50 °C; +0.015 at 38 °C against "
                                   "the read 7.382"),
        "borax": (0.013, "-0.010 at 0 °C to +0.008 at 50 °C"),
        "carbonate": (0.013, "-0.005 to -0.011 (15 °C)"),
    },
    "bates-guggenheim": {
        "phthalate": (0.014, "+0.010 at 0 °C, +0.012 at 50 °C against the read 1977 curve"),
        "phosphate_1_1": (0.013, "+0.002 at 0 °C rising to +0.011 at 50 °C"),
        "phosphate_1_3_5": (0.023, "-0.004 at 0 °C to +0.021 at 50 °C; +0.009 at 38 °C against the "
                                   "read 7.382"),
        "carbonate": (0.019, "-0.007 to -0.017 (15 °C): 0.006-0.007 below Davies at every temperature"),
    },
}


def standard_table(standard_id):
    """(temperatures °C, pH(PS), source kinds) of a catalog standard."""
    values = STANDARDS[standard_id].values
    return (np.array([t for t, _ in values]), np.array([v.value for _, v in values]),
            [v.source_kind for _, v in values])


def solve_standard(standard_id, temperatures_c, activity="davies", catalog=CATALOG, ion_pairs=False):
    """pH of the standard at each temperature, molalities entered as m · ρ_w(T) mol/L."""
    components = STANDARDS[standard_id].components_mol_kg
    ids = [reagent for reagent, _ in components]
    molal = np.array([m for _, m in components])
    t = np.asarray(temperatures_c, dtype=float)
    amounts_mol_l = molal[None, :] * np.asarray(molal_to_molar(1.0, t)).reshape(-1, 1)
    return solve_equilibrium(ids, amounts_mol_l, t, catalog=catalog, activity=activity, ion_pairs=ion_pairs).ph


def errors(standard_id, activity="davies", catalog=CATALOG):
    temperatures, reference, _ = standard_table(standard_id)
    return temperatures, solve_standard(standard_id, temperatures, activity, catalog) - reference


def with_step_values(catalog, system_id, step, **values):
    """The catalog with one step's chosen constants replaced (``pka_25c=…``, ``dh_kj_mol=…``, …)."""
    system = catalog.systems[system_id]
    steps = tuple(dataclasses.replace(s, **{q: dataclasses.replace(getattr(s, q), value=v) for q, v in values.items()})
                  if s.step == step else s for s in system.steps)
    return dataclasses.replace(catalog, systems=dict(catalog.systems, **{system_id: dataclasses.replace(system, steps=steps)}))


def test_all_seven_primary_standards_are_in_the_catalog():
    # Buck et al. 2002 list seven primary standards; each reagent resolves by its common name.
    assert set(STANDARDS) == {"tartrate", "citrate", "phthalate", "phosphate_1_1",
                              "phosphate_1_3_5", "borax", "carbonate"}
    names = {"potassium hydrogen tartrate": "k_bitartrate", "potassium dihydrogen citrate": "kh2_citrate",
             "potassium hydrogen phthalate": "khp", "potassium dihydrogen phosphate": "kh2po4",
             "disodium hydrogen phosphate": "na2hpo4", "disodium hydrogen phosphate anhydrous": "na2hpo4",
             "sodium hydrogen carbonate": "nahco3", "sodium bicarbonate": "nahco3",
             "sodium carbonate": "na2co3", "sodium carbonate anhydrous": "na2co3",
             "disodium tetraborate decahydrate": "borax", "borax": "borax"}
    for name, reagent_id in names.items():
        assert resolve_reagent(name, CATALOG) == reagent_id
    used = {reagent for standard in STANDARDS.values() for reagent, _ in standard.components_mol_kg}
    assert used <= set(names.values())


@pytest.mark.parametrize("standard_id", ["phthalate", "borax", "carbonate", "citrate"])
def test_read_25c_value_within_tolerance(standard_id):
    # The 25 °C values read in a source (see the module docstring), each within 0.010 pH.
    temperatures, reference, kinds = standard_table(standard_id)
    at_25 = list(temperatures).index(25.0)
    assert kinds[at_25] == "measured"
    assert solve_standard(standard_id, [25.0])[0] == pytest.approx(reference[at_25], abs=TOLERANCE_PH)


@pytest.mark.parametrize("model", MODELS)
@pytest.mark.parametrize("standard_id", list(STANDARDS))
def test_standard_over_its_temperature_range(standard_id, model):
    temperatures, error = errors(standard_id, model)
    assert temperatures.min() <= 25 and temperatures.max() == 50
    ceiling = KNOWN_GAPS[model].get(standard_id, (TOLERANCE_PH, ""))[0]
    worst = int(np.argmax(np.abs(error)))
    assert abs(error[worst]) <= ceiling, (
        f"{standard_id} ({model}): off by {error[worst]:+.4f} pH at {temperatures[worst]:g} °C "
        f"(allowed {ceiling})")


@pytest.mark.parametrize("model, standard_id", [(m, s) for m in MODELS for s in KNOWN_GAPS[m]])
def test_known_gaps_still_open(model, standard_id):
    temperatures, error = errors(standard_id, model)
    if np.abs(error).max() <= TOLERANCE_PH:
        pytest.fail(f"{standard_id} now within {TOLERANCE_PH} pH under {model} over {temperatures.min():g}-"
                    f"{temperatures.max():g} °C: remove it from KNOWN_GAPS[{model!r}]")


def test_no_model_meets_the_target_for_all_seven_yet():
    # The condition for declaring a default activity model on the standards' scale (issue 9): one
    # model within 0.010 pH for all seven.  Today each model leaves gaps (KNOWN_GAPS); when this
    # fails, declare that model the default and move the check to it.
    assert all(KNOWN_GAPS[model] for model in MODELS)


def test_phthalate_against_the_1977_equation():
    # Hetzer, Durst, Robinson & Bates, J. Res. NBS 81A (1977): pH(S)(T) of 0.05 mol/kg KH
    # phthalate, the equation read in the abstract.  Today's errors (Davies): +0.0094 (0 °C),
    # +0.0062 (25 °C), +0.0119 (50 °C); within 0.010 from 0 to 45 °C.
    temperatures_c = np.arange(0.0, 50.0, 5.0)
    t_k = temperatures_c + 273.15
    reference = 2073.44 / t_k - 13.3270 + 0.045199 * t_k - 3.4846e-5 * t_k**2
    assert reference[5] == pytest.approx(4.006, abs=5e-4)  # 25 °C; 4.005 read in Hamer et al. 1946
    error = solve_standard("phthalate", temperatures_c) - reference
    assert np.abs(error).max() <= TOLERANCE_PH


def test_phthalate_table_is_the_1977_equation_and_agrees_with_1946():
    # The catalog's phthalate cells other than 25 °C are the 1977 equation rounded to 0.001 (kind
    # "computed"); Hamer, Pinching & Acree's 1946 equation pH = 1336.08/T - 5.2678 + 0.016069 T
    # (T = t + 273.16, read in the abstract of J. Res. NBS 36 (1946) 47) lies within 0.003 of them
    # (measured: largest difference 0.0028 at 0 °C).
    temperatures, reference, kinds = standard_table("phthalate")
    t_k = temperatures + 273.15
    hetzer = 2073.44 / t_k - 13.3270 + 0.045199 * t_k - 3.4846e-5 * t_k**2
    computed = np.array([kind == "computed" for kind in kinds])
    assert computed.sum() == len(temperatures) - 1
    assert np.abs(reference[computed] - hetzer[computed]).max() <= 5e-4
    hamer = 1336.08 / (temperatures + 273.16) - 5.2678 + 0.016069 * (temperatures + 273.16)
    assert np.abs(reference - hamer).max() <= 0.003


def test_molal_entry_is_not_the_limit():
    # Entering molalities unconverted moves each standard by at most 0.0012 pH (measured):
    # the density factor changes I and the H+ concentration scale by under 1.2 % at 0-50 °C.
    for standard_id in STANDARDS:
        temperatures, _, _ = standard_table(standard_id)
        components = STANDARDS[standard_id].components_mol_kg
        ids = [reagent for reagent, _ in components]
        molal = np.array([[m for _, m in components]] * len(temperatures))
        unconverted = solve_equilibrium(ids, molal, temperatures).ph
        assert np.abs(unconverted - solve_standard(standard_id, temperatures)).max() <= 0.002


def test_bates_guggenheim_option_trades_phosphate_for_carbonate():
    # The named option "bates-guggenheim" (B·a = 1.5, no linear term) brings phosphate 1:3.5 at
    # 50 °C from +0.027 to +0.021 but carbonate from -0.011 to -0.017 (measured here): neither
    # model holds every standard within 0.010, so the default stays Davies.
    _, davies_phosphate = errors("phosphate_1_3_5")
    _, bg_phosphate = errors("phosphate_1_3_5", "bates-guggenheim")
    _, davies_carbonate = errors("carbonate")
    _, bg_carbonate = errors("carbonate", "bates-guggenheim")
    assert np.abs(bg_phosphate).max() < np.abs(davies_phosphate).max() - 0.005
    assert np.abs(bg_carbonate).max() > np.abs(davies_carbonate).max() + 0.005


def test_standard_temperature_trend_phosphate():
    # The 1:1 phosphate standard falls by 0.151 pH from 0 to 50 °C (6.984 -> 6.833, IUPAC table,
    # from memory); the engine within 0.010 of that fall.
    ph = solve_standard("phosphate_1_1", [0.0, 50.0])
    assert ph[0] - ph[1] == pytest.approx(0.151, abs=TOLERANCE_PH)


def test_no_activity_model_closes_phosphate_and_carbonate_together():
    # Phosphate 1:1 and carbonate are both I = 0.1 mol/kg buffers of a 1-/2- pair, so any
    # activity model of the form log γ_z = z² g(I) moves both by the same 3 g(I).  Their
    # errors at 25 °C differ by 0.020 pH whatever the model (measured: Davies +0.0111 and
    # -0.0091, Bates-Guggenheim +0.0043 and -0.0158), so at least one of them misses 0.010:
    # the remaining gap is in the constants (phosphate and carbonate step 2), not the model.
    # pH(PS) at 25 °C: 6.865 (the IUPAC value as quoted by Partanen & Minkkinen, Acta Chem.
    # Scand. 50 (1996) 1081), 10.012 (J. Res. NBS 73A (1969) 37); tolerance 0.001 pH.
    differences = []
    for model in ACTIVITY_MODELS:
        phosphate = solve_standard("phosphate_1_1", [25.0], model)[0] - 6.865
        carbonate = solve_standard("carbonate", [25.0], model)[0] - 10.012
        differences.append(phosphate - carbonate)
    assert np.ptp(differences) < 0.001
    assert min(differences) > 2 * TOLERANCE_PH - 0.001


#: pH(S) of the JIS Z 8802 reference solutions to two decimals, 0-50 °C, read in the table
#: "Standard pH of Reference Solution, by Temperature (JIS Z 8802 confirmed in 2011)" as
#: quoted on a pH-electrode manufacturer's page (https://www.horiba.com/uk/application/
#: material-property-characterization/water-analysis/water-quality-electrochemistry-
#: instrumentation/the-story-of-ph-and-water-quality/the-basis-of-ph/measuring-ph-using-a-
#: glass-electrode/reference-solution/).  The JIS solutions are made up by amount per litre
#: (0.025 mol/L KH2PO4 + 0.025 mol/L Na2HPO4, 0.01 mol/L borax, 0.025 mol/L NaHCO3 + 0.025
#: mol/L Na2CO3), the IUPAC ones by molality; carbonate values the table puts in parentheses
#: are kept too.
JIS_Z8802 = {
    "phosphate_1_1": {0: 6.98, 5: 6.95, 10: 6.92, 15: 6.90, 20: 6.88, 25: 6.86, 30: 6.85, 35: 6.84,
                      40: 6.84, 50: 6.83},
    "borax": {0: 9.46, 5: 9.39, 10: 9.33, 15: 9.27, 20: 9.22, 25: 9.18, 30: 9.14, 35: 9.10, 40: 9.07,
              50: 9.01},
    "carbonate": {0: 10.32, 5: 10.25, 10: 10.18, 15: 10.12, 20: 10.07, 25: 10.02, 30: 9.97, 35: 9.93},
    "phthalate": {0: 4.01, 5: 4.01, 10: 4.00, 15: 4.00, 20: 4.00, 25: 4.01, 30: 4.01, 35: 4.02, 40: 4.03,
                  50: 4.06},
}


@pytest.mark.parametrize("standard_id", list(JIS_Z8802))
def test_recalled_cells_agree_with_the_read_two_decimal_table(standard_id):
    # The catalog's phosphate 1:1, borax and carbonate cells away from 25 °C are recalled (kind
    # from-memory); the phthalate ones are the read 1977 equation.  Each agrees with the read
    # JIS Z 8802 table within 0.009 pH: 0.005 for its rounding to two decimals plus 0.004 for
    # the molar against molal make-up (measured largest differences: phosphate 0.005, borax
    # 0.006 at 15 °C, carbonate 0.008 at 20 and 25 °C, phthalate 0.006 at 5 °C).  This
    # corroborates the recalled cells to about 0.01 pH; it does not read them to 0.001.
    temperatures, reference, _ = standard_table(standard_id)
    cells = dict(zip(temperatures.tolist(), reference.tolist()))
    differences = {t: cells[float(t)] - ph for t, ph in JIS_Z8802[standard_id].items()}
    assert max(abs(d) for d in differences.values()) <= 0.009, differences


def test_tartrate_gap_was_the_assumed_heat_capacity():
    # With ΔCp° = 0 (the common-practice placeholder the catalog carried) the saturated tartrate
    # standard falls to -0.024 (Davies) / -0.023 (Bates-Guggenheim) at 50 °C (measured); with the
    # recalled -175 / -220 J/(K mol) of the NBS emf study (step_values.csv, from memory) it stays
    # within 0.010 from 25 to 50 °C under both models (measured +0.0076 / +0.0085 at 50 °C).
    steps = [s.dcp_j_k_mol for s in CATALOG.systems["tartrate"].steps]
    assert [(d.value, d.source_kind) for d in steps] == [(-175.0, "from-memory"), (-220.0, "from-memory")]
    placeholder = with_step_values(with_step_values(CATALOG, "tartrate", 1, dcp_j_k_mol=0.0),
                                   "tartrate", 2, dcp_j_k_mol=0.0)
    for model in MODELS:
        _, before = errors("tartrate", model, placeholder)
        _, after = errors("tartrate", model)
        assert before.min() < -0.020
        assert np.abs(after).max() <= TOLERANCE_PH


def test_phosphate_pair_differs_by_an_ion_specific_effect():
    # The two phosphate standards have the same ionic strength (0.100 mol/kg), so under any
    # charge-only activity model their pH difference is log(0.03043/0.008695) = 0.5440 at every
    # temperature, whatever pK2(T) (measured: 0.5438-0.5440, 0-50 °C, each model).  The standards
    # differ by 7.413 - 6.865 = 0.548 at 25 °C (both read, see the module docstring) and, in the
    # recalled table, by 0.550 at 0 °C and 0.534 at 50 °C: the 1:3.5 solution has more Na⁺ and less
    # K⁺, an ion-specific difference these models cannot carry.  Tolerance 0.001 pH.
    temperatures_c = np.arange(0.0, 55.0, 5.0)
    for model in ACTIVITY_MODELS:
        difference = (solve_standard("phosphate_1_3_5", temperatures_c, model)
                      - solve_standard("phosphate_1_1", temperatures_c, model))
        assert np.ptp(difference) < 0.001
        assert difference.mean() == pytest.approx(np.log10(0.03043 / 0.008695), abs=0.001)
    table = {sid: dict(zip(*standard_table(sid)[:2])) for sid in ("phosphate_1_1", "phosphate_1_3_5")}
    published = {t: table["phosphate_1_3_5"][t] - table["phosphate_1_1"][t] for t in (0.0, 25.0, 50.0)}
    assert published[25.0] == pytest.approx(0.548, abs=0.0005)
    assert published[0.0] - published[50.0] == pytest.approx(0.016, abs=0.0005)


def test_nist46_ion_pairs_are_not_the_standards_convention():
    # Adding the NIST SRD 46 Na⁺/K⁺ pairs (complexes.csv, ion_pairs=True) moves the phosphate
    # standards by -0.095 / -0.092 and carbonate by -0.143 pH at 25 °C (Davies, measured): the
    # standards' pK2 values come from the same Harned cells without pairs, so the pairs are
    # already absorbed.  They do carry the Na⁺/K⁺ difference between the phosphate standards
    # (+0.003 of the 0.004 above).  Tolerance: the sign and size of the shift, 0.01 pH.
    shifts = {sid: solve_standard(sid, [25.0], ion_pairs=True)[0] - solve_standard(sid, [25.0])[0]
              for sid in ("phosphate_1_1", "phosphate_1_3_5", "carbonate")}
    assert shifts["phosphate_1_1"] == pytest.approx(-0.095, abs=0.01)
    assert shifts["phosphate_1_3_5"] == pytest.approx(-0.092, abs=0.01)
    assert shifts["carbonate"] == pytest.approx(-0.143, abs=0.01)
    assert shifts["phosphate_1_3_5"] - shifts["phosphate_1_1"] == pytest.approx(0.0034, abs=0.001)


def test_borax_cell_study_equation_does_not_close_the_gap():
    # Manov, DeLollis & Acree, J. Res. NBS 33 (1944) 287, read: pK = 2237.94/T + 0.016883 T - 3.305,
    # i.e. pK 9.235, ΔH° 14.11 kJ/mol, ΔCp° -193 J/(K mol) at 25 °C (step_values.csv).  With the
    # whole equation the borax standard is missed by -0.021 (Davies) / -0.021 (Bates-Guggenheim)
    # at 0 °C (measured), more than with the catalog's choice (-0.010): the 0 °C gap is not the
    # compilation's constants.  Tolerance 0.002 pH.
    manov = with_step_values(CATALOG, "borate", 1, pka_25c=9.235, dh_kj_mol=14.11, dcp_j_k_mol=-193.0)
    for model in MODELS:
        temperatures, error = errors("borax", model, manov)
        assert temperatures[0] == 0.0
        assert error[0] == pytest.approx(-0.021, abs=0.002)
        assert abs(error[0]) > abs(errors("borax", model)[1][0]) + 0.008


def test_recalled_phosphate_1_3_5_cells_agree_with_the_read_38c_value():
    # The read 7.382 at 38 °C (J. Res. NBS 65A (1961), abstract) against the recalled 37 and 40 °C
    # cells interpolated linearly: 7.386 - (7.386 - 7.380)/3 = 7.384, within 0.003 (measured
    # 0.002).  The engine's 37-40 °C miss (Davies +0.015 at 38 °C) is thus not a recall error.
    temperatures, reference, kinds = standard_table("phosphate_1_3_5")
    cells = dict(zip(temperatures.tolist(), reference.tolist()))
    assert kinds[list(temperatures).index(38.0)] == "measured"
    assert cells[38.0] == pytest.approx(np.interp(38.0, [37.0, 40.0], [cells[37.0], cells[40.0]]), abs=0.003)
    assert solve_standard("phosphate_1_3_5", [38.0])[0] - cells[38.0] == pytest.approx(0.015, abs=0.002)
