"""Tabulated lethality requirements: published time–temperature equivalents instead of one z-value.

A table gives, at each listed temperature T_i, the holding time t_i that achieves the table's log reduction.
Between rows the required time is interpolated log-linearly in time (linear in log₁₀ t against T), the way the
tables themselves are built, so the lethal rate r(T) = 1/t_req(T) is exponential in T on every interval. A
temperature history then accumulates the fraction of the required process (general method with the table's rate)

    fraction(t) = ∫₀ᵗ dτ / t_req(T(τ))

and the process passes when fraction ≥ 1; the log reduction it stands for is fraction × the table's log reduction.

Outside the table nothing is extrapolated, and both ends fall on the safe side:

* below the table's lowest temperature a hold contributes nothing (r = 0): the table gives no evidence of any
  kill there, and extending its slope would credit lethality the source never measured;
* above the highest temperature the highest row's rate is used (r = 1/t_last): lethality does not fall with
  temperature, so this rate is a lower bound of the true one, and extrapolating the slope would credit more.

For a history linear in time between samples, a segment from T_a to T_b lasting Δt contributes exactly
Δt · (R(T_b) − R(T_a)) / (T_b − T_a), with R the closed-form antiderivative of r over temperature (piecewise
exponential between rows, zero below the table, linear above it); Δt · r(T) when T_a = T_b.

References
----------
Chilled Food Association (2006), Best Practice Guidelines for the Production of Chilled Foods, 4th ed., The
Stationery Office: equivalent time/temperature combinations for spores of non-proteolytic C. botulinum (80–100 °C),
as quoted by the UK Food Standards Agency, Vacuum packing and modified atmosphere packing training, module 3,
section 2 (table "Equivalent time/temperature combinations for spores of non-proteolytic Clostridium botulinum").
USDA FSIS (1999), Appendix A: Compliance guidelines for meeting lethality performance standards for certain meat
and poultry products, guideline 1 (time–temperature table for cooked beef, roast beef and cooked corned beef).
"""

from __future__ import annotations

from dataclasses import dataclass

import numpy as np

from procplan.caution import INDICATIVE
from procplan.errors import InvalidInputError
from procplan.outcomes.targets import history_arrays

LN10 = float(np.log(10.0))
#: Temperature span below which a segment is integrated as a constant hold at its mean (no 0/0) [°C].
_FLAT_SEGMENT_C = 1e-4


def fahrenheit_to_C(temperature_F: float) -> float:
    """°F to °C, (T − 32)·5/9."""
    return (float(temperature_F) - 32.0) * 5.0 / 9.0


