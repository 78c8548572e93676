"""The first sections of the batch-plan sheet: header, product and equipment, process steps, chart and
checkpoints. Each returns a list of platypus flowables; the numbers come from the result as it is.
"""

from __future__ import annotations

from reportlab.platypus import (
    CondPageBreak,
    Spacer,
)

from procplan.files.site import SiteSettings
from procplan.output.chart import history_chart
from procplan.output.sheet_data import (
    ACTION_IF_MISSED,
    checkpoints,
    margin_note,
    salt_checkpoints,
    weight_checkpoints,
)
from procplan.output.sheet_layout import (
    BOLD,
    FONT,
    Styles,
    blank,
    cols,
    table,
    value_range,
)


def difference_text(site: SiteSettings, difference_K: float) -> str:
    """A temperature difference: "1 K", or "1.8 °F" on a Fahrenheit site."""
    if site.temperature_unit == "F":
        return f"{site.temperature_difference(difference_K):g} °F"
    return f"{difference_K:g} K"


def expected_cell(st: Styles, site: SiteSettings, c):
    """The expected temperature; marked when the prediction itself lies beyond the action limit."""
    text = site.format_temperature(c.expected_C)
    if getattr(c, "medium_C", None) is not None:
        text += f" (machine at {site.format_temperature(c.medium_C)})"
    outside = (c.low_C is not None and c.expected_C < c.low_C - 1e-9) or (
        c.high_C is not None and c.expected_C > c.high_C + 1e-9
    )
    return st.b(text + " PREDICTED OUTSIDE") if outside else text


def limit_text(site: SiteSettings, lo: float | None, hi: float | None) -> str:
    if lo is not None and hi is not None:
        return (
            f"{site.temperature_value(lo):.1f} to {site.temperature_value(hi):.1f} {site.temperature_symbol}"
        )
    if hi is not None:
        return f"≤ {site.format_temperature(hi)}"
    return f"≥ {site.format_temperature(lo)}"


def machine_text(sr, step) -> str:
    machine = sr.surface.breakdown.machine
    if machine is not None:
        return f"{machine.name} ({machine.id})"
    return "given h and medium"


def settings_text(sr, step, site: SiteSettings) -> str:
    machine = sr.surface.breakdown.machine
    used = (machine.settings if machine is not None else None) or step.settings_dict
    parts = []
    for k, v in (used or {}).items():
        unit = ""
        if machine is not None and k in machine.setting_units:
            unit = machine.setting_units[k]
        if not isinstance(v, (int, float)):
            parts.append(f"{k} = {v}")
        elif (unit == "°C" or k.endswith("_C")) and site.temperature_unit == "F":
            parts.append(f"{k} = {v:g} °C ({site.format_temperature(v)})")
        else:
            parts.append(f"{k} = {v:g}{(' ' + unit) if unit else ''}")
    if step.settings_profile:
        parts.append(f"profile of {len(step.settings_profile)} set points")
    if step.medium_profile:
        parts.append(f"medium profile of {len(step.medium_profile)} points")
    return "; ".join(parts) or "—"


def header_section(result, site, st, W, *, lot_id, revision, date, prepared_by, doc_no, line):
    plan = result.plan
    prod = plan.product
    lot = lot_id or blank(18)
    rows = [
        [
            st.b("Plant"),
            st.p(f"{site.plant}" + (f" — {site.address}" if site.address else "")),
            st.b("Document no."),
            st.p(doc_no),
        ],
        [st.b("Line"), st.p(line or blank(18)), st.b("Revision"), st.p(revision)],
        [
            st.b("Product"),
            st.p(prod.name + (f" — {prod.description}" if prod.description else "")),
            st.b("Date"),
            st.p(date),
        ],
        [st.b("Plan"), st.p(plan.title), st.b("Lot ID"), st.p(lot)],
    ]
    t1 = table(rows, cols(W, [0.12, 0.58, 0.13, 0.17]), st, header=False)
    sig_rows = [
        ["", "Prepared by", "Checked by", "Approved by"],
        [st.b("Name"), st.p(prepared_by or ""), "", ""],
        [st.b("Signature"), "", "", ""],
        [st.b("Date"), "", "", ""],
    ]
    # generous writing space in the signature rows
    t2 = table(sig_rows, cols(W, [0.12, 0.293, 0.293, 0.294]), st, row_heights=[None] + [st.size * 2.3] * 3)
    return [st.p("Batch plan sheet", st.title), Spacer(1, 2), t1, Spacer(1, 3), t2]


