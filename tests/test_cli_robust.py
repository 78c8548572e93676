"""The command line answers by name and loses no file: exit codes, --force, '-' for standard output, the
library's own site settings, PROCPLAN_LIBRARY, --version, and a light start."""

from __future__ import annotations

import importlib
import os
import shutil
import subprocess
import sys
from pathlib import Path

import pytest

from procplan._version import __version__
from procplan.cli import main
from procplan.cli.common import EXIT_INTERNAL, EXIT_INVALID
from procplan.files.library import DEMO_LIBRARY, LIBRARY_ENV
from procplan.files.tomlfile import read_toml

ROOT = Path(__file__).resolve().parents[1]
PLAN = "vial-cool-down"  # a quick library plan


@pytest.fixture
def plan_file(tmp_path):
    p = tmp_path / "plan.toml"
    shutil.copy(DEMO_LIBRARY / "plans" / f"{PLAN}.toml", p)
    return p


def test_csv_onto_the_plan_itself_is_refused_and_the_plan_kept(plan_file, capsys):
    before = plan_file.read_bytes()
    for extra in ([], ["--force"]):
        assert main(["run", str(plan_file), "--csv", str(plan_file), *extra]) == EXIT_INVALID
        assert "--csv" in capsys.readouterr().err
        assert plan_file.read_bytes() == before


def test_csv_onto_an_existing_file_needs_force(plan_file, tmp_path, capsys):
    out = tmp_path / "history.csv"
    out.write_text("keep me\n")
    assert main(["run", str(plan_file), "--csv", str(out)]) == EXIT_INVALID
    assert "--force" in capsys.readouterr().err
    assert out.read_text() == "keep me\n"
    assert main(["run", str(plan_file), "--csv", str(out), "--force"]) == 0
    assert out.read_text().startswith("time_s,")
    assert not [p for p in tmp_path.iterdir() if p.name.endswith(".tmp")]


def test_dash_prints_the_csv_and_keeps_the_summary_off_standard_output(plan_file, capsys):
    assert main(["run", str(plan_file), "--csv", "-"]) == 0
    captured = capsys.readouterr()
    assert captured.out.startswith("time_s,")
    assert "core_C" in captured.out.splitlines()[0]
    assert "time_s" not in captured.err.splitlines()[0]
    assert not Path("-").exists()


def test_new_plan_output_needs_force_to_replace(tmp_path, capsys):
    dest = tmp_path / "new.toml"
    dest.write_text("title = 'mine'\n")
    args = ["new", "plan", "p2", "--product", "beef-joint", "--template", PLAN, "-o", str(dest)]
    assert main(args) == EXIT_INVALID
    assert dest.read_text() == "title = 'mine'\n"
    assert main([*args, "--force"]) == 0
    assert read_toml(dest)["product"] == {"library": "beef-joint"}
    capsys.readouterr()
    assert main([*args[:-1], "-"]) == 0
    assert "[product]" in capsys.readouterr().out


@pytest.mark.parametrize(
    "argv",
    [
        ["run", "missing-plan.toml"],
        ["run", PLAN, "--csv", "no/such/folder/x.csv"],
        ["sheet", PLAN, "-o", "sheet.txt"],
        ["--library", "no-such-folder", "library", "list"],
        ["compare", PLAN, "--vary", "nonsense"],
    ],
)
def test_bad_arguments_exit_2_naming_the_argument(argv, capsys):
    assert main(argv) == EXIT_INVALID
    err = capsys.readouterr().err
    assert err.startswith("procplan: invalid input:") and "=" in err


@pytest.mark.parametrize(
    ("argv", "option"),
    [
        (["sweep", "--every", "0"], "--every"),
        (["sweep", "--n-nodes", "0"], "--n-nodes"),
        (["variability", PLAN, "--samples", "0"], "--samples"),
        (["variability", PLAN, "--workers", "-1"], "--workers"),
        (["required", PLAN, "--parameter", "medium_C", "--goal", "time", "--xtol", "-1"], "--xtol"),
        (["required", PLAN, "--parameter", "medium_C", "--goal", "time", "--bounds", "nan", "1"], "--bounds"),
        (["calibrate", "log.csv", "--preview", "--rows", "0"], "--rows"),
        (["calibrate", "log.csv", "--preview", "--jump-K", "nan"], "--jump-K"),
    ],
)
def test_bad_numeric_options_are_named_before_any_work(argv, option, capsys):
    assert main(argv) == EXIT_INVALID
    assert capsys.readouterr().err.startswith(f"procplan: invalid input: {option} = ")


