"""The functions of tieline: flashes, stability, saturation curves, bubble and dew points and
phase properties, each taking a scalar point or numpy arrays (broadcast together).

Units are SI everywhere: temperatures in K, pressures in Pa, amounts in mol (any positive
amounts; fractions are derived), volumes in m3, energies in J.
"""

from __future__ import annotations

import functools
import numbers
from typing import Any, Callable, List, Optional, Tuple, Union, overload

import numpy as np
from numpy.typing import ArrayLike

from . import _core
from ._core import Model, Solid
from ._errors import _invalid
from ._results import (
    _KINDS,
    BubbleDewCurve,
    BubbleDewPoint,
    FlashResult,
    FlashSweep,
    Properties,
    PropertyTable,
    SaturationCurve,
    SaturationPoint,
    SolidFlashResult,
    SolidProperties,
    SolidPropertyTable,
    StabilityResult,
    WaterProperties,
    WaterSaturation,
)

__all__ = [
    "flash",
    "stability",
    "saturation_pressure",
    "saturation_temperature",
    "bubble_pressure",
    "dew_pressure",
    "bubble_temperature",
    "dew_temperature",
    "phase_properties",
    "flash_with_solids",
    "frost_point_temperature",
    "water_properties",
    "water_saturation",
    "set_threads",
    "get_threads",
]

Progress = Callable[[int, int], Any]

#: Default block of a vectorised flash: None, the core's automatic size (1/64 of the points,
#: 16 to 64), as in the Rust ``flash_batch``.
DEFAULT_BLOCK = None


def _check_model(model: Any) -> None:
    if not isinstance(model, Model):
        raise _invalid("model", f"{type(model).__name__}; a tieline.Model is required")


def _is_scalar(x: Any) -> bool:
    if isinstance(x, (bool, np.bool_)):
        return False
    if isinstance(x, numbers.Real):
        return True
    return isinstance(x, np.ndarray) and x.ndim == 0


def _scalar(x: Any, what: str) -> float:
    if isinstance(x, (bool, np.bool_)):
        raise _invalid(what, f"{x!r}; a number is required, not a bool")
    try:
        return float(x)
    except (TypeError, ValueError):
        raise _invalid(what, f"{x!r}; a number is required") from None


def _array(x: Any, what: str) -> np.ndarray:
    if isinstance(x, (bool, np.bool_, str, bytes)):
        raise _invalid(what, f"{_show(x)}; numbers are required")
    try:
        a = np.asarray(x)
    except (TypeError, ValueError):
        raise _invalid(what, f"{x!r}; a number or an array of numbers is required") from None
    if a.dtype == object or a.dtype.kind not in "iuf":
        raise _invalid(what, f"array of dtype {a.dtype}; real numbers are required")
    return np.asarray(a, dtype=np.float64)


def _feed(model: Model, feed: Any, what: str = "feed") -> np.ndarray:
    z = _array(feed, what)
    nc = model.num_components
    if z.ndim == 0 or z.shape[-1] != nc:
        raise _invalid(
            what,
            f"shape {z.shape}; one amount per component ({nc}) is required, as a 1-D array "
            f"or as rows of shape (..., {nc})",
        )
    return z


def _on_error(on_error: str) -> bool:
    if on_error == "raise":
        return True
    if on_error == "flag":
        return False
    raise _invalid("on_error", f"{on_error!r}; \"raise\" or \"flag\" is required")


def _show(x: Any) -> str:
    """A value for a message: repr, with a huge integer in the core's compact number form."""
    r = repr(x)
    if isinstance(x, numbers.Integral) and not isinstance(x, bool) and len(r) > 24:
        return _core.format_number(float(x))
    return r


def _count(what: str, value: Any, lo: int, hi: int, note: str = "") -> int:
    """An integer argument in [lo, hi] (a documented limit of the core), checked before it
    reaches the compiled code, so that a bool, a float, a str, a negative or an enormous value
    is an InvalidInputError naming the argument and the range, never a TypeError or an
    OverflowError of the conversion."""
    if isinstance(value, bool) or not isinstance(value, numbers.Integral) or not lo <= int(value) <= hi:
        shown = _show(value) if isinstance(value, numbers.Integral) and not isinstance(value, bool) else type(value).__name__
        raise _invalid(what, f"{shown}; an integer from {lo} to {hi}{note} is required")
    return int(value)


def _check_threads(threads: Optional[int]) -> Optional[int]:
    if threads is None:
        return None
    return _count("threads", threads, 0, _core.MAX_THREADS, " (0: one per core)")


def _check_iterations(what: str, n: Optional[int], lo: int = 0) -> Optional[int]:
    return None if n is None else _count(what, n, lo, _core.MAX_ITERATIONS)


