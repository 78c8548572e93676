"""Lethality of a heat process by the general method (Bigelow et al. 1920), log reductions and presets.

The accumulated lethality (F-value) at a reference temperature T_ref for an organism or quality factor with
z-value z is

    F(t) = ∫₀ᵗ L(T(τ)) dτ,   L(T) = 10^((T − T_ref)/z)

expressed in minutes at T_ref. A log reduction follows from the D-value at T_ref: log N₀/N = F/D.

Integration: the histories of procplan are piecewise linear in time, and on an interval where T goes
linearly from T_a to T_b the lethal rate is exponential in time, so the default ``"exact-linear"`` method
integrates it exactly:

    ΔF = Δt · (L_b − L_a)/ln(L_b/L_a)   (the logarithmic mean of the end rates; Δt·L_a when T_a = T_b)

``"trapezoid"`` (the rule used with hand-tabulated lethal rates) is kept for comparison; it overestimates
ΔF on a rising or falling interval because L(T) is convex.

References
----------
Bigelow, W.D., Bohart, G.S., Richardson, A.C. & Ball, C.O. (1920). Heat penetration in processing canned
foods. National Canners Association Bulletin 16-L.
European Pharmacopoeia, 5.1.5 Application of the F0 concept to steam sterilisation of aqueous preparations.
"""

from __future__ import annotations

import math
from collections.abc import Callable
from dataclasses import dataclass

import numpy as np

from procplan import validate
from procplan.caution import INDICATIVE
from procplan.errors import InvalidInputError
from procplan.outcomes.lethality_tables import LETHALITY_TABLES, TabulatedPreset
from procplan.outcomes.targets import history_arrays

LN10 = math.log(10.0)
#: Largest log reduction reported as a number when a check names no preset with its own maximum: a 12D
#: botulinum cook is the usual ceiling of what a process is validated for; beyond it "> 12" is shown.
DEFAULT_MAX_LOG_REDUCTION = 12.0


def lethal_rate(temperature_C, reference_C: float, z_C: float) -> np.ndarray:
    """Lethal rate L = 10^((T − T_ref)/z), minutes at T_ref per minute at T.

    >>> float(lethal_rate(111.1, 121.1, 10.0))
    0.1
    """
    ref = validate.number("reference_C", reference_C, unit="°C")
    z = validate.positive("z_C", z_C, "°C")
    return np.power(10.0, (np.asarray(temperature_C, dtype=float) - ref) / z)


def _segments_exact_linear(
    dt_s: np.ndarray, ta: np.ndarray, tb: np.ndarray, ref: float, z: float
) -> np.ndarray:
    # Δt (L_b − L_a)/ln(L_b/L_a) written around the larger end rate, Δt L_max (1 − e^{−|s|})/|s| with
    # s = ln(L_b/L_a): no overflow or 0·∞ however steep the interval.
    l_max = np.power(10.0, (np.maximum(ta, tb) - ref) / z)
    s = np.abs(tb - ta) * LN10 / z
    small = s < 1e-6
    s_safe = np.where(small, 1.0, s)
    factor = np.where(small, 1.0 - s / 2.0 + s * s / 6.0, -np.expm1(-s_safe) / s_safe)
    return dt_s * l_max * factor / 60.0


def _segments_trapezoid(dt_s: np.ndarray, ta: np.ndarray, tb: np.ndarray, ref: float, z: float) -> np.ndarray:
    return dt_s * 0.5 * (np.power(10.0, (ta - ref) / z) + np.power(10.0, (tb - ref) / z)) / 60.0


#: Integration of the lethal rate over a sampled history.
F_INTEGRATION_METHODS: dict[str, Callable[..., np.ndarray]] = {
    "exact-linear": _segments_exact_linear,
    "trapezoid": _segments_trapezoid,
}


