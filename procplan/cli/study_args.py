"""Argument parsers of the study sub-commands (compare, required, variability, calibrate, sweep).

``procplan.cli.main`` calls :func:`register`; the commands themselves live in :mod:`procplan.cli.studies`.
"""

from __future__ import annotations

from procplan.caution import CAUTION
from procplan.cli.studies import (
    cmd_brining_time,
    cmd_calibrate,
    cmd_compare,
    cmd_required,
    cmd_sweep,
    cmd_variability,
)

_FORCE_HELP = "replace an existing --csv or --xlsx file"
_XLSX_HELP = "write the tables as an Excel workbook (.xlsx), one sheet per table"


def _add_compare(subparsers) -> None:
    """``procplan compare``."""
    from procplan.studies.metrics import CRITERIA

    c = subparsers.add_parser(
        "compare",
        help="run plans (and variants) side by side and rank them",
        description="Run several plans, or variants of the first, and rank them. " + CAUTION,
    )
    c.add_argument("plans", nargs="+", help="plan files (TOML) or library plan names")
    c.add_argument(
        "--vary",
        action="append",
        metavar="KEY=VALUE,...",
        help="a variant of the first plan, e.g. 'name=colder,step=0,air_C=-10' or 'diameter_mm=70'; keys that are not "
        "variant keys are machine settings (repeatable)",
    )
    c.add_argument(
        "--criterion",
        choices=sorted(CRITERIA),
        default="time",
        help="ranking: " + "; ".join(f"{k}: {v[1]}" for k, v in CRITERIA.items()),
    )
    c.add_argument("--json", action="store_true", help="print the table as JSON")
    c.add_argument("--csv", metavar="FILE", help="write the table as CSV (- for standard output)")
    c.add_argument("--xlsx", metavar="FILE", help=_XLSX_HELP)
    c.add_argument("--force", action="store_true", help=_FORCE_HELP)
    c.add_argument("--quiet", action="store_true", help="no progress on stderr")
    c.set_defaults(func=cmd_compare)


def _add_required(subparsers) -> None:
    """``procplan required``."""
    from procplan.studies.inverse import GOALS, PARAMETERS

    r = subparsers.add_parser(
        "required",
        help="find the setting at which a plan just meets a goal",
        description="Required setting by bracketed root-finding within the machine's range, confirmed by a forward run. "
        "Exit 1 when not achievable. " + CAUTION,
    )
    r.add_argument("plan", help="plan file (TOML) or library plan name")
    r.add_argument(
        "--parameter",
        required=True,
        choices=sorted([*PARAMETERS, "pieces"]),
        help="; ".join(f"{k}: {v.description}" for k, v in PARAMETERS.items())
        + "; pieces: the largest batch (pieces per batch) that still meets the goal in a loaded machine",
    )
    r.add_argument(
        "--goal",
        required=True,
        choices=sorted(GOALS),
        help="; ".join(f"{k}: {v.description}" for k, v in GOALS.items()),
    )
    r.add_argument("--step", type=int, default=0, help="step index (default 0)")
    r.add_argument("--target-min", type=float, help="allowed time X [min] for --goal time")
    r.add_argument(
        "--bounds", type=float, nargs=2, metavar=("LOW", "HIGH"), help="search range in the parameter's unit"
    )
    r.add_argument("--xtol", type=float, help="tolerance of the answer (default 1e-5 of the range)")
    r.add_argument("--json", action="store_true", help="print the answer as JSON")
    r.add_argument("--quiet", action="store_true", help="no progress on stderr")
    r.set_defaults(func=cmd_required)


def _add_brining_time(subparsers) -> None:
    """``procplan brining-time``."""
    b = subparsers.add_parser(
        "brining-time",
        help="time a brining step needs for a core or mean salt target",
        description="Required brining time: the plan runs up to the brining step with the target as its salt stop "
        "(the step's duration is the search bound). " + CAUTION,
    )
    b.add_argument("plan", help="plan file (TOML) or library plan name")
    b.add_argument("--step", type=int, default=0, help="index of the brining step (default 0)")
    g = b.add_mutually_exclusive_group(required=True)
    g.add_argument("--core-percent", type=float, help="salt at the core [%% of the product's mass]")
    g.add_argument("--mean-percent", type=float, help="mean salt [%% of the product's mass]")
    b.add_argument("--json", action="store_true", help="print the answer as JSON")
    b.set_defaults(func=cmd_brining_time)


def _add_variability(subparsers) -> None:
    """``procplan variability``."""
    from procplan.studies.variability import VARIABLES

    v = subparsers.add_parser(
        "variability",
        help="Monte Carlo percentiles of time to target and lethality",
        description="Monte Carlo over uncertain inputs (seeded, reproducible). " + CAUTION,
    )
    v.add_argument("plan", help="plan file (TOML) or library plan name")
    v.add_argument(
        "--vary",
        action="append",
        metavar="VAR=KIND:P1,P2[@LOW,HIGH]",
        help="e.g. start_C=normal:74,2@68,80, h_factor=lognormal:1,0.15, size_factor=triangular:0.9,1,1.1; on a "
        "brining plan salt_D_factor=lognormal:1,0.2, brine_percent=normal:10,0.5; variables: "
        + ", ".join(VARIABLES),
    )
    v.add_argument("--samples", type=int, default=1000, help="number of samples (default 1000)")
    v.add_argument("--seed", type=int, default=0, help="random seed (default 0)")
    v.add_argument(
        "--method",
        choices=["auto", "exact", "batch", "run"],
        default="auto",
        help="fast exact path, batched full model (1-D, one step), run_plan per sample, or automatic",
    )
    v.add_argument(
        "--workers",
        type=int,
        default=None,
        help="processes for the run_plan path (default: the machine's cores when that pays; 1: this process)",
    )
    v.add_argument("--no-corners", action="store_true", help="skip the worst-case corner runs")
    v.add_argument("--json", action="store_true", help="print the summary as JSON")
    v.add_argument("--csv", metavar="FILE", help="write every sample as CSV (- for standard output)")
    v.add_argument("--xlsx", metavar="FILE", help=_XLSX_HELP)
    v.add_argument("--force", action="store_true", help=_FORCE_HELP)
    v.add_argument("--quiet", action="store_true", help="no progress on stderr")
    v.set_defaults(func=cmd_variability)


