"""Steps in hot dry air: heat and moisture of an unwrapped product solved together.

The heat problem (:func:`procplan.conduction.finite_volume.solve_conduction`) carries at its surface the
latent heat of the water that evaporates, q″ = −n″(T_s, a_w) h_fg (:class:`procplan.surface.oven_air.DryingAir`);
the moisture problem (:func:`procplan.conduction.moisture.solve_moisture`) loses that water at its surface,
and the sorption isotherm (:mod:`procplan.properties.sorption`) turns the surface moisture into the surface
water activity a_w. While the surface holds free water (a_w = 1) it sits close to the air's wet-bulb
temperature; once the moisture inside cannot keep up, a_w falls, the surface dries into a crust, evaporation
fades and the surface heats towards the oven.

Coupling: Gauss–Seidel waveform relaxation over the step. Pass 1 runs the heat problem with a wet surface
(a_w = 1 throughout); every pass then runs the moisture problem with the surface-temperature history of the
heat pass, and the next heat pass with the surface water-activity history of that moisture pass, until the
surface-temperature histories of two heat passes differ by less than :data:`SURFACE_TOLERANCE_K` (at most
:data:`MAX_PASSES` passes; each sub-problem is solved implicitly, so each pass is stable, and the iteration
converges to the coupled solution of the two time-discretised problems; tests/run/test_dry_oven.py). The
exchanged waveform is under-relaxed and Anderson-accelerated (:class:`_Anderson`); a rerun of the same step
(h evaluated again, a shorter span for a weight stop) starts from the waveform an earlier solve converged to
(``guess``), and its first heat pass is compared with that solve's last one.

Modelling choices (each on the side stated):

* One moisture history for the whole surface, that of the centre of the face on the shortest axis (the middle
  of the curved side of a joint): corners and edges dry first and run hotter than it.
* Where the moisture change reaches only a thin layer (5√(D t) below the half-thickness) the moisture problem
  is solved on that layer as a plane sheet with a sealed back (its curvature neglected).
* D follows Arrhenius at the time-averaged surface temperature of the previous heat pass (the hottest part of
  the layer: it overstates the supply of water to the surface, so the surface stays wet longer and the heating
  is predicted slower, the safe direction for a cook time).
* The heat problem boils each cell's water off at 100 °C (:mod:`procplan.properties.boiling`): the wet inside
  cannot heat past the boiling point, and a crust of dry matter grows behind an evaporation front. The weight
  loss is the larger of the surface evaporation and the water boiled off (both count the crust's water).
* The moisture problem carries evaporation alone: the juice a meat product's heated proteins expel (drip) is
  bounded from the temperature field by :mod:`procplan.run.drip` (the upper bound of the step's cook loss: the
  evaporation here is its lower bound); fat rendered out is not modelled.

References
----------
White, J. (1989). Relaxation methods for ordinary differential equations (waveform relaxation); Lelarasmee,
E., Ruehli, A.E., Sangiovanni-Vincentelli, A.L. (1982). The waveform relaxation method for time-domain analysis
of large scale integrated circuits. IEEE Trans. CAD 1(3), 131–145.
"""

from __future__ import annotations

from dataclasses import dataclass, field, replace
from typing import Any

import numpy as np

from procplan.conduction.fv_boundary import SurfaceBoundary
from procplan.conduction.moisture import MoistureHistory, arrhenius_m2_s, layer_depth_m, solve_moisture
from procplan.geometry import Geometry
from procplan.properties.boiling import LATENT_VAPORISATION_J_KG, boiled_share, with_boiling
from procplan.properties.sorption import (
    CATEGORY_ISOTHERM,
    ISOTHERMS,
    MOISTURE_DIFFUSIVITIES,
    GABIsotherm,
    MoistureDiffusivity,
    dry_basis,
)
from procplan.run.dry_stop import (
    crossing_s,
    loss_history_kg,
    lost_history_kg,
    solve_to_weight_loss,
    weight_checkpoints,
)
from procplan.surface.oven_air import DryingAir