def f_value(
    time_s, temperature_C, reference_C: float, z_C: float, *, method: str = "exact-linear"
) -> np.ndarray:
    """Cumulative lethality F(t) [min at ``reference_C``] of a temperature history (general method).

    F(t) = ∫ 10^((T − T_ref)/z) dt, integrated exactly for temperature linear between samples
    (``method="exact-linear"``, default) or by the trapezoid rule on the lethal rate (``"trapezoid"``).

    Parameters
    ----------
    time_s : sample times [s], strictly increasing
    temperature_C : temperature at each sample [°C] (the slowest-heating point for a safety check)
    reference_C : reference temperature T_ref [°C]
    z_C : z-value [°C], > 0
    method : a key of ``F_INTEGRATION_METHODS``

    Returns
    -------
    numpy.ndarray, F at every sample time [min], starting at 0

    Examples
    --------
    Fifteen minutes at 111.1 °C, F0 (121.1 °C, z 10 °C):

    >>> float(f_value([0, 900], [111.1, 111.1], 121.1, 10.0)[-1])
    1.5
    """
    t, temp = history_arrays(time_s, temperature_C)
    ref = validate.number("reference_C", reference_C, unit="°C")
    z = validate.positive("z_C", z_C, "°C")
    validate.choice("method", method, F_INTEGRATION_METHODS)
    seg = F_INTEGRATION_METHODS[method](np.diff(t), temp[:-1], temp[1:], ref, z)
    return np.concatenate(([0.0], np.cumsum(seg)))


def log_reduction(F_min, d_value_min: float):
    """Decimal reductions achieved by a lethality F with D-value D at the same reference temperature.

    log₁₀(N₀/N) = F / D

    Parameters
    ----------
    F_min : lethality [min at T_ref], ≥ 0 (scalar or array)
    d_value_min : D-value at T_ref [min], > 0

    >>> log_reduction(2.0, 2.0 / 6.0)
    6.0
    """
    d = validate.positive("d_value_min", d_value_min, "min")
    f = validate.array("F_min", F_min, minimum=0.0, unit="min")
    out = f / d
    return float(out) if out.ndim == 0 else out


@dataclass(frozen=True)
class LethalityTarget:
    """When a history accumulates a required lethality.

    reached : whether F reached ``required_F_min``
    time_s : when it did [s] (exact inverse of the exact-linear integral), or None
    required_F_min : the requirement [min at T_ref]
    total_F_min : F at the end of the history [min]
    reason : one line for reports
    """

    reached: bool
    time_s: float | None
    required_F_min: float
    total_F_min: float
    reason: str


def time_to_lethality(
    time_s, temperature_C, reference_C: float, z_C: float, required_F_min: float
) -> LethalityTarget:
    """First time at which the accumulated lethality F reaches ``required_F_min``.

    Inside the interval where F passes the requirement, with T linear in time (rate k = ln10·dT/dt/z),
    F(t_i + τ) = F_i + L_i (e^{kτ} − 1)/k is inverted exactly: τ = ln(1 + k ΔF / L_i)/k (ΔF/L_i when k = 0).

    >>> r = time_to_lethality([0, 3600], [70.0, 70.0], 70.0, 7.5, 2.0)
    >>> r.reached, round(r.time_s, 6)
    (True, 120.0)
    """
    t, temp = history_arrays(time_s, temperature_C)
    ref = validate.number("reference_C", reference_C, unit="°C")
    z = validate.positive("z_C", z_C, "°C")
    need = validate.positive("required_F_min", required_F_min, "min")
    F = f_value(t, temp, ref, z)
    total = float(F[-1])
    if total < need:
        return LethalityTarget(
            False,
            None,
            need,
            total,
            f"F reached only {total:.3g} min of the required {need:g} min by {t[-1] / 60:.1f} min",
        )
    i = int(np.argmax(F >= need))  # F[0] = 0 < need, so i >= 1
    dF_s = (need - F[i - 1]) * 60.0  # lethal seconds still needed in interval i-1..i
    la = 10.0 ** ((temp[i - 1] - ref) / z)
    k = (temp[i] - temp[i - 1]) / (t[i] - t[i - 1]) * LN10 / z
    tau = dF_s / la if abs(k) < 1e-12 else math.log1p(k * dF_s / la) / k
    when = float(min(max(t[i - 1] + tau, t[i - 1]), t[i]))
    return LethalityTarget(True, when, need, total, f"F = {need:g} min reached at {when / 60:.2f} min")


