"""Product shapes: volume, exposed area, characteristic lengths, and the 1-D factors of product solutions.

Shapes (``SHAPES``): ``slab`` (thickness; both faces exposed, or one face with the other insulated),
``cylinder`` (infinite: diameter; optional length only for mass), ``sphere`` (diameter),
``finite-cylinder`` (diameter and length, all faces exposed) and ``brick`` (length, width, height,
all six faces exposed). Lengths are in metres inside the library.

References
----------
Incropera, DeWitt, Bergman & Lavine, Fundamentals of Heat and Mass Transfer, 7th ed., §5.2 (lumped
length L_c = V/A_s) and §5.8 (multidimensional product solutions).
"""

from __future__ import annotations

import math
from dataclasses import dataclass

from procplan import validate
from procplan.errors import InvalidInputError

#: shape name → required dimension keys (in metres) and the optional ones.
SHAPES: dict[str, dict[str, tuple[str, ...]]] = {
    "slab": {"required": ("thickness_m",), "optional": ("length_m", "width_m")},
    "cylinder": {"required": ("diameter_m",), "optional": ("length_m",)},
    "sphere": {"required": ("diameter_m",), "optional": ()},
    "finite-cylinder": {"required": ("diameter_m", "length_m"), "optional": ()},
    "brick": {"required": ("length_m", "width_m", "height_m"), "optional": ()},
}

#: Largest dimension accepted [m]: beyond this the input is almost surely in the wrong unit.
MAX_DIMENSION_M = 3.0


@dataclass(frozen=True)
class Axis:
    """One 1-D factor of a product solution: an infinite slab of half-thickness, or an infinite cylinder of radius."""

    kind: str  # "slab" | "cylinder" | "sphere"
    length_m: float  # conduction length: half-thickness (or full thickness for a one-face slab), or radius