def _add_calibrate(subparsers) -> None:
    """``procplan calibrate``."""
    k = subparsers.add_parser(
        "calibrate",
        help="fit the effective h to a temperature-logger file",
        description="Read a logger CSV, overlay it on the plan's prediction and fit h (optionally alpha_factor, offset_mm). "
        + CAUTION,
    )
    k.add_argument("logfile", help="logger CSV (',', ';' or tab; s, min, h or timestamps; °C or °F)")
    k.add_argument("--plan", help="plan file of the recorded process (one step)")
    k.add_argument(
        "--preview", action="store_true", help="show the first rows and the guessed column mapping only"
    )
    k.add_argument("--rows", type=int, default=10, help="rows to preview")
    from procplan.studies.logger import OPTION_HELP

    g = k.add_argument_group("logger format (each overrides what is detected from the file)")
    for name, text in OPTION_HELP.items():
        g.add_argument("--" + name.replace("_", "-"), help=text)
    k.add_argument("--channel", help="probe column (default: the first)")
    k.add_argument(
        "--fit", default="h", help="parameters to fit, comma-separated: h, alpha_factor, offset_mm"
    )
    k.add_argument(
        "--start-C", dest="start_C", type=float, help="start temperature [°C] (default: the first reading)"
    )
    k.add_argument(
        "--time-offset-s", type=float, default=0.0, help="logger time at which the step started [s]"
    )
    k.add_argument(
        "--jump-K", type=float, default=5.0, help="flag jumps larger than this between samples [K]"
    )
    k.add_argument(
        "--record", metavar="PRODUCT", help="add a measured-value record of h for PRODUCT to the JSON"
    )
    k.add_argument(
        "--save",
        action="store_true",
        help="save the --record into the library's measurements/ (steps in that machine at those settings then use it)",
    )
    k.add_argument("--json", action="store_true", help="print the fit as JSON")
    k.add_argument(
        "--csv",
        metavar="FILE",
        help="write measured, fitted and predicted curves and residuals as CSV (- for standard output)",
    )
    k.add_argument("--xlsx", metavar="FILE", help=_XLSX_HELP)
    k.add_argument("--force", action="store_true", help=_FORCE_HELP)
    k.set_defaults(func=cmd_calibrate)


def _add_sweep(subparsers) -> None:
    """``procplan sweep``."""
    from procplan.studies.sweep import KIND_TASKS

    s = subparsers.add_parser(
        "sweep",
        help="every product in every suitable machine",
        description="Catalogue sweep; tasks per machine kind: "
        + "; ".join(f"{kk}: {t.start_C:g}→{t.target_C:g} °C" for kk, t in KIND_TASKS.items())
        + ". "
        + CAUTION,
    )
    s.add_argument("--products", help="comma-separated product names (default: all)")
    s.add_argument("--equipment", help="comma-separated machine ids (default: all)")
    s.add_argument("--kinds", help="comma-separated machine kinds (default: all)")
    s.add_argument(
        "--pieces",
        type=int,
        default=1,
        help="pieces per batch in every machine (a machine with a thermal description reports its shortfall)",
    )
    s.add_argument(
        "--workers",
        type=int,
        default=None,
        help="processes (default: the machine's cores when that pays; 1: this process)",
    )
    s.add_argument(
        "--n-nodes", type=int, default=None, help="finite-volume nodes per axis (coarser is faster)"
    )
    s.add_argument("--every", type=int, default=10, help="progress line every N pairs")
    s.add_argument("--json", action="store_true", help="print the table as JSON")
    s.add_argument("--csv", metavar="FILE", help="write the table as CSV (- for standard output)")
    s.add_argument("--xlsx", metavar="FILE", help=_XLSX_HELP)
    s.add_argument("--force", action="store_true", help=_FORCE_HELP)
    s.add_argument("--quiet", action="store_true", help="no progress on stderr")
    s.set_defaults(func=cmd_sweep)


#: Sub-command → (what adds its full parser, one-line help).
COMMANDS = {
    "compare": (_add_compare, "run plans (and variants) side by side and rank them"),
    "required": (_add_required, "find the setting at which a plan just meets a goal"),
    "variability": (_add_variability, "Monte Carlo percentiles of time to target and lethality"),
    "calibrate": (_add_calibrate, "fit the effective h to a temperature-logger file"),
    "sweep": (_add_sweep, "every product in every suitable machine"),
    "brining-time": (_add_brining_time, "time a brining step needs for a core or mean salt target"),
}


def register(subparsers, full: frozenset[str] = frozenset()) -> None:
    """Add the study sub-commands to ``procplan``'s argument parser.

    Their options' choices come from the study models' registries, so only the commands in ``full`` (those
    on the command line) are described completely; the rest are listed by name and help, which keeps
    ``procplan --help`` free of pandas and scipy.
    """
    for name, (add, text) in COMMANDS.items():
        if name in full:
            add(subparsers)
        else:
            subparsers.add_parser(name, help=text, add_help=False)
