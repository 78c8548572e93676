"""The plan's records: a product, its starting state, ordered process steps and the checks to apply.

Frozen dataclasses holding SI values (metres, seconds, °C) and the constants that bound them; no I/O here.
Plan files (user units: mm, min, °C) are read and written by :mod:`procplan.files.plan`.
"""

from __future__ import annotations

from dataclasses import dataclass, field, replace
from typing import Any

from procplan.geometry import Geometry
from procplan.properties.table import MODEL_RANGE_C, PropertyTable
from procplan.surface.layers import PackagingLayer

#: Longest step accepted [min] (a week): beyond this the unit is almost surely wrong.
MAX_STEP_MIN = 7 * 24 * 60.0
#: Duration used for a step that only gives a stop condition [min].
DEFAULT_STOP_CAP_MIN = 72 * 60.0
#: Medium temperatures accepted [°C]: ovens run above the product-property range, which bounds the product only.
MEDIUM_RANGE_C = (-80.0, 400.0)
SOLVERS = ("auto", "exact", "finite-volume")
POINTS = ("core", "surface", "mean")
#: Points a step's target can watch: those of POINTS, or a stated depth below the surface.
TARGET_POINTS = (*POINTS, "depth")
FOOD_CATEGORIES = ("meat", "fruit-vegetable", "juice", "other")
#: Load models (see procplan.run.machine_load.LOAD_MODELS for their meaning).
LOAD_MODELS = ("loaded", "set-point")
DIMENSION_KEYS = ("thickness_mm", "diameter_mm", "length_mm", "width_mm", "height_mm")


@dataclass(frozen=True)
class FixedProperties:
    """Measured constant properties that replace the composition model.

    valid_min_C, valid_max_C : the temperatures the stated properties cover [°C] (None: the composition
        model's −40…150 °C); glass or metal for dry-heat ovens and depyrogenation tunnels state e.g. 400 °C
    """

    k_W_mK: float
    rho_kg_m3: float
    cp_J_kgK: float
    latent_J_kg: float = 0.0
    freezing_C: float | None = None
    frozen_k_W_mK: float | None = None
    frozen_cp_J_kgK: float | None = None
    valid_min_C: float | None = None
    valid_max_C: float | None = None

    @property
    def temperature_range_C(self) -> tuple[float, float]:
        """The range [°C] the properties cover: the stated one, else the composition model's."""
        lo = MODEL_RANGE_C[0] if self.valid_min_C is None else self.valid_min_C
        hi = MODEL_RANGE_C[1] if self.valid_max_C is None else self.valid_max_C
        return lo, hi


@dataclass(frozen=True)
class Product:
    """A product: name, shape and size, and either a composition or measured properties."""

    name: str
    geometry: Geometry
    composition: tuple[tuple[str, float], ...] = ()
    fixed_properties: FixedProperties | None = None
    freezing_C: float | None = None
    category: str = "meat"
    conductivity_model: str = "parallel"
    ice_model: str = "chen"  # a key of procplan.properties.ICE_MODELS
    packaging: tuple[PackagingLayer, ...] = ()
    unwrapped: bool = False
    description: str = ""
    library: str | None = None
    porosity: float = 0.0
    #: emissivity of the product's outer surface (its packaging's, when packed), 0–1; None: the machine's
    #: setting. In an air machine it replaces the machine's default emissivity; a step that sets the machine's
    #: ``emissivity`` setting itself still wins (see ``run.step_surface``); a step with a given h adds
    #: radiation only from its own ``emissivity`` (the given h may already hold it).
    emissivity: float | None = None

    @property
    def composition_dict(self) -> dict[str, float]:
        return dict(self.composition)

    def property_table(self):
        """The product's PropertyTable (composition model, or measured constants)."""
        from procplan.properties import property_table

        if self.fixed_properties is not None:
            fp = self.fixed_properties
            return PropertyTable.constant(
                fp.k_W_mK,
                fp.rho_kg_m3,
                fp.cp_J_kgK,
                latent_J_kg=fp.latent_J_kg,
                freezing_C=fp.freezing_C,
                frozen_k_W_mK=fp.frozen_k_W_mK,
                frozen_cp_J_kgK=fp.frozen_cp_J_kgK,
                temperature_range_C=fp.temperature_range_C,
            )
        from procplan.properties import Composition

        comp = Composition.from_mapping(self.composition_dict)
        return property_table(
            comp,
            freezing_C=self.freezing_C,
            conductivity_model=self.conductivity_model,
            ice_model=self.ice_model,
            category=self.category,
            porosity=self.porosity,
        )