#: Passes of the waveform relaxation at most, and the change of the surface-temperature history [K] below
#: which the coupled solution is taken as converged.
MAX_PASSES = 8
SURFACE_TOLERANCE_K = 0.1
#: Surface water activity below which the surface counts as dried (crusted).
DRY_SURFACE_WATER_ACTIVITY = 0.98
#: Weight of the newest pass in the exchanged histories from the second pass on.
RELAXATION = 0.5
#: Points of the histories exchanged between the heat and the moisture passes.
HISTORY_POINTS = 241
#: Earlier passes whose residuals the Anderson acceleration of the exchanged waveform combines.
ANDERSON_DEPTH = 2


@dataclass(frozen=True)
class DryOvenModel:
    """What a dry-air step needs besides the heat problem: the air, the product's isotherm and diffusivity."""

    air: DryingAir
    isotherm: GABIsotherm
    diffusivity: MoistureDiffusivity
    initial_kg_kg: float
    dry_matter_kg_m3: float
    #: the heat problem's property table: the product's with its water boiling off at 100 °C
    #: (:mod:`procplan.properties.boiling`; None: the product's own)
    heat_props: Any = field(default=None, repr=False, compare=False)

    @classmethod
    def for_product(cls, product, props, air: DryingAir) -> DryOvenModel | None:
        """The model for ``product`` (None when its category has no published isotherm and diffusivity)."""
        name = CATEGORY_ISOTHERM.get(product.category)
        comp = product.composition_dict
        if name is None or name not in MOISTURE_DIFFUSIVITIES or "water" not in comp:
            return None
        w = float(comp["water"])
        rho = float(props.mass_density_kg_m3)
        heat_props = with_boiling(props, comp)
        return cls(
            air, ISOTHERMS[name], MOISTURE_DIFFUSIVITIES[name], dry_basis(w), rho * (1.0 - w), heat_props
        )

    def describe(self) -> str:
        return (
            f"surface drying in {self.air.describe()}; GAB isotherm of {self.isotherm.name}, moisture diffusivity "
            f"{self.diffusivity.D_ref_m2_s:.2g} m²/s at {self.diffusivity.reference_C:g} °C (indicative)"
            + (
                "; inside, the water boils off at 100 °C behind the crust"
                if self.heat_props is not None
                else ""
            )
        )


@dataclass(frozen=True, eq=False)
class DryOvenResult:
    """A dry-air step: the heat result of the last pass, the moisture history and the coupling's record.

    Attributes
    ----------
    heat : the ConductionResult of the last heat pass
    moisture : the MoistureHistory of the last moisture pass (face-centre surface)
    passes : heat passes run
    surface_change_K : largest change of the surface-temperature history on the last pass [K]
    lost_kg : water evaporated from one piece [kg]
    wet_bulb_C : wet-bulb temperature of the air [°C]
    wet_until_s : time the surface water activity falls below :data:`DRY_SURFACE_WATER_ACTIVITY` [s] (None:
        it stays wet)
    weight_stop_s : time the step's weight-loss stop ended it [s] (None: no such stop, or not reached)
    settle_K : the settling tolerance the solve ran to [K]
    exchange : the surface waveform the last heat pass ran with (times [s], evaporation the moisture inside
        supplied [kg/m²s], share of the air's drive on a wet surface [-]), to start a later solve of the step
    """

    heat: Any
    moisture: MoistureHistory
    passes: int
    surface_change_K: float
    lost_kg: float
    wet_bulb_C: float
    wet_until_s: float | None
    weight_stop_s: float | None = None
    exchange: tuple[np.ndarray, np.ndarray, np.ndarray] | None = field(default=None, repr=False)
    settle_K: float = SURFACE_TOLERANCE_K
    boiled: tuple[np.ndarray, np.ndarray] | None = field(default=None, repr=False)

    @property
    def boiled_kg(self) -> float:
        """Water boiled off inside past the boiling point in the step, per piece [kg]."""
        return 0.0 if self.boiled is None else float(self.boiled[1][-1])

    @property
    def settled(self) -> bool:
        """Whether the coupling settled within :data:`SURFACE_TOLERANCE_K` (not only a trial's looser one)."""
        return self.surface_change_K < SURFACE_TOLERANCE_K


def _moisture_geometry(geometry: Geometry, D_m2_s: float, end_s: float) -> Geometry:
    """The product itself when it is 1-D and the moisture change reaches deep into it, else a surface layer."""
    half = min(a.length_m for a in geometry.axes)
    depth = layer_depth_m(D_m2_s, end_s, half)
    if len(geometry.axes) == 1 and depth >= 0.5 * half:
        return geometry
    return Geometry("slab", thickness_m=depth, faces=1)