def product_section(result, site, st, W):
    plan = result.plan
    prod = plan.product
    ch = plan.checks
    props = result.properties
    g = prod.geometry
    n = ch.pieces_per_batch
    rows = [
        [
            st.b("Shape and size"),
            st.p(g.describe()),
            st.b("Mass per piece"),
            st.p(f"{result.piece_mass_kg:.3f} kg"),
        ],
        [
            st.b("Pieces per batch"),
            st.p(f"{n} (batch {n * result.piece_mass_kg:.1f} kg)"),
            st.b("Start temperature"),
            st.p(site.format_temperature(plan.start_temperature_C)),
        ],
        [
            st.b("Properties"),
            st.p(props.source),
            st.b("Initial freezing point"),
            st.p(
                site.format_temperature(props.initial_freezing_C, 2)
                if props.initial_freezing_C is not None
                else "none (no freezing)"
            ),
        ],
    ]
    if prod.packaging:
        pk = "; ".join(
            f"{layer.name} {layer.thickness_m * 1000:g} mm"
            + (" air gap" if layer.k_W_mK is None else f", k {layer.k_W_mK:g} W/mK")
            for layer in prod.packaging
        )
        rows.append(
            [
                st.b("Packaging"),
                st.p(pk),
                st.b("Surface"),
                st.p("unwrapped (moisture loss)" if prod.unwrapped else "wrapped"),
            ]
        )
    rows += _packed_rows(result, site, st) + _second_rows(result, site, st)
    t1 = table(rows, cols(W, [0.15, 0.47, 0.17, 0.21]), st, header=False)
    eq_rows = [["Step", "Machine", "Settings", "Medium", "h [W/m²K]"]]
    for sr, step in zip(result.steps, plan.steps, strict=True):
        eq_rows.append(
            [
                f"{sr.index + 1} {sr.name}",
                machine_text(sr, step),
                settings_text(sr, step, site),
                value_range(sr.surface.fluid_temperature_C, site.format_temperature),
                value_range(sr.surface.h_W_m2K, lambda v: f"{v:.1f}"),
            ]
        )
    t2 = table(eq_rows, cols(W, [0.15, 0.27, 0.34, 0.13, 0.11]), st)
    return [*st.h("Product and equipment"), t1, Spacer(1, 3), t2]


def _second_rows(result, site, st) -> list:
    """A second product in the load: what it is, per loaded step its h, end temperatures and times, and its
    core target."""
    from procplan.output.second_report import second_product_texts

    texts = second_product_texts(result, site)
    if texts is None:
        return []
    return [[st.b("Second product"), st.p(texts[0]), st.b("In the loaded steps"), st.p("; ".join(texts[1]))]]


def _packed_rows(result, site, st) -> list:
    """A packed load: what it is, and its slowest and fastest positions beside the single free piece."""
    packed = getattr(result, "packing", None)
    if packed is None:
        return []
    load = packed.load
    goal = "" if packed.target_C is None else f"time to {site.format_temperature(packed.target_C)}: "
    where = "; ".join(
        f"{p.name} "
        + ("not reached" if p.time_to_target_s is None else site.format_time(p.time_to_target_s / 60.0))
        for p in packed.positions
    )
    return [
        [
            st.b("Packed load"),
            st.p(
                f"{load.description}, {load.pieces} pieces; air between pieces {load.void_fraction:.0%}; "
                f"effective conductivity {load.k_W_mK:.3f} W/mK (as low as {load.k_low_W_mK:.3f})"
            ),
            st.b("Positions"),
            st.p(goal + where if packed.target_C is not None else where),
        ]
    ]


def _target_cells(tg, sr, step, site: SiteSettings, st: Styles) -> tuple:
    """Predicted time, plan time, cycle and check of one target of a step, as printed in the steps table."""
    tr, m = tg.target, tg.margin
    if not tr.reached:
        cyc = site.format_time_hm(step.duration_s / 60.0)
        return "NOT REACHED", "—", cyc, st.b(f"NOT REACHED: closest {site.format_temperature(tr.closest_C)}")
    pred = site.format_time_hm((tr.time_s - sr.start_s) / 60.0)
    plan_t = site.format_time_hm(m.plan_min) if m is not None else "—"
    cyc = site.format_time_hm(m.cycle_min) if (m is not None and step.duration_given) else "—"
    if m is not None and step.duration_given and m.cycle_too_short:
        check = st.b(f"CYCLE SHORTER THAN PLAN TIME by {site.format_time_hm(-m.spare_min)}")
    elif m is not None and step.duration_given:
        check = f"OK, {site.format_time_hm(m.spare_min)} spare"
    else:
        check = "OK (no cycle given)"
    return pred, plan_t, cyc, check


