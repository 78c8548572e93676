"""Rule limits in the units their source publishes: both figures kept, checked to agree, the stricter used,
and printed as published in either display unit."""

import pytest
from numpy.testing import assert_allclose

from procplan.errors import InvalidInputError
from procplan.files.rules import rule_from_dict, rule_to_dict
from procplan.outcomes.rules import Band, Published, Stage, limit_text
from procplan.units import f_to_c


def _cooling(**stage):
    return {"name": "x", "source": "s", "kind": "cooling", "stages": [{"within_min": 120, **stage}]}


def test_both_units_kept_and_printed_as_published():
    r = rule_from_dict(_cooling(from_C=57, from_F=135, to_C=21, to_F=70))
    s = r.stages[0]
    assert s.to_text("F") == "70 °F" and s.to_text("C") == "21 °C"
    assert s.from_text("F") == "135 °F" and s.from_text("C") == "57 °C"
    assert limit_text(s, "F") == "135 °F → 70 °F"
    assert rule_from_dict(rule_to_dict(r)) == r
    assert rule_to_dict(r)["stages"][0] == {
        "from_C": 57.0,
        "from_F": 135.0,
        "to_C": 21.0,
        "to_F": 70.0,
        "within_min": 120.0,
    }


def test_celsius_only_limit_prints_its_conversion_in_fahrenheit():
    s = rule_from_dict(_cooling(to_C=3)).stages[0]
    assert s.to_published is None and s.to_C == 3.0
    # 3 °C = 37.4 °F exactly; the conversion is shown to 0.1 degree
    assert s.to_text("F") == "37.4 °F" and s.from_text("F") == "start"


def test_fahrenheit_only_limit_computes_with_the_exact_conversion():
    r = rule_from_dict(_cooling(from_F=130, to_F=80))
    s = r.stages[0]
    assert_allclose([s.from_C, s.to_C], [(130 - 32) * 5 / 9, (80 - 32) * 5 / 9], rtol=1e-12)
    assert s.to_text("F") == "80 °F" and s.to_text("C") == "26.7 °C"
    assert rule_to_dict(r)["stages"][0] == {"from_F": 130.0, "to_F": 80.0, "within_min": 120.0}
    assert rule_from_dict(rule_to_dict(r)) == r


def test_stricter_figure_for_heating_and_for_bands():
    heat = {
        "name": "x",
        "source": "s",
        "kind": "heating",
        "stages": [{"from_C": 5, "from_F": 41.5, "to_C": 74, "to_F": 165, "within_min": 60}],
    }
    s = rule_from_dict(heat).stages[0]
    # heating: the clock starts at the colder start (5 °C < 41.5 °F) and ends at the hotter end (165 °F = 73.9 °C < 74 °C)
    assert s.from_C == 5.0 and s.to_C == 74.0
    store = {
        "name": "x",
        "source": "s",
        "kind": "storage",
        "bands": [{"low_C": 2, "low_F": 36, "high_C": 8, "high_F": 46, "max_outside_min": 0}],
    }
    b = rule_from_dict(store).bands[0]
    # a range never to leave: the narrower one (36 °F = 2.22 °C, 46 °F = 7.78 °C)
    assert_allclose([b.low_C, b.high_C], [f_to_c(36.0), f_to_c(46.0)], rtol=1e-12)
    assert b.range_text("F") == "36…46 °F" and b.range_text("C") == "2…8 °C"
    growth = {
        "name": "x",
        "source": "s",
        "kind": "holding",
        "bands": [{"low_C": 5, "low_F": 41.5, "high_C": 57, "high_F": 135, "at_most_min": 240}],
    }
    b = rule_from_dict(growth).bands[0]
    # a range to pass quickly (at most so long inside): the wider one counts more time against it
    assert_allclose([b.low_C, b.high_C], [5.0, f_to_c(135.0)], rtol=1e-12)


@pytest.mark.parametrize(
    "stage,field",
    [
        ({"to_C": 21, "to_F": 72}, "stages[0].to_F"),  # 72 °F = 22.2 °C: 1.2 K from 21 °C
        ({"from_C": 57, "from_F": 130, "to_C": 21}, "stages[0].from_F"),
        ({"to_F": "cold"}, "stages[0].to_F"),
        ({"within_min": 10}, "stages[0].to_C"),
    ],
)
def test_disagreeing_or_missing_figures_are_refused_naming_the_field(stage, field):
    with pytest.raises(InvalidInputError) as exc:
        rule_from_dict(_cooling(**stage))
    assert field in str(exc.value)


def test_figures_within_rounding_are_accepted():
    # 63 °C (145 °F): 145 °F = 62.8 °C, 0.2 K apart; 0.6 K is the tolerance
    heat = {
        "name": "x",
        "source": "s",
        "kind": "heating",
        "stages": [{"to_C": 63, "to_F": 145, "within_min": 60}],
    }
    assert rule_from_dict(heat).stages[0].to_C == 63.0


def test_limit_text_of_stage_band_and_bad_input():
    assert limit_text(Band(None, 8.0, max_outside_min=0.0), "F") == "≤ 46.4 °F"
    assert (
        limit_text(Band(0.0, None, max_outside_min=0.0, low_published=Published(0.0, 32.0)), "F") == "≥ 32 °F"
    )
    assert limit_text(Stage(None, 3.0, 90.0), "C") == "start → 3 °C"
    with pytest.raises(InvalidInputError, match="unit"):
        limit_text(Stage(None, 3.0, 90.0), "K")
    with pytest.raises(InvalidInputError, match="item"):
        limit_text(3.0, "C")