def _moisture_pass(model: DryOvenModel, geometry: Geometry, heat, n_nodes: int) -> MoistureHistory:
    t = np.asarray(heat.time_s, dtype=float)
    ts = np.asarray(heat.face_surface_C, dtype=float)
    end = float(t[-1])
    mean_ts = float(np.trapezoid(ts, t) / end) if end > 0 else float(ts[0])
    d = model.diffusivity
    D = float(arrhenius_m2_s(mean_ts, d.D_ref_m2_s, d.activation_J_mol, d.reference_C))
    iso, air = model.isotherm, model.air

    def flux(time_s, x_surface):
        x = np.asarray(x_surface, dtype=float)
        if x.size == 1:  # the 1-D moisture problem has one surface node: floats cost less than arrays
            surface_C = float(np.interp(time_s, t, ts))
            return np.full(x.shape, air.mass_flux_one(surface_C, iso.water_activity_one(float(x.flat[0]))))
        return air.mass_flux_kg_m2s(np.interp(time_s, t, ts), iso._water_activity(x))

    return solve_moisture(
        _moisture_geometry(geometry, D, end),
        D,
        model.dry_matter_kg_m3,
        model.initial_kg_kg,
        flux,
        end,
        output_time_s=t,
        n_nodes=n_nodes,
    )


def _boiling_settings(heat_props, mass_density_kg_m3: float, heat_settings: dict) -> tuple[dict, list]:
    """The heat pass's settings with a peak measure that records the water boiled off so far [kg per piece]
    at each row of the history (the step's own peak measure, a meat's drip, still returned to the solver)."""
    rows: list[float] = []
    tb = heat_props.extra.get("boiling_C")
    if tb is None:
        return heat_settings, rows
    band, water = heat_props.extra["boiling_band_K"], heat_props.extra["water_fraction"]
    inner = heat_settings.get("peak_measure")

    def measure(peak_C, volume_m3):
        rows.append(
            mass_density_kg_m3 * water * float(np.add.reduce(volume_m3 * boiled_share(peak_C, tb, band)))
        )
        return 0.0 if inner is None else inner(peak_C, volume_m3)

    return {**heat_settings, "peak_measure": measure}, rows


def _with_boiling_record(heat, rows: list, heat_settings: dict):
    """The heat pass's result (without the boiling's own peak measure) and the water boiled off in the step so
    far [kg per piece] at each time of its history, from the step's start (None: nothing recorded)."""
    if not rows:
        return heat, None
    boiled = np.asarray(rows, dtype=float) * heat.grid.piece_factor
    if "peak_measure" not in heat_settings:
        heat = replace(heat, peak_measure=None, peak_field=None)
    return heat, boiled - boiled[0]


def _net_of_boiling(heat, boiled, props, heat_props, piece_mass_kg: float):
    """The step's heat result as the rest of the run reads it: its mean temperature that of the product's own
    enthalpy without the latent heat of the water boiled off (the water has left; the run's energy balance
    counts that heat, :func:`procplan.run.assess`). Returns (result, (times [s], water boiled off so far
    [kg])), the second None when nothing was recorded."""
    if boiled is None:
        return heat, None
    mean_h = heat_props.enthalpy(np.asarray(heat.mean_C, dtype=float))
    mean_h = mean_h - LATENT_VAPORISATION_J_KG * boiled / piece_mass_kg
    return replace(heat, mean_C=props.temperature(mean_h)), (np.asarray(heat.time_s, dtype=float), boiled)


def _history_change(a, b) -> float:
    """Largest difference of two surface-temperature histories over their common time span [K]."""
    end = min(a.time_s[-1], b.time_s[-1])
    t = np.linspace(0.0, end, 401)
    return float(
        np.max(np.abs(np.interp(t, a.time_s, a.face_surface_C) - np.interp(t, b.time_s, b.face_surface_C)))
    )


