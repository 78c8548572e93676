"""`procplan sheet`, `procplan new` and `procplan site`: help, exit codes, messages naming the field, and a
sheet whose numbers equal the Python API's result."""

from __future__ import annotations

import io

import pytest
from pypdf import PdfReader

from procplan.cli import main
from procplan.files.library import load_library
from procplan.files.plan import load_plan
from procplan.files.site import load_site
from procplan.files.tomlfile import read_toml
from procplan.run.engine import run_plan

#: Plan with the exact series solver (single step, no phase change): fast enough to run through the CLI.
FAST_PLAN = "vial-cool-down"


def _text(path) -> str:
    reader = PdfReader(io.BytesIO(path.read_bytes()))
    return " ".join(" ".join(p.extract_text().split()) for p in reader.pages)


@pytest.mark.parametrize(
    "argv",
    [
        ["sheet", "--help"],
        ["new", "--help"],
        ["new", "product", "--help"],
        ["new", "plan", "--help"],
        ["site", "--help"],
    ],
)
def test_help_of_every_command(argv, capsys):
    with pytest.raises(SystemExit) as info:
        main(argv)
    assert info.value.code == 0
    out = capsys.readouterr().out
    assert out.startswith("usage: procplan " + argv[0])


def test_sheet_numbers_equal_the_api_result(tmp_path, capsys):
    out = tmp_path / "sheet.pdf"
    code = main(
        ["sheet", FAST_PLAN, "-o", str(out), "--lot", "L-0307", "--revision", "B", "--date", "2026-03-02"]
    )
    assert code == 0
    assert "written to" in capsys.readouterr().out
    lib = load_library()
    site = load_site()
    result = run_plan(lib.plan(FAST_PLAN), library=lib)
    text = _text(out)
    assert "L-0307" in text and "2026-03-02" in text
    for tg in result.outcomes.targets:
        assert tg.target.reached
        assert f"{tg.point} {site.format_temperature(tg.target.target_C)}" in text
        assert site.format_time_hm(tg.target.elapsed_s / 60.0) in text
    end = result.history.iloc[-1]
    assert " / ".join(site.format_temperature(end[k]) for k in ("core_C", "surface_C", "mean_C")) in text
    assert len(PdfReader(str(out)).pages) <= 2


def test_sheet_refuses_to_overwrite_without_force(tmp_path, capsys):
    out = tmp_path / "sheet.pdf"
    out.write_bytes(b"signed copy")
    assert main(["sheet", FAST_PLAN, "-o", str(out)]) == 2
    assert "--output" in capsys.readouterr().err
    assert out.read_bytes() == b"signed copy"
    assert main(["sheet", FAST_PLAN, "-o", str(out), "--force", "--paper", "letter"]) == 0
    assert out.read_bytes().startswith(b"%PDF")


@pytest.mark.parametrize(
    "extra, field",
    [
        (["--paper", "legal"], "--paper"),
        (["--date", "2026-02-30"], "--date"),
        (["--revision", ""], "--revision"),
        (["--lot", "x" * 41], "--lot"),
    ],
)
def test_sheet_bad_arguments_exit_2_naming_the_field(tmp_path, capsys, extra, field):
    out = tmp_path / "sheet.pdf"
    assert main(["sheet", FAST_PLAN, "-o", str(out), *extra]) == 2
    err = capsys.readouterr().err
    assert err.startswith("procplan: invalid input: " + field)
    assert not out.exists()


def test_sheet_bad_files_exit_2(tmp_path, capsys):
    broken = tmp_path / "broken.toml"
    broken.write_text("title = \n", encoding="utf-8")
    assert main(["sheet", str(broken), "-o", str(tmp_path / "a.pdf")]) == 2
    assert "broken.toml" in capsys.readouterr().err
    bad_plan = tmp_path / "bad.toml"
    bad_plan.write_text(
        'title = "x"\n[product]\nlibrary = "chicken-roulade"\n[start]\ntemperature_C = 900\n'
        '[[steps]]\nname = "s"\nh_W_m2K = 20\nmedium_C = 2\nduration_min = 10\n',
        encoding="utf-8",
    )
    assert main(["sheet", str(bad_plan), "-o", str(tmp_path / "b.pdf")]) == 2
    assert "start.temperature_C" in capsys.readouterr().err
    bad_site = tmp_path / "site.toml"
    bad_site.write_text('plant = "P"\n[units]\ntemperature = "K"\n', encoding="utf-8")
    assert main(["sheet", FAST_PLAN, "-o", str(tmp_path / "c.pdf"), "--site", str(bad_site)]) == 2
    assert "site.units.temperature" in capsys.readouterr().err
    assert main(["sheet", FAST_PLAN, "-o", str(tmp_path / "no-such-dir" / "d.pdf")]) == 2
    assert "--output" in capsys.readouterr().err
    assert main(["sheet", FAST_PLAN, "-o", str(tmp_path / "e.txt")]) == 2
    assert "--output" in capsys.readouterr().err


