"""A second product's field solved with the medium node and the main product's field (fv_partner)."""

from __future__ import annotations

import numpy as np
import pytest
import scipy.linalg

from procplan.conduction.finite_volume import SurfaceBoundary, solve_conduction
from procplan.conduction.fv_grid import build_grid
from procplan.conduction.fv_medium import MediumNode
from procplan.conduction.fv_model import FVModel
from procplan.conduction.fv_partner import SecondField
from procplan.geometry import Geometry
from procplan.properties.table import PropertyTable
from procplan.surface.plant import Plant

# Two small, highly conductive spheres: Bi = h R / k ≤ 20 × 0.015 / 200 = 1.5e-3, so each piece is lumped.
S1, P1 = Geometry("sphere", diameter_m=0.02), PropertyTable.constant(200.0, 1000.0, 4000.0)
S2, P2 = Geometry("sphere", diameter_m=0.03), PropertyTable.constant(200.0, 1100.0, 3000.0)
H1, H2 = 20.0, 12.0


def _three_node(N, M, C, UA, T_evap, wall_UA, room_C, Q_fixed, x0, times):
    """Two lumped products and the medium as x' = A x + b, solved by the matrix exponential of the augmented
    system [[A, b], [0, 0]]."""
    mc1, mc2 = 1000.0 * S1.volume_m3 * 4000.0, 1100.0 * S2.volume_m3 * 3000.0
    hA1, hA2 = H1 * S1.area_m2, H2 * S2.area_m2
    A = np.array(
        [
            [-hA1 / mc1, 0.0, hA1 / mc1],
            [0.0, -hA2 / mc2, hA2 / mc2],
            [N * hA1 / C, M * hA2 / C, -(N * hA1 + M * hA2 + UA + wall_UA) / C],
        ]
    )
    b = np.array([0.0, 0.0, (UA * T_evap + wall_UA * room_C + Q_fixed) / C])
    Mx = np.zeros((4, 4))
    Mx[:3, :3], Mx[:3, 3] = A, b
    return np.array([scipy.linalg.expm(Mx * t) @ np.r_[x0, 1.0] for t in times])


def _run(
    plant, N, M, E0, T1, T2, end_s, set_point_C, geometry2=S2, props2=P2, h2=H2, n=11, main=(S1, P1, H1)
):
    g1, p1, h1 = main
    partner = None
    if M:
        grid = build_grid(geometry2, n, 0.5)
        model = FVModel(grid, props2, SurfaceBoundary(set_point_C, h2))
        partner = SecondField(model, M, np.full(grid.n_cells, float(props2.enthalpy(T2))))
    node = MediumNode(plant, N, E0, partner)
    res = solve_conduction(g1, p1, T1, SurfaceBoundary(set_point_C, h1, medium_node=node), end_s, n_nodes=n)
    node.finish(res.final_enthalpy_J_kg)
    return res, node


def test_two_lumped_products_and_a_linear_plant_match_the_three_node_matrix_exponential():
    # Source: the three-node linear system (two lumped products + medium) solved exactly by
    # scipy.linalg.expm (method); measured: 0.004 K (main), 0.026 K (second), 0.002 K (medium). The set point lies below the evaporating temperature, so the plant stays on
    # its linear branch UA (E − T_evap) throughout.
    N, M, C = 50, 30, 2.0e4
    plant = Plant(1e7, True, 30.0, -20.0, C, fixed_W=50.0, wall_UA_W_K=2.0, room_C=20.0)
    res, node = _run(plant, N, M, 10.0, 60.0, 80.0, 3 * 3600.0, -30.0)
    assert all(r.mode == "limit" for r in node.records)
    t = np.r_[0.0, [r.time_s for r in node.records]]
    exact = _three_node(N, M, C, 30.0, -20.0, 2.0, 20.0, 50.0, [60.0, 80.0, 10.0], t)
    E = np.r_[10.0, [r.medium_C for r in node.records]]
    second_mean = np.r_[80.0, [r.second_C[2] for r in node.records]]
    assert res.time_s.shape == t.shape and np.allclose(res.time_s, t)
    assert np.max(np.abs(res.mean_C - exact[:, 0])) < 0.05
    assert np.max(np.abs(second_mean - exact[:, 1])) < 0.05
    assert np.max(np.abs(E - exact[:, 2])) < 0.05
    assert np.ptp(second_mean) > 30.0 and np.ptp(E) > 2.0  # both the second product and the medium moved


