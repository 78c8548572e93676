"""Lethality credited in hot dry air is flagged: the published time–temperature guidance for meat assumes
moist heating, and a drying surface raises the heat resistance of vegetative pathogens, so the dry-air step's
lethality may be overstated (the unsafe side).

Source for the behaviour checked: USDA FSIS (1999), Appendix A, humidity conditions attached to the
time–temperature tables (from memory; the tables themselves are in outcomes/lethality_tables.py); higher heat
resistance of Salmonella at low water activity is common knowledge in food microbiology (no single source).
"""

from __future__ import annotations

from dataclasses import replace

import pytest

from procplan.files.demo import demo_library_path
from procplan.files.library import load_library
from procplan.model import LethalityCheck
from procplan.properties.boiling import BOILING_C
from procplan.run.engine import run_plan

MARK = "lethality credited in hot dry air"


@pytest.fixture(scope="module")
def lib():
    return load_library(demo_library_path())


def test_dry_oven_roast_flags_its_lethality_and_the_steam_cook_does_not(lib):
    roast = run_plan(lib.plan("beef-joint-oven-roast"), library=lib)
    # (the same run: the core, still rising in the rest, stays below the boiling point of its water; it peaked
    # at 102.7 °C when only the surface evaporated, 86.9 °C with the water boiling off inside: properties.boiling)
    assert float(roast.history["core_C"].max()) < BOILING_C
    flagged = [w for w in roast.outcomes.warnings if MARK in w]
    assert len(flagged) == 1 and flagged[0].startswith("oven roast:")
    steam = run_plan(lib.plan("beef-joint-roast-chill"), library=lib)
    assert not [w for w in steam.outcomes.warnings if MARK in w]


def test_no_flag_without_a_lethality_requirement(lib):
    plan = lib.plan("beef-joint-oven-roast")
    res = run_plan(replace(plan, checks=replace(plan.checks, lethality=None)), library=lib)
    assert not [w for w in res.outcomes.warnings if MARK in w]


def test_a_drying_step_that_reaches_a_meat_table_is_flagged(lib):
    # the jerky strip dried at 70 °C reaches the FSIS beef table's requirement (its core passes 60 °C), yet
    # in dry air: the table's credit is exactly what the warning questions
    plan = lib.plan("beef-jerky-dry")
    assert plan.checks.lethality == LethalityCheck("salmonella-beef-6.5log-fsis-table")
    res = run_plan(plan, library=lib)
    assert res.outcomes.lethality.process_fraction > 1.0
    assert [w for w in res.outcomes.warnings if MARK in w and w.startswith("dry:")]
