"""Transient conduction: regime (Biot), lumped, eigen-series, Newman product solutions and finite volumes.

The names below are loaded on first use (PEP 562): a run on the exact solution does not import the finite
volume's sparse solvers, nor a finite-volume run the series' special functions.
"""

from __future__ import annotations

import importlib
from typing import TYPE_CHECKING, Any

#: Public name -> the module that defines it.
_LAZY: dict[str, str] = {
    "ConductionResult": "procplan.conduction.finite_volume",
    "solve_conduction": "procplan.conduction.finite_volume",
    "SurfaceBoundary": "procplan.conduction.fv_boundary",
    "TimeProfile": "procplan.conduction.fv_boundary",
    "lumped_temperature_C": "procplan.conduction.lumped",
    "lumped_time_to_temperature_s": "procplan.conduction.lumped",
    "ExactHistory": "procplan.conduction.product",
    "exact_history": "procplan.conduction.product",
    "Regime": "procplan.conduction.regime",
    "biot_number": "procplan.conduction.regime",
    "classify_regime": "procplan.conduction.regime",
    "fourier_number": "procplan.conduction.regime",
}

__all__ = [
    "ConductionResult",
    "ExactHistory",
    "Regime",
    "SurfaceBoundary",
    "TimeProfile",
    "biot_number",
    "classify_regime",
    "exact_history",
    "fourier_number",
    "lumped_temperature_C",
    "lumped_time_to_temperature_s",
    "solve_conduction",
]

if TYPE_CHECKING:  # pragma: no cover - for type checkers and editors only
    from procplan.conduction.finite_volume import ConductionResult, solve_conduction
    from procplan.conduction.fv_boundary import SurfaceBoundary, TimeProfile
    from procplan.conduction.lumped import lumped_temperature_C, lumped_time_to_temperature_s
    from procplan.conduction.product import ExactHistory, exact_history
    from procplan.conduction.regime import Regime, biot_number, classify_regime, fourier_number


def __getattr__(name: str) -> Any:
    module = _LAZY.get(name)
    if module is None:
        raise AttributeError(f"module 'procplan.conduction' has no attribute {name!r}")
    value = getattr(importlib.import_module(module), name)
    globals()[name] = value
    return value


def __dir__() -> list[str]:
    return sorted(set(__all__) | set(globals()))
