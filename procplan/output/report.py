"""A PlanResult as plain data (JSON) and as readable text, for the CLI, the app and the sheet."""

from __future__ import annotations

from procplan.caution import CAUTION
from procplan.run.summary import plain as _plain
from procplan.run.summary import summary_dict

__all__ = ["summary_dict", "history_dict", "summary_text", "format_f", "format_log_reduction"]


def history_dict(result) -> dict[str, list]:
    """History columns as lists (``time_s``, ``core_C``, ``surface_C``, ``mean_C``, ``heat_flow_W``, ``step``)."""
    return {c: _plain(result.history[c].to_numpy()) for c in result.history.columns}


def format_log_reduction(lr: float) -> str:
    """Log reductions beyond 12 carry no meaning for planning (a 12D process is the usual ceiling)."""
    return "> 12" if lr > 12 else f"{lr:.1f}"


def format_f(f_min: float) -> str:
    """F-values beyond 10 000 min are shown as such: the number itself says only 'far beyond any target'."""
    return "> 10 000" if f_min > 1e4 else f"{f_min:.3g}"


def _fmt_min(t_min: float | None) -> str:
    if t_min is None:
        return "—"
    if t_min >= 120:
        return f"{t_min:.0f} min ({t_min / 60:.1f} h)"
    return f"{t_min:.1f} min"


def summary_text(result) -> str:
    """A readable summary for the terminal."""
    plan = result.plan
    hist = result.history
    lines = [
        f"{plan.title}",
        f"  product: {plan.product.name}, {plan.product.geometry.describe()}, {result.piece_mass_kg:.3f} kg per piece",
    ]
    lines.append(f"  properties: {result.properties.source}")
    lines.append(f"  start {plan.start_temperature_C:g} °C")
    for sr in result.steps:
        med = "…".join(f"{m:g}" for m in sorted(set(sr.surface.medium_C)))
        hh = "…".join(f"{h:.1f}" for h in sorted(set(sr.surface.h_W_m2K)))
        lines.append(
            f"  step {sr.index + 1} '{sr.name}': medium {med} °C, h {hh} W/m²K, {_fmt_min(sr.duration_s / 60)}"
        )
        lines.append(f"    solver: {sr.solver} — {sr.reason}")
        lines.append(f"    regime: {sr.regime.reason}")
        seg = hist[hist["step_index"] == sr.index]
        if len(seg):
            e = seg.iloc[-1]
            lines.append(
                f"    end: core {e.core_C:.1f} °C, surface {e.surface_C:.1f} °C, mean {e.mean_C:.1f} °C; energy-balance error {sr.energy_balance_error:.2%}"
            )
    oc = result.outcomes
    if oc is not None:
        for tg in oc.targets:
            tr = tg.target
            if tr.reached:
                t_rel = (tr.time_s - (tr.start_s or 0.0)) / 60.0
                line = f"  {tg.step}: {tg.point} reaches {tr.target_C:g} °C after {_fmt_min(t_rel)}"
                if tg.margin is not None:
                    line += f"; plan time with margin {_fmt_min(tg.margin.plan_min)}; cycle {_fmt_min(tg.margin.cycle_min)}"
                    if tg.margin.cycle_too_short:
                        line += "  ** CYCLE SHORTER THAN PLAN TIME **"
            else:
                line = f"  {tg.step}: {tg.point} does NOT reach {tr.target_C:g} °C within the step (closest {tr.closest_C:.1f} °C)"
            lines.append(line)
        rc = oc.rule_check
        if rc is not None:
            lines.append(f"  rule {rc.rule_name}: {'PASS' if rc.passed else 'FAIL'} ({rc.source})")
            for st in rc.stages:
                lines.append(
                    f"    stage {st.index + 1} {st.stage.from_C if st.stage.from_C is not None else 'start'} → {st.stage.to_C:g} °C within {st.stage.within_min:g} min: {'pass' if st.passed else 'FAIL'}; used {_fmt_min(st.used_min)}, margin {_fmt_min(st.margin_min)}"
                    + (f" ({st.margin_percent:.0f} %)" if st.margin_percent is not None else "")
                    + ("" if st.passed else f" — {st.reason}")
                )
            for b in rc.bands:
                lines.append(f"    band {b.band.range_text()}: {'pass' if b.passed else 'FAIL'} — {b.reason}")
        for leth in (oc.lethality, oc.quality):
            if leth is None:
                continue
            line = f"  lethality {leth.name} at the {leth.point}: F = {format_f(leth.total_F_min)} min (T_ref {leth.reference_C:g} °C, z {leth.z_C:g} °C)"
            if leth.required_F_min:
                line += f", required {leth.required_F_min:g} min: {'PASS' if leth.passed else 'FAIL'}"
                if leth.reached is not None and leth.reached.reached:
                    line += f", reached after {_fmt_min(leth.reached.time_s / 60)}"
            if leth.log_reduction is not None:
                line += f"; {format_log_reduction(leth.log_reduction)} log reduction"
            lines.append(line)
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
        for step_name, pct in oc.weight_loss_percent:
            lines.append(f"  {step_name}: weight loss by surface evaporation {pct:.2f} % of the piece's mass")
        en = oc.energy
        lines.append(
            f"  energy (batch of {en.pieces:g}): net {en.heat_removed_J_per_batch / 3.6e6:.2f} kWh removed; balance against the enthalpy change {oc.energy_balance:.2%}"
        )
        for se in oc.refrigeration:
            kwh = se.heat_removed_J_per_batch / 3.6e6
            verb = "removed" if kwh >= 0 else "added"
            line = f"    {se.step}: {abs(kwh):.2f} kWh {verb}, peak {se.peak_duty_kW:.1f} kW, mean {se.mean_duty_kW:.1f} kW"
            if se.refrigeration is not None:
                r = se.refrigeration
                cost = f", cost {r.cost:.2f}" if r.cost is not None else ""
                line += f"; COP {r.cop:.2f} (Carnot {r.cop_carnot:.2f}), electricity {r.electricity_kWh:.2f} kWh{cost} — {se.basis}"
            lines.append(line)
    for w in result.warnings:
        lines.append(f"  warning: {w}")
    lines.append("")
    lines.append(CAUTION)
    return "\n".join(lines)
