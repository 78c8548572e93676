"""Sub-commands of ``procplan`` for the planning studies: compare, required, variability, calibrate, sweep.

``procplan.cli`` imports this module and calls :func:`register`; each command returns an exit code and
raises InvalidInputError for bad input (printed by ``procplan.cli.main``, exit 2).
"""

from __future__ import annotations

import math
import sys
from typing import Any

from procplan.caution import CAUTION
from procplan.cli.common import EXIT_CHECK_FAILED, EXIT_OK, load_library_of, load_plan_of, write_json
from procplan.errors import InvalidInputError


def _dump(obj) -> None:
    write_json(obj, indent=1)


def _fmt(x, spec=".1f", unit=" min") -> str:
    if x is None or (isinstance(x, float) and not math.isfinite(x)):
        return "—"
    return f"{x:{spec}}{unit}"


def _value(text: str) -> Any:
    try:
        return int(text)
    except ValueError:
        pass
    try:
        return float(text)
    except ValueError:
        return text


def parse_variant(spec: str) -> dict[str, Any]:
    """``key=value,key=value`` → a variant dict; keys that are not variant keys are machine settings.

    >>> parse_variant("name=colder,step=0,air_C=-10,air_speed_m_s=4")
    {'name': 'colder', 'step': 0, 'settings': {'air_C': -10, 'air_speed_m_s': 4}}
    """
    from procplan.studies.compare import VARIANT_KEYS

    out: dict[str, Any] = {}
    settings: dict[str, Any] = {}
    for part in filter(None, (p.strip() for p in spec.split(","))):
        if "=" not in part:
            raise InvalidInputError(
                "--vary", spec, "key=value pairs separated by commas, e.g. step=0,air_C=-10"
            )
        k, v = (s.strip() for s in part.split("=", 1))
        if k in VARIANT_KEYS:
            out[k] = _value(v)
        else:
            settings[k] = _value(v)
    if settings:
        out["settings"] = settings
    return out


def _progress(args, label: str, every: int):
    from procplan.studies.runner import stderr_counter

    return None if getattr(args, "quiet", False) else stderr_counter(every, label)


def _executor(workers: int | None):
    if not workers or workers <= 1:
        return None
    from concurrent.futures import ProcessPoolExecutor

    return ProcessPoolExecutor(max_workers=workers)


# --- compare ---------------------------------------------------------------------------------------------
def cmd_compare(args) -> int:
    from procplan.studies.compare import compare_plans, variants_of

    lib = load_library_of(args)
    plans = [load_plan_of(p, lib) for p in args.plans]
    if args.vary:
        plans += variants_of(plans[0], [parse_variant(v) for v in args.vary], library=lib)
    cmp_ = compare_plans(
        plans, library=lib, criterion=args.criterion, progress=_progress(args, "scenarios", 1)
    )
    tab = cmp_.table
    if args.csv:
        tab.to_csv(args.csv)
    if args.json:
        _dump(
            {
                "criterion": cmp_.criterion,
                "ranking": list(cmp_.ranking),
                "table": tab.reset_index().to_dict("records"),
                "caution": CAUTION,
            }
        )
        return EXIT_OK
    print(f"{len(tab)} scenarios ranked by {cmp_.criterion}:")
    for name in cmp_.ranking:
        r = tab.loc[name]
        rule = "" if r["rule_passed"] is None else (" rule PASS" if r["rule_passed"] else " rule FAIL")
        rule += f" (margin {_fmt(r['rule_margin_min'])})" if rule else ""
        leth = (
            ""
            if not r["lethality"]
            else f"; F {r['lethality_F_min']:.3g} min " + ("PASS" if r["lethality_passed"] else "FAIL")
        )
        print(
            f"  {int(r['rank'])}. {name}\n"
            f"     to {r['target_C']:g} °C: {_fmt(r['time_to_target_min'])}, plan {_fmt(r['plan_time_min'])}"
            f"{';' if rule or leth else ''}{rule}{leth}\n"
            f"     energy: {r['energy_removed_kWh']:.2f} kWh removed, {r['energy_added_kWh']:.2f} kWh added, peak {r['peak_duty_kW']:.1f} kW, electricity {r['electricity_kWh']:.2f} kWh"
        )
    if args.csv:
        print(f"table written to {args.csv}")
    print("\n" + CAUTION)
    return EXIT_OK


