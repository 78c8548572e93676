"""Tabulated lethality presets: every published row, interpolation between rows, no extrapolation beyond them."""

import math

import numpy as np
import pytest
from numpy.testing import assert_allclose
from scipy.integrate import quad

from procplan.errors import InvalidInputError
from procplan.outcomes import LETHALITY_PRESETS, LETHALITY_TABLES, Z_VALUE_PRESETS, lethality_basis

# Source: Chilled Food Association (2006), Best Practice Guidelines for the Production of Chilled Foods, 4th ed.,
# equivalent time/temperature combinations for spores of non-proteolytic C. botulinum, as quoted by the UK Food
# Standards Agency VP/MAP training (module 3, section 2). Read in that table: °C, min.
CFA_ROWS = [
    (80, 129.0), (81, 100.0), (82, 77.0), (83, 60.0), (84, 46.0), (85, 36.0), (86, 28.0), (87, 22.0),
    (88, 17.0), (89, 13.0), (90, 10.0), (91, 7.9), (92, 6.3), (93, 5.0), (94, 4.0), (95, 3.2), (96, 2.5),
    (97, 2.0), (98, 1.6), (99, 1.3), (100, 1.0),
]  # fmt: skip
# Source: USDA FSIS (1999), Appendix A, Compliance Guidelines for Meeting Lethality Performance Standards for
# Certain Meat and Poultry Products, guideline 1 table (cooked beef, roast beef, cooked corned beef), as reproduced
# in full at rhosey.com/usda_cooking_guideline.htm and to 148 °F at charcutaria.org (identical rows). °F, 6.5-log
# and 7-log times in seconds (the published minutes × 60). 158–160 °F ("0 sec.") are tested separately.
FSIS_ROWS = [
    (130, 112 * 60, 121 * 60), (131, 89 * 60, 97 * 60), (132, 71 * 60, 77 * 60), (133, 56 * 60, 62 * 60),
    (134, 45 * 60, 47 * 60), (135, 36 * 60, 37 * 60), (136, 28 * 60, 32 * 60), (137, 23 * 60, 24 * 60),
    (138, 18 * 60, 19 * 60), (139, 15 * 60, 15 * 60), (140, 12 * 60, 12 * 60), (141, 9 * 60, 10 * 60),
    (142, 8 * 60, 8 * 60), (143, 6 * 60, 6 * 60), (144, 5 * 60, 5 * 60), (145, 4 * 60, 4 * 60),
    (146, 169, 182), (147, 134, 144), (148, 107, 115), (149, 85, 91), (150, 67, 72), (151, 54, 58),
    (152, 43, 46), (153, 34, 37), (154, 27, 29), (155, 22, 23), (156, 17, 19), (157, 14, 15),
]  # fmt: skip
# Source: 70 °C for 2 min, Mackey & Bratchell (1989), Lett. Appl. Microbiol. 9:89 (abstract read). The other rows
# only from training material citing FSA guidance (primary document not read): indicative, so they are checked
# here only against the preset's own table (a regression of the transcription), never as a sole oracle of safety.
LISTERIA_ROWS = [(60, 45 * 60), (65, 10 * 60), (70, 2 * 60), (75, 30), (80, 6)]


def f_to_c(t_f):
    return (t_f - 32.0) * 5.0 / 9.0


def hold(preset, temperature_C, seconds):
    return preset.process_fraction([0.0, seconds], [temperature_C, temperature_C])[-1]


def _every_row():
    cfa = LETHALITY_PRESETS["c-botulinum-nonproteolytic-6log"]
    for t, m in CFA_ROWS:
        yield pytest.param(cfa, float(t), m * 60.0, id=f"cfa-{t}C")
    for t_f, s65, s7 in FSIS_ROWS:
        yield pytest.param(
            LETHALITY_PRESETS["salmonella-beef-6.5log-fsis-table"], f_to_c(t_f), s65, id=f"fsis6.5-{t_f}F"
        )
        yield pytest.param(
            LETHALITY_PRESETS["salmonella-beef-7log-fsis-table"], f_to_c(t_f), s7, id=f"fsis7-{t_f}F"
        )
    for t, s in LISTERIA_ROWS:
        yield pytest.param(
            LETHALITY_PRESETS["listeria-6log-uk-table"], float(t), float(s), id=f"listeria-{t}C"
        )


@pytest.mark.parametrize("preset,temperature_C,seconds", list(_every_row()))
def test_every_published_row_is_one_whole_process(preset, temperature_C, seconds):
    # The row's time at the row's temperature is the whole process; half of it is half. Round-off only.
    assert_allclose(hold(preset, temperature_C, seconds), 1.0, rtol=0, atol=1e-9)
    assert_allclose(hold(preset, temperature_C, seconds / 2), 0.5, rtol=0, atol=1e-9)
    assert_allclose(preset.required_time_min(temperature_C), seconds / 60.0, rtol=1e-12)