def depth_column(depth_m: float) -> str:
    """The history column of the temperature ``depth_m`` below the surface.

    >>> depth_column(0.01), depth_column(0.0025)
    ('depth_10mm_C', 'depth_2.5mm_C')
    """
    return f"depth_{round(depth_m * 1000.0, 6):g}mm_C"


def depth_label(depth_m: float) -> str:
    """The point in words: '10 mm below the surface'."""
    return f"{round(depth_m * 1000.0, 6):g} mm below the surface"


@dataclass(frozen=True)
class Target:
    """A temperature to reach at a monitored point during a step: the core, the surface, the mean, or
    (point "depth") the point ``depth_m`` below the surface where a probe goes in (the centre of the face on the
    shortest axis, on the line to the thermal centre: ``Geometry.depth_position``)."""

    temperature_C: float
    point: str = "core"
    depth_m: float | None = None

    @property
    def column(self) -> str:
        """The history column the target watches."""
        return depth_column(self.depth_m) if self.point == "depth" else f"{self.point}_C"

    @property
    def label(self) -> str:
        """The point in words, for reports."""
        return depth_label(self.depth_m) if self.point == "depth" else self.point


@dataclass(frozen=True)
class Brine:
    """Salt or sugar taken up during a step (brining, curing, infusion): the surface condition, the diffusivity,
    and the targets. Concentrations are solute mass fractions of the product [kg/kg] (the file's percent / 100).

    ``brine_fraction`` is the brine's (or syrup's) solute mass fraction; ``dry_cure`` holds the surface at a
    saturated solution instead. The diffusivity is a registry key of procplan.properties.diffusivity, or a given
    ``D_m2_s`` at ``reference_C`` with an optional activation energy. ``k_m_m_s`` None takes the surface
    coefficient from the step's flow (heat–mass analogy) for a salt brine, else a constant surface value.
    ``equalise`` runs the step with no exchange at the surface (salt redistributes inside).
    """

    solute: str = "salt"
    brine_fraction: float | None = None
    dry_cure: bool = False
    equalise: bool = False
    diffusivity: str | None = None
    D_m2_s: float | None = None
    reference_C: float | None = None
    activation_J_mol: float | None = None
    k_m_m_s: float | None = None
    partition: float = 1.0
    initial_fraction: float | None = None  # the product's solute before the first such step (default 0)
    water_fraction: float | None = None  # the unsalted product's water fraction (default: its composition)
    stop_when_core_fraction: float | None = None
    stop_when_mean_fraction: float | None = None
    target_core_fraction: float | None = None
    target_mean_fraction: float | None = None
    #: factor on the diffusivity (a study's sampled uncertainty; 1 in a plan file)
    D_factor: float = 1.0


@dataclass(frozen=True)
class Step:
    """One process step. The surface is either a given h with a medium temperature (constant or a
    time profile), or a machine from the equipment library with its settings (constant, or a profile)."""

    name: str
    duration_s: float
    stop_when_core_C: float | None = None
    medium_C: float | None = None
    medium_profile: tuple[tuple[float, float], ...] = ()  # (time_s, temperature_C)
    h_W_m2K: float | None = None
    equipment: str | None = None
    settings: tuple[tuple[str, Any], ...] = ()
    settings_profile: tuple[tuple[float, tuple[tuple[str, Any], ...]], ...] = ()  # (time_s, settings)
    emissivity: float | None = None
    surroundings_C: float | None = None
    targets: tuple[Target, ...] = ()
    duration_given: bool = True
    brine: Brine | None = None
    #: the machine's medium temperature when the batch is loaded [°C] (None: at its set point)
    loading_medium_C: float | None = None
    #: end the step when the piece has lost this share of its mass at the step's start [-] (drying steps)
    stop_when_weight_loss_fraction: float | None = None

    @property
    def settings_dict(self) -> dict[str, Any]:
        return dict(self.settings)


@dataclass(frozen=True)
class LethalityCheck:
    """A lethality requirement: a preset by name, or reference temperature, z and required F."""

    preset: str | None = None
    reference_C: float | None = None
    z_C: float | None = None
    required_F_min: float | None = None
    d_value_min: float | None = None
    point: str = "core"