def _start_waveform(end_time_s: float, guess) -> tuple[np.ndarray, np.ndarray, np.ndarray]:
    """The exchanged surface waveform (times [s], flux [kg/m²s], wet share [-]) the first heat pass runs with:
    a wet surface throughout, or the converged waveform of an earlier solve of the same step (``guess``, a
    :class:`DryOvenResult`; held at its last value beyond its end)."""
    if guess is None or guess.exchange is None:
        return np.array([0.0, end_time_s]), np.zeros(2), np.ones(2)
    t, n, wet = guess.exchange
    grid = np.linspace(0.0, end_time_s, HISTORY_POINTS)
    return grid, np.interp(grid, t, n), np.interp(grid, t, wet)


class _Anderson:
    """Anderson acceleration of the relaxed fixed-point iteration x ← x + β (G(x) − x) on the exchanged
    waveform, on a fixed time grid (Walker, H.F., Ni, P. (2011). Anderson acceleration for fixed-point
    iterations. SIAM J. Numer. Anal. 49(4), 1715–1735, Alg. AA with depth m): the least-squares combination of
    the last :data:`ANDERSON_DEPTH` residual differences. A step that makes the residual grow is dropped
    for the plain relaxed step (the switch from wet to dry makes G only piecewise smooth)."""

    def __init__(self, grid: np.ndarray, flux_scale: float) -> None:
        self.grid, self.scale = grid, max(flux_scale, 1e-12)
        self.xs: list[np.ndarray] = []
        self.fs: list[np.ndarray] = []

    def vector(self, t, n, wet) -> np.ndarray:
        return np.concatenate([np.interp(self.grid, t, n) / self.scale, np.interp(self.grid, t, wet)])

    def next(self, x: np.ndarray, gx: np.ndarray) -> tuple[np.ndarray, np.ndarray, np.ndarray]:
        f = gx - x
        if self.fs and np.linalg.norm(f) > np.linalg.norm(self.fs[-1]):
            self.xs, self.fs = [], []  # the residual grew: restart from the plain relaxed step
        self.xs.append(x)
        self.fs.append(f)
        self.xs, self.fs = self.xs[-ANDERSON_DEPTH - 1 :], self.fs[-ANDERSON_DEPTH - 1 :]
        new = x + RELAXATION * f
        if len(self.fs) > 1:
            dF = np.diff(np.array(self.fs), axis=0).T
            dX = np.diff(np.array(self.xs), axis=0).T
            gamma = np.linalg.lstsq(dF, f, rcond=None)[0]
            new = new - (dX + RELAXATION * dF) @ gamma
        m = self.grid.size
        return self.grid, new[:m] * self.scale, np.clip(new[m:], 0.0, 1.0)


