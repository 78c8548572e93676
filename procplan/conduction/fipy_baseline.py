"""An independent baseline for slab freezing: FiPy's finite volumes with an implicit enthalpy formulation.

The benchmark (``python -m procplan.bench``) times procplan's solver against this baseline at equal error, and a
test uses it as an independent method through the latent-heat plateau. FiPy (the NIST finite-volume PDE
library, installed with the ``bench`` and ``test`` extras) discretises; the enthalpy linearisation is written
here.

Formulation: cell-centred uniform grid over the half-thickness of a symmetric slab, backward Euler in time.
Each step iterates the source-based enthalpy linearisation of Voller & Swaminathan (1991):

    ρ c_k (T − T_k)/Δt + ρ (H(T_k) − H_old)/Δt = ∇·(k(T_k) ∇T)

with c_k = dH/dT at T_k (the apparent specific heat), then updates the enthalpy H_k+1 = H(T_k) + c_k (T − T_k)
and takes T_k+1 = T(H_k+1) from the property table (the update that keeps the iteration on the enthalpy curve
through a narrow melting band). Face conductivities are harmonic means; the convective surface enters the last
cell as a source with the half-cell conduction in series, h_eff = 1/(1/h + Δx/(2k)). The core is the cell at the
symmetry plane (half a cell from it, zero gradient there).

References
----------
Voller, V.R., Swaminathan, C.R., General source-based method for solidification phase change, Numerical Heat
Transfer B 19 (1991) 175–189. Guyer, J.E., Wheeler, D., Warren, J.A., FiPy: partial differential equations with
Python, Computing in Science & Engineering 11(3) (2009) 6–15.
"""

from __future__ import annotations

import os
from dataclasses import dataclass

import numpy as np

from procplan import validate
from procplan.errors import InvalidInputError
from procplan.properties.table import PropertyTable


@dataclass(frozen=True)
class FiPyRun:
    """Core temperature [°C] at ``time_s`` [s], the number of linear solves and of time steps."""

    time_s: np.ndarray
    core_C: np.ndarray
    n_solves: int
    n_steps: int


def fipy_slab_freezing(
    props: PropertyTable,
    half_thickness_m: float,
    n_cells: int,
    initial_C: float,
    medium_C: float,
    h_W_m2K: float,
    end_time_s: float,
    dt_s: float,
    *,
    tolerance_K: float = 1e-6,
    max_sweeps: int = 50,
) -> FiPyRun:
    """Core history of a symmetric slab cooled (or frozen) from a uniform start on both faces, on FiPy.

    The history holds every step's end; ``end_time_s`` must be a whole number of steps.
    """
    os.environ.setdefault("FIPY_SOLVERS", "scipy")
    from fipy import CellVariable, DiffusionTerm, Grid1D, ImplicitSourceTerm
    from fipy.solvers.scipy import LinearLUSolver

    half = validate.number("half_thickness_m", half_thickness_m, minimum=1e-4, maximum=1.0, unit="m")
    n = int(validate.number("n_cells", n_cells, minimum=3, maximum=5000))
    dt = validate.number("dt_s", dt_s, minimum=1e-3, maximum=end_time_s, unit="s")
    n_steps = int(round(end_time_s / dt))
    if abs(n_steps * dt - end_time_s) > 1e-9 * end_time_s:
        raise InvalidInputError("dt_s", dt_s, "a step that divides the end time into whole steps")
    dx = half / n
    mesh = Grid1D(nx=n, dx=dx)
    temp = CellVariable(mesh=mesh, value=float(initial_C))
    rho = props.mass_density_kg_m3
    last = np.zeros(n)
    last[-1] = 1.0
    coef, rhs, k_cell = (CellVariable(mesh=mesh, value=0.0) for _ in range(3))
    equation = (
        DiffusionTerm(coeff=k_cell.harmonicFaceValue, var=temp)
        - ImplicitSourceTerm(coeff=coef, var=temp)
        + rhs
    )
    solver = LinearLUSolver()
    core = [float(initial_C)]
    solves = 0
    for _ in range(n_steps):
        h_old = props.enthalpy(np.array(temp.value))
        for _ in range(max_sweeps):
            t_k = np.array(temp.value)
            c_k = props.apparent_cp(t_k)
            k = props.conductivity(t_k)
            h_eff = 1.0 / (1.0 / h_W_m2K + 0.5 * dx / k[-1])
            k_cell.setValue(k)
            coef.setValue(rho * c_k / dt + last * h_eff / dx)
            rhs.setValue(
                rho * c_k * t_k / dt - rho * (props.enthalpy(t_k) - h_old) / dt + last * h_eff / dx * medium_C
            )
            equation.solve(var=temp, solver=solver)
            solves += 1
            t_new = props.temperature(props.enthalpy(t_k) + c_k * (np.array(temp.value) - t_k))
            temp.setValue(t_new)
            if np.max(np.abs(t_new - t_k)) < tolerance_K:
                break
        core.append(float(temp.value[0]))
    return FiPyRun(
        time_s=np.linspace(0.0, n_steps * dt, n_steps + 1),
        core_C=np.asarray(core),
        n_solves=solves,
        n_steps=n_steps,
    )
