"""``procplan trial --xlsx``: the heat-penetration study as a workbook, read back with openpyxl (an
independent xlsx reader). Every number equals the library's, headers carry their units and no identifier
with an underscore, the caution is on the About sheet and in every footer, and the measured lethality on the
Probes sheet agrees with an independent quadrature of the readings on the Curves sheet."""

from __future__ import annotations

import io
import json
import math

import numpy as np
import pytest
from openpyxl import load_workbook

from procplan.caution import CAUTION
from procplan.cli import main
from procplan.files.plan import load_plan
from procplan.model import LethalityCheck
from procplan.studies.logger import clean_logger, read_logger
from procplan.studies.trial_map import load_probe_map
from procplan.studies.trial_workbook import trial_workbook
from procplan.studies.trials import TrialRun, trial_study

from .test_cli_trial import _args, trial  # noqa: F401  (the module's trial fixture)

REF_C, Z_C, REQUIRED_F_MIN = 121.1, 10.0, 0.5
#: Headers of numbers that have no unit (a lag factor, a count, a statistical factor).
UNITLESS = {"heating j", "cooling j"}
UNITLESS_ROWS = {"runs", "probes", "tolerance factor k"}


def _sheets(data: bytes) -> dict[str, list[tuple]]:
    wb = load_workbook(io.BytesIO(data), read_only=False)
    out = {ws.title: [tuple(r) for r in ws.iter_rows(values_only=True)] for ws in wb.worksheets}
    for ws in wb.worksheets[1:]:
        assert ws.oddFooter.center.text == CAUTION, ws.title
    return out


def _columns(rows: list[tuple]) -> dict[str, list]:
    head = rows[0]
    return {h: [r[j] for r in rows[1:]] for j, h in enumerate(head)}


def _quantities(rows: list[tuple]) -> dict[str, tuple]:
    assert rows[0] == ("quantity", "value", "unit")
    return {r[0]: (r[1], r[2]) for r in rows[1:]}


@pytest.fixture(scope="module")
def book(trial, tmp_path_factory):  # noqa: F811
    d, plan_path, files = trial
    out = tmp_path_factory.mktemp("book") / "study.xlsx"
    extra = ["--reference-C", str(REF_C), "--z-C", str(Z_C), "--required-F-min", str(REQUIRED_F_MIN)]
    assert main(_args(trial, "--xlsx", str(out), *extra)) == 0
    runs = [TrialRun(f.name, clean_logger(read_logger(f))) for f in files]
    study = trial_study(
        load_plan(plan_path),
        runs,
        load_probe_map(d / "map.toml"),
        lethality=LethalityCheck(None, REF_C, Z_C, REQUIRED_F_MIN),
    )
    return _sheets(out.read_bytes()), study


def test_sheets_headers_units_and_caution(book):
    sheets, study = book
    assert list(sheets) == [
        "About", "Study", "Runs", "Probes", "Slowest unit", "Factors", "Residuals", "Curves"
    ]  # fmt: skip
    assert any(r[0] == "Caution" and r[1] == CAUTION for r in sheets["About"])
    for name, rows in list(sheets.items())[1:]:
        for row in rows:  # no internal identifier in any header or cell
            assert not any(isinstance(v, str) and "_" in v for v in row), (name, row)
        if rows[0] == ("quantity", "value", "unit"):
            for q, (value, unit) in _quantities(rows).items():
                if isinstance(value, (int, float)) and not isinstance(value, bool) and q not in UNITLESS_ROWS:
                    assert unit, (name, q)
            continue
        for h, values in _columns(rows).items():
            numeric = any(isinstance(v, (int, float)) and not isinstance(v, bool) for v in values)
            if numeric and h not in UNITLESS:
                assert h.endswith("]") and "[" in h, (name, h)


