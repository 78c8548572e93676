"""Site settings: the demo file, validation that names every problem, display units and paper sizes."""

from __future__ import annotations

import dataclasses

import pytest
from hypothesis import given, settings
from hypothesis import strategies as st
from numpy.testing import assert_allclose
from reportlab.lib import pagesizes

from procplan.errors import InvalidInputError, ValidationErrors
from procplan.files.library import load_library
from procplan.files.site import PAPER_SIZES, SiteLine, SiteSettings, load_site, site_from_dict, site_to_text
from procplan.units import f_to_c


@pytest.fixture(scope="module")
def lib():
    return load_library()


def test_demo_site_loads_and_refers_only_to_library_records(lib):
    site = load_site(library=lib)  # validating against the library: rules and machines exist
    assert site.plant == "Harrowgate Fields"
    assert site.paper in PAPER_SIZES
    assert site.lines and all(isinstance(line, SiteLine) for line in site.lines)
    assert set(site.default_rules) <= set(lib.rules)
    assert {e for line in site.lines for e in line.equipment} <= set(lib.equipment)
    assert site.energy_price_per_kWh is not None and site.currency == "GBP"
    with pytest.raises(dataclasses.FrozenInstanceError):
        site.plant = "other"  # type: ignore[misc]


def test_every_demo_plan_lies_on_one_line(lib):
    from procplan.files.plan import load_plan

    site = load_site()
    for name, path in lib.plans.items():
        plan = load_plan(path, library=lib)
        assert site.line_for([s.equipment for s in plan.steps]), name


def test_every_problem_is_named_at_once(tmp_path):
    bad = tmp_path / "site.toml"
    bad.write_text(
        """
plant = ""
colour = "blue"
[units]
temperature = "K"
time = "s"
[defaults]
margin_percent = -5
rules = ["Not A Name"]
paper = "legal"
[energy]
price_per_kWh = 0.3
[[lines]]
name = "L1"
equipment = ["no-such-machine"]
[[lines]]
name = "L1"
""",
        encoding="utf-8",
    )
    with pytest.raises(ValidationErrors) as info:
        load_site(bad, library=load_library())
    fields = {p.field for p in info.value.problems}
    assert {
        "site.plant",
        "site.colour",
        "site.units.temperature",
        "site.units.time",
        "site.defaults.margin_percent",
        "site.defaults.rules[0]",
        "site.defaults.paper",
        "site.energy.currency",
        "site.lines[0].equipment[0]",
        "site.lines[1].name",
    } <= fields
    assert str(bad) in str(info.value)


def test_missing_and_malformed_files_name_the_file(tmp_path):
    with pytest.raises(InvalidInputError) as info:
        load_site(tmp_path / "none.toml")
    assert "none.toml" in info.value.field
    broken = tmp_path / "broken.toml"
    broken.write_text("plant = ", encoding="utf-8")
    with pytest.raises(InvalidInputError) as info:
        load_site(broken)
    assert "broken.toml" in info.value.field


def test_fahrenheit_display_matches_the_food_code_pairs():
    # Source: US FDA Food Code 2017, §3-501.14(A): 57 °C (135 °F), 21 °C (70 °F), 5 °C (41 °F); the Code
    # rounds to whole °F, so the tolerance is 0.5 °F.
    site = SiteSettings("p", temperature_unit="F")
    assert_allclose([site.temperature_value(c) for c in (57.0, 21.0, 5.0)], [135.0, 70.0, 41.0], atol=0.5)
    # a temperature difference in °F is 9/5 of one in K (no offset): 10 K = 18 °F (definition of the scale)
    assert_allclose(site.temperature_difference(10.0), 18.0, rtol=1e-12)
    assert site.format_temperature(5.0) == "41.0 °F"


@settings(max_examples=40, deadline=None)
@given(st.floats(min_value=-60.0, max_value=300.0, allow_nan=False))
def test_display_temperature_inverts_to_celsius(t_C):
    # Independent method: procplan.units.f_to_c undoes the display conversion
    site = SiteSettings("p", temperature_unit="F")
    assert_allclose(f_to_c(site.temperature_value(t_C)), t_C, atol=1e-9)
    assert SiteSettings("p").temperature_value(t_C) == t_C


def test_time_display_units():
    assert SiteSettings("p").format_time(90.0) == "90.0 min"
    assert SiteSettings("p", time_unit="h").format_time(90.0) == "1.50 h"
    assert SiteSettings("p").format_time(None) == "—"


@pytest.mark.parametrize(
    "unit,t_min,text",
    [
        ("min", 95.0, "1:35 h"),
        ("min", 60.0, "1:00 h"),
        ("min", 59.4, "59.4 min"),
        ("min", 59.6, "1:00 h"),  # rounds to a whole minute first: never "0:60"
        ("min", 119.5, "2:00 h"),
        ("min", 1439.0, "23:59 h"),
        ("min", -75.0, "-1:15 h"),
        ("min", -5.0, "-5.0 min"),
        ("h", 45.24, "0:45 h"),
        ("h", 0.2, "0:00 h"),
        ("h", 600.0, "10:00 h"),
    ],
)
def test_sheet_times_read_hours_and_minutes(unit, t_min, text):
    assert SiteSettings("p", time_unit=unit).format_time_hm(t_min) == text
    assert SiteSettings("p", time_unit=unit).format_time_hm(None) == "—"


@given(st.floats(min_value=-5000.0, max_value=5000.0, allow_nan=False))
def test_sheet_time_reads_back_to_the_minute(t_min):
    # Independent method: parse the h:mm text back and compare with the value rounded to a minute.
    text = SiteSettings("p").format_time_hm(t_min)
    if text.endswith(" min"):
        assert abs(float(text[:-4]) - t_min) <= 0.05 + 1e-9 and round(abs(t_min)) < 60
    else:
        h, m = text[:-2].lstrip("-").split(":")
        assert 0 <= int(m) < 60
        assert int(h) * 60 + int(m) == round(abs(t_min))


def test_paper_sizes_agree_with_reportlab():
    # Source: ISO 216 A4 = 210 × 297 mm; ANSI US Letter = 8.5 × 11 in; reportlab.lib.pagesizes holds both in
    # points. Tolerance 0.01 pt (reportlab rounds nothing; 1e-2 allows for float mm → pt conversion).
    assert_allclose(PAPER_SIZES["a4"], pagesizes.A4, atol=1e-2)
    assert_allclose(PAPER_SIZES["letter"], pagesizes.letter, atol=1e-2)


def test_line_for_picks_the_line_with_most_machines():
    site = SiteSettings(
        "p", lines=(SiteLine("A", ("oven", "chiller")), SiteLine("B", ("chiller",)), SiteLine("C", ("tank",)))
    )
    assert site.line_for(["oven", "chiller"]) == "A"
    assert site.line_for(["tank", None]) == "C"
    assert site.line_for([None]) == ""


def test_minimal_table_takes_defaults_and_prints():
    s = site_from_dict({"plant": "Demo"})
    assert (s.temperature_unit, s.time_unit, s.paper, s.margin_percent) == ("C", "min", "a4", 20.0)
    text = site_to_text(s)
    assert "Demo" in text and "not set" in text