def solve_dry_oven(
    geometry: Geometry,
    props,
    initial,
    boundary: SurfaceBoundary,
    model: DryOvenModel,
    end_time_s: float,
    *,
    moisture_nodes: int = 41,
    guess: DryOvenResult | None = None,
    settle_K: float = SURFACE_TOLERANCE_K,
    **heat_settings: Any,
) -> DryOvenResult:
    """Heat and moisture of one step in hot dry air, coupled by waveform relaxation (see the module note).

    Parameters
    ----------
    geometry, props, initial : the product's shape, property table and starting field (as for solve_conduction)
    boundary : the step's convective boundary (medium or sink temperature and effective h), without evaporation
    model : the air and the product's moisture properties
    end_time_s : the step's duration [s]
    moisture_nodes : nodes of the moisture problem
    guess : an earlier result of the same step (another span or h): its converged surface waveform starts the
        iteration (None: a wet surface)
    settle_K : change of the surface-temperature history [K] below which the coupling counts as settled
        (:data:`SURFACE_TOLERANCE_K`; a looser value only for a trial span, e.g. while a weight stop is sought)
    heat_settings : passed on to solve_conduction (n_nodes, dt_s, stop_when_core_C, max_steps, …)
    """
    from procplan.conduction.finite_volume import solve_conduction

    air, iso = model.air, model.isotherm
    heat_props = model.heat_props if model.heat_props is not None else props
    # a history on a fixed grid: the moisture pass lands on the heat pass's times, and few times keep both fast
    heat_settings.setdefault("output_time_s", np.linspace(0.0, end_time_s, HISTORY_POINTS))
    n_t, n_v, wet_v = _start_waveform(end_time_s, guess)
    accel = _Anderson(np.linspace(0.0, end_time_s, HISTORY_POINTS), air.mass_flux_kg_m2s(air.wet_bulb_C()))
    # from a guess the iteration goes on: its last heat pass is the one the first pass here is compared with
    heat, moisture = (guess.heat if guess is not None else None), None
    change, passes = float("inf"), 0
    for passes in range(1, MAX_PASSES + 1):

        def q_extra(t, ts, n_t=n_t, n_v=n_v, wet_v=wet_v):
            # wet on the last pass: the air's drive on a wet surface; dried: the flux the moisture inside supplied
            w = np.interp(t, n_t, wet_v)
            wet_flux, hfg = air.wet_flux_and_latent(ts)
            return -(w * wet_flux + (1.0 - w) * np.interp(t, n_t, n_v)) * hfg

        bnd = SurfaceBoundary(boundary.medium_C, boundary.h_W_m2K, q_extra)
        settings, boiled_rows = _boiling_settings(heat_props, props.mass_density_kg_m3, heat_settings)
        new, boiled = _with_boiling_record(
            solve_conduction(geometry, heat_props, initial, bnd, end_time_s, **settings),
            boiled_rows,
            heat_settings,
        )
        if heat is not None:
            change = _history_change(heat, new)
        heat = new
        moisture = _moisture_pass(model, geometry, heat, moisture_nodes)
        aw_t, aw_v = moisture.time_s, np.asarray(iso.water_activity(moisture.surface_kg_kg), dtype=float)
        n_new = air.mass_flux_kg_m2s(np.interp(aw_t, heat.time_s, heat.face_surface_C), aw_v)
        wet_new = (aw_v >= DRY_SURFACE_WATER_ACTIVITY).astype(float)
        if change < settle_K:
            n_t, n_v, wet_v = aw_t, n_new, wet_new
            break
        if passes == 1 and guess is None:  # from the wet start the whole new waveform is taken
            n_t, n_v, wet_v = aw_t, n_new, wet_new
        else:  # under-relaxed and accelerated: the switch from wet to dry moves back and forth otherwise
            n_t, n_v, wet_v = accel.next(accel.vector(n_t, n_v, wet_v), accel.vector(aw_t, n_new, wet_new))
    dried = np.nonzero(aw_v < DRY_SURFACE_WATER_ACTIVITY)[0]
    heat, boiled = _net_of_boiling(
        heat, boiled, props, heat_props, props.mass_density_kg_m3 * geometry.volume_m3
    )
    lost = lost_history_kg(moisture, boiled, geometry.area_m2)[1]
    return DryOvenResult(
        heat=heat,
        moisture=moisture,
        passes=passes,
        surface_change_K=change,
        lost_kg=float(lost[-1]),
        wet_bulb_C=air.wet_bulb_C(),
        wet_until_s=float(aw_t[dried[0]]) if dried.size else None,
        exchange=(n_t, n_v, wet_v),
        settle_K=settle_K,
        boiled=boiled,
    )