def test_numbers_equal_the_library(book):
    sheets, study = book
    probes = _columns(sheets["Probes"])
    assert probes["measured lethality F [min]"] == pytest.approx([p.F_min for p in study.probes], rel=1e-12)
    slowest = [
        (r, c)
        for r, c, s in zip(probes["run"], probes["probe"], probes["slowest across runs"], strict=True)
        if s == "yes"
    ]
    assert slowest == [(study.slowest_run, study.slowest_channel)]
    assert sum(v == "yes" for v in probes["slowest in its run"]) == len(study.runs)

    runs = _columns(sheets["Runs"])
    assert runs["slowest probe"] == [r.slowest for r in study.runs]
    assert runs["come-up time [min]"] == pytest.approx(
        [None if r.come_up_s is None else r.come_up_s / 60.0 for r in study.runs]
    )
    assert runs["slowest probe's lethality F [min]"] == pytest.approx(
        [p.F_min for p in study.slowest_per_run()]
    )

    unit = _quantities(sheets["Slowest unit"])
    b = study.bound
    assert unit["lower tolerance bound of F"] == (pytest.approx(b.lower, rel=1e-12), "min")
    assert unit["mean lethality F"][0] == pytest.approx(b.mean) and unit["tolerance factor k"][
        0
    ] == pytest.approx(b.k)
    assert unit["proportion of units covered"] == (pytest.approx(b.proportion * 100), "%")

    factors = _columns(sheets["Factors"])
    assert factors["heating f [min]"] == pytest.approx([p.heating.f_min for p in study.probes])
    assert factors["heating j"] == pytest.approx([p.heating.j for p in study.probes])
    assert factors["cooling f [min]"] == pytest.approx([p.cooling.f_min for p in study.probes])
    assert factors["formula-method time from the step start [min]"] == pytest.approx(
        [p.formula.from_start_min for p in study.probes]
    )
    res = _columns(sheets["Residuals"])
    assert res["RMS residual [K]"] == pytest.approx([p.rmse_K for p in study.probes])

    study_rows = _quantities(sheets["Study"])
    assert study_rows["verdict"][0] == study.verdict
    assert study_rows["required lethality F"] == (REQUIRED_F_MIN, "min")


def test_curves_give_the_measured_lethality_by_an_independent_quadrature(book):
    # Source: Bigelow et al. (1920), Heat penetration in processing canned foods, NCA Bulletin 16-L — the
    # general method F = ∫ 10^((T − T_ref)/z) dt over the measured curve. The library integrates each
    # segment between readings exactly for a linear temperature; the trapezoid rule on the same readings
    # over-estimates a convex integrand, so it must lie at or above the library's F and, at one-minute
    # readings, within 2 % of it (the segments' temperature steps stay below a few kelvin where F is gained).
    sheets, study = book
    curves = _columns(sheets["Curves"])
    run, probe = np.array(curves["run"]), np.array(curves["probe"])
    t_min = np.array(curves["time from the step start [min]"], float)
    temp = np.array(curves["measured [°C]"], float)
    for p in study.probes:
        sel = (run == p.run) & (probe == p.channel)
        rate = 10.0 ** ((temp[sel] - REF_C) / Z_C)
        trapezoid = float(np.sum(0.5 * (rate[1:] + rate[:-1]) * np.diff(t_min[sel])))
        assert p.F_min <= trapezoid * (1 + 1e-9) and trapezoid <= 1.02 * p.F_min, (
            p.channel,
            trapezoid,
            p.F_min,
        )
        measured = np.array(curves["measured [°C]"], float)[sel]
        assert np.allclose(measured, p.curve["measured_C"].to_numpy())
    residual = np.array(curves["residual, measurement minus prediction [K]"], float)
    predicted = np.array(curves["predicted by the plan [°C]"], float)
    ok = np.isfinite(residual)
    assert ok.any() and np.allclose(residual[ok], temp[ok] - predicted[ok])


def test_without_requirement_or_prediction_the_sheets_say_none(trial):  # noqa: F811
    d, plan_path, files = trial
    plan = load_plan(plan_path)
    runs = [TrialRun(f.name, clean_logger(read_logger(f))) for f in files[:1]]
    study = trial_study(plan, runs, load_probe_map(d / "map.toml"), predict=False)
    sheets = _sheets(trial_workbook(study))
    assert "Residuals" not in sheets
    unit = _quantities(sheets["Slowest unit"])
    assert unit["tolerance bound"][0].startswith("none")
    assert all(math.isfinite(v) for v in _columns(sheets["Probes"])["measured lethality F [min]"])


def test_xlsx_refuses_standard_output_with_json_and_an_input(trial, capsys):  # noqa: F811
    d, plan_path, files = trial
    assert main(_args(trial, "--json", "--xlsx", "-", "--no-prediction")) == 2
    assert main(_args(trial, "--xlsx", str(files[0]), "--force", "--no-prediction")) == 2
    assert "--xlsx" in capsys.readouterr().err


def test_json_still_carries_the_same_bound(trial, capsys):  # noqa: F811
    # The JSON and the workbook come from the same study: the bound agrees.
    d, plan_path, files = trial
    assert main(_args(trial, "--json", "--no-prediction")) == 0
    out = json.loads(capsys.readouterr().out)
    runs = [TrialRun(f.name, clean_logger(read_logger(f))) for f in files]
    study = trial_study(load_plan(plan_path), runs, load_probe_map(d / "map.toml"), predict=False)
    unit = _quantities(_sheets(trial_workbook(study))["Slowest unit"])
    assert unit["lower tolerance bound of F"][0] == pytest.approx(out["slowest_unit"]["lower_bound_F_min"])
