"""``procplan trial``: exit codes, JSON equal to the Python API, the probe table CSV and the study sheet
(read back with pypdf, an independent PDF parser) with the caution on every page."""

from __future__ import annotations

import io
import json
import re

import pytest
from pypdf import PdfReader

from procplan.caution import CAUTION
from procplan.cli import main
from procplan.files.plan import save_plan
from procplan.studies.logger import clean_logger, read_logger
from procplan.studies.trial_map import load_probe_map
from procplan.studies.trial_synth import SyntheticProbe, synthetic_trial_csv
from procplan.studies.trials import TrialRun, trial_study

from .test_trials import _two_step_plan

MAP = """
[probes]
"TC1" = { piece = "block 1", position = "core" }
"TC2" = { piece = "block 2", position = "core" }
"medium" = { piece = "retort", position = "medium" }
"""


@pytest.fixture(scope="module")
def trial(tmp_path_factory):
    d = tmp_path_factory.mktemp("trial")
    plan = _two_step_plan(required=1.0)
    plan_path = save_plan(plan, d / "plan.toml")
    files = []
    for i in range(3):
        csv = synthetic_trial_csv(
            plan,
            [SyntheticProbe("TC1"), SyntheticProbe("TC2", size_factor=1.02 + 0.004 * i)],
            noise_K=0.1,
            seed=i,
            header=("# synthetic test trial",),
        )
        f = d / f"run{i + 1}.csv"
        f.write_text(csv)
        files.append(f)
    (d / "map.toml").write_text(MAP)
    return d, plan_path, files


def _args(trial, *extra):
    d, plan_path, files = trial
    return ["trial", *map(str, files), "--plan", str(plan_path), "--probe-map", str(d / "map.toml"), *extra]


def test_json_equals_the_api(trial, capsys):
    d, plan_path, files = trial
    assert main(_args(trial, "--json", "--no-prediction")) == 0
    out = json.loads(capsys.readouterr().out)
    from procplan.files.plan import load_plan

    runs = [TrialRun(f.name, clean_logger(read_logger(f))) for f in files]
    api = trial_study(load_plan(plan_path), runs, load_probe_map(d / "map.toml"), predict=False).to_dict()
    assert out["slowest_unit"] == pytest.approx(api["slowest_unit"])
    assert out["verdict"] == api["verdict"] and out["passed"] is True and out["caution"] == CAUTION
    assert [p["F_min"] for p in out["probes"]] == pytest.approx([p["F_min"] for p in api["probes"]])


def test_failing_verdict_exits_1_and_text_has_the_caution(trial, tmp_path, capsys):
    d, plan_path, files = trial
    hard = tmp_path / "hard.toml"
    text = re.sub(r"required_F_min = [0-9.]+", "required_F_min = 5000", plan_path.read_text())
    assert "5000" in text
    hard.write_text(text)
    args = [
        "trial",
        *map(str, files),
        "--plan",
        str(hard),
        "--probe-map",
        str(d / "map.toml"),
        "--no-prediction",
    ]
    assert main(args) == 1
    text = capsys.readouterr().out
    assert "verdict: FAIL" in text and CAUTION in text


def test_csv_and_sheet_written_atomically_and_never_over_an_input(trial, tmp_path, capsys):
    d, plan_path, files = trial
    csv, pdf = tmp_path / "probes.csv", tmp_path / "study.pdf"
    assert main(_args(trial, "--csv", str(csv), "--sheet", str(pdf), "--fit", "h")) == 0
    assert csv.read_text().startswith("run,channel,piece,position")
    reader = PdfReader(io.BytesIO(pdf.read_bytes()))
    words = " ".join(CAUTION.split()[:8])
    for page in reader.pages:
        assert words in " ".join(page.extract_text().split())
    text = " ".join(" ".join(p.extract_text().split()) for p in reader.pages)
    assert "Verdict. PASS" in text and "block 2" in text and "Surface coefficient from the trial" in text
    # an existing file without --force, and an input even with it, are refused (exit 2)
    assert main(_args(trial, "--csv", str(csv))) == 2
    assert main(_args(trial, "--sheet", str(files[0]), "--force")) == 2
    assert main(_args(trial, "--sheet", str(tmp_path / "x.txt"))) == 2
    err = capsys.readouterr().err
    assert "--csv" in err and "--sheet" in err


def test_bad_probe_map_names_the_field(trial, tmp_path, capsys):
    d, plan_path, files = trial
    bad = tmp_path / "bad.toml"
    bad.write_text('[probes]\n"TC1" = { piece = "b", position = "lid" }\n')
    assert main(["trial", str(files[0]), "--plan", str(plan_path), "--probe-map", str(bad)]) == 2
    assert "probes.TC1.position" in capsys.readouterr().err


@pytest.mark.parametrize("unit", ["C", "F"])
def test_run_chart_stays_inside_its_drawing(trial, unit):
    # Invariant: every measured and predicted curve and every label lies inside the chart's box, in °C and °F.
    from reportlab.graphics.shapes import PolyLine, String

    from procplan.files.plan import load_plan
    from procplan.files.site import SiteSettings
    from procplan.output.study_sheet import run_chart

    d, plan_path, files = trial
    runs = [TrialRun(f.name, read_logger(f)) for f in files[:1]]
    study = trial_study(load_plan(plan_path), runs, load_probe_map(d / "map.toml"))
    w, h = 500.0, 150.0
    chart = run_chart(study.runs[0], SiteSettings("p", temperature_unit=unit), w, h)
    lines = [s for s in chart.contents if isinstance(s, PolyLine)]
    assert len(lines) == 4  # two probes, measured and predicted
    for s in lines:
        xs, ys = s.points[0::2], s.points[1::2]
        assert min(xs) >= 0 and max(xs) <= w and min(ys) >= 0 and max(ys) <= h
    assert any(isinstance(s, String) and s.text == f"°{unit}" for s in chart.contents)


def test_lethality_given_on_the_command_line(trial, capsys):
    # The probes are judged by the requirement given (a z-value, which the formula method needs); a z-value
    # without its reference temperature, or an unknown preset, is refused by name.
    args = _args(
        trial, "--json", "--no-prediction", "--reference-C", "121.1", "--z-C", "10", "--required-F-min", "0.5"
    )
    assert main(args) == 0
    out = json.loads(capsys.readouterr().out)
    assert out["required_F_min"] == 0.5 and out["runs"][0]["probes"][0]["formula_method"] is not None
    assert main(_args(trial, "--z-C", "10")) == 2
    assert main(_args(trial, "--lethality", "no-such-preset")) == 2
    err = capsys.readouterr().err
    assert "--z-C" in err and "--lethality" in err
