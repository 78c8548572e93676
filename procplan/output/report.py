"""A PlanResult as plain data (JSON) and as readable text, for the CLI, the app and the sheet."""

from __future__ import annotations

from typing import Any

from procplan._version import __version__
from procplan.caution import CAUTION
from procplan.model import depth_column, depth_label
from procplan.outcomes import DEFAULT_MAX_LOG_REDUCTION, INDICATIVE
from procplan.outcomes.energy import PEAK_DUTY_LABEL
from procplan.outcomes.rules import limit_text
from procplan.output.brine_report import brine_dict, brine_lines
from procplan.output.json_safe import json_safe
from procplan.output.second_report import second_product_dict, second_product_lines, second_step_dict
from procplan.output.text_units import _fmt_min, _minutes, _temp, _time
from procplan.properties.boiling import BOILING_C
from procplan.run.drip import CAUTION as DRIP_CAUTION
from procplan.run.drip import cook_loss_text, run_bracket, yield_text


def _plain(obj: Any) -> Any:
    """JSON-ready copy for the summary: records referred to by a breakdown and long arrays left out."""
    return json_safe(obj, omit_key_suffix="_record", omit_arrays_over=8)


def summary_dict(result) -> dict[str, Any]:
    """Provenance and outcomes of a run as plain data."""
    plan = result.plan
    hist = result.history
    out: dict[str, Any] = {
        "title": plan.title,
        "product": plan.product.name,
        "geometry": plan.product.geometry.describe(),
        "piece_mass_kg": result.piece_mass_kg,
        "start_temperature_C": plan.start_temperature_C,
        "end": {k: float(hist[k].iloc[-1]) for k in ("time_s", "core_C", "surface_C", "mean_C")},
        "properties_source": result.properties.source,
        "initial_freezing_C": result.properties.initial_freezing_C,
        "steps": [],
        "warnings": list(result.warnings),
        "unreliable_reasons": list(getattr(result, "unreliable_reasons", ())),
        "procplan_version": __version__,
        "caution": CAUTION,
        "load": {"model": plan.load.model, "pieces": plan.pieces},
    }
    second = second_product_dict(result)
    if second is not None:
        out["load"]["second_product"] = second
    out["depths"] = [
        {
            "depth_mm": round(d * 1000.0, 6),
            "label": depth_label(d),
            "end_C": float(hist[depth_column(d)].iloc[-1]),
        }
        for d in plan.probe_depths_m
    ]
    for sr in result.steps:
        out["steps"].append(
            {
                "name": sr.name,
                "start_min": _minutes(sr.start_s),
                "end_min": _minutes(sr.end_s),
                "solver": sr.solver,
                "reason": sr.reason,
                "regime": _plain(sr.regime),
                "medium_C": list(sr.surface.medium_C),
                "h_W_m2K": list(sr.surface.h_W_m2K),
                "surface": _plain(sr.surface.breakdown.to_dict()),
                "stopped": sr.stopped,
                "stop_time_min": _minutes(sr.stop_time_s),
                "energy_balance_error": sr.energy_balance_error,
                "details": {k: v for k, v in _plain(sr.details).items() if v is not None},
                "warnings": list(sr.warnings),
                "unreliable_reason": getattr(sr, "unreliable_reason", None),
                "machine_load": _machine_load_dict(sr),
            }
        )
        if getattr(sr, "drying", None) is not None:
            out["steps"][-1]["drying"] = _plain(sr.drying)
            out["steps"][-1]["weight_loss_stop"] = weight_stop_dict(sr)
        if getattr(sr, "drip", None) is not None:
            out["steps"][-1]["drip"] = _plain(sr.drip)
        if getattr(sr, "mass", None) is not None:
            out["steps"][-1]["brine"] = brine_dict(sr.mass)
    if result.outcomes is not None:
        out["outcomes"] = _plain(result.outcomes)
    if getattr(result, "packing", None) is not None:
        out["packing"] = packing_dict(result.packing)
    return out