@dataclass(frozen=True)
class FieldLogReduction:
    """Log reduction over a product's volume from a temperature-field history.

    mean_log_reduction : volume-weighted mean of the local log reductions
    integrated_log_reduction : −log₁₀ of the volume-averaged surviving fraction (the survivors a whole-piece
        count would find; never more than the mean, dominated by the least-treated cells)
    minimum_log_reduction : the least-treated cell's log reduction
    cell_log_reduction : log reduction of every cell
    """

    mean_log_reduction: float
    integrated_log_reduction: float
    minimum_log_reduction: float
    cell_log_reduction: np.ndarray


def volume_average_log_reduction(
    time_s, field_temperature_C, cell_volume_m3, reference_C: float, z_C: float, d_value_min: float
) -> FieldLogReduction:
    """Log reductions of every cell of a field history, and their volume averages.

    For cell j with lethality F_j: n_j = F_j/D. Mean: Σ V_j n_j / Σ V_j. Integrated (volume-averaged
    survivors): −log₁₀(Σ V_j 10^(−n_j) / Σ V_j).

    Parameters
    ----------
    time_s : sample times [s], shape (n_times,)
    field_temperature_C : temperatures [°C], shape (n_times, n_cells)
    cell_volume_m3 : cell volumes (weights) [m³], shape (n_cells,), each > 0
    reference_C, z_C, d_value_min : as in :func:`f_value` and :func:`log_reduction`

    >>> r = volume_average_log_reduction([0, 120], [[70.0, 60.0], [70.0, 60.0]], [1.0, 1.0], 70.0, 7.5, 1 / 3)
    >>> round(r.mean_log_reduction, 3), round(r.minimum_log_reduction, 3)
    (3.139, 0.278)
    """
    t = validate.increasing("time_s", time_s, unit="s")
    field = validate.array("field_temperature_C", field_temperature_C, unit="°C")
    if field.ndim == 1:
        field = field[:, None]
    if field.ndim != 2 or field.shape[0] != t.size:
        raise InvalidInputError("field_temperature_C", f"shape {field.shape}", f"(n_times={t.size}, n_cells)")
    vol = validate.array("cell_volume_m3", cell_volume_m3, unit="m³")
    if vol.ndim != 1 or vol.size != field.shape[1]:
        raise InvalidInputError(
            "cell_volume_m3", f"{vol.size} values", f"one volume per cell ({field.shape[1]})"
        )
    if np.any(vol <= 0):
        raise InvalidInputError("cell_volume_m3", float(vol.min()), "> 0 m³ for every cell")
    ref = validate.number("reference_C", reference_C, unit="°C")
    z = validate.positive("z_C", z_C, "°C")
    d = validate.positive("d_value_min", d_value_min, "min")
    seg = _segments_exact_linear(np.diff(t)[:, None], field[:-1], field[1:], ref, z)
    n = seg.sum(axis=0) / d
    w = vol / vol.sum()
    mean = float(np.sum(w * n))
    # −log10 Σ w 10^(−n), computed stably around the least-treated cell.
    n_min = float(n.min())
    integrated = n_min - math.log10(float(np.sum(w * np.power(10.0, -(n - n_min)))))
    return FieldLogReduction(mean, integrated, n_min, n)


