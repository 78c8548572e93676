"""One definition for each figure: the same value, with the same label, in the library, the CLI JSON, the
summary text and the batch-plan sheet; warnings of surface freezing; freezing times of finite shapes.

The expected values are recomputed here by hand from the run's own history (an independent integration),
never copied from an earlier output.
"""

from __future__ import annotations

import contextlib
import io
import json
import re

import numpy as np
import pytest
from numpy.testing import assert_allclose
from pypdf import PdfReader

from procplan.cli.main import main
from procplan.files.library import load_library
from procplan.files.plan import plan_from_dict
from procplan.files.site import load_site
from procplan.outcomes import freezing_time_pham, freezing_time_plank
from procplan.outcomes.energy import PEAK_DUTY_LABEL
from procplan.outcomes.freezing_time import ehtd_of_dimensions
from procplan.output.report import summary_text
from procplan.output.sheet import batch_sheet_pdf
from procplan.run.engine import run_plan

PLANS = ("roulade-blast-chill", "soup-pouch-pasteurise")


@pytest.fixture(scope="module")
def lib():
    return load_library()


@pytest.fixture(scope="module")
def site():
    return load_site()


@pytest.fixture(scope="module")
def runs(lib, site):
    """Per plan: the library result, the CLI's JSON summary, the summary text and the sheet's text."""
    out = {}
    for name in PLANS:
        res = run_plan(lib.plan(name), library=lib, site=site)
        buf = io.StringIO()
        with contextlib.redirect_stdout(buf):
            assert main(["run", name, "--json"]) == 0
        summary = json.loads(buf.getvalue())["summary"]
        pdf = batch_sheet_pdf(res, site=site, lot_id="L-1", prepared_by="A. Planner", date="2026-03-02")
        sheet = " ".join(" ".join(p.extract_text().split()) for p in PdfReader(io.BytesIO(pdf)).pages)
        out[name] = (res, summary, summary_text(res), sheet)
    return out


def _largest_minute_mean_W(t, q) -> float:
    """Independent method: |q| resampled every second, then a 60-sample moving mean."""
    fine = np.arange(t[0], t[-1] + 1e-9, 1.0)  # the peak window is at least a minute away from the end
    a = np.abs(np.interp(fine, t, q))
    c = np.concatenate([[0.0], np.cumsum(0.5 * (a[1:] + a[:-1]))])
    return float(np.max(c[60:] - c[:-60]) / 60.0)


def test_peak_duty_is_the_largest_one_minute_mean_everywhere(runs):
    res, summary, text, sheet = runs["roulade-blast-chill"]
    n = res.plan.checks.pieces_per_batch
    h = res.history
    peak_kW = _largest_minute_mean_W(h["time_s"].to_numpy(), h["heat_flow_W"].to_numpy()) * n / 1000
    instantaneous_kW = float(h["heat_flow_W"].abs().max()) * n / 1000
    oc = res.outcomes
    # 1-s resampling of a piecewise-linear history: the moving mean is within 1 % of the exact window
    assert_allclose(oc.energy.peak_duty_kW_per_batch, peak_kW, rtol=0.01)
    assert oc.refrigeration[0].peak_duty_kW == pytest.approx(oc.energy.peak_duty_kW_per_batch, rel=1e-12)
    assert instantaneous_kW > 1.05 * peak_kW  # the two definitions differ on this plan
    shown = f"{oc.energy.peak_duty_kW_per_batch:.1f} kW"
    en = summary["outcomes"]["energy"]
    assert en["peak_duty_kW_per_batch"] == pytest.approx(oc.energy.peak_duty_kW_per_batch, rel=1e-9)
    assert summary["outcomes"]["refrigeration"][0]["peak_duty_kW"] == pytest.approx(
        oc.energy.peak_duty_kW_per_batch, rel=1e-9
    )
    assert f"{PEAK_DUTY_LABEL} {shown}" in text
    assert "Peak duty (largest 1-min mean)" in sheet and shown in sheet
    for out in (text, sheet):
        assert f"{instantaneous_kW:.1f} kW" not in out