def packing_dict(packed) -> dict[str, Any]:
    """A packed load (``PlanResult.packing``) as plain data: what the load is, and its positions beside the
    single free piece (times in minutes to the plan's first stop temperature or target)."""
    load = packed.load
    return {
        "load": {k: v for k, v in _plain(load).items() if k not in ("warnings", "geometry")}
        | {"geometry": load.geometry.describe(), "pieces": load.pieces},
        "target_C": packed.target_C,
        "positions": [
            {"name": p.name, "end_C": p.end_C, "time_to_target_min": _minutes(p.time_to_target_s)}
            for p in packed.positions
        ],
        "single_piece_mass_kg": packed.single.piece_mass_kg,
    }


def _machine_load_dict(sr) -> dict[str, Any] | None:
    """How the machine carried the batch (loaded step), or the note of an empty-machine run, or None."""
    ml = getattr(sr, "machine_load", None)
    if ml is not None:
        plain = {k: v for k, v in _plain(ml).items() if k != "second"}
        return {
            **plain,
            "held": ml.held,
            "summary": ml.describe(),
            "second_product": second_step_dict(ml.second),
        }
    note = getattr(sr, "load_note", None)
    return None if note is None else {"empty_machine": True, "summary": note}


def history_dict(result) -> dict[str, list]:
    """History columns as lists (``time_s``, ``core_C``, ``surface_C``, ``mean_C``, ``heat_flow_W``, ``step``)."""
    return {c: _plain(result.history[c].to_numpy()) for c in result.history.columns}


def format_log_reduction(lr: float, max_log: float | None = None) -> str:
    """A log reduction as shown everywhere: beyond the preset's validated maximum it reads "> N".

    ``max_log`` is the largest log reduction the preset's source supports (the table's own value for a
    tabulated preset, 12 for a botulinum cook); a number beyond it is an extrapolation of the kinetics with no
    meaning for planning. Without a maximum, :data:`procplan.outcomes.DEFAULT_MAX_LOG_REDUCTION` applies.

    >>> format_log_reduction(15502.3, 6.0), format_log_reduction(5.94, 6.0)
    ('> 6', '5.9')
    """
    cap = DEFAULT_MAX_LOG_REDUCTION if max_log is None else max_log
    return f"> {cap:g}" if lr > cap else f"{lr:.1f}"


def log_reduction_text(leth) -> str:
    """The log reduction of a lethality outcome, capped at its preset's maximum ("—" when none)."""
    if leth.log_reduction is None:
        return "—"
    return format_log_reduction(leth.log_reduction, leth.max_log_reduction)


def lethality_basis_text(leth) -> str:
    """T_ref and z of a lethality outcome, or that it follows a published table."""
    if leth.z_C is None:
        return f"tabulated, equivalent min at {leth.reference_C:.4g} °C"
    return f"T_ref {leth.reference_C:g} °C, z {leth.z_C:g} °C"


def indicative_text(leth) -> str:
    """'' for a confirmed preset, else the indicative marker to append wherever the check shows."""
    return "" if getattr(leth, "confirmed", True) else f" [{INDICATIVE}]"


def format_f(f_min: float) -> str:
    """F-values beyond 10 000 min are shown as such: the number itself says only 'far beyond any target'.

    >>> format_f(3531.7), format_f(2.345), format_f(25000.0)
    ('3532', '2.35', '> 10 000')
    """
    if f_min > 1e4:
        return "> 10 000"
    return f"{f_min:.0f}" if f_min >= 100.0 else f"{f_min:.3g}"


