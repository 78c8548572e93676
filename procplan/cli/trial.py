"""Sub-command ``procplan trial``: a heat-penetration study of several logger files against a plan.

``procplan trial RUN1.csv RUN2.csv --plan PLAN [--probe-map MAP.toml] [--fit h] [--json] [--csv FILE]
[--sheet FILE.pdf] [--xlsx FILE.xlsx] [--force]``

Exit codes as for every command: 0 done (the verdict passes or there is no requirement), 1 the verdict fails,
2 invalid input (named), 3 an internal error. Output files are written atomically, an existing file only
with ``--force``, an input never.
"""

from __future__ import annotations

import contextlib
from pathlib import Path

from procplan.caution import CAUTION
from procplan.cli.common import (
    EXIT_CHECK_FAILED,
    EXIT_OK,
    STDOUT,
    check_options,
    info_stream,
    load_library_of,
    load_plan_of,
    load_site_of,
    output_target,
    write_json,
    write_output,
)
from procplan.errors import InvalidInputError


def _targets(args, inputs):
    if args.json and STDOUT in (args.csv, args.sheet, args.xlsx):
        raise InvalidInputError(
            "--csv/--sheet/--xlsx", STDOUT, "a file name when --json prints to standard output"
        )
    if args.csv == STDOUT and STDOUT in (args.sheet, args.xlsx):
        raise InvalidInputError("--sheet/--xlsx", STDOUT, "a file name when --csv prints to standard output")
    if args.sheet == STDOUT and args.xlsx == STDOUT:
        raise InvalidInputError("--xlsx", STDOUT, "a file name when --sheet prints to standard output")
    csv = output_target("--csv", args.csv, force=args.force, inputs=inputs) if args.csv else None
    pdf = (
        output_target("--sheet", args.sheet, force=args.force, inputs=inputs, suffix=".pdf")
        if args.sheet
        else None
    )
    xlsx = (
        output_target("--xlsx", args.xlsx, force=args.force, inputs=inputs, suffix=".xlsx")
        if args.xlsx
        else None
    )
    return csv, pdf, xlsx


def _fmt(x, spec=".3g", unit="") -> str:
    return "—" if x is None else f"{x:{spec}}{unit}"


def print_study(study) -> None:
    """The study as readable lines."""
    print(f"heat-penetration study of '{study.plan.title}': {len(study.runs)} run(s)")
    for r in study.runs:
        print(
            f"  run {r.name}: step start {r.step_start_s / 60:.2f} min ({r.step_start_from}), come-up "
            f"{_fmt(None if r.come_up_s is None else r.come_up_s / 60, '.2f', ' min')}, start {r.start_C:.1f} °C, "
            f"slowest {r.slowest}"
        )
        for p in r.probes:
            h, c, fm = p.heating, p.cooling, p.formula
            parts = [f"F {_fmt(p.F_min, '.3g', ' min')}"]
            if len(p.F_by_step_min) > 1:
                parts[0] += " (" + " + ".join(f"{f:.3g}" for f in p.F_by_step_min) + " by step)"
            if h:
                parts.append(f"f_h {h.f_min:.2f} min, j_h {h.j:.3f}")
            if c:
                parts.append(f"f_c {c.f_min:.2f} min, j_c {c.j:.3f}")
            if fm:
                parts.append(
                    f"Ball {fm.from_start_min:.1f} min, general {_fmt(fm.general_min, '.1f', ' min')}"
                )
            if p.rmse_K is not None:
                parts.append(f"RMS residual {p.rmse_K:.2f} K")
            print(f"    {p.channel} ({p.piece}, {p.position}): " + "; ".join(parts))
    b = study.bound
    if b is not None:
        print(
            f"  slowest unit over {b.n} runs: mean F {b.mean:.3g} min, s {b.sd:.3g} min, k {b.k:.4f}, "
            f"lower bound {b.lower:.3g} min ({b.proportion:.0%} of units, {b.confidence:.0%} confidence, {b.model})"
        )
    cal = study.calibration
    if cal is not None:
        print(
            f"  effective h fitted to every probe: {cal.h_W_m2K:.4g} W/m²K (95 % CI {cal.h_ci95[0]:.4g} … "
            f"{cal.h_ci95[1]:.4g}); the plan's {cal.plan_h_W_m2K:.4g} W/m²K"
        )
    print(f"  verdict: {study.verdict}")
    for n in study.all_notes():
        print(f"  note: {n}")
    print("\n" + CAUTION)


def _lethality(args):
    """A LethalityCheck from --lethality/--reference-C/--z-C/--required-F-min, or None (the plan's own)."""
    given = (args.lethality, args.reference_C, args.z_C, args.required_F_min)
    if all(v is None for v in given):
        return None
    from procplan.model import LethalityCheck
    from procplan.outcomes.lethality import LETHALITY_PRESETS

    if args.lethality is not None and args.lethality not in LETHALITY_PRESETS:
        raise InvalidInputError(
            "--lethality", args.lethality, "one of " + ", ".join(sorted(LETHALITY_PRESETS))
        )
    if args.lethality is None and (args.reference_C is None or args.z_C is None):
        raise InvalidInputError("--z-C", args.z_C, "--reference-C and --z-C together (or --lethality PRESET)")
    return LethalityCheck(args.lethality, args.reference_C, args.z_C, args.required_F_min)


