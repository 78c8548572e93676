"""The brine table of plan steps: every problem named, and a lossless round trip."""

from __future__ import annotations

import pytest

from procplan.errors import InvalidInputError
from procplan.files.steps import step_from_dict, step_to_dict

BASE = {"name": "brine", "duration_min": 2880, "medium_C": 5, "h_W_m2K": 150}


def _step(brine):
    return step_from_dict({**BASE, "brine": brine}, 0)


def test_round_trip_keeps_every_value():
    brine = {
        "solute": "salt",
        "brine_percent": 7,
        "D_m2_s": 2.3e-10,
        "reference_C": 5,
        "activation_kJ_mol": 27.3,
        "k_m_m_s": 1e-6,
        "partition": 0.9,
        "initial_percent": 0.07,
        "product_water_percent": 73,
        "stop_when_mean_percent": 2.9,
        "target_core_percent": 1.1,
    }
    s = _step(brine)
    assert s.brine.brine_fraction == pytest.approx(0.07) and s.brine.activation_J_mol == pytest.approx(
        27300.0
    )
    again = step_from_dict(step_to_dict(s), 0)
    assert again == s


@pytest.mark.parametrize(
    ("brine", "field"),
    [
        ({"diffusivity": "salt-pork-loin"}, "steps[0].brine.brine_percent"),
        (
            {"brine_percent": 10, "dry_cure": True, "diffusivity": "salt-pork-loin"},
            "steps[0].brine.brine_percent",
        ),
        ({"brine_percent": 40, "diffusivity": "salt-pork-loin"}, "steps[0].brine.brine_percent"),
        ({"brine_percent": 10}, "steps[0].brine.diffusivity"),
        ({"brine_percent": 10, "diffusivity": "salt-in-moon-rock"}, "steps[0].brine.diffusivity"),
        ({"brine_percent": 10, "D_m2_s": 1.0}, "steps[0].brine.D_m2_s"),
        ({"brine_percent": 10, "D_m2_s": 2e-10, "activation_kJ_mol": 30}, "steps[0].brine.reference_C"),
        ({"brine_percent": 10, "D_m2_s": 2e-10, "solute": "vinegar"}, "steps[0].brine.solute"),
        ({"syrup_percent": 10, "brine_percent": 10, "D_m2_s": 2e-10}, "steps[0].brine.syrup_percent"),
        (
            {"brine_percent": 10, "D_m2_s": 2e-10, "stop_when_core_percent": 1, "stop_when_mean_percent": 2},
            "steps[0].brine.stop_when_mean_percent",
        ),
        ({"dry_cure": True, "solute": "sugar", "D_m2_s": 2e-10}, "steps[0].brine.dry_cure"),
        (
            {"brine_percent": 40, "solute": "sugar", "diffusivity": "salt-pork-loin"},
            "steps[0].brine.diffusivity",
        ),
    ],
)
def test_each_problem_names_its_field(brine, field):
    with pytest.raises(InvalidInputError) as err:
        _step(brine)
    problems = getattr(err.value, "problems", [err.value])
    assert field in [p.field for p in problems]


def test_every_problem_is_reported_at_once():
    with pytest.raises(InvalidInputError) as err:
        _step({"brine_percent": -1, "D_m2_s": -1, "partition": 9})
    fields = {p.field for p in err.value.problems}
    assert {"steps[0].brine.brine_percent", "steps[0].brine.D_m2_s", "steps[0].brine.partition"} <= fields


def test_a_salt_stop_alone_is_a_duration():
    s = step_from_dict(
        {
            "name": "b",
            "medium_C": 5,
            "h_W_m2K": 150,
            "brine": {"brine_percent": 10, "D_m2_s": 2e-10, "stop_when_core_percent": 1},
        },
        0,
    )
    assert s.brine.stop_when_core_fraction == pytest.approx(0.01) and not s.duration_given


def test_diffusivity_factor_is_read_and_kept_in_a_round_trip():
    s = _step({"brine_percent": 10, "D_m2_s": 2e-10, "diffusivity_factor": 1.37})
    assert s.brine.D_factor == pytest.approx(1.37)
    assert step_from_dict(step_to_dict(s), 0) == s
    # the default factor is not written, so files without the key stay as they were
    plain = _step({"brine_percent": 10, "D_m2_s": 2e-10})
    assert plain.brine.D_factor == 1.0 and "diffusivity_factor" not in step_to_dict(plain)["brine"]


@pytest.mark.parametrize("bad", [0, -0.5, "fast", True, 1e9])
def test_diffusivity_factor_outside_its_range_names_the_field(bad):
    with pytest.raises(InvalidInputError) as err:
        _step({"brine_percent": 10, "D_m2_s": 2e-10, "diffusivity_factor": bad})
    problems = getattr(err.value, "problems", [err.value])
    assert "steps[0].brine.diffusivity_factor" in [p.field for p in problems]


def test_a_sampled_plan_saved_to_a_file_keeps_its_diffusivity_factor(tmp_path):
    # a study samples the factor (apply_salt_D_factor); the plan saved and read again runs with the same D
    from procplan.files.library import load_library
    from procplan.files.plan import load_plan, save_plan
    from procplan.studies.variability_brine import apply_salt_D_factor

    library = load_library()
    plan = load_plan("product_library/plans/pork-loin-brine-freeze.toml", library=library)
    sampled = apply_salt_D_factor(plan, 0.8125, 0, None)
    path = save_plan(sampled, tmp_path / "sampled.toml")
    again = load_plan(path, library=library)
    factors = [s.brine.D_factor for s in again.steps if s.brine is not None and not s.brine.equalise]
    assert factors and all(f == pytest.approx(0.8125, rel=1e-12) for f in factors)
    assert again.steps == sampled.steps