def summary_text(result, site=None) -> str:
    """A readable summary for the terminal; ``site`` (SiteSettings, optional) sets the display units of
    temperatures, process times and rule limits (default °C and minutes)."""
    plan = result.plan
    packed = getattr(result, "packing", None)
    lines = [
        f"{plan.title}",
        f"  product: {plan.product.name}, {plan.product.geometry.describe()}, {result.piece_mass_kg:.3f} kg per "
        + ("piece" if packed is None else "load"),
    ]
    if packed is not None:
        from procplan.run.packing import packed_lines

        lines += packed_lines(packed)
    for reason in getattr(result, "unreliable_reasons", ()):
        lines.append(f"  UNRELIABLE: {reason}")
    lines.append(f"  properties: {result.properties.source}")
    lines.append(f"  start {_temp(site, plan.start_temperature_C)}")
    lines += _step_lines(result, site)
    lines += second_product_lines(result, site)
    oc = result.outcomes
    if oc is not None:
        lines += _target_lines(oc, site) + _rule_lines(oc, site) + _cold_thaw_lines(oc, site)
        for part in (_lethality_lines, _freezing_lines):
            lines += part(oc)
        lines += _energy_lines(oc, batch_label(result))
    for w in result.warnings:
        lines.append(f"  warning: {w}")
    lines.append("")
    lines.append(CAUTION)
    return "\n".join(lines)


def _step_lines(result, site=None) -> list[str]:
    """Medium, h, solver, regime and end temperatures of each step."""
    lines: list[str] = []
    hist = result.history
    for sr in result.steps:
        med = "…".join(_temp(site, m) for m in sorted(set(sr.surface.fluid_temperature_C)))
        hh = "…".join(f"{h:.1f}" for h in sorted(set(sr.surface.h_W_m2K)))
        lines.append(
            f"  step {sr.index + 1} '{sr.name}': medium {med}, h {hh} W/m²K, {_time(site, sr.duration_s / 60)}"
        )
        if sr.surface.radiates_to_other_walls:
            lines.append(f"    {sr.surface.breakdown.sink_note}")
        lines.append(f"    solver: {sr.solver} — {sr.reason}")
        lines.append(f"    regime: {sr.regime.reason}")
        seg = hist[hist["step_index"] == sr.index]
        if len(seg):
            e = seg.iloc[-1]
            lines.append(
                f"    end: core {_temp(site, e.core_C, 1)}, surface {_temp(site, e.surface_C, 1)}, mean {_temp(site, e.mean_C, 1)}; energy-balance error {sr.energy_balance_error:.2%}"
            )
        if getattr(sr, "drying", None) is not None:
            lines.append(_drying_line(sr.drying, site))
            lines += [w for w in [_weight_stop_line(sr, site)] if w]
        if getattr(sr, "drip", None) is not None and sr.drip.drainable_juice_percent >= 0.05:
            said = any(
                "drip basis" in line for line in lines
            )  # the basis once, with the first step that drips
            lines += [drip_line(sr.drip)] + ([] if said else [f"    drip basis: {sr.drip.basis}"])
        if getattr(sr, "mass", None) is not None:
            lines += brine_lines(sr.mass)
        ml = _machine_load_dict(sr)
        if ml is not None:
            lines.append(f"    machine: {ml['summary']}")
    return lines


def weight_stop_dict(sr) -> dict[str, Any] | None:
    """A drying step's weight-loss stop as plain data (None without one): the loss asked and reached [%], the
    time to it from the step's start and on the plan's clock [min] (None: not reached), the yield [%] and the
    weighing checkpoints."""
    d = sr.drying
    if d is None or d.stop_weight_loss_percent is None:
        return None
    return {
        "target_percent": d.stop_weight_loss_percent,
        "reached": d.weight_stop_s is not None,
        "weight_loss_percent": d.weight_loss_percent,
        "yield_percent": d.yield_percent,
        "time_in_step_min": _minutes(d.weight_stop_s),
        "time_min": None if d.weight_stop_s is None else _minutes(sr.start_s + d.weight_stop_s),
        "checkpoints": [
            {"time_min": _minutes(sr.start_s + t), "weight_loss_percent": pct}
            for t, pct in d.weight_checkpoints
        ],
    }


