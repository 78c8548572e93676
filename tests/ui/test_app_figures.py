"""The result page shows each energy figure and warning with the library's one definition and value."""

from __future__ import annotations

import numpy as np
from numpy.testing import assert_allclose

from .test_app import go, library_result, metric, number_of


def test_result_page_shows_peak_duty_cost_and_gross_heat_of_the_library(app, library_copy):
    ref = library_result(library_copy).outcomes
    go(app, "Result")
    en = ref.energy
    # one peak duty, its definition in its help (a label that fits its column)
    assert metric(app, "Peak duty") == f"{en.peak_duty_kW_per_batch:.1f} kW"
    peaks = [m for m in app.metric if "peak" in m.label.lower()]
    assert [m.label for m in peaks] == ["Peak duty"]
    assert "largest 1-min mean" in peaks[0].proto.help
    # the cost the sheet prints, from the site tariff of the library folder
    assert ref.price is not None and ref.price.source == "site tariff"
    assert metric(app, "Electricity cost, batch") == f"{ref.cost_per_batch:.2f} {ref.price.currency}"
    assert_allclose(number_of(metric(app, "Heat removed")), en.heat_removed_J_per_batch / 3.6e6, atol=0.005)
    assert_allclose(number_of(metric(app, "Heat added")), en.heat_added_J_per_batch / 3.6e6, atol=0.005)
    table = next(d.value for d in app.dataframe if "cost" in d.value.columns)
    assert table["cost"].iloc[0] == f"{ref.refrigeration[0].refrigeration.cost:.2f} {ref.price.currency}"
    assert_allclose(table["peak duty [kW]"].iloc[0], ref.refrigeration[0].peak_duty_kW, atol=0.05)


def test_result_page_warns_of_surface_freezing(app, library_copy):
    ref = library_result(library_copy)
    low = float(ref.history["surface_C"].min())
    go(app, "Result")
    shown = [w.value for w in app.warning if "surface freezes" in w.value]
    assert len(shown) == 1 and f"{low:.1f} °C" in shown[0]


def test_process_page_biot_uses_the_h_the_step_ran_with(app, library_copy):
    go(app, "Sheet & files")
    app.selectbox(key="open_lib_plan").set_value("soup-pouch-pasteurise")
    app.button(key="open_lib_btn").click().run()
    go(app, "Process")
    sr = library_result(library_copy, "soup-pouch-pasteurise").steps[0]
    assert sr.details.h_change_on_second_pass > 0.05
    h_ran = float(np.mean(sr.surface.h_W_m2K))
    assert f"h = {h_ran:.3g} W/m²K" in sr.regime.reason
    assert_allclose(number_of(metric(app, "Biot number")), sr.regime.bi, rtol=5e-3)  # shown to 3 digits
