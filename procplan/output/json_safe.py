"""The one JSON sanitiser of procplan: plain Python data that ``json.dump`` writes as strict JSON."""

from __future__ import annotations

import dataclasses
import math
from typing import Any

import numpy as np

__all__ = ["json_safe"]


def json_safe(obj: Any, *, omit_key_suffix: str | None = None, omit_arrays_over: int | None = None) -> Any:
    """A JSON-ready copy of ``obj``.

    NaN and ±infinity become None (JSON has no such numbers); numpy scalars and arrays become Python numbers
    and lists; dataclasses become dicts; tuples become lists; dict keys become text; callables are left out;
    anything else becomes its text.

    Parameters
    ----------
    obj : the value
    omit_key_suffix : leave out dict entries whose key ends so (e.g. ``"_record"``: whole records that a
        breakdown refers to)
    omit_arrays_over : leave out dataclass fields holding a numpy array of more elements than this (histories
        are written separately)

    >>> json_safe({"a": float("nan"), "b": np.array([1.0, np.inf]), "c": (np.int64(2), np.bool_(True))})
    {'a': None, 'b': [1.0, None], 'c': [2, True]}
    """

    def walk(x: Any) -> Any:
        if dataclasses.is_dataclass(x) and not isinstance(x, type):
            out = {}
            for f in dataclasses.fields(x):
                v = getattr(x, f.name)
                if omit_arrays_over is not None and isinstance(v, np.ndarray) and v.size > omit_arrays_over:
                    continue
                if callable(v) and not dataclasses.is_dataclass(v):
                    continue
                out[f.name] = walk(v)
            return out
        if isinstance(x, dict):
            return {
                str(k): walk(v)
                for k, v in x.items()
                if not (callable(v) and not dataclasses.is_dataclass(v))
                and not (omit_key_suffix is not None and str(k).endswith(omit_key_suffix))
            }
        if isinstance(x, (list, tuple)):
            return [walk(v) for v in x]
        if isinstance(x, np.ndarray):
            return [walk(v) for v in x.tolist()]
        if isinstance(x, (np.floating, float)):
            f = float(x)
            return f if math.isfinite(f) else None
        if isinstance(x, np.integer):
            return int(x)
        if isinstance(x, np.bool_):
            return bool(x)
        if isinstance(x, (str, int, bool)) or x is None:
            return x
        if isinstance(x, np.generic):
            return walk(x.item())
        return str(x)

    return walk(obj)