def _weight_stop_line(sr, site=None) -> str | None:
    ws = weight_stop_dict(sr)
    if ws is None:
        return None
    if not ws["reached"]:
        return (
            f"    weight-loss stop {ws['target_percent']:g} %: not reached in the step (loss "
            f"{ws['weight_loss_percent']:.1f} %, yield {ws['yield_percent']:.1f} %)"
        )
    return (
        f"    weight-loss stop {ws['target_percent']:g} %: reached after {_time(site, ws['time_in_step_min'])} in the "
        f"step (plan time {_time(site, ws['time_min'])}); yield {ws['yield_percent']:.1f} % of the piece's mass"
    )


def drip_line(dr) -> str:
    """The bracket of a meat product's cook loss in a step: evaporation alone and with all its drainable juice."""
    return (
        f"    {cook_loss_text(dr.evaporative_loss_percent, dr.cook_loss_upper_percent)}: "
        f"{dr.drainable_juice_kg * 1000:.0f} g of juice (the meat can no longer hold {dr.expelled_share_percent:.0f} % "
        f"of its raw water); {yield_text(dr.yield_lower_percent, dr.yield_percent)} of the step's starting mass"
    )


def _drying_line(d, site=None) -> str:
    """The moisture of a step in hot dry air: wet period, crust, loss."""
    wet = (
        "the surface stays wet to the end"
        if d.wet_until_s is None
        else f"the surface stays wet for {_time(site, d.wet_until_s / 60)}, then dries into a crust"
    )
    return (
        f"    moisture: wet bulb of the air {_temp(site, d.wet_bulb_C, 1)}; {wet} (surface moisture "
        f"{d.surface_moisture_kg_kg:.2f} kg water/kg dry matter at the end, from {d.initial_moisture_kg_kg:.2f}); "
        f"evaporative loss {d.weight_loss_kg * 1000:.0f} g ({d.weight_loss_percent:.1f} %){_boiled_text(d, site)}; "
        f"{d.passes} coupling passes, mass balance {d.mass_balance_error:.2%}"
    )


def _boiled_text(d, site=None) -> str:
    """Where water boiled off under the crust: the two counts whose larger is the loss."""
    if d.boiled_kg <= 0.0:
        return ""
    return (
        f", the larger of the surface evaporation {d.surface_evaporated_kg * 1000:.0f} g and the water boiled off "
        f"under the crust past {_temp(site, BOILING_C, 0)} {d.boiled_kg * 1000:.0f} g (the inside stays at or below the "
        "boiling point while it holds water)"
    )


def _target_lines(oc, site=None) -> list[str]:
    """When each target is reached, with plan time and cycle."""
    lines: list[str] = []
    for tg in oc.targets:
        tr = tg.target
        if tr.reached:
            t_rel = (tr.time_s - (tr.start_s or 0.0)) / 60.0
            line = f"  {tg.step}: {tg.label or tg.point} reaches {_temp(site, tr.target_C)} after {_time(site, t_rel)}"
            if tg.margin is not None:
                line += f"; plan time with margin {_time(site, tg.margin.plan_min)}; cycle {_time(site, tg.margin.cycle_min)}"
                if tg.margin.cycle_too_short:
                    line += "  ** CYCLE SHORTER THAN PLAN TIME **"
        else:
            line = f"  {tg.step}: {tg.label or tg.point} does NOT reach {_temp(site, tr.target_C)} within the step (closest {_temp(site, tr.closest_C, 1)})"
        lines.append(line)
    return lines


def _rule_lines(oc, site=None) -> list[str]:
    """The cooling rule's verdict, stage by stage and band by band, limits as the rule's source publishes them."""
    lines: list[str] = []
    rc = oc.rule_check
    unit = site.temperature_unit if site is not None else "C"
    if rc is not None:
        lines.append(f"  rule {rc.rule_name}: {'PASS' if rc.passed else 'FAIL'} ({rc.source})")
        for st in rc.stages:
            lines.append(
                f"    stage {st.index + 1} {limit_text(st.stage, unit)} within {_time(site, st.stage.within_min)}: {'pass' if st.passed else 'FAIL'}; used {_time(site, st.used_min)}, margin {_time(site, st.margin_min)}"
                + (f" ({st.margin_percent:.0f} %)" if st.margin_percent is not None else "")
                + ("" if st.passed else f" — {st.reason}")
            )
        for b in rc.bands:
            lines.append(f"    band {b.band.range_text(unit)}: {'pass' if b.passed else 'FAIL'} — {b.reason}")
        if rc.budget is not None:
            lines += budget_lines(rc.budget, site)
    return lines