@dataclass(frozen=True)
class LethalityPreset:
    """A published (or common-practice) lethality requirement or kinetic reference with one z-value.

    name : registry key
    target : the organism or quality attribute
    reference_C : T_ref [°C]
    z_C : z-value [°C]
    required_F_min : F required at T_ref [min], or None where the preset only defines a unit
    log_reductions : decimal reductions the requirement stands for, or None
    kind : "safety" (a minimum at the slowest-heating point) or "quality" (an over-processing indicator,
        usually evaluated at the surface)
    source : document, year and table/page the numbers come from
    confirmed : whether every number was checked in a source that was read; False makes the preset indicative
    max_log_reduction : the largest log reduction the source supports (reported beyond it as "> N log")
    """

    name: str
    target: str
    reference_C: float
    z_C: float
    required_F_min: float | None
    log_reductions: float | None
    kind: str
    source: str
    confirmed: bool = True
    max_log_reduction: float | None = None

    tabulated = False

    @property
    def source_text(self) -> str:
        """The source as shown to users, marked indicative when not confirmed."""
        return self.source if self.confirmed else f"{INDICATIVE}: {self.source}"

    @property
    def d_value_min(self) -> float | None:
        """D-value at T_ref implied by the requirement, F/log reductions [min]."""
        if self.required_F_min is None or not self.log_reductions:
            return None
        return self.required_F_min / self.log_reductions

    def equivalent_time_min(self, temperature_C: float) -> float:
        """Holding time at ``temperature_C`` that gives the required F [min]: F·10^((T_ref − T)/z)."""
        if self.required_F_min is None:
            raise InvalidInputError(
                f"{self.name}.required_F_min", None, "a required F", "this preset defines a unit only"
            )
        temp = validate.number("temperature_C", temperature_C, unit="°C")
        return self.required_F_min * 10.0 ** ((self.reference_C - temp) / self.z_C)


_FSIS_A = (
    "USDA FSIS (1999), Appendix A: Compliance Guidelines for Meeting Lethality Performance Standards for Certain "
    "Meat and Poultry Products, guideline 1 table: 140 °F (60 °C) for 12 min in the {col} column; z 10 °F "
    "(5.56 °C) fitted to the table's rows (within a few per cent of them; the '-table' preset follows the rows)"
)

#: Lethality presets with one z-value.
Z_VALUE_PRESETS: dict[str, LethalityPreset] = {
    p.name: p
    for p in (
        LethalityPreset(
            "f0-botulinum-12d",
            "Clostridium botulinum (proteolytic) spores, 12D minimum botulinum cook of low-acid foods; F0 of pharmaceutical steam sterilisation",
            121.1,
            10.0,
            3.0,
            12.0,
            "safety",
            "F0 (121.1 °C, z 10 °C; European Pharmacopoeia 5.1.5); F0 ≥ 3 min as the minimum botulinum cook "
            "(12D) of low-acid canned foods: trade guidelines (National Canners Association 1968; NFPA 1971–1985) "
            "as summarised in the thermal-process lethality literature",
            True,
            12.0,
        ),
        LethalityPreset(
            "listeria-6log",
            "Listeria monocytogenes, 6-log reduction",
            70.0,
            7.5,
            2.0,
            6.0,
            "safety",
            "70 °C for 2 min: Mackey, B.M. & Bratchell, N. (1989), The heat resistance of Listeria monocytogenes, "
            "Lett. Appl. Microbiol. 9:89–94; z 7.5 °C fitted to UK equivalent times not read in the primary "
            "document (see listeria-6log-uk-table)",
            False,
            6.0,
        ),
        LethalityPreset(
            "salmonella-beef-7log-fsis",
            "Salmonella in cooked beef, roast beef and corned beef, 7-log (USDA FSIS Appendix A, 7-log column)",
            60.0,
            5.56,
            12.0,
            7.0,
            "safety",
            _FSIS_A.format(col="7-log"),
            True,
            7.0,
        ),
        LethalityPreset(
            "salmonella-beef-6.5log-fsis",
            "Salmonella in cooked beef, roast beef and corned beef, 6.5-log (USDA FSIS Appendix A, 6.5-log column)",
            60.0,
            5.56,
            12.0,
            6.5,
            "safety",
            _FSIS_A.format(col="6.5-log"),
            True,
            6.5,
        ),
        LethalityPreset(
            "dry-heat-fh",
            "dry-heat sterilisation of glass and metal (FH), equivalent of 2 h at 160 °C",
            170.0,
            20.0,
            120.0 * 10.0 ** ((160.0 - 170.0) / 20.0),
            None,
            "safety",
            "FH: T_ref 170 °C, z 20 °C (United States Pharmacopeia <1229.8> Dry heat sterilization, as quoted "
            "in its users' worked examples); required FH = 2 h at 160 °C, the pharmacopoeias' reference dry-heat "
            "cycle (European Pharmacopoeia 5.1.1, not read)",
            False,
        ),
        LethalityPreset(
            "depyrogenation-3log",
            "bacterial endotoxin (E. coli lipopolysaccharide), 3-log reduction by dry heat",
            250.0,
            46.4,
            3.0 * 4.99,
            3.0,
            "safety",
            "D(250 °C) 4.99 min and z 46.4 °C of E. coli lipopolysaccharide: Tsuji, K. & Harrison, S.J. (1978), "
            "Dry-heat destruction of lipopolysaccharide: dry-heat destruction kinetics, Appl. Environ. Microbiol. "
            "36(5):710–714; a 3-log endotoxin reduction as the depyrogenation requirement (United States "
            "Pharmacopeia <1228.1> Dry heat depyrogenation, not read)",
            False,
            3.0,
        ),
        LethalityPreset(
            "pasteurisation-units",
            "pasteurisation units of beverages: 1 PU = 1 min at 60 °C",
            60.0,
            7.0,
            None,
            None,
            "safety",
            "common practice in beer and beverage pasteurisation (T_ref 60 °C, z about 7 °C); no single published "
            "source checked",
            False,
        ),
        LethalityPreset(
            "cook-value-c100",
            "cook (quality) value C, an over-processing indicator evaluated at the surface",
            100.0,
            33.0,
            None,
            None,
            "quality",
            "common practice (C-value at 100 °C with z about 33 °C for overall quality loss); no published "
            "source checked",
            False,
        ),
    )
}

