"""Calculations by name: one scalar path returning a :class:`Record` and one vectorised path
returning a :class:`Sweep`, for every calculation the engine describes
(:func:`calculations`, :func:`describe`). The named functions (``flash_ph``,
``phase_envelope`` ...) are thin conveniences over :func:`calculate`.

Units are SI everywhere: K, Pa, mol, m3, J.
"""

from __future__ import annotations

import json
import numbers
from typing import Any, Dict, List, Optional, Tuple

import numpy as np

from . import _core
from ._api import (
    _array,
    _broadcast_rows,
    _check_model,
    _check_progress,
    _check_threads,
    _count,
    _failures,
    _feed,
    _is_scalar,
    _on_error,
    _scalar,
)
from ._core import Model, Record
from ._errors import _invalid

__all__ = ["calculate", "calculations", "describe", "Record", "Sweep"]


def calculations() -> List[str]:
    """The names of all calculations (e.g. ``"flash_pt"``, ``"flash_ph"``)."""
    return list(_core.calculation_names())


def describe(name: str) -> Dict[str, Any]:
    """A calculation's summary, its arguments as ``(name, unit, doc)`` and its default options
    (every keyword :func:`calculate` accepts as an option)."""
    return dict(_core.describe_calculation(name))


def _plain(v: Any) -> Any:
    if isinstance(v, dict):
        return {str(k): _plain(x) for k, x in v.items()}
    if isinstance(v, (list, tuple, np.ndarray)):
        return [_plain(x) for x in v]
    if isinstance(v, (bool, np.bool_)):
        return bool(v)
    if isinstance(v, numbers.Integral):
        return int(v)
    if isinstance(v, numbers.Real):
        return float(v)
    return v


def _options_json(options: Dict[str, Any]) -> Optional[str]:
    if not options:
        return None
    try:
        return json.dumps(_plain(options), allow_nan=False)
    except (TypeError, ValueError) as e:
        raise _invalid(
            "options", f"{e}; finite numbers, flags, words, lists and dicts of them are required"
        ) from None


class Sweep:
    """Results of a vectorised calculation: one numpy array per field of the calculation's
    :class:`Record`, shaped ``shape + field shape`` (``shape`` being the broadcast shape of
    the inputs). Vectors that differ in length between points (one entry per phase, say) are
    padded with NaN (words with ``""``). Failed points hold NaN, 0, False or ``""``.

    Attributes
    ----------
    kind : str
        The calculation.
    shape : tuple of int
        Broadcast shape of the inputs.
    fields : list of str
        The field names.
    units : dict
        SI unit of each field that has one.
    ok : numpy.ndarray of bool
        False where the point failed (only with ``on_error="flag"``).
    failures : list of (tuple, TielineError)
        The index in ``shape`` and the exception of each failed point.
    """

    def __init__(
        self,
        kind: str,
        shape: Tuple[int, ...],
        columns: Dict[str, np.ndarray],
        units: Dict[str, str],
        ok: np.ndarray,
        failures: List[Tuple[Tuple[int, ...], BaseException]],
    ) -> None:
        self.kind = kind
        self.shape = shape
        self._columns = columns
        self.units = units
        self.ok = ok
        self.failures = failures

    @property
    def fields(self) -> List[str]:
        return list(self._columns)

    def __getattr__(self, name: str) -> np.ndarray:
        cols = self.__dict__.get("_columns", {})
        if name in cols:
            return cols[name]
        raise AttributeError(f"a {self.__dict__.get('kind', '?')} sweep has no field {name!r}; its fields are: {', '.join(cols)}")

    def __getitem__(self, name: str) -> np.ndarray:
        return self._columns[name]

    def __dir__(self) -> List[str]:
        return sorted(set(super().__dir__()) | set(self._columns))

    def to_dict(self) -> Dict[str, np.ndarray]:
        """The fields as a dict of arrays."""
        return dict(self._columns)

    def __repr__(self) -> str:
        return f"Sweep({self.kind}, shape={self.shape}, fields={len(self._columns)}, failures={len(self.failures)})"