def budget_lines(bc, site=None) -> list[str]:
    """A stability budget's verdict, what this plan used and what is left, excursion by excursion."""
    b = bc.budget
    hi, lo = _temp(site, b.high_C), _temp(site, b.low_C)
    lines = [
        f"    stability budget: {'pass' if bc.passed else 'FAIL'} — {bc.above_s / 3600:.2f} h above {hi} and "
        f"{bc.below_s / 3600:.2f} h below {lo} in this plan; left {bc.remaining_above_h:.2f} h of "
        f"{b.allowance_above_h:g} h above, {bc.remaining_below_h:.2f} h of {b.allowance_below_h:g} h below"
    ]
    for i, ex in enumerate(bc.excursions):
        left = ex.remaining_above_h if ex.side == "above" else ex.remaining_below_h
        lines.append(
            f"      excursion {i + 1} {ex.side} {hi if ex.side == 'above' else lo}: "
            f"{_time(site, ex.start_s / 60)} to {_time(site, ex.end_s / 60)}"
            f"{' (still outside at the end)' if ex.ongoing else ''}, peak {_temp(site, ex.peak_C, 1)}; "
            f"{left:.2f} h left after it"
        )
    return lines


def _cold_thaw_lines(oc, site=None) -> list[str]:
    """The mean kinetic temperature asked for, and the thawing time beside Plank's estimate."""
    lines: list[str] = []
    mk = getattr(oc, "mean_kinetic", None)
    if mk is not None:
        verdict = (
            "" if mk.passed is None else f", limit {_temp(site, mk.max_C)}: {'PASS' if mk.passed else 'FAIL'}"
        )
        lines.append(
            f"  mean kinetic temperature ({mk.point}): {_temp(site, mk.mean_kinetic_C, 2)} over "
            f"{_time(site, mk.duration_s / 60)}{verdict} — {mk.basis}"
        )
    th = getattr(oc, "thawing", None)
    if th is not None:
        what = "thawed" if th.thawed else "tempered"
        tr = th.from_history
        got = (
            f"core reaches {_temp(site, th.target_C)} ({what}) after {_time(site, (tr.time_s - tr.start_s) / 60)}"
            if tr.reached
            else f"core does NOT reach {_temp(site, th.target_C)} (closest {_temp(site, tr.closest_C, 1)})"
        )
        plank = "—" if th.plank_s is None else _time(site, th.plank_s / 60)
        lines.append(f"  thawing '{th.step}': {got}; Plank's thawing time (complete thawing) {plank}")
    return lines


def _lethality_lines(oc) -> list[str]:
    """Accumulated F (lethality and quality) against the requirement."""
    lines: list[str] = []
    for leth in (oc.lethality, oc.quality):
        if leth is None:
            continue
        line = f"  lethality {leth.name}{indicative_text(leth)} at the {leth.point}: F = {format_f(leth.total_F_min)} min ({lethality_basis_text(leth)})"
        if leth.required_F_min:
            line += f", required {leth.required_F_min:g} min: {'PASS' if leth.passed else 'FAIL'}"
            if leth.reached is not None and leth.reached.reached:
                line += f", reached after {_fmt_min(leth.reached.time_s / 60)}"
        if leth.process_fraction is not None:
            line += f", {leth.process_fraction:.3g} of the required process"
        if leth.log_reduction is not None:
            line += f"; {log_reduction_text(leth)} log reduction"
        lines.append(line)
    return lines