def cmd_trial(args) -> int:
    from procplan.studies.logger import clean_logger, read_logger
    from procplan.studies.trial_map import ProbeMap, load_probe_map
    from procplan.studies.trials import TrialRun, trial_study

    check_options(
        args,
        proportion={"minimum": 0.5, "maximum": 0.9999},
        confidence={"minimum": 0.5, "maximum": 0.9999},
        jump_K={"minimum": 0.0, "min_inclusive": False, "unit": "K"},
        reference_C={"unit": "°C"},
        z_C={"minimum": 0.0, "min_inclusive": False, "unit": "°C"},
        required_F_min={"minimum": 0.0, "min_inclusive": False, "unit": "min"},
    )
    lib = load_library_of(args)
    csv, pdf, xlsx = _targets(args, [args.plan, args.probe_map, *args.logfiles])
    plan = load_plan_of(args.plan, lib)
    pmap = load_probe_map(args.probe_map) if args.probe_map else ProbeMap()
    runs = [TrialRun(Path(f).name, clean_logger(read_logger(f), jump_K=args.jump_K)) for f in args.logfiles]
    study = trial_study(
        plan,
        runs,
        pmap,
        lethality=_lethality(args),
        library=lib,
        proportion=args.proportion,
        confidence=args.confidence,
        model=args.model,
        predict=not args.no_prediction,
        fit=tuple(filter(None, (args.fit or "").split(","))),
    )
    if args.csv:
        write_output(csv, study.table().to_csv(index=False), force=args.force)
    if args.sheet:
        from procplan.output.study_sheet import study_sheet_pdf

        site = load_site_of(args, lib)
        write_output(pdf, study_sheet_pdf(study, site=site, paper=site.paper), force=args.force)
    if args.xlsx:
        from procplan.studies.trial_workbook import trial_workbook

        write_output(xlsx, trial_workbook(study), force=args.force)
    code = EXIT_CHECK_FAILED if study.passed is False else EXIT_OK
    if args.json:
        write_json({**study.to_dict(), "caution": CAUTION})
        return code
    with contextlib.redirect_stdout(info_stream(args.csv, args.sheet, args.xlsx)):
        print_study(study)
        for opt, what in ((args.csv, "probe table"), (args.sheet, "study sheet"), (args.xlsx, "workbook")):
            if opt and opt != STDOUT:
                print(f"{what} written to {opt}")
    return code


_HELP = "analyse a heat-penetration trial (several logger files) against a plan"


def register(subparsers, full: frozenset[str] = frozenset()) -> None:
    """Add ``procplan trial`` (its full options only when the command line names it, so that ``procplan
    --help`` stays free of scipy)."""
    if "trial" not in full:
        subparsers.add_parser("trial", help=_HELP, add_help=False)
        return
    from procplan.studies.tolerance import DEFAULT_CONFIDENCE, DEFAULT_PROPORTION, TOLERANCE_MODELS

    t = subparsers.add_parser(
        "trial",
        help=_HELP,
        description="Read several logger files (runs), map probes to pieces and positions, align the runs on "
        "the step start, and report the slowest probe, come-up time, measured lethality per probe, f and j, "
        "the formula method's time beside the general method's, the prediction with residuals and a lower "
        "tolerance bound of the slowest unit's lethality. Exit 1 when the verdict fails. " + CAUTION,
    )
    t.add_argument("logfiles", nargs="+", help="logger CSV files, one per run")
    t.add_argument("--plan", required=True, help="plan file (TOML) or library plan name of the process")
    t.add_argument("--probe-map", metavar="MAP.toml", help="probes → pieces and positions, runs' step starts")
    t.add_argument(
        "--fit", default="", help="fit to every probe at once: h or h,alpha_factor (default: none)"
    )
    t.add_argument("--lethality", metavar="PRESET", help="judge the probes by this lethality preset instead")
    t.add_argument("--reference-C", dest="reference_C", type=float, help="reference temperature [°C] of F")
    t.add_argument("--z-C", dest="z_C", type=float, help="z-value [°C] (the formula method needs one)")
    t.add_argument("--required-F-min", dest="required_F_min", type=float, help="required F [min]")
    t.add_argument("--proportion", type=float, default=DEFAULT_PROPORTION, help="units covered by the bound")
    t.add_argument("--confidence", type=float, default=DEFAULT_CONFIDENCE, help="confidence of the bound")
    t.add_argument("--model", choices=list(TOLERANCE_MODELS), default="normal", help="distribution of F")
    t.add_argument(
        "--jump-K", type=float, default=5.0, help="flag jumps larger than this between samples [K]"
    )
    t.add_argument("--no-prediction", action="store_true", help="do not run the plan for the overlay")
    t.add_argument("--json", action="store_true", help="print the study as JSON")
    t.add_argument("--csv", metavar="FILE", help="write the probe table as CSV (- for standard output)")
    t.add_argument("--sheet", metavar="FILE.pdf", help="write the study sheet (PDF)")
    t.add_argument(
        "--xlsx", metavar="FILE.xlsx", help="write the study as an Excel workbook, one sheet per table"
    )
    t.add_argument("--site", default=None, metavar="FILE", help="site settings for the sheet")
    t.add_argument("--force", action="store_true", help="replace existing output files")
    t.set_defaults(func=cmd_trial)