@dataclass(frozen=True)
class DryingSummary:
    """What a dry-air step did to the product's water, per piece (shown in the summary, JSON and sheet).

    Attributes
    ----------
    weight_loss_kg, weight_loss_percent : water evaporated [kg] and as a share of the piece's mass at the start
        of the step [%]
    yield_percent : mass after the step over mass before it with evaporation alone [%] (for a meat product the
        upper bound of the yield; its lower bound: :class:`procplan.run.drip.DripSummary`)
    wet_bulb_C : wet-bulb temperature of the air [°C]
    wet_until_s : time from the step's start the surface stays wet [s] (None: wet to the end)
    surface_moisture_kg_kg, mean_layer_moisture_kg_kg : moisture at the end, at the surface and in the modelled
        layer [kg water / kg dry matter]
    initial_moisture_kg_kg : moisture at the start [kg/kg dry matter]
    layer_depth_m : depth of the modelled moisture layer [m]
    passes, surface_change_K : coupling passes and the last change of the surface temperature [K]
    mass_balance_error : of the moisture problem [-]
    model : the model in words
    time_s : times of the histories below, from the step's start [s]
    loss_percent, yield_percent_history : water evaporated so far [% of the piece's mass at the step's start]
        and the mass left [%], at ``time_s``
    surface_moisture_history_kg_kg : surface moisture at ``time_s`` [kg water / kg dry matter]
    stop_weight_loss_percent : the step's weight-loss stop [%] (None: none)
    weight_stop_s : time from the step's start the weight loss was reached and ended the step [s] (None: no
        stop, or not reached within the step)
    weight_checkpoints : (time from the step's start [s], predicted weight loss [%]) for weighing pieces
    boiled_kg : water boiled off inside past the boiling point [kg] (:mod:`procplan.properties.boiling`); the
        weight loss is the larger of it and the surface evaporation
        (:func:`procplan.run.dry_stop.lost_history_kg`)
    surface_evaporated_kg : water the moisture problem evaporated at the surface [kg]
    """

    weight_loss_kg: float
    weight_loss_percent: float
    yield_percent: float
    wet_bulb_C: float
    wet_until_s: float | None
    surface_moisture_kg_kg: float
    mean_layer_moisture_kg_kg: float
    initial_moisture_kg_kg: float
    layer_depth_m: float
    passes: int
    surface_change_K: float
    mass_balance_error: float
    model: str
    time_s: np.ndarray | None = field(default=None, compare=False, repr=False)
    loss_percent: np.ndarray | None = field(default=None, compare=False, repr=False)
    yield_percent_history: np.ndarray | None = field(default=None, compare=False, repr=False)
    surface_moisture_history_kg_kg: np.ndarray | None = field(default=None, compare=False, repr=False)
    stop_weight_loss_percent: float | None = None
    weight_stop_s: float | None = None
    weight_checkpoints: tuple[tuple[float, float], ...] = ()
    boiled_kg: float = 0.0
    surface_evaporated_kg: float = 0.0

    @property
    def converged(self) -> bool:
        """Whether the coupling settled within :data:`SURFACE_TOLERANCE_K`."""
        return self.surface_change_K < SURFACE_TOLERANCE_K

    @property
    def unsettled_text(self) -> str:
        """The warning for a coupling that did not settle."""
        return (
            f"heat and moisture did not settle within {self.passes} coupling passes (surface temperature still "
            f"moving by {self.surface_change_K:.1f} K): treat the cook time and weight loss as indicative"
        )


def summarise(
    res: DryOvenResult,
    model: DryOvenModel,
    piece_mass_kg: float,
    area_m2: float,
    stop_fraction: float | None = None,
) -> DryingSummary:
    """The per-piece summary of a dry-air step (``stop_fraction``: the step's weight-loss stop [-])."""
    pct = 100.0 * res.lost_kg / piece_mass_kg
    loss = 100.0 * loss_history_kg(res, area_m2)[1] / piece_mass_kg
    return DryingSummary(
        weight_loss_kg=res.lost_kg,
        boiled_kg=res.boiled_kg,
        surface_evaporated_kg=float(res.moisture.lost_kg_m2[-1]) * area_m2,
        weight_loss_percent=pct,
        yield_percent=100.0 - pct,
        wet_bulb_C=res.wet_bulb_C,
        wet_until_s=res.wet_until_s,
        surface_moisture_kg_kg=float(res.moisture.surface_kg_kg[-1]),
        mean_layer_moisture_kg_kg=float(res.moisture.mean_kg_kg[-1]),
        initial_moisture_kg_kg=model.initial_kg_kg,
        layer_depth_m=res.moisture.depth_m,
        passes=res.passes,
        surface_change_K=res.surface_change_K,
        mass_balance_error=res.moisture.mass_balance_error,
        model=model.describe(),
        time_s=np.asarray(res.moisture.time_s, dtype=float),
        loss_percent=loss,
        yield_percent_history=100.0 - loss,
        surface_moisture_history_kg_kg=np.asarray(res.moisture.surface_kg_kg, dtype=float),
        stop_weight_loss_percent=None if stop_fraction is None else 100.0 * stop_fraction,
        weight_stop_s=res.weight_stop_s,
        weight_checkpoints=weight_checkpoints(res, area_m2, piece_mass_kg),
    )


def yield_percent(losses) -> float | None:
    """Mass at the end over the mass at the start [%] from (step, loss [%]) pairs, each loss a share of the mass
    the step started with (None without any loss).

    >>> round(yield_percent([("roast", 10.0), ("chill", 2.0)]), 6)
    88.2
    """
    if not losses:
        return None
    return 100.0 * float(np.prod([1.0 - pct / 100.0 for _, pct in losses]))