def _freezing_lines(oc) -> list[str]:
    """Freezing onset and end from the history, with Plank's and Pham's times."""
    lines: list[str] = []
    fz = oc.freezing
    if fz is not None:
        fh = fz.from_history
        onset = _fmt_min(fh.onset.time_s / 60) if fh.onset.reached else "not reached"
        end = _fmt_min(fh.end.time_s / 60) if fh.end.reached else "not reached"
        lines.append(
            f"  freezing: onset (core {fz.initial_freezing_C:.1f} °C) {onset}; core at {fh.end.target_C:g} °C {end}"
        )
        lines.append(
            f"    Plank {_fmt_min(fz.plank_s / 60 if fz.plank_s else None)}; Pham {_fmt_min(fz.pham.time_s / 60 if fz.pham else None)} ({fz.basis})"
        )
    return lines


def format_cost(cost: float | None, price) -> str:
    """A cost with its currency as every output shows it ("—" without a price).

    >>> from types import SimpleNamespace
    >>> format_cost(1.5432, SimpleNamespace(currency="GBP")), format_cost(None, None)
    ('1.54 GBP', '—')
    """
    if cost is None or price is None:
        return "—"
    return f"{cost:.2f} {price.currency}".strip()


def price_text(price) -> str:
    """The electricity price and where it comes from, or that there is none."""
    if price is None:
        return "no electricity price in the plan or the site settings: no cost"
    return f"price {price.price_per_kWh:g} {price.currency}/kWh ({price.source})".replace(" /kWh", "/kWh")


def batch_label(result) -> str:
    """What one batch is, in words: "60 pieces", or for a packed load "25 cases (5000 pieces)"."""
    n = result.outcomes.energy.pieces
    packed = getattr(result, "packing", None)
    if packed is None:
        return f"{n:g} piece{'' if n == 1 else 's'}"
    load = packed.load
    return f"{n:g} {load.arrangement}{'' if n == 1 else 's'} ({n * load.pieces:g} pieces)"


def _energy_lines(oc, batch: str) -> list[str]:
    """Weight loss, the batch's energy (removed and added, gross) and each step's refrigeration duty."""
    lines: list[str] = []
    for step_name, pct in oc.weight_loss_percent:
        lines.append(f"  {step_name}: weight loss by evaporation {pct:.2f} % of the piece's mass")
    bracket = run_bracket(oc)
    if bracket is not None:
        lo, hi, y_lo, y_hi = bracket
        lines += [
            f"  {cook_loss_text(lo, hi)}; {yield_text(y_lo, y_hi)} of the starting mass (fat running out is not "
            "modelled)",
            f"  {DRIP_CAUTION}",
        ]
    elif oc.yield_percent is not None:
        lines.append(
            f"  yield: {oc.yield_percent:.1f} % of the starting mass (evaporation only: drip and fat running out are "
            "not modelled)"
        )
    en = oc.energy
    lines.append(
        f"  energy (batch of {batch}): heat removed {en.heat_removed_J_per_batch / 3.6e6:.2f} kWh, heat added "
        f"{en.heat_added_J_per_batch / 3.6e6:.2f} kWh; {PEAK_DUTY_LABEL} {en.peak_duty_kW_per_batch:.1f} kW; "
        f"cost {format_cost(oc.cost_per_batch, oc.price)} ({price_text(oc.price)}); "
        f"balance against the enthalpy change {oc.energy_balance:.2%}"
    )
    for se in oc.refrigeration:
        line = (
            f"    {se.step}: heat removed {se.heat_removed_J_per_batch / 3.6e6:.2f} kWh, heat added "
            f"{se.heat_added_J_per_batch / 3.6e6:.2f} kWh, {PEAK_DUTY_LABEL} {se.peak_duty_kW:.1f} kW, "
            f"mean {se.mean_duty_kW:.1f} kW"
        )
        if se.refrigeration is not None:
            r = se.refrigeration
            line += f"; COP {r.cop:.2f} (Carnot {r.cop_carnot:.2f}), electricity {r.electricity_kWh:.2f} kWh, cost {format_cost(r.cost, oc.price)} — {se.basis}"
        lines.append(line)
    return lines