@pytest.mark.parametrize(
    "geometry, props, capacity_W",
    [
        (Geometry("slab", thickness_m=0.04), PropertyTable.constant(0.5, 1050.0, 3600.0), 1500.0),
        (
            Geometry("finite-cylinder", diameter_m=0.05, length_m=0.08),
            PropertyTable.constant(0.5, 1050.0, 3600.0),
            400.0,
        ),
    ],
    ids=["slab, plant at its limit then holding", "finite cylinder (2-D solve)"],
)
def test_an_identical_second_product_equals_more_pieces_of_the_main_one(geometry, props, capacity_W):
    # Method: M pieces of a second product identical to the main one take the same field as the main pieces,
    # so the coupled run equals one with N + M main pieces (same discrete equations, within Newton tolerance).
    plant = Plant(capacity_W, True, capacity_W / 25.0, -30.0, 5.0e4, fixed_W=30.0)
    args = dict(geometry2=geometry, props2=props, h2=25.0, n=9, main=(geometry, props, 25.0))
    a, na = _run(plant, 30, 0, -5.0, 60.0, 60.0, 4 * 3600.0, -5.0, **args)
    b, nb = _run(plant, 18, 12, -5.0, 60.0, 60.0, 4 * 3600.0, -5.0, **args)
    assert a.time_s.shape == b.time_s.shape
    assert np.max(np.abs(a.core_C - b.core_C)) <= 1e-6
    Ea = np.array([r.medium_C for r in na.records])
    Eb = np.array([r.medium_C for r in nb.records])
    assert np.max(np.abs(Ea - Eb)) <= 1e-6
    core2 = np.array([r.second_C[0] for r in nb.records])
    assert np.max(np.abs(core2 - b.core_C[1:])) <= 1e-6
    modes = {r.mode for r in nb.records}
    assert "limit" in modes  # the plant really limited the medium


def test_the_second_products_heat_equals_its_enthalpy_change_and_the_medium_balance_closes():
    # Invariant: heat into the M second pieces (its surface flows integrated over the accepted steps) equals
    # M × mass × (mean enthalpy at the end − at the start), and pieces + medium = plant + fixed loads.
    N, M, C = 40, 60, 3.0e4
    plant = Plant(300.0, True, 20.0, -25.0, C, fixed_W=40.0)
    res, node = _run(plant, N, M, 0.0, 50.0, 70.0, 2 * 3600.0, 0.0)
    t = np.r_[0.0, [r.time_s for r in node.records]]
    p = node.partner
    q2_0 = p.model.heat_flow_W(0.0, p.H0, 0.0) / p.model.grid.piece_factor * p.weight
    q2 = np.r_[q2_0, [r.second_W for r in node.records]]
    heat2 = float(np.trapezoid(q2, t))
    m2 = 1100.0 * S2.volume_m3
    dH2 = float(P2.enthalpy(node.records[-1].second_C[2]) - P2.enthalpy(70.0))
    assert abs(heat2 - M * m2 * dH2) < 0.005 * abs(M * m2 * dH2)
    q1 = np.r_[N * res.heat_flow_W[0], [r.pieces_W for r in node.records]]
    P = np.r_[node.records[0].plant_W, [r.plant_W for r in node.records]]
    L = np.r_[node.records[0].fixed_W, [r.fixed_W for r in node.records]]
    E = np.r_[0.0, [r.medium_C for r in node.records]]
    lhs = float(np.trapezoid(q1, t)) + heat2 + C * (E[-1] - E[0])
    rhs = float(np.trapezoid(P, t) + np.trapezoid(L, t))
    assert abs(lhs - rhs) < 0.005 * max(abs(lhs), abs(rhs))
