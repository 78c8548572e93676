"""Vertex-centred finite-volume grids for the product shapes, reduced by symmetry.

Each axis runs from the thermal centre (node 0, a symmetry plane or axis, or the insulated back of a
one-face slab) to the surface (last node, which sits on the surface and owns a half cell). Grids of
several axes are tensor products: the slab is 1-D, the infinite cylinder and sphere 1-D radial, the
finite cylinder 2-D (r, z) over a quarter of its meridian section, the brick 3-D over one octant.

Per-axis measures (Patankar 1980, Numerical Heat Transfer and Fluid Flow, §4.2, practice B):

* slab: cell measure Δx (Δx/2 at the ends), face measure 1;
* cylinder: cell measure π(r₊² − r₋²), face measure 2πr;
* sphere: cell measure 4/3 π(r₊³ − r₋³), face measure 4πr².

A cell volume is the product of its axis measures; the conductance geometry of a face on axis a is the
face measure over the node distance times the other axes' cell measures.
"""

from __future__ import annotations

import math
from dataclasses import dataclass

import numpy as np

from procplan import validate
from procplan.errors import InvalidInputError
from procplan.geometry import Geometry

#: Default nodes per axis by number of dimensions.
DEFAULT_NODES: dict[int, int] = {1: 41, 2: 25, 3: 15}


@dataclass(frozen=True, eq=False)
class AxisGrid:
    """Nodes of one axis from the centre (0) to the surface (length_m)."""

    kind: str
    length_m: float
    x_m: np.ndarray
    cell_measure: np.ndarray
    face_measure: np.ndarray
    node_distance_m: np.ndarray
    surface_measure: float

    @classmethod
    def graded(cls, kind: str, length_m: float, n: int, surface_refinement: float = 0.0) -> AxisGrid:
        """Nodes x = L [(1 − c) ξ + c sin(π ξ / 2)], ξ uniform in [0, 1]: c = 0 is uniform; c > 0 packs nodes
        toward the surface (spacing ratio surface/centre (1 − c)/(1 + (π/2 − 1) c)), where early gradients are steep."""
        xi = np.linspace(0.0, 1.0, n)
        c = surface_refinement
        x = length_m * ((1 - c) * xi + c * np.sin(0.5 * math.pi * xi))
        x[-1] = length_m
        xf = np.r_[0.0, 0.5 * (x[1:] + x[:-1]), length_m]
        if kind == "slab":
            cell, face, surf = np.diff(xf), np.ones(n - 1), 1.0
        elif kind == "cylinder":
            cell, face, surf = math.pi * np.diff(xf**2), 2 * math.pi * xf[1:-1], 2 * math.pi * length_m
        elif kind == "sphere":
            cell, face, surf = (
                4 / 3 * math.pi * np.diff(xf**3),
                4 * math.pi * xf[1:-1] ** 2,
                4 * math.pi * length_m**2,
            )
        else:  # pragma: no cover - Geometry only makes the three kinds
            raise InvalidInputError("axis.kind", kind, "slab, cylinder or sphere")
        for a in (x, cell, face):
            a.setflags(write=False)
        return cls(kind, float(length_m), x, cell, face, np.diff(x), float(surf))


@dataclass(frozen=True, eq=False)
class FVGrid:
    """A grid over the symmetry-reduced domain of one product.

    Attributes
    ----------
    shape : nodes per axis
    axes : one AxisGrid per axis (order of ``Geometry.axes``)
    volume_m3 : cell volumes of the reduced domain, flattened (C order)
    face_i, face_j : flat indices of the two cells of each interior face
    face_geometry_m : face area / node distance for each face [m] (times k gives a conductance W/K)
    surface_cells : flat indices of the cells touching the surface
    surface_area_m2 : exposed area of each of those cells [m²] (a corner cell sums its faces)
    piece_factor : full piece / reduced domain (2 for a two-face slab per m² etc.; see Geometry.volume_m3)
    core_index, corner_index, face_centre_index : flat indices of the centre, the surface corner (the
        fastest point) and the centre of the face on the shortest axis
    """

    shape: tuple[int, ...]
    axes: tuple[AxisGrid, ...]
    volume_m3: np.ndarray
    face_i: np.ndarray
    face_j: np.ndarray
    face_geometry_m: np.ndarray
    face_axis: np.ndarray
    surface_cells: np.ndarray
    surface_area_m2: np.ndarray
    piece_factor: float
    core_index: int
    corner_index: int
    face_centre_index: int
    surface_refinement: float = 0.0

    @property
    def n_cells(self) -> int:
        return int(np.prod(self.shape))

    def describe(self) -> str:
        kinds = "×".join(f"{a.kind}({n})" for a, n in zip(self.axes, self.shape, strict=True))
        spacing = (
            "uniform"
            if self.surface_refinement == 0
            else f"packed toward the surface (c = {self.surface_refinement:g})"
        )
        return (
            f"{len(self.shape)}-D vertex-centred grid {kinds}, {spacing}, piece factor {self.piece_factor:g}"
        )