def test_cost_is_computed_once_and_shown_everywhere(runs, site):
    res, summary, text, sheet = runs["roulade-blast-chill"]
    oc = res.outcomes
    assert res.plan.checks.energy_price_per_kWh is None  # the price is the site tariff
    r = oc.refrigeration[0].refrigeration
    expected = r.electricity_kWh * site.energy_price_per_kWh
    assert_allclose(oc.cost_per_batch, expected, rtol=1e-12)
    assert oc.price.source == "site tariff" and oc.price.currency == site.currency
    assert summary["outcomes"]["cost_per_batch"] == pytest.approx(expected, rel=1e-9)
    shown = f"{expected:.2f} {site.currency}"
    assert f"cost {shown}" in text
    assert shown in sheet


def test_heat_removed_and_added_are_gross_per_direction(runs):
    res, summary, text, sheet = runs["soup-pouch-pasteurise"]
    n = res.plan.checks.pieces_per_batch
    h = res.history
    t, q = h["time_s"].to_numpy(), h["heat_flow_W"].to_numpy()
    # Independent method: the samples plus a 0.5 s grid (sign changes resolved to 0.5 s), positive and
    # negative parts integrated separately
    fine = np.union1d(t, np.arange(t[0], t[-1], 0.5))
    qf = np.interp(fine, t, q)
    removed = float(np.trapezoid(np.maximum(-qf, 0.0), fine)) * n
    added = float(np.trapezoid(np.maximum(qf, 0.0), fine)) * n
    en = res.outcomes.energy
    assert_allclose(en.heat_removed_J_per_batch, removed, rtol=1e-3)
    assert_allclose(en.heat_added_J_per_batch, added, rtol=1e-3)
    net = abs(removed - added)
    assert net < 0.7 * min(removed, added)  # a net figure would be far from either
    js = summary["outcomes"]["energy"]
    assert js["heat_removed_J_per_batch"] == pytest.approx(en.heat_removed_J_per_batch, rel=1e-9)
    assert js["heat_added_J_per_batch"] == pytest.approx(en.heat_added_J_per_batch, rel=1e-9)
    kwh_r, kwh_a = f"{removed / 3.6e6:.2f}", f"{added / 3.6e6:.2f}"
    assert f"heat removed {kwh_r} kWh, heat added {kwh_a} kWh" in text
    assert f"heat removed {kwh_r} kWh, heat added {kwh_a} kWh" in sheet
    for out in (text, sheet):
        assert not re.search(r"net [\d.]+ kWh", out)


def test_regime_and_biot_use_the_h_the_step_ran_with(runs):
    res, summary, text, sheet = runs["soup-pouch-pasteurise"]
    sr = res.steps[0]
    assert sr.details.h_change_on_second_pass > 0.05  # the surface pass moved h on this step
    h_ran = float(np.mean(sr.surface.h_W_m2K))
    # Source: Incropera et al., 7th ed., eq. 5.10, Bi = h L / k (k at the mean of start and medium, as the engine)
    k = float(
        res.properties.conductivity(0.5 * (res.plan.start_temperature_C + np.mean(sr.surface.medium_C)))
    )
    bi = h_ran * res.plan.product.geometry.conduction_length_m / k
    assert_allclose(sr.regime.bi, bi, rtol=1e-9)
    assert summary["steps"][0]["regime"]["bi"] == pytest.approx(bi, rel=1e-9)
    assert f"h = {h_ran:.3g} W/m²K" in sr.regime.reason
    assert sr.regime.reason in text
    assert f"h = {h_ran:.3g} W/m²K" in sheet