def first_stop_s(res: DryOvenResult, model: DryOvenModel, area_m2: float, loss_kg: float) -> float | None:
    """A first estimate of the time a shorter span of the step reaches ``loss_kg`` [kg], from a solve over
    the whole step (None: not reached in it).

    D follows the span's mean surface temperature (module note), so a shorter span runs with a smaller D
    than the whole step's. Where diffusion inside limits the drying, the loss depends on D t (Crank 1975,
    ch. 4: the loss of a plane sheet is a function of D t / l²): the span t is taken to lose what the whole
    step's history lost at t D(t)/D(end). It only starts the search; the stop is then solved on its span."""
    t = np.asarray(res.heat.time_s, dtype=float)
    ts = np.asarray(res.heat.face_surface_C, dtype=float)
    area = np.concatenate([[0.0], np.cumsum(0.5 * (ts[1:] + ts[:-1]) * np.diff(t))])
    mean = np.where(t > 0.0, area / np.where(t > 0.0, t, 1.0), ts[0])
    d = model.diffusivity
    D = arrhenius_m2_s(mean, d.D_ref_m2_s, d.activation_J_mol, d.reference_C)
    tau = t * D / D[-1]
    lost = np.interp(tau, res.moisture.time_s, np.asarray(res.moisture.lost_kg_m2) * area_m2)
    return crossing_s(t, lost, loss_kg)


def dry_oven_step(geometry, props, initial, surface, step, n_nodes, time_settings: dict, guesses=None):
    """The engine's dry-air step: (heat result, DryingSummary), or None for a step without drying.

    ``guesses`` (a dict kept by the run, or None) holds the step's last coupled result: a rerun of the step
    (h evaluated again, a finer time step) starts its coupling from that result's surface waveform."""
    from procplan.run.budget import MAX_TIME_STEPS_PER_STEP

    model = getattr(surface, "drying_air", None)
    if model is None:
        return None
    boundary = surface.boundary()

    kept = {} if guesses is None else guesses

    def solve(end_s: float, guess: DryOvenResult | None = None, **coupling) -> DryOvenResult:
        res = solve_dry_oven(
            geometry,
            props,
            initial,
            boundary,
            model,
            end_s,
            n_nodes=n_nodes,
            stop_when_core_C=step.stop_when_core_C,
            max_steps=MAX_TIME_STEPS_PER_STEP,
            guess=guess if guess is not None else kept.get(id(step)),
            **coupling,
            **time_settings,
        )
        kept[id(step)] = res
        return res

    mass = props.mass_density_kg_m3 * geometry.volume_m3
    loss = step.stop_when_weight_loss_fraction
    if loss is None:
        res = solve(step.duration_s)
    else:
        res = solve_to_weight_loss(
            solve,
            geometry,
            step.duration_s,
            loss * mass,
            first_stop=lambda r, kg: first_stop_s(r, model, geometry.area_m2, kg),
        )
    return res.heat, summarise(res, model, mass, geometry.area_m2, loss)


def carried_field(run, props):
    """The field the next step starts from; a dried crust above the property model's range (a roast's surface
    in a hot oven) is cut to the range's top, which takes out a little heat (the slower side)."""
    if run.fv is None or run.drying is None:
        return None if run.fv is None else run.fv.final_field
    return np.minimum(run.fv.final_field, float(props.temperature_C[-1]))


def range_warnings(history, props, dried: bool = False) -> list[str]:
    """Warnings on temperatures the model carries only roughly: boiling (not when a dry-air step carried the
    moisture), and outside the property model."""
    out = []
    lo, hi = float(props.temperature_C[0]), float(props.temperature_C[-1])
    t_min = float(history[["core_C", "surface_C"]].min().min())
    t_max = float(history[["core_C", "surface_C"]].max().max())
    if (
        t_max > 100.5 and not dried and hi <= 150.0
    ):  # a product stating properties above 150 °C is dry (glass)
        out.append(
            f"product temperatures reach {t_max:.0f} °C: above 100 °C the water in an unsealed product boils and the "
            "surface dries, which a conduction model does not carry; treat temperatures above 100 °C as indicative only"
        )
    if t_min < lo - 0.05 or t_max > hi + 0.05:
        out.append(
            f"product temperatures reach {t_min:.1f}…{t_max:.1f} °C, outside the property model's {lo:g}…{hi:g} °C: "
            "properties are extrapolated there"
        )
    return out
