"""The outcome sections of the batch-plan sheet: rule compliance, lethality, freezing, energy, provenance and
the box for measured values and signatures. Each returns a list of platypus flowables.
"""

from __future__ import annotations

from procplan._version import __version__
from procplan.outcomes.energy import PEAK_DUTY_LABEL
from procplan.output.report import format_cost, format_f, indicative_text, log_reduction_text, price_text
from procplan.output.sheet_layout import (
    cols,
    esc,
    fixed,
    table,
)
from procplan.output.sheet_sections import (
    difference_text,
)


def rules_section(result, site, st, W):
    oc = result.outcomes
    out = [*st.h("Rule compliance")]
    rc = oc.rule_check if oc is not None else None
    if rc is None:
        default = ", ".join(site.default_rules) or "none"
        out.append(st.p(f"No cooling or storage rule in this plan (site default rules: {default})."))
        return out + _mean_kinetic(oc, site, st)
    out.append(
        st.p(f"<b>{esc(rc.rule_name)}: {'PASS' if rc.passed else 'FAIL'}</b> — {esc(rc.source)}", raw=True)
    )
    if rc.stages:
        rows = [["Stage", "Limit", "Used", "Allowed", "Margin", "Margin %", "Result"]]
        for s in rc.stages:
            lim = f"{site.format_limit(s.stage)} within {site.format_time_hm(s.stage.within_min)}" + (
                " (from the rule's start)" if s.stage.clock == "rule" else ""
            )
            rows.append(
                [
                    str(s.index + 1),
                    lim,
                    site.format_time_hm(s.used_min),
                    site.format_time_hm(s.allowed_min),
                    site.format_time_hm(s.margin_min),
                    f"{s.margin_percent:.0f} %" if s.margin_percent is not None else "—",
                    "pass" if s.passed else f"FAIL: {s.reason}",
                ]
            )
        out.append(table(rows, cols(W, [0.06, 0.32, 0.1, 0.1, 0.1, 0.08, 0.24]), st))
    if rc.bands:
        rows = [["Band", "Inside", "Outside", "Longest excursion", "Margin", "Result"]]
        for b in rc.bands:
            rows.append(
                [
                    b.band.label(site.temperature_unit),
                    site.format_time_hm(b.inside_min),
                    site.format_time_hm(b.outside_min),
                    site.format_time_hm(b.longest_outside_min),
                    site.format_time_hm(b.margin_min),
                    "pass" if b.passed else f"FAIL: {b.reason}",
                ]
            )
        out.append(table(rows, cols(W, [0.16, 0.11, 0.11, 0.13, 0.11, 0.38]), st))
    if rc.budget is not None:
        out.append(_budget_table(rc.budget, site, st, W))
    return out + _mean_kinetic(oc, site, st)


def _budget_table(bc, site, st, W):
    """The stability budget: used in this plan and left, in total and after each excursion."""
    b = bc.budget
    hi, lo = site.format_temperature(b.high_C), site.format_temperature(b.low_C)
    rows = [["Stability budget", "Start", "End", "Peak", "Left after it", "Result"]]
    for ex in bc.excursions:
        left = ex.remaining_above_h if ex.side == "above" else ex.remaining_below_h
        rows.append(
            [
                f"{ex.side} {hi if ex.side == 'above' else lo}" + (" (still outside)" if ex.ongoing else ""),
                site.format_time_hm(ex.start_s / 60.0),
                site.format_time_hm(ex.end_s / 60.0),
                site.format_temperature(ex.peak_C),
                f"{left:.2f} h",
                "within budget" if left >= 0 else "budget used up",
            ]
        )
    rows.append(
        [
            f"total: {bc.above_s / 3600:.2f} h above {hi}, {bc.below_s / 3600:.2f} h below {lo}",
            "",
            "",
            "",
            f"{bc.remaining_above_h:.2f} h of {b.allowance_above_h:g} h above; "
            f"{bc.remaining_below_h:.2f} h of {b.allowance_below_h:g} h below",
            "PASS" if bc.passed else f"FAIL: {bc.reason}",
        ]
    )
    return table(rows, cols(W, [0.3, 0.1, 0.1, 0.1, 0.22, 0.18]), st)


