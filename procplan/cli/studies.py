"""Sub-commands of ``procplan`` for the planning studies: compare, required, variability, calibrate, sweep.

Their parsers are in :mod:`procplan.cli.study_args`; each command returns an exit code and
raises InvalidInputError for bad input (printed by ``procplan.cli.main``, exit 2).
"""

from __future__ import annotations

import contextlib
import math
import sys
from typing import Any

from procplan.caution import CAUTION
from procplan.cli.common import (
    EXIT_CHECK_FAILED,
    EXIT_OK,
    check_options,
    info_stream,
    load_library_of,
    load_plan_of,
    output_target,
    write_json,
    write_output,
)
from procplan.errors import InvalidInputError
from procplan.files.fields import T_HI, T_LO


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
    """None (not given): the study's default, a process pool on the machine's cores when it pays; 1: in this
    process; more: a pool of that many processes."""
    if workers is None:
        return "auto"
    if workers <= 1:
        return None
    from concurrent.futures import ProcessPoolExecutor

    return ProcessPoolExecutor(max_workers=workers)


def _csv_target(args, inputs):
    """The ``--csv`` file, checked before the work starts (None when not given or ``-``)."""
    if not args.csv:
        return None
    if getattr(args, "json", False) and args.csv == "-":
        raise InvalidInputError("--csv", "-", "a file name when --json prints to standard output")
    return output_target("--csv", args.csv, force=args.force, inputs=inputs)


def _xlsx_target(args, inputs):
    """The ``--xlsx`` file, checked before the work starts (None when not given or ``-``)."""
    if not getattr(args, "xlsx", None):
        return None
    if args.xlsx == "-" and (getattr(args, "json", False) or args.csv == "-"):
        raise InvalidInputError("--xlsx", "-", "a file name when --json or --csv writes to standard output")
    return output_target("--xlsx", args.xlsx, force=args.force, inputs=inputs, suffix=".xlsx")


def _write_xlsx(args, target, make) -> None:
    """Write the workbook ``make()`` to the ``--xlsx`` file (atomically) when one was asked for."""
    if getattr(args, "xlsx", None):
        write_output(target, make(), force=args.force)


def _written(args, what: str, out) -> None:
    """The closing lines: where the CSV and the workbook went, and the caution."""
    if args.csv and args.csv != "-":
        print(f"{what} written to {args.csv}", file=out)
    if getattr(args, "xlsx", None) and args.xlsx != "-":
        print(f"workbook written to {args.xlsx}", file=out)
    print("\n" + CAUTION, file=out)


def _xlsx_module():
    import procplan.output.xlsx as mod

    return mod


def _differences(plans, cmp_):
    """The inputs that differ between the compared plans (procplan.studies.compare.plan_differences)."""
    from procplan.studies.compare import plan_differences

    return plan_differences(plans, list(cmp_.table.index))


#: Worker processes a study may start.
_WORKERS = {"minimum": 1, "maximum": 256}


# --- compare ---------------------------------------------------------------------------------------------
def cmd_compare(args) -> int:
    from procplan.studies.compare import compare_plans, variants_of

    lib = load_library_of(args)
    csv = _csv_target(args, args.plans)
    xlsx = _xlsx_target(args, args.plans)
    plans = [load_plan_of(p, lib) for p in args.plans]
    if args.vary:
        plans += variants_of(plans[0], [parse_variant(v) for v in args.vary], library=lib)
    cmp_ = compare_plans(
        plans, library=lib, criterion=args.criterion, progress=_progress(args, "scenarios", 1)
    )
    tab = cmp_.table
    if args.csv:
        write_output(csv, tab.to_csv(), force=args.force)
    _write_xlsx(args, xlsx, lambda: _xlsx_module().comparison_workbook(cmp_, _differences(plans, cmp_)))
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
    out = info_stream(args.csv, getattr(args, "xlsx", None))
    print(f"{len(tab)} scenarios ranked by {cmp_.criterion}:", file=out)
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
            + _capacity_text(r),
            file=out,
        )
    _written(args, "table", out)
    return EXIT_OK