#: Lethality presets. One registry: the engine, the CLI and the UI all read it. The non-proteolytic
#: C. botulinum requirement is the published table only: one z-value from 90 °C/10 min asks for less than the
#: table below 90 °C (31.6 min at 85 °C where the table asks 36 min).
LETHALITY_PRESETS: dict[str, LethalityPreset | TabulatedPreset] = {**Z_VALUE_PRESETS, **LETHALITY_TABLES}


@dataclass(frozen=True)
class LethalityBasis:
    """How a lethality check accumulates: a z-value (F in min at T_ref) or a table (equivalent minutes at the
    table's reference row, fraction × that row's time).

    preset : the preset, or None for a user-defined check
    reference_C, z_C : T_ref [°C] and z [°C] (z None for a table)
    required_F_min : requirement [min at T_ref], or None
    """

    preset: LethalityPreset | TabulatedPreset | None
    reference_C: float
    z_C: float | None
    required_F_min: float | None

    @property
    def tabulated(self) -> bool:
        return self.z_C is None

    def segments(self, dt_s, ta, tb) -> np.ndarray:
        """Equivalent minutes at T_ref gained on each linear segment (any array shape)."""
        if self.tabulated:
            return self.preset.fraction_segments(dt_s, ta, tb) * self.preset.required_F_min
        return _segments_exact_linear(
            np.asarray(dt_s, float), np.asarray(ta, float), np.asarray(tb, float), self.reference_C, self.z_C
        )

    def cumulative_F_min(self, time_s, temperature_C) -> np.ndarray:
        """Equivalent minutes at T_ref at every sample of a history, starting at 0."""
        t, temp = history_arrays(time_s, temperature_C)
        return np.concatenate(([0.0], np.cumsum(self.segments(np.diff(t), temp[:-1], temp[1:]))))


def lethality_basis(preset_name, reference_C=None, z_C=None, required_F_min=None) -> LethalityBasis:
    """Resolve a lethality check (a preset name and/or its own values; the check's values win)."""
    preset = LETHALITY_PRESETS[preset_name] if preset_name else None
    if preset is not None and preset.tabulated:
        if z_C is not None or reference_C is not None or required_F_min is not None:
            raise InvalidInputError(
                "checks.lethality",
                preset_name,
                "a tabulated preset alone (a table has no T_ref, z or F to override)",
            )
        return LethalityBasis(preset, preset.reference_C, None, preset.required_F_min)
    ref = reference_C if reference_C is not None else preset.reference_C
    z = z_C if z_C is not None else preset.z_C
    req = required_F_min if required_F_min is not None else (preset.required_F_min if preset else None)
    return LethalityBasis(preset, ref, z, req)