def _check_progress(progress: Optional[Progress]) -> Optional[Progress]:
    if progress is not None and not callable(progress):
        raise _invalid("progress", f"{type(progress).__name__}; a callable progress(done, total) is required")
    return progress


def _broadcast(
    model: Model, feed: Any, *coords: Tuple[Any, str]
) -> Tuple[Tuple[int, ...], List[np.ndarray], np.ndarray, np.ndarray]:
    """Broadcasts coordinate arrays with the feed rows: (shape, flat coords, flat feeds
    (1 or N rows), the feed as stored in results)."""
    return _broadcast_rows(_feed(model, feed), *coords)


def _broadcast_rows(
    z: np.ndarray, *coords: Tuple[Any, str]
) -> Tuple[Tuple[int, ...], List[np.ndarray], np.ndarray, np.ndarray]:
    """As :func:`_broadcast`, for feed rows ``z`` already checked (their last axis may be
    wider than the model's components, as for the reaction calculations' extra species)."""
    arrays = [_array(c, what) for c, what in coords]
    try:
        shape = np.broadcast_shapes(*(a.shape for a in arrays), z.shape[:-1])
    except ValueError:
        shapes = ", ".join(f"{what} {a.shape}" for a, (_, what) in zip(arrays, coords))
        raise _invalid(
            "shapes",
            f"{shapes} and feed {z.shape} do not broadcast together (numpy rules; the feed's "
            "last axis is the component axis)",
        ) from None
    flat = [np.ascontiguousarray(np.broadcast_to(a, shape), dtype=np.float64).reshape(-1) for a in arrays]
    nc = z.shape[-1]
    if z.ndim == 1:
        zf = np.ascontiguousarray(z).reshape(1, nc)
        stored = z.copy()
    else:
        stored = np.array(np.broadcast_to(z, shape + (nc,)), dtype=np.float64)
        zf = stored.reshape(-1, nc)
    return shape, flat, zf, stored


def _failures(raw: List[Tuple[int, BaseException]], shape: Tuple[int, ...]) -> List[Tuple[Tuple[int, ...], BaseException]]:
    out = []
    for i, e in raw:
        idx = tuple(int(k) for k in np.unravel_index(i, shape)) if shape else ()
        out.append((idx, e))
    return out


@functools.lru_cache(maxsize=64)
def _flash_options(
    tolerance: Optional[float],
    max_ss_iterations: Optional[int],
    max_newton_iterations: Optional[int],
    certificate: bool,
    negative_flash: bool,
    max_phases: int = 2,
) -> _core.FlashOptions:
    if isinstance(max_phases, bool) or not isinstance(max_phases, numbers.Integral) or max_phases not in (2, 3):
        raise _invalid("max_phases", f"{_show(max_phases)}; 2 or 3 is required")
    return _core.FlashOptions(
        tolerance,
        _check_iterations("max_ss_iterations", max_ss_iterations),
        _check_iterations("max_newton_iterations", max_newton_iterations),
        certificate,
        negative_flash,
        None,
        int(max_phases),
    )


#: Options of the short path of scalar flashes: (certificate, negative_flash, max_phases).
_FLASH_OPTIONS = {
    (c, n, k): _flash_options(None, None, None, c, n, k) for c in (True, False) for n in (False, True) for k in (2, 3)
}


