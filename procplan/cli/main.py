"""The ``procplan`` command line.

Exit codes: 0 success; 1 a check failed (a rule, a lethality target or an unmet stop condition, or the run
is unreliable, when ``--strict`` is given); 2 invalid input (bad arguments, plan or library file), with the field named; 3 an
internal error, with a one-line request to report it.

Building the parser imports neither pandas nor scipy: the study sub-commands are described in full only when
the command line names them, and every command imports its models inside its function, so ``procplan
--help``, ``procplan site`` and ``procplan library list`` start quickly.
"""

from __future__ import annotations

import argparse
import importlib
import importlib.util
import sys

from procplan._version import __version__
from procplan.caution import CAUTION
from procplan.cli.common import (
    EXIT_CHECK_FAILED,
    EXIT_INTERNAL,
    EXIT_INVALID,
    EXIT_OK,
    STDOUT,
    info_stream,
    load_library_of,
    load_plan_of,
    output_target,
    write_json,
    write_output,
)
from procplan.errors import InvalidInputError
from procplan.model import SOLVERS

#: Modules that add their own sub-commands through ``register(subparsers)``.
EXTENSION_MODULES = ("procplan.cli.study_args", "procplan.cli.sheet", "procplan.cli.trial")


def _failed(result) -> bool:
    if result.unreliable_reasons:
        return True
    oc = result.outcomes
    if oc is None:
        return False
    if oc.rule_check is not None and not oc.rule_check.passed:
        return True
    if oc.lethality is not None and oc.lethality.passed is False:
        return True
    return any(t.kind == "stop" and not t.target.reached for t in oc.targets)


def cmd_run(args) -> int:
    from procplan.output.report import summary_text
    from procplan.output.result_schema import result_document
    from procplan.run.engine import run_plan

    if args.json and STDOUT in (args.csv, args.xlsx):
        raise InvalidInputError(
            "--csv" if args.csv == STDOUT else "--xlsx",
            STDOUT,
            "a file name when --json prints to standard output",
        )
    if args.csv == STDOUT and args.xlsx == STDOUT:
        raise InvalidInputError("--xlsx", STDOUT, "a file name when --csv writes to standard output")
    lib = load_library_of(args)
    plan_path = _plan_file(args.plan, lib)
    csv = output_target("--csv", args.csv, force=args.force, inputs=[plan_path]) if args.csv else None
    xlsx = (
        output_target("--xlsx", args.xlsx, force=args.force, inputs=[plan_path], suffix=".xlsx")
        if args.xlsx
        else None
    )
    plan = load_plan_of(args.plan, lib)
    result = run_plan(plan, library=lib, solver=args.solver)
    where = write_output(csv, result.history.to_csv(index=False), force=args.force) if args.csv else None
    if args.xlsx:
        from procplan.files.site import site_of_library
        from procplan.output.xlsx import run_workbook

        site = site_of_library(lib.root, library=lib)
        book = run_workbook(result, site.temperature_unit, site.time_unit)
        where_xlsx = write_output(xlsx, book, force=args.force)
    if args.json:
        write_json(result_document(result))
    else:
        from procplan.files.site import site_of_library

        out = info_stream(args.csv, args.xlsx)
        print(summary_text(result, site_of_library(lib.root, library=lib)), file=out)
        if where is not None and csv is not None:
            print(f"history written to {where}", file=out)
        if xlsx is not None:
            print(f"workbook written to {where_xlsx}", file=out)
    return EXIT_CHECK_FAILED if (args.strict and _failed(result)) else EXIT_OK


def _plan_file(name: str, lib):
    """The file a plan argument reads (a path, or a library plan's file)."""
    from pathlib import Path

    p = Path(name)
    if not p.exists() and lib is not None and name in lib.plans:
        return lib.plans[name]
    return p


def cmd_library(args) -> int:
    lib = load_library_of(args)
    if args.action == "list":
        for kind in ("products", "equipment", "rules", "plans"):
            items = getattr(lib, kind)
            print(f"{kind} ({len(items)}):")
            for name, item in sorted(items.items()):
                desc = getattr(item, "description", "") or getattr(item, "title", "") or ""
                print(f"  {name}" + (f" — {desc}" if desc else ""))
    if lib.problems:
        print(f"{len(lib.problems)} file(s) could not be loaded:", file=sys.stderr)
        for p in lib.problems:
            print(f"  {p.path}: {p.reason}", file=sys.stderr)
        return EXIT_INVALID
    if args.action == "check":
        print(
            f"library {lib.root}: {len(lib.products)} products, {len(lib.equipment)} machines, {len(lib.rules)} rules, {len(lib.plans)} plans — all valid"
        )
    return EXIT_OK


def build_parser(full: frozenset[str] | set[str] = frozenset()) -> argparse.ArgumentParser:
    """The ``procplan`` argument parser. Study sub-commands named in ``full`` get their complete options; the
    others are listed by name and help only, since describing their options imports the study models."""
    ap = argparse.ArgumentParser(
        prog="procplan", description="Thermal-process planning for food and pharma plants. " + CAUTION
    )
    ap.add_argument(
        "--library",
        default=None,
        help="library folder (default: the folder in the PROCPLAN_LIBRARY environment variable, else the demo "
        "library); its site.toml gives the site settings",
    )
    ap.add_argument("--version", action="version", version=f"procplan {__version__}")
    sub = ap.add_subparsers(dest="command", required=True)

    r = sub.add_parser(
        "run",
        help="run a plan and print its summary",
        description="Run a plan file and print the predicted history's summary.",
    )
    r.add_argument("plan", help="plan file (TOML), or the name of a library plan")
    r.add_argument("--json", action="store_true", help="print history and summary as JSON")
    r.add_argument("--csv", metavar="FILE", help="write the history as CSV (- for standard output)")
    r.add_argument(
        "--xlsx", metavar="FILE", help="write the key figures and the history as an Excel workbook (.xlsx)"
    )
    r.add_argument("--force", action="store_true", help="replace an existing --csv or --xlsx file")
    r.add_argument(
        "--solver",
        choices=list(SOLVERS),
        default=None,
        help="force a solver (default: the plan's, normally auto)",
    )
    r.add_argument(
        "--strict",
        action="store_true",
        help="exit 1 when a rule, lethality target or stop condition is not met, or the run is unreliable",
    )
    r.set_defaults(func=cmd_run)

    lb = sub.add_parser(
        "library", help="list or check the library", description="List or validate the product library."
    )
    lb.add_argument("action", choices=["list", "check"])
    lb.set_defaults(func=cmd_library)
    for module in EXTENSION_MODULES:
        if importlib.util.find_spec(module) is not None:
            importlib.import_module(module).register(sub, full=frozenset(full))
    return ap


def main(argv: list[str] | None = None) -> int:
    argv = list(sys.argv[1:] if argv is None else argv)
    parser = build_parser(full=set(argv))
    args = parser.parse_args(argv)
    try:
        return args.func(args)
    except InvalidInputError as exc:
        print(f"procplan: invalid input: {exc}", file=sys.stderr)
        return EXIT_INVALID
    except BrokenPipeError:
        return EXIT_OK
    except Exception as exc:  # a fault of procplan, not of the input: say so in one line
        text = " ".join(str(exc).split())[:200]
        print(
            f"procplan: internal error ({type(exc).__name__}: {text}); please report it with the command line "
            f"and the input files (procplan {__version__})",
            file=sys.stderr,
        )
        return EXIT_INTERNAL


if __name__ == "__main__":
    sys.exit(main())