def steps_section(result, site, st, W):
    plan = result.plan
    oc = result.outcomes
    ch = plan.checks
    hist = result.history
    rows = [
        [
            "Step",
            "Run",
            "Target",
            "Predicted time",
            "Plan time with margin",
            "Cycle",
            "Check",
            "End core / surface / mean",
        ]
    ]
    for sr, step in zip(result.steps, plan.steps, strict=True):
        seg = hist[hist["step_index"] == sr.index]
        end = seg.iloc[-1] if len(seg) else hist.iloc[-1]
        ends = " / ".join(site.format_temperature(end[k]) for k in ("core_C", "surface_C", "mean_C"))
        run = site.format_time_hm(sr.duration_s / 60.0)
        if step.stop_when_core_C is not None:
            run += f", stop at core {site.format_temperature(step.stop_when_core_C)}"
        tgs = [t for t in (oc.targets if oc is not None else ()) if t.step == sr.name]
        if not tgs:
            rows.append(
                [
                    f"{sr.index + 1} {sr.name}",
                    run,
                    "—",
                    site.format_time_hm(sr.duration_s / 60.0),
                    "—",
                    site.format_time_hm(step.duration_s / 60.0) if step.duration_given else "—",
                    "no target",
                    ends,
                ]
            )
            continue
        for j, tg in enumerate(tgs):
            pred, plan_t, cyc, check = _target_cells(tg, sr, step, site, st)
            rows.append(
                [
                    f"{sr.index + 1} {sr.name}" if j == 0 else "",
                    run if j == 0 else "",
                    f"{tg.label or tg.point} {site.format_temperature(tg.target.target_C)}",
                    pred,
                    plan_t,
                    cyc,
                    check,
                    ends if j == 0 else "",
                ]
            )
    t = table(rows, cols(W, [0.13, 0.15, 0.11, 0.1, 0.11, 0.09, 0.14, 0.17]), st)
    note = st.p(
        f"Plan time = predicted time × (1 + {ch.margin_percent:g} %) + {ch.margin_min:g} min (the plan's margin). "
        "A cycle shorter than the plan time is flagged.",
        st.small,
    )
    return [*st.h("Process steps and plan times"), t, Spacer(1, 1), note]


def chart_section(result, site, st, W, height):
    d = history_chart(result, site, W, height, font=FONT, bold=BOLD, size=st.size - 0.4)
    return [CondPageBreak(height + 30), *st.h("Predicted temperatures"), d]


def checkpoints_section(result, site, st, W):
    cps = checkpoints(result, tolerance_K=site.probe_tolerance_K, site=site)
    rows = [
        [
            "#",
            "When (elapsed)",
            "Step",
            "Where",
            "Expected",
            "Action limit",
            "Basis",
            "If missed",
            "Measured",
            "Time / initials",
        ]
    ]
    for i, c in enumerate(cps, start=1):
        rows.append(
            [
                str(i),
                site.format_time_hm(c.time_min),
                c.step,
                c.point,
                expected_cell(st, site, c),
                c.limit_label or limit_text(site, c.low_C, c.high_C),
                c.basis,
                st.b(c.action) if c.rule else c.action,
                "",
                "",
            ]
        )
    t = table(rows, cols(W, [0.03, 0.08, 0.1, 0.06, 0.08, 0.09, 0.2, 0.15, 0.09, 0.12]), st)
    note = st.p(
        f"If a reading is beyond its action limit: {ACTION_IF_MISSED}. "
        + margin_note(result, site.probe_tolerance_K, difference_text(site, site.probe_tolerance_K)),
        st.small,
    )
    return [*st.h("Checkpoints (probe readings)"), t, Spacer(1, 1), note]


def _sample_section(title, expected, cps, cells, widths, note, site, st, W):
    """A checkpoint table for the floor: when, which step, the expected figures (``cells`` of a checkpoint),
    its basis, and empty columns for the reading and the initials; then ``note``."""
    rows = [["#", "When (elapsed)", "Step", *expected, "Basis", "Measured", "Time / initials"]]
    for i, c in enumerate(cps, start=1):
        rows.append([str(i), site.format_time_hm(c.time_min), c.step, *cells(c), c.basis, "", ""])
    t = table(rows, cols(W, widths), st)
    return [*st.h(title), t, Spacer(1, 1), st.p(note, st.small)]


def salt_section(result, site, st, W):
    """Salt (or sugar) samples of the brining steps, with the predicted core and mean content; empty without."""
    cps = salt_checkpoints(result)
    if not cps:
        return []
    return _sample_section(
        "Salt checkpoints (samples)",
        ["Expected core", "Expected mean"],
        cps,
        lambda c: [f"{c.core_percent:.2f} % {c.solute}", f"{c.mean_percent:.2f} % {c.solute}"],
        [0.03, 0.1, 0.12, 0.12, 0.12, 0.25, 0.12, 0.14],
        "A core sample below its expected content: extend the step and sample again (a cut through the thickest "
        "part; the mean from the whole piece).",
        site,
        st,
        W,
    )


def weight_section(result, site, st, W):
    """Pieces to weigh in the drying steps, with the predicted weight loss and piece weight; empty without."""
    cps = weight_checkpoints(result)
    if not cps:
        return []
    return _sample_section(
        "Weight checkpoints (weigh pieces)",
        ["Expected loss", "Expected piece"],
        cps,
        lambda c: [f"{c.weight_loss_percent:.1f} %", f"{c.piece_kg * 1000:.0f} g"],
        [0.03, 0.1, 0.12, 0.1, 0.1, 0.27, 0.12, 0.16],
        "Weigh the same marked pieces each time; loss = (weight at the step's start − weight now) / weight at the "
        "step's start. A loss below the expected one: extend the step and weigh again. The expected loss is the "
        "evaporation: juice dripping out (the upper cook loss of the summary) and fat are not in it.",
        site,
        st,
        W,
    )