@overload
def flash(
    model: Model,
    temperature: float,
    pressure: float,
    feed: ArrayLike,
    *,
    tolerance: Optional[float] = ...,
    certificate: bool = ...,
    negative_flash: bool = ...,
    max_ss_iterations: Optional[int] = ...,
    max_newton_iterations: Optional[int] = ...,
    max_phases: int = ...,
    block: Optional[int] = ...,
    threads: Optional[int] = ...,
    progress: Optional[Progress] = ...,
    on_error: str = ...,
) -> Union[FlashResult, FlashSweep]: ...
@overload
def flash(
    model: Model,
    temperature: ArrayLike,
    pressure: ArrayLike,
    feed: ArrayLike,
    *,
    tolerance: Optional[float] = ...,
    certificate: bool = ...,
    negative_flash: bool = ...,
    max_ss_iterations: Optional[int] = ...,
    max_newton_iterations: Optional[int] = ...,
    max_phases: int = ...,
    block: Optional[int] = ...,
    threads: Optional[int] = ...,
    progress: Optional[Progress] = ...,
    on_error: str = ...,
) -> FlashSweep: ...
def flash(
    model: Model,
    temperature: ArrayLike,
    pressure: ArrayLike,
    feed: ArrayLike,
    *,
    tolerance: Optional[float] = None,
    certificate: bool = True,
    negative_flash: bool = False,
    max_ss_iterations: Optional[int] = None,
    max_newton_iterations: Optional[int] = None,
    max_phases: int = 2,
    block: Optional[int] = DEFAULT_BLOCK,
    threads: Optional[int] = None,
    progress: Optional[Progress] = None,
    on_error: str = "raise",
) -> Union[FlashResult, FlashSweep]:
    """Isothermal–isobaric (PT) flash: the phases of least Gibbs energy.

    Parameters
    ----------
    model : Model
        The fluid model.
    temperature : float or array_like
        Temperature(s), K.
    pressure : float or array_like
        Pressure(s), Pa.
    feed : array_like
        Feed amounts, mol (any positive amounts; only their ratios matter for fractions):
        one 1-D row of ``nc`` values shared by every point, or rows of shape ``(..., nc)``.
    tolerance : float, optional
        Convergence tolerance on max_i |ln f_i^V − ln f_i^L| (default 1e-10).
    certificate : bool
        Compute the stability certificate of each result (an extra stability test).
    negative_flash : bool
        Also report the tie-line extension of single-phase feeds (scalar calls).
    max_ss_iterations, max_newton_iterations : int, optional
        Iteration limits of successive substitution and of Newton's method.
    max_phases : {2, 3}
        Most fluid phases per result. With 2 (default) a state where a third phase lowers G
        raises :class:`NoSolutionError`; with 3 it is returned as a vapour, a lighter liquid
        (``"liquid2"``) and a denser liquid, found when the certificate of the best
        two-phase split reveals the third phase (so ``certificate`` must be on). Vectorised
        results then hold ``max_phases`` phase slots per point.
    block : int, optional
        Vectorised calls: points are taken in consecutive blocks of this many (default: 1/64
        of the points, at least 16 and at most 64, as the Rust ``flash_batch``), each solved
        by one context that warm-starts a point from the previous one when the two are near
        in T, p and feed (so order a sweep along T or p) and starts it cold otherwise.
        Results depend on the block layout but never on the number of threads.
    threads : int, optional
        Threads of a vectorised call (default: :func:`get_threads`).
    progress : callable, optional
        ``progress(done, total)`` is called about every 0.1 s during a vectorised call and
        once at the end; an exception it raises stops the call. Ctrl-C also stops it.
    on_error : {"raise", "flag"}
        Vectorised calls: raise the error of the first failing point (default), or mark
        failed points in ``ok`` and ``failures`` and fill their values with NaN.

    Returns
    -------
    FlashResult
        When temperature and pressure are scalars and the feed is 1-D.
    FlashSweep
        Otherwise: arrays of the broadcast shape of temperature, pressure and feed rows.

    Raises
    ------
    InvalidInputError
        Non-finite or non-positive T or p, negative amounts, wrong shapes.
    ConvergenceError
        The solver did not converge (its diagnostics are attributes of the exception).
    """
    if (
        type(temperature) is float
        and type(pressure) is float
        and threads is None
        and block is DEFAULT_BLOCK
        and tolerance is None
        and max_ss_iterations is None
        and max_newton_iterations is None
        and type(max_phases) is int
        and type(certificate) is bool
        and type(negative_flash) is bool
    ):
        # The short path of a scalar call: arguments that need no conversion go straight to
        # the core (None when the model or feed needs the general path below).
        opts = _FLASH_OPTIONS.get((certificate, negative_flash, max_phases))
        if opts is not None:
            r = _core._flash_fast(model, temperature, pressure, feed, opts)
            if r is not None:
                return r
    _check_model(model)
    _check_threads(threads)
    if block is not None:
        block = _count("block", block, 1, _core.MAX_POINTS)
    opts = _flash_options(
        tolerance, max_ss_iterations, max_newton_iterations, bool(certificate), bool(negative_flash), max_phases
    )
    slots = int(max_phases)
    if _is_scalar(temperature) and _is_scalar(pressure):
        z = _feed(model, feed)
        if z.ndim == 1:
            return _core.flash_point(
                model, _scalar(temperature, "temperature"), _scalar(pressure, "pressure"), z, opts
            )
    raise_errors = _on_error(on_error)
    shape, (t, p), zf, stored = _broadcast(model, feed, (temperature, "temperature"), (pressure, "pressure"))
    raw = _core.flash_sweep(
        model, t, p, zf, opts, block, _check_threads(threads), _check_progress(progress), raise_errors
    )
    nc = model.num_components
    return FlashSweep(
        components=model.components,
        temperature=t.reshape(shape),
        pressure=p.reshape(shape),
        feed=stored,
        num_phases=raw["num_phases"].reshape(shape),
        vapor_fraction=raw["vapor_fraction"].reshape(shape),
        phase_kind=_KINDS[raw["kind"]].reshape(shape + (slots,)),
        phase_fraction=raw["fraction"].reshape(shape + (slots,)),
        phase_amount=raw["amount"].reshape(shape + (slots,)),
        molar_volume=raw["molar_volume"].reshape(shape + (slots,)),
        z=raw["z"].reshape(shape + (slots,)),
        composition=raw["composition"].reshape(shape + (slots, nc)),
        ln_phi=raw["ln_phi"].reshape(shape + (slots, nc)),
        residual=raw["residual"].reshape(shape),
        certificate=raw["certificate"].reshape(shape),
        gibbs=raw["gibbs"].reshape(shape),
        stability_iterations=raw["stability_iterations"].reshape(shape),
        ss_iterations=raw["ss_iterations"].reshape(shape),
        newton_iterations=raw["newton_iterations"].reshape(shape),
        warm_start=raw["warm_start"].reshape(shape),
        ok=raw["ok"].reshape(shape),
        failures=_failures(raw["failures"], shape),
    )