@dataclass(frozen=True)
class Checks:
    """What the result is judged against, and batch data for energy."""

    cooling_rule: str | None = None
    lethality: LethalityCheck | None = None
    margin_percent: float = 0.0
    margin_min: float = 0.0
    pieces_per_batch: int = 1
    cop_fraction: float = 0.5
    energy_price_per_kWh: float | None = None
    frozen_storage_C: float = -18.0
    budget_used_above_h: float = 0.0  # stability budget already spent above / below the band before this plan
    budget_used_below_h: float = 0.0
    mean_kinetic_point: str | None = (
        None  # point whose mean kinetic temperature is reported (None: not asked)
    )
    mean_kinetic_max_C: float | None = None  # the limit it is judged against (None: reported only)


@dataclass(frozen=True)
class Packing:
    """How the pieces are packed: a tray, case, stack of cases or pallet, run as one brick of effective
    properties (:mod:`procplan.run.packing`). Lengths in metres; ``None`` means "from the other values"."""

    arrangement: str  # one of PACKING_ARRANGEMENTS
    case_length_m: float  # inner dimensions of one case (or tray)
    case_width_m: float
    case_height_m: float
    pieces_per_case: int
    wall: str | None = None  # a key of properties.packing.WALL_MATERIALS, or None with wall_k_W_mK
    wall_thickness_m: float = 0.0
    wall_k_W_mK: float | None = None
    cases_layout: tuple[int, int, int] = (1, 1, 1)  # cases along length, width, height (stack, pallet)
    piece_layout: tuple[int, int, int] | None = None  # pieces along length, width, height in one case
    void_fraction: float | None = None  # override of the air fraction computed from the piece count
    air_flow_factor: float = 1.0  # air (or liquid) speed at the load / the machine's setting
    conductivity_model: str = "emt"


PACKING_ARRANGEMENTS = ("tray", "case", "stack", "pallet")


@dataclass(frozen=True)
class SecondProduct:
    """A second product loaded with the batch: ``pieces`` pieces of ``product`` (a library product, its shape
    and size from the record) at ``initial_temperature_C`` [°C], sharing the medium in the loaded steps.

    ``target_core_C`` (optional) is the core temperature the second product should reach [°C]: the run reports
    when it does and warns when it does not (the plan's own checks stay on the main product).
    ``machine_steps`` are the plan's steps as set on the machine, for the second product's h, when the run
    changed the plan's steps for a packed load (the air speed at the load's faces); empty: the plan's steps.
    """

    product: Product
    pieces: int
    initial_temperature_C: float
    library_name: str = ""  # the library product it names
    target_core_C: float | None = None
    machine_steps: tuple[Step, ...] = ()


@dataclass(frozen=True)
class Load:
    """How the batch loads its machines: ``"loaded"`` (the medium solved with the pieces, limited by the plant,
    where the machine has a thermal description) or ``"set-point"`` (an empty-machine run). The number of
    pieces is ``Checks.pieces_per_batch``. ``second_product`` (optional) shares the medium with the batch."""

    model: str = "loaded"
    second_product: SecondProduct | None = None


@dataclass(frozen=True)
class Plan:
    """A whole plan: the unit every engine run, study and sheet starts from."""

    title: str
    product: Product
    start_temperature_C: float
    steps: tuple[Step, ...]
    checks: Checks = field(default_factory=Checks)
    solver: str = "auto"
    notes: str = ""
    packing: Packing | None = None
    load: Load = field(default_factory=Load)

    @property
    def probe_depths_m(self) -> tuple[float, ...]:
        """The depths below the surface that the steps' targets watch [m], each once, in increasing order (the
        history carries a column for each: :func:`depth_column`)."""
        return tuple(
            sorted(
                {
                    t.depth_m
                    for s in self.steps
                    for t in s.targets
                    if t.point == "depth" and t.depth_m is not None
                }
            )
        )

    @property
    def pieces(self) -> int:
        """Pieces per batch (the one number: ``checks.pieces_per_batch``)."""
        return self.checks.pieces_per_batch

    def with_pieces(self, pieces: int) -> Plan:
        """A copy with another batch size (used by studies)."""
        return replace(self, checks=replace(self.checks, pieces_per_batch=int(pieces)))

    def with_step(self, index: int, **changes: Any) -> Plan:
        """A copy with one step changed (used by studies)."""
        steps = list(self.steps)
        steps[index] = replace(steps[index], **changes)
        return replace(self, steps=tuple(steps))