def test_surface_below_the_freezing_point_in_a_chill_step_is_warned(runs, lib):
    res, summary, text, sheet = runs["roulade-blast-chill"]
    tf = res.properties.initial_freezing_C
    low = float(res.history["surface_C"].min())
    assert low < tf
    warn = [w for w in res.warnings if "surface freezes" in w]
    assert len(warn) == 1 and f"{low:.1f} °C" in warn[0]
    assert warn[0] in summary["warnings"]
    assert f"warning: {warn[0]}" in text
    assert "surface freezes" in sheet
    colder = run_plan(
        lib.plan("roulade-blast-chill").with_step(0, settings=(("air_C", -12.0), ("air_speed_m_s", 4.0))),
        library=lib,
        n_nodes=10,
    )
    low12 = float(colder.history["surface_C"].min())
    assert low12 < low
    assert any(f"{low12:.1f} °C" in w and "surface freezes" in w for w in colder.warnings)


def test_a_chill_above_the_freezing_point_is_not_warned(lib):
    res = run_plan(lib.plan("vial-cool-down"), library=lib)
    assert not any("surface freezes" in w for w in res.warnings)


FIXED_FREEZING = {
    "k_W_mK": 1.2,
    "rho_kg_m3": 1000.0,
    "cp_J_kgK": 3600.0,
    "latent_J_kg": 250e3,
    "freezing_C": -1.5,
}


def test_brick_plank_and_pham_use_the_equivalent_dimensionality():
    dims_mm = (120.0, 80.0, 40.0)
    d = {
        "title": "brick freezing",
        "product": {
            "name": "brick",
            "shape": "brick",
            "length_mm": dims_mm[0],
            "width_mm": dims_mm[1],
            "height_mm": dims_mm[2],
            "fixed_properties": FIXED_FREEZING,
        },
        "start": {"temperature_C": 5.0},
        "steps": [{"name": "freeze", "h_W_m2K": 20.0, "medium_C": -30.0, "duration_min": 240}],
    }
    res = run_plan(plan_from_dict(d), n_nodes=8)
    fz = res.outcomes.freezing
    props = res.properties
    storage = res.plan.checks.frozen_storage_C
    k_f = float(props.conductivity(0.5 * (storage - 30.0)))
    E, D = ehtd_of_dimensions(tuple(x / 1000 for x in dims_mm), 20.0, k_f)
    assert D == pytest.approx(0.040) and 1.0 < E < 3.0
    cp_f = float(props.apparent_cp(-39.0))
    latent = float(props.enthalpy(-1.5) - props.enthalpy(storage)) - cp_f * (-1.5 - storage)
    slab = freezing_time_plank("slab", D, 1000.0, latent, -1.5, -30.0, 20.0, k_f)
    # Cleland, Cleland & Earle (1987): t_shape = t_slab(D) / E
    assert_allclose(fz.plank_s, slab / E, rtol=1e-12)
    pham_slab = freezing_time_pham(
        "slab", D, 1000.0, float(props.apparent_cp(-0.5)), cp_f, latent, 5.0, storage, -30.0, 20.0, k_f
    )
    assert_allclose(fz.pham.time_s, pham_slab.time_s / E, rtol=1e-9)
    assert "Cleland" in fz.basis and "upper" not in fz.basis
    assert "underestimates" in fz.basis and "sensible heat" in fz.basis and "numerical" in fz.basis


def test_required_setting_that_freezes_the_surface_says_so(lib):
    from procplan.studies.inverse import required_setting

    plan = lib.plan("roulade-blast-chill")
    r = required_setting(
        plan,
        step_index=0,
        parameter="medium_C",
        goal="time",
        target_min=200.0,
        library=lib,
        n_scan=3,
        xtol=0.5,
        n_nodes=8,
    )
    assert r.achievable and r.value is not None
    low = float(r.result.history["surface_C"].min())
    assert low < r.result.properties.initial_freezing_C  # the answer's own run freezes the surface
    notes = [n for n in r.notes if "would freeze the surface" in n]
    assert len(notes) == 1 and f"{r.value:.6g} °C" in notes[0] and f"{low:.1f} °C" in notes[0]
