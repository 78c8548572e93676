"""The plan file's ``[packing]`` table (mm, counts) to and from :class:`procplan.model.Packing` (SI).

```toml
[packing]
arrangement = "pallet"            # tray | case | stack | pallet
case_length_mm = 310              # inner dimensions of one case (or tray)
case_width_mm = 210
case_height_mm = 84
pieces_per_case = 8               # or piece_layout = [2, 2, 2]
wall = "corrugated-board"         # a wall material, or wall_k_W_mK = 0.064
wall_thickness_mm = 4
cases_layout = [3, 3, 8]          # stack or pallet: cases along length, width, height
void_fraction = 0.4               # optional: overrides the value from the piece count
air_flow_factor = 0.5             # optional: air speed at the load / the machine's setting (default 1)
conductivity_model = "emt"        # optional: a key of PACKED_CONDUCTIVITY_MODELS
```
"""

from __future__ import annotations

from collections.abc import Mapping
from typing import Any

from procplan import validate
from procplan.errors import Collector, InvalidInputError
from procplan.files.fields import check_keys, file_mm, file_number, optional
from procplan.geometry import MAX_DIMENSION_M
from procplan.model import PACKING_ARRANGEMENTS, Packing
from procplan.properties.packing import (
    DEFAULT_PACKED_MODEL,
    PACKED_CONDUCTIVITY_MODELS,
    VOID_FRACTION_RANGE,
    WALL_MATERIALS,
)

PACKING_KEYS = (
    "arrangement",
    "case_length_mm",
    "case_width_mm",
    "case_height_mm",
    "pieces_per_case",
    "piece_layout",
    "wall",
    "wall_thickness_mm",
    "wall_k_W_mK",
    "cases_layout",
    "void_fraction",
    "air_flow_factor",
    "conductivity_model",
)
#: Thickest case wall accepted [mm].
MAX_WALL_MM = 20.0
#: Accepted air-flow factor: the share of the machine's air (or liquid) speed that reaches the load's faces.
AIR_FLOW_FACTOR_RANGE = (0.05, 1.0)
MAX_COUNT = 100_000


def _layout(c: Collector, data: Mapping[str, Any], key: str, p: str) -> tuple[int, int, int] | None:
    raw = data.get(key)
    if raw is None:
        return None
    ok = isinstance(raw, list) and len(raw) == 3
    ok = ok and all(isinstance(n, int) and not isinstance(n, bool) and 1 <= n <= 1000 for n in raw)
    if not ok:
        c.add(
            InvalidInputError(
                p + key, raw, "three whole numbers from 1 to 1000 [along length, width, height]"
            )
        )
        return None
    return (raw[0], raw[1], raw[2])


def _count(c: Collector, data: Mapping[str, Any], p: str, layout: tuple[int, int, int] | None) -> int | None:
    n = data.get("pieces_per_case")
    from_layout = None if layout is None else layout[0] * layout[1] * layout[2]
    if n is None:
        if from_layout is None and "piece_layout" not in data:
            c.add(InvalidInputError(p + "pieces_per_case", None, f"1…{MAX_COUNT}", "or give piece_layout"))
        return from_layout
    if isinstance(n, bool) or not isinstance(n, int) or not 1 <= n <= MAX_COUNT:
        c.add(InvalidInputError(p + "pieces_per_case", n, f"a whole number from 1 to {MAX_COUNT}"))
        return None
    if from_layout is not None and from_layout != n:
        c.add(InvalidInputError(p + "pieces_per_case", n, f"{from_layout}, the product of piece_layout"))
    return n


def _wall(c: Collector, data: Mapping[str, Any], p: str) -> tuple[str | None, float, float | None]:
    wall = data.get("wall")
    if wall is not None:
        with c.catch():
            validate.choice(p + "wall", wall, WALL_MATERIALS)
    k = optional(c, data, "wall_k_W_mK", p, validate.number, minimum=0.005, maximum=50.0, unit="W/mK")
    t_mm = optional(
        c,
        data,
        "wall_thickness_mm",
        p,
        validate.number,
        minimum=0.0,
        maximum=MAX_WALL_MM,
        unit="mm",
        default=0.0,
    )
    if t_mm > 0 and wall is None and k is None:
        c.add(
            InvalidInputError(p + "wall", None, "one of " + ", ".join(WALL_MATERIALS), "or give wall_k_W_mK")
        )
    if (wall is not None or k is not None) and "wall_thickness_mm" not in data:
        c.add(InvalidInputError(p + "wall_thickness_mm", None, f"0…{MAX_WALL_MM:g} mm", "needed with a wall"))
    return wall, t_mm / 1000.0, k