def _capacity_text(r) -> str:
    """The batch and, for a loaded machine that could not hold its set point, the shortfall."""
    short = r.get("capacity_shortfall_kW")
    if short is None or short != short:
        return ""
    text = f"\n     batch of {int(r['pieces'])}: "
    if short > 0:
        return text + f"plant short by {short:.1f} kW, at its limit {r['plant_limit_min']:.0f} min"
    return text + "the plant held its set point"


def _cmd_pieces(args, lib, plan) -> int:
    """``procplan required --parameter pieces``: the largest batch that still meets the goal."""
    from procplan.studies.batch_size import largest_batch

    def prog(n, v, m):
        if not args.quiet:
            print(f"  run {n}: pieces = {v} → measure {m:+.4g}", file=sys.stderr, flush=True)

    r = largest_batch(
        plan, step_index=args.step, goal=args.goal, library=lib, target_min=args.target_min, progress=prog
    )
    ml = r.machine_load
    if args.json:
        from procplan.output.json_safe import json_safe

        _dump(
            {
                "parameter": "pieces",
                "goal": r.goal,
                "target_min": r.target_min,
                "pieces": r.pieces,
                "first_failing": r.first_failing,
                "evaluations": [list(e) for e in r.evaluations],
                "machine_load": None if ml is None else {**json_safe(ml), "summary": ml.describe()},
                "message": r.message,
                "caution": CAUTION,
            }
        )
        return EXIT_OK if r.pieces is not None else EXIT_CHECK_FAILED
    print(r.message)
    if ml is not None:
        print(f"  with {ml.pieces} pieces: {ml.describe()}")
    print(f"  {len(r.evaluations)} forward runs")
    print("\n" + CAUTION)
    return EXIT_OK if r.pieces is not None else EXIT_CHECK_FAILED


# --- required ----------------------------------------------------------------------------------------------
def cmd_required(args) -> int:
    from procplan.studies.inverse import required_setting

    check_options(
        args,
        step={"minimum": 0},
        target_min={"minimum": 0.0, "min_inclusive": False, "unit": "min"},
        xtol={"minimum": 0.0, "min_inclusive": False},
        bounds={},
    )
    lib = load_library_of(args)
    plan = load_plan_of(args.plan, lib)
    if args.parameter == "pieces":
        return _cmd_pieces(args, lib, plan)

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


def cmd_brining_time(args) -> int:
    """``procplan brining-time``: how long a brining step must run for a core (or mean) salt target."""
    from procplan.studies.brining import required_brining_time_s

    lib = load_library_of(args)
    plan = load_plan_of(args.plan, lib)
    t = required_brining_time_s(
        plan, args.step, core_percent=args.core_percent, mean_percent=args.mean_percent, library=lib
    )
    where, pct = ("core", args.core_percent) if args.core_percent is not None else ("mean", args.mean_percent)
    if args.json:
        _dump(
            {"step": args.step, "point": where, "salt_percent": pct, "time_min": t / 60.0, "caution": CAUTION}
        )
        return EXIT_OK
    name = plan.steps[args.step].name
    print(f"'{name}': the {where} reaches {pct:g} % salt after {t / 60.0:.0f} min ({t / 3600.0:.1f} h)")
    print("\n" + CAUTION)
    return EXIT_OK


# --- variability --------------------------------------------------------------------------------------------
def cmd_variability(args) -> int:
    from procplan.studies.variability import monte_carlo, parse_distribution

    check_options(args, samples={"minimum": 1, "maximum": 1e6}, workers=_WORKERS)
    lib = load_library_of(args)
    csv = _csv_target(args, [args.plan])
    xlsx = _xlsx_target(args, [args.plan])
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
        if hasattr(ex, "shutdown"):
            ex.shutdown()
    if args.csv:
        write_output(csv, res.samples.to_csv(index=False), force=args.force)
    _write_xlsx(args, xlsx, lambda: _xlsx_module().variability_workbook(res))
    if args.json:
        _dump({**res.to_dict(), "caution": CAUTION})
        return EXIT_OK
    with contextlib.redirect_stdout(info_stream(args.csv, getattr(args, "xlsx", None))):
        _print_variability(res)
        _written(args, "samples", sys.stdout)
    return EXIT_OK


