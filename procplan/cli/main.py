"""The ``procplan`` command line.

Exit codes: 0 success; 1 a check failed (a rule, a lethality target or an unmet stop condition, when
``--strict`` is given); 2 invalid input (bad arguments, plan or library file), with the field named.
"""

from __future__ import annotations

import argparse
import importlib
import importlib.util
import sys

from procplan.caution import CAUTION
from procplan.cli.common import (
    EXIT_CHECK_FAILED,
    EXIT_INVALID,
    EXIT_OK,
    load_library_of,
    load_plan_of,
    write_json,
)
from procplan.errors import InvalidInputError
from procplan.model import SOLVERS

#: Modules that add their own sub-commands through ``register(subparsers)``.
EXTENSION_MODULES = ("procplan.cli.studies", "procplan.cli.sheet")


def _failed(result) -> bool:
    oc = result.outcomes
    if oc is None:
        return False
    if oc.rule_check is not None and not oc.rule_check.passed:
        return True
    if oc.lethality is not None and oc.lethality.passed is False:
        return True
    return any(t.kind == "stop" and not t.target.reached for t in oc.targets)


def cmd_run(args) -> int:
    from procplan.output.report import history_dict, summary_dict, summary_text
    from procplan.run.engine import run_plan

    lib = load_library_of(args)
    plan = load_plan_of(args.plan, lib)
    result = run_plan(plan, library=lib, solver=args.solver)
    if args.csv:
        result.history.to_csv(args.csv, index=False)
    if args.json:
        write_json({"history": history_dict(result), "summary": summary_dict(result)})
    else:
        print(summary_text(result))
        if args.csv:
            print(f"history written to {args.csv}")
    return EXIT_CHECK_FAILED if (args.strict and _failed(result)) else EXIT_OK


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


def build_parser() -> argparse.ArgumentParser:
    ap = argparse.ArgumentParser(
        prog="procplan", description="Thermal-process planning for food and pharma plants. " + CAUTION
    )
    ap.add_argument("--library", default=None, help="library folder (default: the demo library)")
    sub = ap.add_subparsers(dest="command", required=True)

    r = sub.add_parser(
        "run",
        help="run a plan and print its summary",
        description="Run a plan file and print the predicted history's summary.",
    )
    r.add_argument("plan", help="plan file (TOML), or the name of a library plan")
    r.add_argument("--json", action="store_true", help="print history and summary as JSON")
    r.add_argument("--csv", metavar="FILE", help="write the history as CSV")
    r.add_argument(
        "--solver",
        choices=list(SOLVERS),
        default=None,
        help="force a solver (default: the plan's, normally auto)",
    )
    r.add_argument(
        "--strict",
        action="store_true",
        help="exit 1 when a rule, lethality target or stop condition is not met",
    )
    r.set_defaults(func=cmd_run)

    lb = sub.add_parser(
        "library", help="list or check the library", description="List or validate the product library."
    )
    lb.add_argument("action", choices=["list", "check"])
    lb.set_defaults(func=cmd_library)
    for module in EXTENSION_MODULES:
        if importlib.util.find_spec(module) is not None:
            importlib.import_module(module).register(sub)
    return ap


def main(argv: list[str] | None = None) -> int:
    parser = build_parser()
    args = parser.parse_args(argv)
    try:
        return args.func(args)
    except InvalidInputError as exc:
        print(f"procplan: invalid input: {exc}", file=sys.stderr)
        return EXIT_INVALID
    except BrokenPipeError:
        return EXIT_OK


if __name__ == "__main__":
    sys.exit(main())