@dataclass(frozen=True)
class TabulatedPreset:
    """A lethality requirement given as a published table of equivalent holding times.

    name : registry key
    target : the organism and the reduction the table stands for
    temperature_C : the table's temperatures [°C], strictly increasing (converted from °F where published so)
    time_min : the holding time of each row [min], > 0
    published_rows : each row as the source prints it (e.g. ("146 °F", "182 sec.")), for display
    reference_index : the row used as the reference for "equivalent minutes" (e.g. 90 °C / 10 min)
    log_reductions : decimal reductions the table stands for; also the largest the source supports
    kind : "safety" (a minimum at the slowest-heating point)
    source : document, year and table/page the rows come from
    confirmed : whether every row was checked in a source that was read; False makes the preset indicative
    notes : how rows outside the interpolation rule were handled (e.g. "0 sec." rows left out)
    """

    name: str
    target: str
    temperature_C: tuple[float, ...]
    time_min: tuple[float, ...]
    published_rows: tuple[tuple[str, str], ...]
    reference_index: int
    log_reductions: float
    kind: str
    source: str
    confirmed: bool
    notes: str = ""

    def __post_init__(self):
        temp = np.asarray(self.temperature_C, dtype=float)
        times = np.asarray(self.time_min, dtype=float)
        if temp.size < 1 or temp.size != times.size or np.any(np.diff(temp) <= 0):
            raise InvalidInputError(
                f"{self.name}.temperature_C", self.temperature_C, "strictly increasing, one time per row"
            )
        if np.any(times <= 0):
            raise InvalidInputError(f"{self.name}.time_min", self.time_min, "> 0 min in every row")

    # --- the fields a z-value preset also has, so reports treat both alike ------------------------------
    tabulated = True
    z_C = None

    @property
    def reference_C(self) -> float:
        """Temperature of the reference row [°C]; lethality is expressed in minutes at it."""
        return float(self.temperature_C[self.reference_index])

    @property
    def required_F_min(self) -> float:
        """Holding time of the reference row [min]: the requirement in equivalent minutes."""
        return float(self.time_min[self.reference_index])

    @property
    def max_log_reduction(self) -> float:
        """Largest log reduction the source supports: the table's own."""
        return float(self.log_reductions)

    @property
    def source_text(self) -> str:
        """The source as shown to users, marked indicative when not every row was confirmed."""
        return self.source if self.confirmed else f"{INDICATIVE}: {self.source}"

    # --- the table's rate -------------------------------------------------------------------------------
    def _arrays(self):
        temp = np.asarray(self.temperature_C, dtype=float)
        log_t = np.log10(np.asarray(self.time_min, dtype=float))
        slope = np.diff(log_t) / np.diff(temp)  # d log10 t / dT per interval
        # R at each row: ∫_{T0}^{Ti} r dT, r = 10^(−log t(T)) [1/min]
        rate = 10.0 ** (-log_t)
        seg = np.where(
            np.abs(slope) < 1e-15,
            rate[:-1] * np.diff(temp),
            rate[:-1] * -np.expm1(-slope * LN10 * np.diff(temp)) / np.where(slope == 0, 1.0, slope * LN10),
        )
        return temp, log_t, slope, rate, np.concatenate(([0.0], np.cumsum(seg)))

    def required_time_min(self, temperature_C) -> np.ndarray | float:
        """Holding time the table asks for at ``temperature_C`` [min]; ∞ below the table (no credit).

        >>> CFA = LETHALITY_TABLES["c-botulinum-nonproteolytic-6log"]
        >>> float(CFA.required_time_min(85.0)), float(CFA.required_time_min(120.0))
        (36.0, 1.0)
        """
        rate = self.rate_per_min(temperature_C)
        with np.errstate(divide="ignore"):
            out = np.where(rate > 0, 1.0 / np.where(rate > 0, rate, 1.0), np.inf)
        return float(out) if np.ndim(out) == 0 else out

    def rate_per_min(self, temperature_C) -> np.ndarray:
        """Fraction of the process delivered per minute at ``temperature_C``, 1/t_req(T) [1/min]."""
        temp, log_t, slope, rate, _ = self._arrays()
        x = np.asarray(temperature_C, dtype=float)
        i = np.clip(np.searchsorted(temp, x, side="right") - 1, 0, max(temp.size - 2, 0))
        inside = 10.0 ** -(log_t[i] + (slope[i] if slope.size else 0.0) * (x - temp[i]))
        return np.where(x < temp[0], 0.0, np.where(x >= temp[-1], rate[-1], inside))

    def _antiderivative(self, x: np.ndarray) -> np.ndarray:
        """R(T) = ∫_{T0}^{T} r dT [°C/min], 0 below the table, linear above it."""
        temp, _, slope, rate, cum = self._arrays()
        if temp.size == 1:
            return np.where(x < temp[0], 0.0, rate[0] * (x - temp[0]))
        i = np.clip(np.searchsorted(temp, x, side="right") - 1, 0, temp.size - 2)
        dx = x - temp[i]
        k = slope[i] * LN10
        k_safe = np.where(np.abs(k) < 1e-15, 1.0, k)
        part = np.where(np.abs(k) < 1e-15, rate[i] * dx, rate[i] * -np.expm1(-k * dx) / k_safe)
        above = cum[-1] + rate[-1] * (x - temp[-1])
        return np.where(x < temp[0], 0.0, np.where(x >= temp[-1], above, cum[i] + part))

    def fraction_segments(self, dt_s, ta, tb) -> np.ndarray:
        """Fraction of the process accumulated on each linear segment (T_a → T_b over Δt), any array shape."""
        dt = np.asarray(dt_s, dtype=float) / 60.0
        ta = np.asarray(ta, dtype=float)
        tb = np.asarray(tb, dtype=float)
        span = tb - ta
        flat = np.abs(span) < _FLAT_SEGMENT_C
        ramp = (self._antiderivative(tb) - self._antiderivative(ta)) / np.where(flat, 1.0, span)
        return dt * np.where(flat, self.rate_per_min(0.5 * (ta + tb)), ramp)

    def process_fraction(self, time_s, temperature_C) -> np.ndarray:
        """Cumulative fraction of the required process at every sample of a history, starting at 0.

        >>> CFA = LETHALITY_TABLES["c-botulinum-nonproteolytic-6log"]
        >>> round(float(CFA.process_fraction([0, 600], [90.0, 90.0])[-1]), 12)
        1.0
        """
        t, temp = history_arrays(time_s, temperature_C)
        seg = self.fraction_segments(np.diff(t), temp[:-1], temp[1:])
        return np.concatenate(([0.0], np.cumsum(seg)))


def _table(name, target, rows_C_min, published, ref_temp_C, logs, source, confirmed, notes=""):
    temps = tuple(float(r[0]) for r in rows_C_min)
    times = tuple(float(r[1]) for r in rows_C_min)
    ref = int(np.argmin(np.abs(np.asarray(temps) - ref_temp_C)))
    return TabulatedPreset(
        name, target, temps, times, tuple(published), ref, logs, "safety", source, confirmed, notes
    )