# --- required ----------------------------------------------------------------------------------------------
def cmd_required(args) -> int:
    from procplan.studies.inverse import required_setting

    lib = load_library_of(args)
    plan = load_plan_of(args.plan, lib)

    def prog(n, v, m):
        if not args.quiet:
            print(f"  run {n}: {args.parameter} = {v:.6g} → measure {m:+.4g}", file=sys.stderr, flush=True)

    r = required_setting(
        plan,
        step_index=args.step,
        parameter=args.parameter,
        goal=args.goal,
        library=lib,
        bounds=tuple(args.bounds) if args.bounds else None,
        target_min=args.target_min,
        xtol=args.xtol,
        progress=prog,
    )
    if args.json:
        _dump({**r.to_dict(), "caution": CAUTION})
        return EXIT_OK if r.achievable else EXIT_CHECK_FAILED
    print(r.message)
    print(
        f"  confirmed by a forward run: {'yes' if r.confirmed else 'NO'} ({len(r.evaluations)} runs, tolerance {r.xtol:.3g} {r.unit})"
    )
    for n in r.notes:
        print(f"  note: {n}")
    print("\n" + CAUTION)
    return EXIT_OK if r.achievable else EXIT_CHECK_FAILED


# --- variability --------------------------------------------------------------------------------------------
def cmd_variability(args) -> int:
    from procplan.studies.variability import monte_carlo, parse_distribution

    lib = load_library_of(args)
    plan = load_plan_of(args.plan, lib)
    dists = {}
    for spec in args.vary or []:
        if "=" not in spec:
            raise InvalidInputError("--vary", spec, "VARIABLE=kind:params, e.g. start_C=normal:74,2@68,80")
        k, v = spec.split("=", 1)
        dists[k.strip()] = parse_distribution(v.strip())
    ex = _executor(args.workers)
    try:
        res = monte_carlo(
            plan,
            dists,
            n_samples=args.samples,
            seed=args.seed,
            library=lib,
            method=args.method,
            executor=ex,
            corners=not args.no_corners,
            progress=_progress(args, "samples", max(1, args.samples // 10)),
        )
    finally:
        if ex is not None:
            ex.shutdown()
    if args.csv:
        res.samples.to_csv(args.csv, index=False)
    if args.json:
        _dump({**res.to_dict(), "caution": CAUTION})
        return EXIT_OK
    print(f"{res.n_samples} samples (seed {res.seed}, {res.method} path, {res.seconds:.2f} s)")
    for key, label, unit in (
        ("time_to_target_min", "time to target", " min"),
        ("lethality_F_min", "lethality F (low tail)", " min"),
    ):
        if key in res.percentiles:
            p = res.percentiles[key]
            print(
                f"  {label}: P50 {_fmt(p['P50'], '.3g', unit)}, P95 {_fmt(p['P95'], '.3g', unit)}, P99 {_fmt(p['P99'], '.3g', unit)}"
            )
    if res.p_not_reached is not None:
        print(f"  target not reached in {res.p_not_reached:.1%} of samples")
    if res.p_rule_fail is not None:
        print(f"  probability of failing the rule: {res.p_rule_fail:.1%}")
    if res.p_lethality_fail is not None:
        print(f"  probability of missing the lethality requirement: {res.p_lethality_fail:.1%}")
    if res.worst:
        w = res.worst
        inputs = ", ".join(f"{k} = {v:.4g}" for k, v in w["inputs"].items())
        print(f"  worst corner ({inputs}): time to target {_fmt(w['metrics'].get('time_to_target_min'))}")
    for n in res.notes:
        print(f"  note: {n}")
    if args.csv:
        print(f"samples written to {args.csv}")
    print("\n" + CAUTION)
    return EXIT_OK


# --- calibrate ----------------------------------------------------------------------------------------------
def _calibrate_preview(args) -> int:
    """``procplan calibrate --preview``: the logger file's first rows and the guessed column mapping."""
    from procplan.studies.logger import preview_logger

    pv = preview_logger(args.logfile, n_rows=args.rows, **_logger_options(args))
    m = pv.mapping
    if args.json:
        _dump(
            {
                "columns": list(pv.columns),
                "separator": pv.separator,
                "decimal": pv.decimal,
                "encoding": pv.encoding,
                "header": pv.header,
                "rows": pv.rows.to_dict("records"),
                "decisions": list(pv.decisions),
                "mapping": {
                    "time": m.time,
                    "time_unit": m.time_unit,
                    "channels": list(m.channels),
                    "temperature_unit": m.temperature_unit,
                    "date": m.date,
                },
            }
        )
        return EXIT_OK
    print(
        f"separator {pv.separator!r}, decimal {pv.decimal!r}, encoding {pv.encoding}, {pv.n_rows} data rows"
    )
    print(
        f"guessed: time = {m.time!r} ({m.time_unit}), channels = {', '.join(m.channels)} (°{m.temperature_unit})"
    )
    for d in pv.decisions:
        print(f"  read: {d}")
    print(pv.rows.to_string(index=False))
    return EXIT_OK


def _print_calibration(plan, cal, log, out: dict[str, Any]) -> None:
    """The fit as readable lines."""
    measured = out["measured"]
    print(
        f"calibration of '{plan.title}' against {cal.source}, channel {cal.channel} ({cal.n_points} points; {cal.method})"
    )
    for d in log.decisions:
        print(f"  read: {d}")
    for f in log.flags:
        print(f"  logger: {f}")
    print(
        f"  effective h = {cal.h_W_m2K:.4g} W/m²K (95 % CI {cal.h_ci95[0]:.4g} … {cal.h_ci95[1]:.4g}); the plan's effective h {cal.plan_h_W_m2K:.4g}"
    )
    if cal.packaging_resistance_m2K_W > 0:
        outside = f"{cal.h_outside_W_m2K:.4g} W/m²K" if cal.h_outside_W_m2K else "none (h ≥ 1/R)"
        print(
            f"  (packaging resistance {cal.packaging_resistance_m2K_W:.3g} m²K/W included; medium-side h {outside})"
        )
    if cal.alpha_factor is not None:
        print(
            f"  diffusivity factor {cal.alpha_factor:.3f} (95 % CI {cal.alpha_ci95[0]:.3f} … {cal.alpha_ci95[1]:.3f})"
        )
    if cal.offset_mm is not None:
        print(
            f"  probe offset {cal.offset_mm:.1f} mm (95 % CI {cal.offset_ci95[0]:.1f} … {cal.offset_ci95[1]:.1f})"
        )
    print(f"  RMS residual {cal.rmse_K:.3f} K")
    if measured["rule_passed"] is not None:
        print(
            f"  measured curve, rule: {'PASS' if measured['rule_passed'] else 'FAIL'} (smallest margin {_fmt(measured['rule_margin_min'])})"
        )
    if measured["F_min"] is not None:
        print(f"  measured curve, lethality F = {measured['F_min']:.3g} min")
    for n in cal.notes:
        print(f"  note: {n}")
    print("\n" + CAUTION)
    if "record_saved_to" in out:
        print(f"measured h saved to {out['record_saved_to']}")


def _logger_options(args) -> dict:
    from procplan.studies.logger import OPTION_HELP

    return {k: getattr(args, k) for k in OPTION_HELP}


def cmd_calibrate(args) -> int:
    from procplan.studies.calibrate import calibrate, fitted_h_record
    from procplan.studies.logger import clean_logger, read_logger

    if args.preview:
        return _calibrate_preview(args)
    if not args.plan:
        raise InvalidInputError("--plan", None, "a plan file for the recorded process (or --preview)")
    lib = load_library_of(args)
    plan = load_plan_of(args.plan, lib)
    log = clean_logger(read_logger(args.logfile, **_logger_options(args)), jump_K=args.jump_K)
    cal = calibrate(
        plan,
        log,
        channel=args.channel,
        fit=tuple(filter(None, args.fit.split(","))),
        library=lib,
        start_C=args.start_C,
        time_offset_s=args.time_offset_s,
    )
    if args.csv:
        cal.residuals.to_csv(args.csv, index=False)
    out = cal.to_dict()
    out["flags"] = list(log.flags)
    out["logger_decisions"] = list(log.decisions)
    out["logger_missing"] = dict(log.missing)
    measured = out["measured"]
    measured.pop("rule", None)
    if args.record:
        step = plan.steps[0]
        out["record"] = fitted_h_record(
            cal,
            product=args.record,
            equipment=step.equipment,
            settings=step.settings_dict,
            data_source=str(args.logfile),
        )
        if args.save:
            from procplan.files.library import save_measurement

            out["record_saved_to"] = str(save_measurement(lib.root, out["record"]))
    elif args.save:
        raise InvalidInputError("--save", True, "together with --record PRODUCT")
    if args.json:
        _dump({**out, "caution": CAUTION})
        return EXIT_OK
    _print_calibration(plan, cal, log, out)
    return EXIT_OK


# --- sweep -------------------------------------------------------------------------------------------------------
def _names(text: str | None):
    return None if not text else [s.strip() for s in text.split(",") if s.strip()]


def cmd_sweep(args) -> int:
    from procplan.studies.sweep import sweep_catalogue

    lib = load_library_of(args)
    ex = _executor(args.workers)
    try:
        res = sweep_catalogue(
            lib,
            products=_names(args.products),
            equipment=_names(args.equipment),
            kinds=_names(args.kinds),
            executor=ex,
            n_nodes=args.n_nodes,
            progress=_progress(args, "pairs", args.every),
        )
    finally:
        if ex is not None:
            ex.shutdown()
    tab = res.table
    if args.csv:
        res.to_csv(args.csv)
    if args.json:
        _dump({"table": tab.to_dict("records"), "skipped": list(res.skipped), "caution": CAUTION})
        return EXIT_OK
    print(f"{len(tab)} product × machine pairs")
    for _, r in tab.iterrows():
        if r["error"]:
            print(f"  {r['product']:<24} {r['equipment']:<16} invalid: {r['error']}")
            continue
        rule = "" if r["rule_passed"] is None else (" rule PASS" if r["rule_passed"] else " rule FAIL")
        print(
            f"  {r['product']:<24} {r['equipment']:<16} {r['process']:<8} {r['start_C']:g}→{r['target_C']:g} °C: "
            f"{_fmt(r['time_to_target_min'])} (plan {_fmt(r['plan_time_min'])}){rule}"
        )
    if res.skipped:
        print("  skipped machines: " + ", ".join(res.skipped))
    if args.csv:
        print(f"table written to {args.csv}")
    print("\n" + CAUTION)
    return EXIT_OK


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
    c.add_argument("--csv", metavar="FILE", help="write the table as CSV")
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
        choices=sorted(PARAMETERS),
        help="; ".join(f"{k}: {v.description}" for k, v in PARAMETERS.items()),
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
        help="e.g. start_C=normal:74,2@68,80, h_factor=lognormal:1,0.15, size_factor=triangular:0.9,1,1.1; variables: "
        + ", ".join(VARIABLES),
    )
    v.add_argument("--samples", type=int, default=1000, help="number of samples (default 1000)")
    v.add_argument("--seed", type=int, default=0, help="random seed (default 0)")
    v.add_argument(
        "--method",
        choices=["auto", "exact", "run"],
        default="auto",
        help="fast exact path, run_plan per sample, or automatic",
    )
    v.add_argument("--workers", type=int, default=None, help="processes for the run_plan path")
    v.add_argument("--no-corners", action="store_true", help="skip the worst-case corner runs")
    v.add_argument("--json", action="store_true", help="print the summary as JSON")
    v.add_argument("--csv", metavar="FILE", help="write every sample as CSV")
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
        "--csv", metavar="FILE", help="write measured, fitted and predicted curves and residuals as CSV"
    )
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
    s.add_argument("--workers", type=int, default=None, help="processes (default: sequential)")
    s.add_argument(
        "--n-nodes", type=int, default=None, help="finite-volume nodes per axis (coarser is faster)"
    )
    s.add_argument("--every", type=int, default=10, help="progress line every N pairs")
    s.add_argument("--json", action="store_true", help="print the table as JSON")
    s.add_argument("--csv", metavar="FILE", help="write the table as CSV")
    s.add_argument("--quiet", action="store_true", help="no progress on stderr")
    s.set_defaults(func=cmd_sweep)


def register(subparsers) -> None:
    """Add the study sub-commands to ``procplan``'s argument parser."""
    for add in (_add_compare, _add_required, _add_variability, _add_calibrate, _add_sweep):
        add(subparsers)