def _print_variability(res) -> None:
    """The Monte Carlo summary as readable lines."""
    print(f"{res.n_samples} samples (seed {res.seed}, {res.method} path, {res.seconds:.2f} s)")
    for key, label, unit in (
        ("time_to_target_min", "time to target", " min"),
        ("lethality_F_min", "lethality F (low tail)", " min"),
        ("salt_core_percent", "core salt at the end of brining (low tail)", " %"),
        ("salt_mean_percent", "mean salt at the end of brining (low tail)", " %"),
        ("salt_time_min", "time to the salt stop or core target", " min"),
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
        key, what = "time_to_target_min", "time to target"
        if not w["metrics"].get("target_step") and "salt_time_min" in w["metrics"]:
            key, what = "salt_time_min", "time to the salt"
        print(f"  worst corner ({inputs}): {what} {_fmt(w['metrics'].get(key))}")
    for n in res.notes:
        print(f"  note: {n}")


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

    check_options(
        args,
        rows={"minimum": 1, "maximum": 10_000},
        jump_K={"minimum": 0.0, "min_inclusive": False, "unit": "K"},
        time_offset_s={"unit": "s"},
        start_C={"minimum": T_LO, "maximum": T_HI, "unit": "°C"},
    )
    if args.preview:
        return _calibrate_preview(args)
    if not args.plan:
        raise InvalidInputError("--plan", None, "a plan file for the recorded process (or --preview)")
    lib = load_library_of(args)
    csv = _csv_target(args, [args.plan, args.logfile])
    xlsx = _xlsx_target(args, [args.plan, args.logfile])
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
        write_output(csv, cal.residuals.to_csv(index=False), force=args.force)
    _write_xlsx(args, xlsx, lambda: _xlsx_module().calibration_workbook(cal))
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
    with contextlib.redirect_stdout(info_stream(args.csv, getattr(args, "xlsx", None))):
        _print_calibration(plan, cal, log, out)
        if args.csv and args.csv != "-":
            print(f"curves written to {args.csv}")
        if args.xlsx and args.xlsx != "-":
            print(f"workbook written to {args.xlsx}")
    return EXIT_OK


# --- sweep -------------------------------------------------------------------------------------------------------
def _names(text: str | None):
    return None if not text else [s.strip() for s in text.split(",") if s.strip()]


def cmd_sweep(args) -> int:
    from procplan.studies.sweep import sweep_catalogue

    check_options(args, workers=_WORKERS, n_nodes={"minimum": 3, "maximum": 2000}, every={"minimum": 1})
    lib = load_library_of(args)
    csv = _csv_target(args, [])
    xlsx = _xlsx_target(args, [])
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
            pieces=args.pieces,
        )
    finally:
        if hasattr(ex, "shutdown"):
            ex.shutdown()
    tab = res.table
    if args.csv:
        write_output(csv, res.table.to_csv(index=False), force=args.force)
    _write_xlsx(args, xlsx, lambda: _xlsx_module().sweep_workbook(res.table, res.skipped))
    if args.json:
        _dump({"table": tab.to_dict("records"), "skipped": list(res.skipped), "caution": CAUTION})
        return EXIT_OK
    with contextlib.redirect_stdout(info_stream(args.csv, getattr(args, "xlsx", None))):
        _print_sweep(res)
        _written(args, "table", sys.stdout)
    return EXIT_OK


def _print_sweep(res) -> None:
    """The sweep's table as readable lines."""
    from procplan.studies.sweep import row_mass_text

    tab = res.table
    print(f"{len(tab)} product × machine pairs")
    for _, r in tab.iterrows():
        if r["error"]:
            print(f"  {r['product']:<24} {r['equipment']:<16} invalid: {r['error']}")
            continue
        rule = "" if r["rule_passed"] is None else (" rule PASS" if r["rule_passed"] else " rule FAIL")
        short = r.get("capacity_shortfall_kW")
        short = (
            f"; plant short by {short:.1f} kW" if short is not None and short == short and short > 0 else ""
        )
        print(
            f"  {r['product']:<24} {r['equipment']:<16} {r['process']:<8} {r['start_C']:g}→{r['target_C']:g} °C: "
            f"{_fmt(r['time_to_target_min'])} (plan {_fmt(r['plan_time_min'])}){rule}{short}{row_mass_text(r)}"
        )
    if res.skipped:
        print("  skipped machines: " + ", ".join(res.skipped))