@dataclass(frozen=True)
class Geometry:
    """A product's shape and dimensions [m].

    >>> g = Geometry("sphere", diameter_m=0.1)
    >>> round(g.lumped_length_m * 1000, 4)  # V/A = R/3
    16.6667
    """

    shape: str
    thickness_m: float | None = None
    diameter_m: float | None = None
    length_m: float | None = None
    width_m: float | None = None
    height_m: float | None = None
    faces: int = 2

    def __post_init__(self) -> None:
        shape = validate.choice("product.shape", self.shape, SHAPES)
        spec = SHAPES[shape]
        for key in ("thickness_m", "diameter_m", "length_m", "width_m", "height_m"):
            v = getattr(self, key)
            if key in spec["required"]:
                if v is None:
                    raise InvalidInputError(
                        f"product.{key[:-2]}_mm",
                        None,
                        f"> 0 and <= {MAX_DIMENSION_M * 1000:g} mm",
                        f"required for a {shape}",
                    )
            elif key not in spec["optional"]:
                if v is not None:
                    raise InvalidInputError(
                        f"product.{key[:-2]}_mm",
                        v * 1000,
                        f"not set for a {shape}",
                        f"a {shape} takes {', '.join(k[:-2] + '_mm' for k in spec['required'] + spec['optional'])}",
                    )
                continue
            if v is not None:
                validate.number(
                    f"product.{key[:-2]}_mm",
                    v * 1000.0,
                    minimum=0.0,
                    min_inclusive=False,
                    maximum=MAX_DIMENSION_M * 1000.0,
                    unit="mm",
                )
        if self.faces not in (1, 2) or (self.faces == 1 and shape != "slab"):
            raise InvalidInputError("product.faces", self.faces, "2, or 1 for a slab with one face insulated")

    # --- axes of the product solution -----------------------------------------------------
    @property
    def axes(self) -> tuple[Axis, ...]:
        """The 1-D problems whose product gives this shape's solution (Newman's method)."""
        s = self.shape
        if s == "slab":
            return (Axis("slab", self.thickness_m / self.faces),)
        if s == "cylinder":
            return (Axis("cylinder", self.diameter_m / 2),)
        if s == "sphere":
            return (Axis("sphere", self.diameter_m / 2),)
        if s == "finite-cylinder":
            return (Axis("cylinder", self.diameter_m / 2), Axis("slab", self.length_m / 2))
        return (
            Axis("slab", self.length_m / 2),
            Axis("slab", self.width_m / 2),
            Axis("slab", self.height_m / 2),
        )

    @property
    def conduction_length_m(self) -> float:
        """The shortest distance from the surface to the thermal centre: half-thickness or radius [m]."""
        return min(a.length_m for a in self.axes)

    @property
    def probe_axis(self) -> int:
        """Index in :attr:`axes` of the shortest axis (the first on a tie): a probe at a stated depth goes in
        along it from the centre of its face, the path to the thermal centre that is shortest."""
        lengths = [a.length_m for a in self.axes]
        return lengths.index(min(lengths))

    def depth_position(self, depth_m: float, field: str = "depth_m") -> tuple[float, ...]:
        """Dimensionless position (0 at the centre, 1 at the surface, per axis of :attr:`axes`) of the point
        ``depth_m`` below the surface, on the line from the centre of the face on the shortest axis to the
        thermal centre: depth 0 is that face centre, depth = :attr:`conduction_length_m` the thermal centre.

        >>> Geometry("slab", thickness_m=0.04).depth_position(0.01)
        (0.5,)
        >>> Geometry("brick", length_m=0.2, width_m=0.1, height_m=0.05).depth_position(0.025)
        (0.0, 0.0, 0.0)
        """
        length = self.conduction_length_m
        d = validate.number(field, depth_m, minimum=0.0, maximum=length, unit="m")
        pos = [0.0] * len(self.axes)
        pos[self.probe_axis] = 1.0 - d / length
        return tuple(pos)

    # --- size ---------------------------------------------------------------------------------
    @property
    def volume_m3(self) -> float:
        """Volume of one piece [m³]; per m² of face for an unbounded slab, per metre for an unbounded cylinder."""
        s = self.shape
        if s == "slab":
            return self.thickness_m * (self.length_m or 1.0) * (self.width_m or 1.0)
        if s == "cylinder":
            return math.pi * self.diameter_m**2 / 4 * (self.length_m or 1.0)
        if s == "sphere":
            return math.pi * self.diameter_m**3 / 6
        if s == "finite-cylinder":
            return math.pi * self.diameter_m**2 / 4 * self.length_m
        return self.length_m * self.width_m * self.height_m

    @property
    def area_m2(self) -> float:
        """Area exposed to the medium [m²] (the faces counted in the conduction model)."""
        s = self.shape
        if s == "slab":
            return self.faces * (self.length_m or 1.0) * (self.width_m or 1.0)
        if s == "cylinder":
            return math.pi * self.diameter_m * (self.length_m or 1.0)
        if s == "sphere":
            return math.pi * self.diameter_m**2
        if s == "finite-cylinder":
            return math.pi * self.diameter_m * self.length_m + 2 * math.pi * self.diameter_m**2 / 4
        a, b, c = self.length_m, self.width_m, self.height_m
        return 2 * (a * b + a * c + b * c)

    @property
    def lumped_length_m(self) -> float:
        """Characteristic length for the lumped-capacitance test, L_c = V/A_s [m] (Incropera eq. 5.10)."""
        return self.volume_m3 / self.area_m2

    @property
    def flow_length_m(self) -> float:
        """Length the medium flows along, for convection correlations: the diameter of round shapes,
        the longest exposed side of flat ones [m]."""
        s = self.shape
        if s in ("cylinder", "sphere", "finite-cylinder"):
            return self.diameter_m
        if s == "slab":
            return max(self.length_m or 0.0, self.width_m or 0.0) or 0.3
        return max(self.length_m, self.width_m)

    def describe(self) -> str:
        """Short human description, dimensions in mm."""
        parts = [
            f"{k[:-2]} {getattr(self, k) * 1000:g} mm"
            for k in ("thickness_m", "diameter_m", "length_m", "width_m", "height_m")
            if getattr(self, k) is not None
        ]
        extra = ", one face exposed" if self.faces == 1 else ""
        return f"{self.shape} ({', '.join(parts)}{extra})"


def geometry_from_mm(shape: str, faces: int = 2, **dims_mm: float | None) -> Geometry:
    """Build a Geometry from dimensions given in millimetres (``thickness_mm``, ``diameter_mm``, ...)."""
    kw: dict[str, float | None] = {}
    for key, v in dims_mm.items():
        if not key.endswith("_mm"):
            raise InvalidInputError(f"product.{key}", v, "a dimension key ending in _mm")
        if v is None:
            continue
        kw[key[:-3] + "_m"] = (
            validate.number(
                f"product.{key}",
                v,
                minimum=0.0,
                min_inclusive=False,
                maximum=MAX_DIMENSION_M * 1000.0,
                unit="mm",
            )
            / 1000.0
        )
    try:
        return Geometry(shape, faces=faces, **kw)
    except TypeError:
        raise InvalidInputError(
            "product",
            sorted(dims_mm),
            "dimension keys thickness_mm, diameter_mm, length_mm, width_mm, height_mm",
        ) from None