def stability(
    model: Model,
    temperature: float,
    pressure: float,
    amounts: ArrayLike,
    *,
    tolerance: Optional[float] = None,
    threshold: Optional[float] = None,
) -> StabilityResult:
    """Tangent-plane stability test of a phase of ``amounts`` (mol) at ``temperature`` (K)
    and ``pressure`` (Pa).

    Parameters
    ----------
    tolerance : float, optional
        Convergence tolerance of each trial (default 1e-10).
    threshold : float, optional
        A stationary point counts as unstable below −threshold (default 1e-10).

    Returns
    -------
    StabilityResult
        Whether the phase is stable, the minimum tangent-plane distance (dimensionless) and
        the stationary points found.
    """
    _check_model(model)
    z = _feed(model, amounts, "amounts")
    if z.ndim != 1:
        raise _invalid("amounts", f"shape {z.shape}; stability() takes one phase, a 1-D array")
    return _core.stability_point(
        model, _scalar(temperature, "temperature"), _scalar(pressure, "pressure"), z, tolerance, threshold
    )


def _component(model: Model, component: Union[int, str]) -> int:
    if isinstance(component, str):
        return model.index(component)
    if isinstance(component, bool) or not isinstance(component, numbers.Integral):
        raise _invalid("component", f"{component!r}; an index or a component name is required")
    if not 0 <= component < model.num_components:
        raise _invalid("component", f"index {component} for a model of {model.num_components} components")
    return int(component)


def _saturation(
    model: Model,
    by: str,
    values: ArrayLike,
    component: Union[int, str],
    tolerance: Optional[float],
    max_iterations: Optional[int],
    threads: Optional[int],
    progress: Optional[Progress],
    on_error: str,
) -> Union[SaturationPoint, SaturationCurve]:
    _check_model(model)
    _check_threads(threads)
    i = _component(model, component)
    if _is_scalar(values):
        return _core.saturation_point(
            model, by, _scalar(values, by), i, tolerance, _check_iterations("max_iterations", max_iterations, 1)
        )
    raise_errors = _on_error(on_error)
    a = _array(values, by)
    shape = a.shape
    raw = _core.saturation_sweep(
        model,
        by,
        np.ascontiguousarray(a).reshape(-1),
        i,
        tolerance,
        _check_iterations("max_iterations", max_iterations, 1),
        _check_threads(threads),
        _check_progress(progress),
        raise_errors,
    )
    names = (
        "temperature",
        "pressure",
        "liquid_molar_volume",
        "vapor_molar_volume",
        "liquid_density",
        "vapor_density",
        "enthalpy_of_vaporization",
        "residual",
        "iterations",
        "ok",
    )
    return SaturationCurve(
        component=model.components[i],
        failures=_failures(raw["failures"], shape),
        **{n: raw[n].reshape(shape) for n in names},
    )


def saturation_pressure(
    model: Model,
    temperature: ArrayLike,
    component: Union[int, str] = 0,
    *,
    tolerance: Optional[float] = None,
    max_iterations: Optional[int] = None,
    threads: Optional[int] = None,
    progress: Optional[Progress] = None,
    on_error: str = "raise",
) -> Union[SaturationPoint, SaturationCurve]:
    """Vapour pressure of a pure component at ``temperature`` (K), with the saturated
    densities (mol/m3) and the enthalpy of vaporisation (J/mol).

    ``component`` is an index or a name of one of the model's components. A scalar
    temperature gives a :class:`SaturationPoint`; an array gives a :class:`SaturationCurve`
    of the same shape, computed in parallel. At or above the critical temperature there is no
    saturation state: :class:`NoSolutionError` (or a flagged point with ``on_error="flag"``).
    ``threads``, ``progress`` and ``on_error`` act as in :func:`flash`.
    """
    if type(temperature) is float and type(component) is int and 0 <= component < 256 and tolerance is None and max_iterations is None and threads is None:
        r = _core._saturation_fast(model, "temperature", temperature, component)
        if r is not None:
            return r
    return _saturation(model, "temperature", temperature, component, tolerance, max_iterations, threads, progress, on_error)