def build_grid(
    geometry: Geometry, n_nodes: int | tuple[int, ...] | None = None, surface_refinement: float = 0.0
) -> FVGrid:
    """Grid for ``geometry`` with ``n_nodes`` per axis (an int for every axis, or one per axis), nodes packed
    toward the surface by ``surface_refinement`` in [0, 0.9] (0 = uniform; see ``AxisGrid.graded``).

    >>> g = build_grid(Geometry("slab", thickness_m=0.02), 5)
    >>> round(float(g.volume_m3.sum()) * g.piece_factor, 6)  # per m² of face: the full thickness
    0.02
    """
    axes_spec = geometry.axes
    dim = len(axes_spec)
    if n_nodes is None:
        n_nodes = DEFAULT_NODES[dim]
    ns = (n_nodes,) * dim if np.ndim(n_nodes) == 0 else tuple(n_nodes)
    if len(ns) != dim:
        raise InvalidInputError("n_nodes", n_nodes, f"an integer or {dim} integers for a {geometry.shape}")
    for n in ns:
        if isinstance(n, bool) or not float(n).is_integer() or not 3 <= int(n) <= 2000:
            raise InvalidInputError("n_nodes", n_nodes, "integers from 3 to 2000 per axis")
    ns = tuple(int(n) for n in ns)
    if np.prod(ns) > 400_000:
        raise InvalidInputError("n_nodes", n_nodes, "at most 400000 cells in all")
    c = validate.number("surface_refinement", surface_refinement, minimum=0.0, maximum=0.9)
    axes = tuple(AxisGrid.graded(a.kind, a.length_m, n, c) for a, n in zip(axes_spec, ns, strict=True))

    vol = axes[0].cell_measure
    for ax in axes[1:]:
        vol = np.multiply.outer(vol, ax.cell_measure)
    idx = np.arange(int(np.prod(ns))).reshape(ns)

    fi, fj, fg, fa = [], [], [], []
    scells, sarea = [], []
    for a, ax in enumerate(axes):
        others = [axes[b].cell_measure for b in range(dim) if b != a]
        other = np.ones(())
        for m in others:
            other = np.multiply.outer(other, m)
        # interior faces along axis a
        geo_line = ax.face_measure / ax.node_distance_m
        geo = np.multiply.outer(geo_line, other) if dim > 1 else geo_line
        geo = np.moveaxis(geo, 0, a)
        lo = np.take(idx, np.arange(ns[a] - 1), axis=a)
        hi = np.take(idx, np.arange(1, ns[a]), axis=a)
        fi.append(lo.ravel())
        fj.append(hi.ravel())
        fg.append(geo.ravel())
        fa.append(np.full(lo.size, a))
        # surface cells on this axis
        scells.append(np.take(idx, ns[a] - 1, axis=a).ravel())
        sarea.append((ax.surface_measure * other).ravel() if dim > 1 else np.array([ax.surface_measure]))
    sc = np.concatenate(scells)
    sa = np.concatenate(sarea)
    uc, inv = np.unique(sc, return_inverse=True)
    area = np.bincount(inv, weights=sa)

    factor = geometry.volume_m3 / float(vol.sum())
    short = int(np.argmin([ax.length_m for ax in axes]))
    fc = [0] * dim
    fc[short] = ns[short] - 1
    out = FVGrid(
        shape=ns,
        axes=axes,
        volume_m3=vol.ravel().copy(),
        face_i=np.concatenate(fi),
        face_j=np.concatenate(fj),
        face_geometry_m=np.concatenate(fg),
        face_axis=np.concatenate(fa),
        surface_cells=uc,
        surface_area_m2=area,
        piece_factor=float(factor),
        core_index=0,
        corner_index=int(idx.ravel()[-1]),
        face_centre_index=int(idx[tuple(fc)]),
        surface_refinement=c,
    )
    return out


def probe_weights(grid: FVGrid, depth_m: float, field: str = "depth_m") -> tuple[int, int, float]:
    """Where a probe ``depth_m`` below the surface reads the field: the flat indices of the two nodes around it
    and the weight of the second, for linear interpolation along the shortest axis from the centre of its
    face toward the thermal centre (other axes at their centre; see ``Geometry.depth_position``).

    >>> g = build_grid(Geometry("slab", thickness_m=0.04), 5)  # nodes every 5 mm from the centre
    >>> i0, i1, w = probe_weights(g, 0.0125)
    >>> i0, i1, round(w, 9)
    (1, 2, 0.5)
    """
    lengths = [ax.length_m for ax in grid.axes]
    a = lengths.index(min(lengths))
    ax = grid.axes[a]
    d = validate.number(field, depth_m, minimum=0.0, maximum=ax.length_m, unit="m")
    x = ax.length_m - d
    j = int(np.clip(np.searchsorted(ax.x_m, x, side="right") - 1, 0, grid.shape[a] - 2))
    w = float(np.clip((x - ax.x_m[j]) / (ax.x_m[j + 1] - ax.x_m[j]), 0.0, 1.0))
    at = [0] * len(grid.shape)
    at[a] = j
    i0 = int(np.ravel_multi_index(tuple(at), grid.shape))
    at[a] = j + 1
    return i0, int(np.ravel_multi_index(tuple(at), grid.shape)), w