def _case_dims(c: Collector, data: Mapping[str, Any], p: str) -> list[float | None]:
    dims = []
    for key in ("case_length_mm", "case_width_mm", "case_height_mm"):
        if key not in data:
            c.add(InvalidInputError(p + key, None, f"> 0 and <= {MAX_DIMENSION_M * 1000:g} mm", "required"))
            dims.append(None)
            continue
        v = optional(
            c,
            data,
            key,
            p,
            validate.number,
            minimum=0.0,
            min_inclusive=False,
            maximum=MAX_DIMENSION_M * 1000,
            unit="mm",
        )
        dims.append(None if v is None else v / 1000.0)
    return dims


def _check_stack(c: Collector, p: str, arrangement, dims, t_wall: float, cases) -> None:
    """A tray or case is one case; a stack's outer size must stay within the largest accepted brick."""
    if arrangement in ("tray", "case") and cases not in (None, (1, 1, 1)):
        c.add(
            InvalidInputError(
                p + "cases_layout", list(cases), "[1, 1, 1] for a tray or case (or a stack/pallet)"
            )
        )
    if None in dims or cases is None:
        return
    for d, n, axis in zip(dims, cases, ("length", "width", "height"), strict=True):
        if n * (d + 2 * t_wall) > MAX_DIMENSION_M + 1e-12:
            c.add(
                InvalidInputError(
                    p + "cases_layout",
                    list(cases),
                    f"a load at most {MAX_DIMENSION_M * 1000:g} mm long on every axis",
                    f"{n} cases of {(d + 2 * t_wall) * 1000:g} mm make {n * (d + 2 * t_wall) * 1000:g} mm of {axis}",
                )
            )


def packing_from_dict(data: Any, source: str = "plan") -> Packing:
    """Build and validate :class:`Packing` from a ``[packing]`` table, reporting every problem at once."""
    p = "packing."
    if not isinstance(data, Mapping):
        raise InvalidInputError("packing", data, "a [packing] table")
    c = Collector(source)
    check_keys(c, data, PACKING_KEYS, p)
    arrangement = data.get("arrangement")
    with c.catch():
        validate.choice(p + "arrangement", arrangement, PACKING_ARRANGEMENTS)
    dims = _case_dims(c, data, p)
    piece_layout = _layout(c, data, "piece_layout", p)
    count = _count(c, data, p, piece_layout)
    wall, t_wall, k_wall = _wall(c, data, p)
    cases = _layout(c, data, "cases_layout", p)
    _check_stack(c, p, arrangement, dims, t_wall, cases)
    lo, hi = VOID_FRACTION_RANGE
    void = optional(c, data, "void_fraction", p, validate.number, minimum=lo, maximum=hi)
    flo, fhi = AIR_FLOW_FACTOR_RANGE
    flow = optional(c, data, "air_flow_factor", p, validate.number, minimum=flo, maximum=fhi, default=1.0)
    model = data.get("conductivity_model", DEFAULT_PACKED_MODEL)
    with c.catch():
        validate.choice(p + "conductivity_model", model, PACKED_CONDUCTIVITY_MODELS)
    c.raise_if_any()
    return Packing(
        arrangement=arrangement,
        case_length_m=dims[0],
        case_width_m=dims[1],
        case_height_m=dims[2],
        pieces_per_case=count,
        wall=wall,
        wall_thickness_m=t_wall,
        wall_k_W_mK=k_wall,
        cases_layout=cases or (1, 1, 1),
        piece_layout=piece_layout,
        void_fraction=void,
        air_flow_factor=flow,
        conductivity_model=model,
    )


def packing_to_dict(pk: Packing) -> dict[str, Any]:
    """The inverse of :func:`packing_from_dict` (file units)."""
    d: dict[str, Any] = {
        "arrangement": pk.arrangement,
        "case_length_mm": file_mm(pk.case_length_m),
        "case_width_mm": file_mm(pk.case_width_m),
        "case_height_mm": file_mm(pk.case_height_m),
    }
    if pk.piece_layout is not None:
        d["piece_layout"] = list(pk.piece_layout)
    else:
        d["pieces_per_case"] = pk.pieces_per_case
    if pk.wall is not None:
        d["wall"] = pk.wall
    if pk.wall_k_W_mK is not None:
        d["wall_k_W_mK"] = file_number(pk.wall_k_W_mK)
    if pk.wall is not None or pk.wall_k_W_mK is not None or pk.wall_thickness_m:
        d["wall_thickness_mm"] = file_mm(pk.wall_thickness_m)
    if pk.cases_layout != (1, 1, 1):
        d["cases_layout"] = list(pk.cases_layout)
    if pk.void_fraction is not None:
        d["void_fraction"] = file_number(pk.void_fraction)
    if pk.air_flow_factor != 1.0:
        d["air_flow_factor"] = file_number(pk.air_flow_factor)
    if pk.conductivity_model != DEFAULT_PACKED_MODEL:
        d["conductivity_model"] = pk.conductivity_model
    return d