def saturation_temperature(
    model: Model,
    pressure: ArrayLike,
    component: Union[int, str] = 0,
    *,
    tolerance: Optional[float] = None,
    max_iterations: Optional[int] = None,
    threads: Optional[int] = None,
    progress: Optional[Progress] = None,
    on_error: str = "raise",
) -> Union[SaturationPoint, SaturationCurve]:
    """Boiling temperature (K) of a pure component at ``pressure`` (Pa), with the saturated
    densities (mol/m3) and the enthalpy of vaporisation (J/mol); see
    :func:`saturation_pressure` for the arguments and results."""
    if type(pressure) is float and type(component) is int and 0 <= component < 256 and tolerance is None and max_iterations is None and threads is None:
        r = _core._saturation_fast(model, "pressure", pressure, component)
        if r is not None:
            return r
    return _saturation(model, "pressure", pressure, component, tolerance, max_iterations, threads, progress, on_error)


def _bubble_dew(
    model: Model,
    which: str,
    coordinate: str,
    values: ArrayLike,
    feed: ArrayLike,
    tolerance: Optional[float],
    max_iterations: Optional[int],
    threads: Optional[int],
    progress: Optional[Progress],
    on_error: str,
) -> Union[BubbleDewPoint, BubbleDewCurve]:
    _check_model(model)
    _check_threads(threads)
    if _is_scalar(values):
        z = _feed(model, feed)
        if z.ndim == 1:
            return _core.bubble_dew_point(
                model, which, _scalar(values, coordinate), z, tolerance, _check_iterations("max_iterations", max_iterations, 1)
            )
    raise_errors = _on_error(on_error)
    shape, (v,), zf, _ = _broadcast(model, feed, (values, coordinate))
    raw = _core.bubble_dew_sweep(
        model,
        which,
        v,
        zf,
        tolerance,
        _check_iterations("max_iterations", max_iterations, 1),
        _check_threads(threads),
        _check_progress(progress),
        raise_errors,
    )
    nc = model.num_components
    return BubbleDewCurve(
        kind=which,
        components=model.components,
        temperature=raw["temperature"].reshape(shape),
        pressure=raw["pressure"].reshape(shape),
        incipient=raw["incipient"].reshape(shape + (nc,)),
        k_values=raw["k_values"].reshape(shape + (nc,)),
        feed_molar_volume=raw["feed_molar_volume"].reshape(shape),
        incipient_molar_volume=raw["incipient_molar_volume"].reshape(shape),
        residual=raw["residual"].reshape(shape),
        iterations=raw["iterations"].reshape(shape),
        ok=raw["ok"].reshape(shape),
        failures=_failures(raw["failures"], shape),
    )


_BD_DOC = """{title} of a mixture of ``feed`` amounts (mol) at ``{given}``.

    A scalar {given} with a 1-D feed gives a :class:`BubbleDewPoint` ({unknown} and the
    incipient phase); arrays (broadcast with the feed rows) give a :class:`BubbleDewCurve`,
    computed in parallel. Where no point exists (above the cricondentherm or cricondenbar,
    for a pure-component feed above its critical point) :class:`NoSolutionError` or
    :class:`ConvergenceError` is raised, or the point is flagged with ``on_error="flag"``.
    ``threads``, ``progress`` and ``on_error`` act as in :func:`flash`.
    """


def bubble_pressure(
    model: Model,
    temperature: ArrayLike,
    feed: ArrayLike,
    *,
    tolerance: Optional[float] = None,
    max_iterations: Optional[int] = None,
    threads: Optional[int] = None,
    progress: Optional[Progress] = None,
    on_error: str = "raise",
) -> Union[BubbleDewPoint, BubbleDewCurve]:
    return _bubble_dew(model, "bubble_pressure", "temperature", temperature, feed, tolerance, max_iterations, threads, progress, on_error)


def dew_pressure(
    model: Model,
    temperature: ArrayLike,
    feed: ArrayLike,
    *,
    tolerance: Optional[float] = None,
    max_iterations: Optional[int] = None,
    threads: Optional[int] = None,
    progress: Optional[Progress] = None,
    on_error: str = "raise",
) -> Union[BubbleDewPoint, BubbleDewCurve]:
    return _bubble_dew(model, "dew_pressure", "temperature", temperature, feed, tolerance, max_iterations, threads, progress, on_error)


