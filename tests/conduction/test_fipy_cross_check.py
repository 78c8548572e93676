"""procplan's finite volumes against an independent solver through the latent-heat plateau: FiPy (a general-
purpose finite-volume PDE library from PyPI) with the enthalpy linearisation of Voller & Swaminathan (1991),
on a cell-centred grid with backward Euler: a different grid, time integrator and latent-heat treatment."""

from __future__ import annotations

import numpy as np
import pytest

from procplan.conduction.finite_volume import SurfaceBoundary, solve_conduction
from procplan.conduction.fipy_baseline import fipy_slab_freezing
from procplan.errors import InvalidInputError
from procplan.geometry import Geometry
from procplan.properties.table import PropertyTable

# A lean-meat-like material with a 0.5 K melting band (round numbers chosen for the comparison, not a product's
# data): both solvers read the same table, so the comparison is of the methods alone.
MATERIAL = PropertyTable.constant(
    0.5, 1050.0, 3600.0, latent_J_kg=250e3, freezing_C=-1.0, frozen_k_W_mK=1.6, frozen_cp_J_kgK=1900.0
)
END_S = 3.5 * 3600.0


def _time_to(time_s: np.ndarray, core_C: np.ndarray, level_C: float) -> float:
    i = int(np.argmax(core_C < level_C))
    assert i > 0, "the core never crossed the level"
    return float(np.interp(level_C, [core_C[i], core_C[i - 1]], [time_s[i], time_s[i - 1]]))


def test_freezing_time_agrees_with_fipy_and_the_gap_closes_under_refinement():
    # Source: independent method (FiPy 3.4+/4.x, Guyer et al. 2009, with Voller & Swaminathan 1991's source-
    # based enthalpy method). A 40 mm slab from 10 °C in −30 °C air at h = 20 W/m²K: the time the core passes
    # −5 °C (after the plateau). Measured: 201.2 min here against FiPy 201.5 (30 cells, 60 s steps) and 201.3
    # (60 cells, 30 s): the gap is FiPy's first-order error and shrinks as it is refined.
    g = Geometry("slab", thickness_m=0.04)
    coarse = fipy_slab_freezing(MATERIAL, 0.02, 24, 10.0, -30.0, 20.0, END_S, 90.0)
    fine = fipy_slab_freezing(MATERIAL, 0.02, 48, 10.0, -30.0, 20.0, END_S, 45.0)
    ours = solve_conduction(
        g, MATERIAL, 10.0, SurfaceBoundary.constant(-30.0, 20.0), END_S, output_time_s=fine.time_s
    )
    t_ours = _time_to(ours.time_s, ours.core_C, -5.0)
    gap_coarse = abs(_time_to(coarse.time_s, coarse.core_C, -5.0) / t_ours - 1.0)
    gap_fine = abs(_time_to(fine.time_s, fine.core_C, -5.0) / t_ours - 1.0)
    assert gap_fine < gap_coarse
    assert gap_fine < 0.003, gap_fine
    # the plateau: both hold the core within the melting band for the same stretch (to 1 %)
    in_band = [
        float(np.sum(np.diff(r.time_s)[((r.core_C[1:] < -0.5) & (r.core_C[1:] > -1.5))]))
        for r in (ours, fine)
    ]
    assert in_band[0] == pytest.approx(in_band[1], rel=0.01), in_band


def test_fipy_baseline_refuses_a_step_that_does_not_divide_the_run():
    with pytest.raises(InvalidInputError, match="dt_s"):
        fipy_slab_freezing(MATERIAL, 0.02, 10, 10.0, -30.0, 20.0, 1000.0, 300.0)