def calculate(
    name: str,
    model: Model,
    *args: Any,
    feed: Any,
    block: Optional[int] = None,
    threads: Optional[int] = None,
    progress: Optional[Any] = None,
    on_error: str = "raise",
    **options: Any,
) -> Any:
    """Runs calculation ``name`` on ``model``.

    Parameters
    ----------
    name : str
        The calculation (:func:`calculations` lists them).
    model : Model
        The fluid model.
    *args : float or array_like
        The calculation's scalar arguments in its order and units (:func:`describe`), each
        a number or an array; arrays broadcast together with the feed rows.
    feed : array_like
        Feed amounts, mol: one row of ``nc`` values, or rows of shape ``(..., nc)``.
    block : int, optional
        Vectorised calls: points are taken in consecutive blocks of this many (default: 1/64
        of the points, at least 16 and at most 64, as :func:`flash` and the Rust
        ``flash_batch``), each computed in order by one workspace that warm-starts a point from
        the previous one when the two are near (every argument within 5 % — 10 % for a
        pressure — and every mole fraction of the feed within 0.05; so order a sweep along
        one argument) and starts it cold otherwise. Results depend on the block layout but
        never on the number of threads.
    threads, progress, on_error
        Vectorised calls: thread count (None: the default), a ``progress(done, total)``
        callback, and ``"raise"`` or ``"flag"`` for failed points.
    **options
        The calculation's options (keys of ``describe(name)["options"]``); unknown keys raise
        :class:`InvalidInputError`.

    Returns
    -------
    Record or Sweep
        A :class:`Record` when every argument is a scalar and the feed one row, else a
        :class:`Sweep`.
    """

    _check_model(model)
    spec = describe(name)
    argspec = spec["arguments"]
    if len(args) != len(argspec):
        names = ", ".join(f"{a[0]} ({a[1]})" for a in argspec)
        raise _invalid("arguments", f"{len(args)} given; {name} takes {len(argspec)}: {names}")
    opts = _options_json(options)
    ext = spec.get("feed_extension")
    if ext:
        extra = options.get(ext) or []
        if isinstance(extra, (str, bytes)):
            raise _invalid(ext, f"{extra!r}; a list of names is required")
        z = _array(feed, "feed")
        width = model.num_components + len(extra)
        if z.ndim == 0 or z.shape[-1] != width:
            raise _invalid(
                "feed",
                f"shape {z.shape}; one amount per component of the model and per entry of {ext} "
                f"({width}) is required",
            )
    else:
        z = _feed(model, feed)
    if all(_is_scalar(a) for a in args) and z.ndim == 1:
        vals = [_scalar(a, s[0]) for a, s in zip(args, argspec)]
        return _core.calc_point(model, name, vals, np.ascontiguousarray(z, dtype=np.float64), opts)
    raise_errors = _on_error(on_error)
    if block is not None:
        block = _count("block", block, 1, _core.MAX_POINTS)
    coords = [(a, s[0]) for a, s in zip(args, argspec)]
    shape, flat, zf, _stored = _broadcast_rows(z, *coords)
    npts = int(np.prod(shape)) if shape else 1
    if npts > _core.MAX_POINTS:
        raise _invalid("points", f"{npts} points in one call; at most {_core.MAX_POINTS} are allowed")
    raw = _core.calc_sweep(
        model, name, flat, zf, opts, block, _check_threads(threads), _check_progress(progress), raise_errors
    )
    columns: Dict[str, np.ndarray] = {}
    units: Dict[str, str] = {}
    for key, (arr, unit, fshape) in raw["columns"].items():
        columns[key] = arr.reshape(tuple(shape) + tuple(fshape))
        if unit:
            units[key] = unit
    return Sweep(name, tuple(shape), columns, units, raw["ok"].reshape(shape), _failures(raw["failures"], shape))