def bubble_temperature(
    model: Model,
    pressure: ArrayLike,
    feed: ArrayLike,
    *,
    tolerance: Optional[float] = None,
    max_iterations: Optional[int] = None,
    threads: Optional[int] = None,
    progress: Optional[Progress] = None,
    on_error: str = "raise",
) -> Union[BubbleDewPoint, BubbleDewCurve]:
    return _bubble_dew(model, "bubble_temperature", "pressure", pressure, feed, tolerance, max_iterations, threads, progress, on_error)


def dew_temperature(
    model: Model,
    pressure: ArrayLike,
    feed: ArrayLike,
    *,
    tolerance: Optional[float] = None,
    max_iterations: Optional[int] = None,
    threads: Optional[int] = None,
    progress: Optional[Progress] = None,
    on_error: str = "raise",
) -> Union[BubbleDewPoint, BubbleDewCurve]:
    return _bubble_dew(model, "dew_temperature", "pressure", pressure, feed, tolerance, max_iterations, threads, progress, on_error)


bubble_pressure.__doc__ = _BD_DOC.format(title="Bubble-point pressure (Pa)", given="temperature (K)", unknown="the pressure")
dew_pressure.__doc__ = _BD_DOC.format(title="Dew-point pressure (Pa)", given="temperature (K)", unknown="the pressure") + (
    "Where two dew points exist (retrograde region) the one reached from the low-pressure\n"
    "    estimate is returned.\n"
)
bubble_temperature.__doc__ = _BD_DOC.format(title="Bubble-point temperature (K)", given="pressure (Pa)", unknown="the temperature")
dew_temperature.__doc__ = _BD_DOC.format(title="Dew-point temperature (K)", given="pressure (Pa)", unknown="the temperature")


_PROPERTY_NAMES = (
    "molar_volume",
    "molar_density",
    "mass_density",
    "molar_mass",
    "z",
    "enthalpy",
    "entropy",
    "gibbs",
    "internal_energy",
    "helmholtz",
    "cp",
    "cv",
    "speed_of_sound",
    "joule_thomson",
    "isothermal_compressibility",
    "thermal_expansion",
    "residual_enthalpy",
    "residual_entropy",
    "residual_gibbs",
)


def phase_properties(
    model: Model,
    temperature: ArrayLike,
    pressure: ArrayLike,
    amounts: ArrayLike,
    root: str = "stable",
    *,
    threads: Optional[int] = None,
    on_error: str = "raise",
) -> Union[Properties, PropertyTable]:
    """Properties of a single phase of ``amounts`` (mol) at ``temperature`` (K) and
    ``pressure`` (Pa) on a chosen volume root, without any phase-equilibrium calculation.

    ``root`` is ``"stable"`` (the root of least Gibbs energy), ``"liquid"`` (the smallest
    volume) or ``"vapor"`` (the largest); where the equation has a single root that one is
    used, and the ``kind`` of the result says what it is. Scalars give :class:`Properties`;
    arrays (broadcast with the rows of ``amounts``) give a :class:`PropertyTable`.
    """
    if type(temperature) is float and type(pressure) is float and type(root) is str:
        r = _core._properties_fast(model, temperature, pressure, amounts, root)
        if r is not None:
            return r
    _check_model(model)
    if _is_scalar(temperature) and _is_scalar(pressure):
        z = _feed(model, amounts, "amounts")
        if z.ndim == 1:
            return _core.properties_point(
                model, _scalar(temperature, "temperature"), _scalar(pressure, "pressure"), z.tolist(), root
            )
    raise_errors = _on_error(on_error)
    shape, (t, p), zf, _ = _broadcast(model, amounts, (temperature, "temperature"), (pressure, "pressure"))
    raw = _core.properties_sweep(model, t, p, zf, root, _check_threads(threads), raise_errors)
    nc = model.num_components
    return PropertyTable(
        components=model.components,
        root=root,
        temperature=t.reshape(shape),
        pressure=p.reshape(shape),
        kind=_KINDS[raw["kind"]].reshape(shape),
        ln_phi=raw["ln_phi"].reshape(shape + (nc,)),
        fugacity=raw["fugacity"].reshape(shape + (nc,)),
        ok=raw["ok"].reshape(shape),
        failures=_failures(raw["failures"], shape),
        **{n: raw[n].reshape(shape) for n in _PROPERTY_NAMES},
    )


# ---------------------------------------------------------------------------------------------
# Solids