def _mean_kinetic(oc, site, st):
    """The mean kinetic temperature the plan asks for, with its limit and basis."""
    mk = oc.mean_kinetic if oc is not None else None
    if mk is None:
        return []
    verdict = (
        ""
        if mk.passed is None
        else f"; limit {site.format_temperature(mk.max_C)}: {'PASS' if mk.passed else 'FAIL'}"
    )
    text = (
        f"Mean kinetic temperature ({mk.point}): {site.format_temperature(mk.mean_kinetic_C, 2)} over "
        f"{site.format_time_hm(mk.duration_s / 60.0)}{verdict}. {mk.basis}."
    )
    return [st.p(text)]


def lethality_section(result, site, st, W):
    oc = result.outcomes
    out = [*st.h("Lethality")]
    items = (
        [x for x in ((oc.lethality, "requirement"), (oc.quality, "cook value")) if x[0] is not None]
        if oc
        else []
    )
    if not items:
        out.append(st.p("No lethality requirement in this plan, and the surface stays below 60 °C."))
        return out
    rows = [["Check", "Point", "T_ref, z", "F", "Required", "Result", "Reached at", "Log reduction"]]
    for leth, role in items:
        if leth.required_F_min:
            res = "PASS" if leth.passed else "FAIL"
            req = f"{leth.required_F_min:g} min"
            if leth.process_fraction is not None:
                res += f" ({leth.process_fraction:.3g} of the process)"
        else:
            res, req = "information only", "—"
        reached = (
            site.format_time_hm(leth.reached.time_s / 60.0)
            if (leth.reached is not None and leth.reached.reached)
            else ("not reached" if leth.required_F_min else "—")
        )
        rows.append(
            [
                f"{leth.name} ({role}): {leth.target}{indicative_text(leth)}",
                leth.point,
                f"{site.format_temperature(leth.reference_C)}, "
                + ("published table" if leth.z_C is None else f"z {difference_text(site, leth.z_C)}"),
                f"{format_f(leth.total_F_min)} min",
                req,
                res,
                reached,
                log_reduction_text(leth),
            ]
        )
    out.append(table(rows, cols(W, [0.3, 0.07, 0.14, 0.1, 0.08, 0.1, 0.1, 0.11]), st))
    srcs = "; ".join(dict.fromkeys(leth.source for leth, _ in items))
    out.append(st.p(f"Sources: {srcs}", st.small))
    return out


def thawing_section(result, site, st, W):
    """Thawing or tempering: the time to the core target beside Plank's thawing time."""
    th = result.outcomes.thawing if result.outcomes is not None else None
    if th is None:
        return []
    tr = th.from_history
    got = site.format_time_hm((tr.time_s - tr.start_s) / 60.0) if tr.reached else "not reached"
    rows = [
        ["Step", "Core target", "Reached after", "Plank (complete thawing)"],
        [
            th.step,
            f"{site.format_temperature(th.target_C)} ({'thawed' if th.thawed else 'tempered'})",
            got,
            site.format_time_hm(th.plank_s / 60.0) if th.plank_s else "—",
        ],
    ]
    return [*st.h("Thawing"), table(rows, cols(W, [0.3, 0.25, 0.2, 0.25]), st), st.p(th.basis, st.small)]


def freezing_section(result, site, st, W):
    oc = result.outcomes
    fz = oc.freezing if oc is not None else None
    if fz is None:
        return thawing_section(result, site, st, W)
    fh = fz.from_history
    onset = site.format_time_hm(fh.onset.time_s / 60.0) if fh.onset.reached else "not reached"
    end = site.format_time_hm(fh.end.time_s / 60.0) if fh.end.reached else "not reached"
    rows = [
        ["Onset (core at initial freezing point)", "End (core at storage temperature)", "Plank", "Pham"],
        [
            f"{onset} (core {site.format_temperature(fz.initial_freezing_C, 2)})",
            f"{end} (core {site.format_temperature(fh.end.target_C)})",
            site.format_time_hm(fz.plank_s / 60.0) if fz.plank_s else "—",
            site.format_time_hm(fz.pham.time_s / 60.0) if fz.pham else "—",
        ],
    ]
    return [
        *st.h("Freezing"),
        table(rows, cols(W, [0.3, 0.3, 0.2, 0.2]), st),
        st.p(fz.basis, st.small),
        *thawing_section(result, site, st, W),
    ]


