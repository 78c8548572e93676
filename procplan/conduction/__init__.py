"""Transient conduction: regime (Biot), lumped, eigen-series, Newman product solutions and finite volumes."""

from procplan.conduction.finite_volume import ConductionResult, solve_conduction
from procplan.conduction.fv_boundary import SurfaceBoundary, TimeProfile
from procplan.conduction.lumped import lumped_temperature_C, lumped_time_to_temperature_s
from procplan.conduction.product import ExactHistory, exact_history
from procplan.conduction.regime import Regime, biot_number, classify_regime, fourier_number

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