def test_new_product_writes_a_loadable_copy_and_never_overwrites(tmp_path, capsys):
    dest = tmp_path / "my-roulade.toml"
    assert main(["new", "product", "my-roulade", "--template", "chicken-roulade", "-o", str(dest)]) == 0
    data = read_toml(dest)
    assert data["name"] == "my-roulade"
    lib = load_library()
    assert data["diameter_mm"] * 1e-3 == lib.products["chicken-roulade"].geometry.diameter_m
    before = dest.read_bytes()
    assert main(["new", "product", "my-roulade", "--template", "beef-joint", "-o", str(dest)]) == 2
    assert "--output" in capsys.readouterr().err
    assert dest.read_bytes() == before
    assert (
        main(
            ["new", "product", "My Roulade", "--template", "chicken-roulade", "-o", str(tmp_path / "x.toml")]
        )
        == 2
    )
    assert "NAME" in capsys.readouterr().err
    assert main(["new", "product", "x", "--template", "no-such-product", "-o", str(tmp_path / "y.toml")]) == 2
    assert "--template" in capsys.readouterr().err
    assert not list(tmp_path.glob(".*.tmp"))


def test_new_product_goes_into_the_library_folder(tmp_path):
    import shutil

    from procplan.files.library import DEMO_LIBRARY

    root = tmp_path / "lib"
    shutil.copytree(DEMO_LIBRARY, root)
    assert (
        main(["--library", str(root), "new", "product", "herb-roulade-2", "--template", "chicken-roulade"])
        == 0
    )
    assert "herb-roulade-2" in load_library(root).products
    assert (
        main(["--library", str(root), "new", "product", "chicken-roulade", "--template", "beef-joint"]) == 2
    )


def test_new_plan_from_a_template_runs(tmp_path, capsys):
    dest = tmp_path / "beef-chill.toml"
    code = main(
        [
            "new",
            "plan",
            "beef-chill",
            "--product",
            "beef-joint",
            "--template",
            "roulade-blast-chill",
            "-o",
            str(dest),
        ]
    )
    assert code == 0
    assert "margin_min from the site settings" in capsys.readouterr().out
    lib = load_library()
    plan = load_plan(dest, library=lib)
    tpl = lib.plan("roulade-blast-chill")
    assert plan.product.name == "beef-joint"
    assert plan.steps == tpl.steps and plan.checks.cooling_rule == tpl.checks.cooling_rule
    assert (
        plan.checks.margin_percent == tpl.checks.margin_percent
    )  # the template's margin wins over the site's
    assert (
        main(
            [
                "new",
                "plan",
                "beef-chill",
                "--product",
                "beef-joint",
                "--template",
                "roulade-blast-chill",
                "-o",
                str(dest),
            ]
        )
        == 2
    )
    assert "refusing to overwrite" in capsys.readouterr().err
    for argv, field in (
        (["--product", "nope", "--template", "roulade-blast-chill"], "--product"),
        (["--product", "beef-joint", "--template", "nope"], "--template"),
    ):
        assert main(["new", "plan", "p2", *argv, "-o", str(tmp_path / "p2.toml")]) == 2
        assert capsys.readouterr().err.startswith("procplan: invalid input: " + field)


def test_site_prints_the_settings(tmp_path, capsys):
    assert main(["site"]) == 0
    out = capsys.readouterr().out
    site = load_site()
    assert site.plant in out and all(line.name in out for line in site.lines)
    assert main(["site", "--site", str(tmp_path / "none.toml")]) == 2
    assert "none.toml" in capsys.readouterr().err