def test_z_value_preset_asked_for_less_than_the_cfa_table_below_90_C():
    # The defect: z 10 °C from 90 °C/10 min gives 31.6 min at 85 °C and 100 min at 80 °C; the CFA table asks
    # 36 and 129 min. The registry's non-proteolytic C. botulinum preset now refuses the shorter holds.
    p = LETHALITY_PRESETS["c-botulinum-nonproteolytic-6log"]
    assert p.tabulated
    assert hold(p, 85.0, 10 * 10**0.5 * 60) < 0.9  # 31.6 min at 85 °C: 0.88 of the process
    assert hold(p, 80.0, 100 * 60) < 0.8  # 100 min at 80 °C: 0.78 of the process
    r = lethality_basis("c-botulinum-nonproteolytic-6log")
    assert r.cumulative_F_min([0, 31.6 * 60], [85.0, 85.0])[-1] < r.required_F_min


def test_log_linear_interpolation_between_rows():
    # Between 85 °C (36 min) and 86 °C (28 min): log10 t is linear in T, so at 85.5 °C t = √(36·28).
    p = LETHALITY_PRESETS["c-botulinum-nonproteolytic-6log"]
    assert_allclose(p.required_time_min(85.5), math.sqrt(36.0 * 28.0), rtol=1e-12)
    assert_allclose(hold(p, 85.5, math.sqrt(36.0 * 28.0) * 60), 1.0, atol=1e-9)
    # 140.5 °F, 7-log: between 12 and 10 min.
    f = LETHALITY_PRESETS["salmonella-beef-7log-fsis-table"]
    assert_allclose(f.required_time_min(f_to_c(140.5)), math.sqrt(12.0 * 10.0), rtol=1e-12)


def test_ramp_is_integrated_exactly_across_rows():
    # Independent method: quad of 1/t_req(T(t)) on a ramp 78 → 102 °C over 30 min (crossing the table's ends
    # and every row), then a hold. The closed form must agree to quadrature accuracy.
    p = LETHALITY_PRESETS["c-botulinum-nonproteolytic-6log"]
    t = np.array([0.0, 1800.0, 2400.0])
    T = np.array([78.0, 102.0, 102.0])
    pts = [1800.0 * (k - 78.0) / 24.0 for k in range(80, 101)]
    ref = quad(
        lambda x: p.rate_per_min(np.interp(x, t, T)) / 60.0, 0, t[-1], points=pts, limit=400, epsabs=1e-13
    )
    assert_allclose(p.process_fraction(t, T)[-1], ref[0], rtol=1e-9)
    # The same history sampled finely, and in reverse (cooling), gives the same fraction.
    tf = np.linspace(0, t[-1], 2001)
    assert_allclose(p.process_fraction(tf, np.interp(tf, t, T))[-1], ref[0], rtol=1e-9)
    assert_allclose(
        p.process_fraction(t, T[::-1])[-1], p.process_fraction(t, [102.0, 102.0, 78.0])[-1], rtol=1e-12
    )


def test_no_extrapolation_beyond_the_table():
    cfa = LETHALITY_PRESETS["c-botulinum-nonproteolytic-6log"]
    # Below the lowest row: nothing, however long.
    assert hold(cfa, 79.99, 1e6) == 0.0
    assert cfa.required_time_min(70.0) == math.inf
    # Above the highest row: the highest row's rate (1 min at 100 °C), not the steeper extrapolated one.
    assert_allclose(hold(cfa, 110.0, 60.0), 1.0, atol=1e-12)
    assert_allclose(hold(cfa, 121.1, 30.0), 0.5, atol=1e-12)
    fsis = LETHALITY_PRESETS["salmonella-beef-7log-fsis-table"]
    # 158–160 °F are "0 sec." in the source; the 157 °F time (15 s) still applies there (safe side).
    assert_allclose(fsis.required_time_min(f_to_c(160.0)) * 60, 15.0, rtol=1e-12)
    assert hold(fsis, f_to_c(129.5), 1e5) == 0.0


def test_outcome_in_a_plan_check_reports_the_fraction():
    # Pass criterion fraction ≥ 1; log reduction = fraction × the table's logs.
    r = lethality_basis("salmonella-beef-7log-fsis-table")
    F = r.cumulative_F_min([0, 182.0], [f_to_c(146), f_to_c(146)])[-1]
    assert_allclose(F / r.required_F_min, 1.0, atol=1e-9)
    assert r.z_C is None and r.tabulated
    with pytest.raises(InvalidInputError, match="checks.lethality"):
        lethality_basis("c-botulinum-nonproteolytic-6log", z_C=10.0)


def test_every_preset_states_its_source_and_confidence():
    for name, p in LETHALITY_PRESETS.items():
        assert p.name == name and p.source and "from memory" not in p.source
        assert isinstance(p.confirmed, bool)
        if not p.confirmed:
            assert p.source_text.startswith("indicative – confirm with your process authority")
        if p.log_reductions:
            assert p.max_log_reduction == p.log_reductions
    assert set(LETHALITY_TABLES) | set(Z_VALUE_PRESETS) == set(LETHALITY_PRESETS)
    assert not LETHALITY_PRESETS["listeria-6log-uk-table"].confirmed