def _cfa_botulinum() -> TabulatedPreset:
    # Source: CFA (2006) Best Practice Guidelines, 4th ed., as quoted by the UK FSA VP/MAP training, module 3,
    # section 2: every row below was read in that table.
    rows = [
        (80, 129.0), (81, 100.0), (82, 77.0), (83, 60.0), (84, 46.0), (85, 36.0), (86, 28.0),
        (87, 22.0), (88, 17.0), (89, 13.0), (90, 10.0), (91, 7.9), (92, 6.3), (93, 5.0),
        (94, 4.0), (95, 3.2), (96, 2.5), (97, 2.0), (98, 1.6), (99, 1.3), (100, 1.0),
    ]  # fmt: skip
    return _table(
        "c-botulinum-nonproteolytic-6log",
        "non-proteolytic Clostridium botulinum spores, 6-log reduction (chilled foods with extended shelf life)",
        rows,
        [(f"{t} °C", f"{m:g} min") for t, m in rows],
        90.0,
        6.0,
        "Chilled Food Association (2006), Best Practice Guidelines for the Production of Chilled Foods, 4th ed. "
        "(The Stationery Office): equivalent time/temperature combinations for spores of non-proteolytic "
        "C. botulinum, 80–100 °C (90 °C for 10 min); quoted in the UK Food Standards Agency's vacuum and modified "
        "atmosphere packing guidance (training module 3, section 2)",
        True,
        "no credit below 80 °C; above 100 °C the 100 °C rate (1 min)",
    )


#: USDA FSIS (1999) Appendix A, guideline 1: (°F, 6.5-log time, 7-log time), times as published.
#: Rows 158–160 °F ("0 sec.", lethality reached instantly) cannot be interpolated in log time and are left
#: out: at and above 157 °F the 157 °F rate applies, which asks for more than the source (safe side).
_FSIS_BEEF = (
    (130, "112 min.", "121 min."), (131, "89 min.", "97 min."), (132, "71 min.", "77 min."),
    (133, "56 min.", "62 min."), (134, "45 min.", "47 min."), (135, "36 min.", "37 min."),
    (136, "28 min.", "32 min."), (137, "23 min.", "24 min."), (138, "18 min.", "19 min."),
    (139, "15 min.", "15 min."), (140, "12 min.", "12 min."), (141, "9 min.", "10 min."),
    (142, "8 min.", "8 min."), (143, "6 min.", "6 min."), (144, "5 min.", "5 min."),
    (145, "4 min.", "4 min."), (146, "169 sec.", "182 sec."), (147, "134 sec.", "144 sec."),
    (148, "107 sec.", "115 sec."), (149, "85 sec.", "91 sec."), (150, "67 sec.", "72 sec."),
    (151, "54 sec.", "58 sec."), (152, "43 sec.", "46 sec."), (153, "34 sec.", "37 sec."),
    (154, "27 sec.", "29 sec."), (155, "22 sec.", "23 sec."), (156, "17 sec.", "19 sec."),
    (157, "14 sec.", "15 sec."),
)  # fmt: skip


def _published_minutes(text: str) -> float:
    value, unit = text.split()
    return float(value) / (60.0 if unit.startswith("sec") else 1.0)


def _fsis_beef(logs: float) -> TabulatedPreset:
    col = 1 if logs == 6.5 else 2
    rows = [(fahrenheit_to_C(r[0]), _published_minutes(r[col])) for r in _FSIS_BEEF]
    label = f"{logs:g}-log"
    return _table(
        f"salmonella-beef-{logs:g}log-fsis-table",
        f"Salmonella in cooked beef, roast beef and cooked corned beef, {label} reduction",
        rows,
        [(f"{r[0]} °F", r[col]) for r in _FSIS_BEEF],
        fahrenheit_to_C(140.0),
        logs,
        "USDA FSIS (1999), Appendix A: Compliance Guidelines for Meeting Lethality Performance Standards for "
        f"Certain Meat and Poultry Products, guideline 1, time–temperature table ({label} lethality column), "
        "130–157 °F",
        True,
        "no credit below 130 °F; the 158–160 °F rows ('0 sec.') are not used: at and above 157 °F the 157 °F "
        "time applies",
    )


def _uk_listeria() -> TabulatedPreset:
    rows = [(60, 45.0), (65, 10.0), (70, 2.0), (75, 0.5), (80, 0.1)]
    published = [
        ("60 °C", "45 min"),
        ("65 °C", "10 min"),
        ("70 °C", "2 min"),
        ("75 °C", "30 s"),
        ("80 °C", "6 s"),
    ]
    return _table(
        "listeria-6log-uk-table",
        "Listeria monocytogenes, 6-log reduction (UK cooking equivalents of 70 °C for 2 min)",
        rows,
        published,
        70.0,
        6.0,
        "70 °C for 2 min: Mackey, B.M. & Bratchell, N. (1989), The heat resistance of Listeria monocytogenes, "
        "Lett. Appl. Microbiol. 9:89–94 (abstract); the other rows as reproduced in UK food-hygiene training "
        "material citing Food Standards Agency guidance, the primary document not read",
        False,
        "no credit below 60 °C; above 80 °C the 80 °C rate (6 s)",
    )


#: Tabulated lethality presets, merged into the one registry LETHALITY_PRESETS.
LETHALITY_TABLES: dict[str, TabulatedPreset] = {
    p.name: p for p in (_cfa_botulinum(), _fsis_beef(6.5), _fsis_beef(7.0), _uk_listeria())
}
