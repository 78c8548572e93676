"""The running peak-temperature field the finite-volume solver keeps on request (used for the drip of meat)."""

import numpy as np
import pytest

from procplan.conduction.finite_volume import SurfaceBoundary, solve_conduction
from procplan.geometry import Geometry
from procplan.properties.table import PropertyTable

PROPS = PropertyTable.constant(0.5, 1000.0, 4000.0)
SLAB = Geometry("slab", thickness_m=0.04)


def _hottest_mean(peak_C, volume_m3):
    return float(np.dot(volume_m3, peak_C) / volume_m3.sum())


def test_peak_field_of_a_heating_and_of_a_cooling_run():
    # Invariants: heating, every cell is hottest at the end (peak = final field); cooling from a uniform
    # start, every cell was hottest at the start (peak = start); the recorded measure never falls
    heat = solve_conduction(SLAB, PROPS, 20.0, SurfaceBoundary.constant(80.0, 200.0), 1800.0,
                            n_nodes=21, peak_measure=_hottest_mean)  # fmt: skip
    assert heat.peak_field.shape == heat.final_field.shape
    assert np.allclose(heat.peak_field, heat.final_field, atol=1e-12)
    m = heat.peak_measure
    assert m.shape == heat.time_s.shape and m[0] == pytest.approx(20.0) and np.all(np.diff(m) >= 0.0)
    cool = solve_conduction(SLAB, PROPS, 90.0, SurfaceBoundary.constant(10.0, 200.0), 1800.0,
                            n_nodes=21, peak_measure=_hottest_mean)  # fmt: skip
    assert np.allclose(cool.peak_field, 90.0) and np.all(cool.final_field < 90.0)
    assert np.allclose(cool.peak_measure, 90.0)


def test_no_peak_kept_without_a_measure():
    # the default run keeps nothing more (and its history is the same with or without a measure)
    plain = solve_conduction(SLAB, PROPS, 20.0, SurfaceBoundary.constant(80.0, 200.0), 600.0, n_nodes=21)
    kept = solve_conduction(SLAB, PROPS, 20.0, SurfaceBoundary.constant(80.0, 200.0), 600.0, n_nodes=21,
                            peak_measure=_hottest_mean)  # fmt: skip
    assert plain.peak_field is None and plain.peak_measure is None
    assert np.array_equal(plain.core_C, kept.core_C) and np.array_equal(plain.time_s, kept.time_s)