def energy_section(result, site, st, W):
    oc = result.outcomes
    if oc is None:
        return []
    ch = result.plan.checks
    cur = oc.price.currency if oc.price is not None else ""
    rows = [
        [
            "Step",
            "Heat removed / added per batch",
            "Peak duty (largest 1-min mean)",
            "Mean duty",
            "COP (Carnot)",
            "Electricity",
            f"Cost ({cur or 'currency'})",
            "Basis",
        ]
    ]
    for se in oc.refrigeration:
        r = se.refrigeration
        rows.append(
            [
                se.step,
                f"{se.heat_removed_J_per_batch / 3.6e6:.2f} / {se.heat_added_J_per_batch / 3.6e6:.2f} kWh",
                f"{se.peak_duty_kW:.1f} kW",
                f"{se.mean_duty_kW:.1f} kW",
                f"{r.cop:.2f} ({r.cop_carnot:.2f})" if r is not None else "—",
                f"{r.electricity_kWh:.2f} kWh" if r is not None else "—",
                format_cost(r.cost, oc.price) if r is not None else "—",
                se.basis,
            ]
        )
    en = oc.energy
    note = (
        f"Batch of {en.pieces:g}: heat removed {fixed(en.heat_removed_J_per_batch / 3.6e6, 2)} kWh, heat added "
        f"{fixed(en.heat_added_J_per_batch / 3.6e6, 2)} kWh (gross, each direction); {PEAK_DUTY_LABEL} "
        f"{en.peak_duty_kW_per_batch:.1f} kW; cost {format_cost(oc.cost_per_batch, oc.price)} ({price_text(oc.price)}). "
        f"Heat through the surface against the enthalpy change: {oc.energy_balance:.2%}. COP = {ch.cop_fraction:g} × Carnot."
    )
    return [
        *st.h("Energy"),
        table(rows, cols(W, [0.12, 0.13, 0.08, 0.08, 0.09, 0.09, 0.09, 0.32]), st),
        st.p(note, st.small),
    ]


def provenance_section(result, site, st, W, sha):
    rows = [["Step", "Solver and reason", "Regime", "Grid / series", "Energy-balance error"]]
    for sr in result.steps:
        det = sr.details
        grid = det.grid or ("series solution" if sr.solver == "exact" else "—")
        if det.time_steps is not None:
            grid += f"; {det.time_steps} time steps"
        rows.append(
            [
                f"{sr.index + 1} {sr.name}",
                f"{sr.solver}: {sr.reason}",
                sr.regime.reason,
                grid,
                f"{sr.energy_balance_error:.2%}",
            ]
        )
    out = [
        *st.h("Provenance"),
        st.p(
            f"procplan {__version__}; plan file SHA-256 {sha} (of the plan's TOML as written by procplan.files.plan.plan_to_toml)",
            st.small,
        ),
        table(rows, cols(W, [0.12, 0.38, 0.25, 0.18, 0.07]), st, small=True),
    ]
    unreliable = getattr(result, "unreliable_reasons", ())
    if unreliable:
        out.append(st.p("Unreliable run: " + " | ".join(unreliable), st.bold))
    if result.warnings:
        out.append(st.p("Warnings: " + " | ".join(result.warnings), st.small))
    return out


def measured_section(result, site, st, W):
    rows = [
        ["Measured", "Value", "Time", "Initials"],
        ["Core at the start of the first step", "", "", ""],
        ["Core at the end of the last step", "", "", ""],
        ["Equipment set points checked (step by step)", "", "", ""],
        ["Deviations and corrective actions", "", "", ""],
        ["Released for production by (name, signature)", "", "", ""],
    ]
    t = table(
        rows, cols(W, [0.4, 0.3, 0.13, 0.17]), st, row_heights=[None] + [st.size * 2.4] * (len(rows) - 1)
    )
    return [*st.h("Measured values and signatures"), t]