def test_an_internal_error_exits_3_with_one_line_asking_for_a_report(monkeypatch, capsys):
    cli_main = importlib.import_module("procplan.cli.main")

    def broken(args):
        raise ZeroDivisionError("float division by zero")

    monkeypatch.setattr(cli_main, "cmd_library", broken)
    assert main(["library", "list"]) == EXIT_INTERNAL
    err = capsys.readouterr().err
    assert len(err.strip().splitlines()) == 1 and "please report" in err and "ZeroDivisionError" in err


def _user_library(tmp_path: Path, plant: str | None) -> Path:
    root = tmp_path / "lib"
    shutil.copytree(DEMO_LIBRARY, root)
    if plant is None:
        (root / "site.toml").unlink()
    else:
        text = (root / "site.toml").read_text().replace("Harrowgate Fields", plant)
        (root / "site.toml").write_text(text)
    return root


def test_the_library_folder_gives_the_site_settings(tmp_path, capsys):
    root = _user_library(tmp_path, "Marsh Lane Foods")
    assert main(["--library", str(root), "site"]) == 0
    out = capsys.readouterr().out
    assert "Marsh Lane Foods" in out and "Harrowgate" not in out


def test_the_environment_names_the_library(tmp_path, monkeypatch, capsys):
    root = _user_library(tmp_path, "Marsh Lane Foods")
    monkeypatch.setenv(LIBRARY_ENV, str(root))
    assert main(["site"]) == 0
    assert "Marsh Lane Foods" in capsys.readouterr().out
    assert main(["library", "check"]) == 0
    assert str(root) in capsys.readouterr().out


def test_a_library_without_site_settings_says_whose_it_uses(tmp_path, capsys):
    root = _user_library(tmp_path, None)
    assert main(["--library", str(root), "site"]) == 0
    assert "demo plant" in capsys.readouterr().err


def test_version(capsys):
    with pytest.raises(SystemExit) as info:
        main(["--version"])
    assert info.value.code == 0
    assert capsys.readouterr().out.strip() == f"procplan {__version__}"


def test_the_parser_imports_neither_pandas_nor_scipy():
    code = (
        "import sys\n"
        "import procplan.cli\n"
        "from procplan.cli.main import build_parser\n"
        "build_parser()\n"
        "print(sorted(m for m in ('pandas', 'scipy') if m in sys.modules))\n"
    )
    env = {**os.environ, "PYTHONPATH": str(ROOT)}
    out = subprocess.run([sys.executable, "-c", code], capture_output=True, text=True, env=env, check=True)
    assert out.stdout.strip() == "[]"


@pytest.mark.parametrize("argv", [["--help"], ["site"], ["library", "list"]])
def test_light_commands_import_neither_pandas_nor_scipy(argv):
    code = (
        "import sys\n"
        "from procplan.cli import main\n"
        "try:\n"
        f"    main({argv!r})\n"
        "except SystemExit:\n"
        "    pass\n"
        "print(sorted(m for m in ('pandas', 'scipy') if m in sys.modules), file=sys.stderr)\n"
    )
    env = {**os.environ, "PYTHONPATH": str(ROOT)}
    env.pop(LIBRARY_ENV, None)
    out = subprocess.run([sys.executable, "-c", code], capture_output=True, text=True, env=env, check=True)
    assert out.stderr.strip().splitlines()[-1] == "[]"


def test_studies_refuse_a_piece_below_the_size_limit_by_name():
    # A variant or a size sample builds a geometry outside the file readers; the same limit applies there.
    import pytest

    from procplan.errors import InvalidInputError
    from procplan.files.library import load_library
    from procplan.studies.compare import variants_of

    lib = load_library()
    plan = lib.plan("roulade-blast-chill")
    with pytest.raises(InvalidInputError, match=r"diameter_mm.*>= 1 mm"):
        variants_of(plan, [{"diameter_mm": 0.01}], library=lib)