def _solid_list(solids: Any) -> List[Solid]:
    """The solids argument as a list: one Solid or a sequence of them."""
    if isinstance(solids, Solid):
        return [solids]
    if isinstance(solids, (str, bytes)):
        raise _invalid("solids", f"{solids!r}; a Solid or a sequence of Solid objects is required")
    try:
        items = list(solids)
    except TypeError:
        raise _invalid("solids", f"{type(solids).__name__}; a Solid or a sequence of Solid objects is required") from None
    for k, s in enumerate(items):
        if not isinstance(s, Solid):
            raise _invalid("solids", f"item {k} is a {type(s).__name__}; tieline.Solid objects are required")
    return items


def _check_solid(solid: Any) -> Solid:
    if not isinstance(solid, Solid):
        raise _invalid("solid", f"{type(solid).__name__}; a tieline.Solid is required")
    return solid


def _broadcast_tp(temperature: ArrayLike, pressure: ArrayLike) -> Tuple[Tuple[int, ...], np.ndarray, np.ndarray]:
    """Temperatures (K) and pressures (Pa) broadcast together: the shape and both flattened."""
    t = _array(temperature, "temperature")
    p = _array(pressure, "pressure")
    try:
        shape = np.broadcast_shapes(t.shape, p.shape)
    except ValueError:
        raise _invalid("shapes", f"temperature {t.shape} and pressure {p.shape} do not broadcast together") from None
    tf = np.ascontiguousarray(np.broadcast_to(t, shape), dtype=np.float64).reshape(-1)
    pf = np.ascontiguousarray(np.broadcast_to(p, shape), dtype=np.float64).reshape(-1)
    return shape, tf, pf


def _solid_properties(
    solid: Solid, temperature: ArrayLike, pressure: ArrayLike, on_error: str = "raise"
) -> Union[SolidProperties, SolidPropertyTable]:
    """The engine of :meth:`Solid.properties`: scalars give :class:`SolidProperties`, arrays
    (broadcast together) a :class:`SolidPropertyTable`."""
    if _is_scalar(temperature) and _is_scalar(pressure):
        return _core._solid_point(solid, _scalar(temperature, "temperature"), _scalar(pressure, "pressure"))
    raise_errors = _on_error(on_error)
    shape, tf, pf = _broadcast_tp(temperature, pressure)
    raw = _core._solid_sweep(solid, tf, pf, raise_errors)
    return SolidPropertyTable(
        species=solid.species,
        temperature=tf.reshape(shape),
        pressure=pf.reshape(shape),
        failures=_failures(raw["failures"], shape),
        **{n: raw[n].reshape(shape) for n in ("gibbs", "enthalpy", "entropy", "molar_volume", "cp", "ok")},
    )


def flash_with_solids(
    model: Model,
    temperature: float,
    pressure: float,
    feed: ArrayLike,
    solids: Union[Solid, List[Solid], Tuple[Solid, ...]],
    *,
    tolerance: Optional[float] = None,
    solid_tolerance: Optional[float] = None,
    certificate: bool = True,
    max_ss_iterations: Optional[int] = None,
    max_newton_iterations: Optional[int] = None,
) -> SolidFlashResult:
    """Isothermal–isobaric (PT) flash over the fluid phases of ``model`` and the pure solid
    phases ``solids``: freeze-out of a species (CO2 from a cold methane-rich gas, ice from
    humid gas).

    At equilibrium a present solid fixes the fluid's fugacity of its species, and an absent
    one has a fugacity no lower than the fluid's (its margin ln f_solid − ln f_fluid ≥ 0):
    the margins of every candidate are the solids' stability certificate, beside the fluid
    flash's own.

    Parameters
    ----------
    model : Model
        The fluid model.
    temperature : float
        Temperature, K.
    pressure : float
        Pressure, Pa.
    feed : array_like
        Feed amounts, mol, one per component.
    solids : Solid or sequence of Solid
        The candidate solids; each one's species is found among the model's components by
        name. Of several solids of one species only the most stable at (T, p) can be present.
    tolerance : float, optional
        Tolerance of the fluid flashes (as in :func:`flash`).
    solid_tolerance : float, optional
        Tolerance on |ln f_fluid − ln f_solid| of present solids and on negative margins of
        absent ones (dimensionless, default 1e-9).
    certificate, max_ss_iterations, max_newton_iterations
        As in :func:`flash`, for the fluid flashes.

    Returns
    -------
    SolidFlashResult
        The fluid flash of what remains fluid (None if everything froze), the solids present
        with their amounts (mol), every candidate's margin, and the diagnostics.

    Raises
    ------
    InvalidInputError
        Bad T, p or amounts; a solid whose species is not a component of the model.
    NoSolutionError, ConvergenceError
        No equilibrium found (with diagnostics).
    """
    _check_model(model)
    if not (_is_scalar(temperature) and _is_scalar(pressure)):
        raise _invalid("temperature", "flash_with_solids() takes one point: scalar temperature and pressure")
    z = _feed(model, feed)
    if z.ndim != 1:
        raise _invalid("feed", f"shape {z.shape}; flash_with_solids() takes one feed, a 1-D array")
    opts = _flash_options(tolerance, max_ss_iterations, max_newton_iterations, bool(certificate), False)
    return _core.solid_flash_point(
        model,
        _solid_list(solids),
        _scalar(temperature, "temperature"),
        _scalar(pressure, "pressure"),
        np.ascontiguousarray(z),
        opts,
        None if solid_tolerance is None else _scalar(solid_tolerance, "solid_tolerance"),
    )


def frost_point_temperature(
    model: Model,
    pressure: float,
    feed: ArrayLike,
    solid: Solid,
    *,
    t_guess: Optional[float] = None,
    tolerance: Optional[float] = None,
) -> float:
    """The frost point: the temperature (K) at which the pure ``solid`` first appears from
    the fluid of ``feed`` amounts (mol) at ``pressure`` (Pa), where the species' fugacity in
    the fluid equals the solid's.

    The search brackets the root from ``t_guess`` (K; default the solid's triple-point
    estimate) in steps of 2 % and refines it by false position. ``tolerance`` is that of the
    fluid flashes (as in :func:`flash`).

    Raises
    ------
    InvalidInputError
        Bad p or amounts; the solid's species absent from the feed or the model.
    NoSolutionError
        No frost point near ``t_guess``.
    OutsideValidityError
        The search left the solid's (or the fluid's) range of validity.
    """
    _check_model(model)
    _check_solid(solid)
    z = _feed(model, feed)
    if z.ndim != 1:
        raise _invalid("feed", f"shape {z.shape}; frost_point_temperature() takes one feed, a 1-D array")
    t0 = solid.triple_point_estimate[0] if t_guess is None else _scalar(t_guess, "t_guess")
    opts = _flash_options(tolerance, None, None, False, False)
    return _core.frost_point(model, solid, _scalar(pressure, "pressure"), np.ascontiguousarray(z), t0, opts)


# ---------------------------------------------------------------------------------------------
# Water by IAPWS-95 in its own terms


def water_properties(
    temperature: float,
    *,
    density: Optional[float] = None,
    pressure: Optional[float] = None,
    root: str = "stable",
) -> WaterProperties:
    """Properties of water by IAPWS-95 (IAPWS R6-95(2018)) per kg, in the IAPWS-95 reference
    state, at ``temperature`` (K) and either ``density`` (kg/m3) or ``pressure`` (Pa).

    With a pressure, ``root`` chooses the density root: ``"stable"`` (least Gibbs energy),
    ``"liquid"`` or ``"vapor"`` (stable or metastable branch). The same states per mol in the
    library's reference state come from :func:`phase_properties` with :meth:`Model.water`.

    Raises
    ------
    InvalidInputError
        Both or neither of density and pressure; non-finite or non-positive values.
    OutsideValidityError
        Outside the range of the formulation (130–1273.15 K; liquid-like states from 200 K;
        up to 1000 MPa and 1400 kg/m3).
    NoSolutionError
        No density root of the requested kind at (T, p), or the critical point itself.
    """
    if (density is None) == (pressure is None):
        raise _invalid("density, pressure", "exactly one of density (kg/m3) or pressure (Pa) is required")
    t = _scalar(temperature, "temperature")
    if density is not None:
        return _core.water_state(t, "density", _scalar(density, "density"))
    return _core.water_state(t, "pressure", _scalar(pressure, "pressure"), root)


def water_saturation(
    *, temperature: Optional[float] = None, pressure: Optional[float] = None
) -> WaterSaturation:
    """The vapour–liquid saturation state of water by IAPWS-95 at ``temperature`` (K,
    273.16 K ≤ T < 647.096 K) or ``pressure`` (Pa, 611.655 Pa ≤ p < 22.064 MPa), with both
    phases per kg in the IAPWS-95 reference state.

    Raises
    ------
    InvalidInputError
        Both or neither of temperature and pressure given; bad values.
    OutsideValidityError
        Below the triple point.
    NoSolutionError
        At or above the critical point.
    """
    if (temperature is None) == (pressure is None):
        raise _invalid("temperature, pressure", "exactly one of temperature (K) or pressure (Pa) is required")
    if temperature is not None:
        return _core.water_saturation_point("temperature", _scalar(temperature, "temperature"))
    return _core.water_saturation_point("pressure", _scalar(pressure, "pressure"))


def set_threads(n: int) -> None:
    """Sets the default number of threads of vectorised calls (0: one per core)."""
    _core.set_threads(_count("threads", n, 0, _core.MAX_THREADS, " (0: one per core)"))


def get_threads() -> int:
    """The number of threads vectorised calls use by default."""
    return _core.get_threads()
