"""Named conveniences over :func:`tieline.calculate`: each is one calculation of the engine's
catalogue (:func:`tieline.describe` lists its options). A scalar call returns a
:class:`~tieline.Record`; arrays (broadcast together with the feed rows) return a
:class:`~tieline.Sweep`, computed in parallel with the GIL released.

Units are SI: K, Pa, mol, m3, J.
"""

from __future__ import annotations

from typing import Any, Optional

from ._calc import calculate
from ._core import Model

__all__ = ["flash_sensitivities", "phase_envelope", "critical_point"]


def flash_sensitivities(
    model: Model,
    temperature: Any,
    pressure: Any,
    feed: Any,
    *,
    block: int = 64,
    threads: Optional[int] = None,
    progress: Optional[Any] = None,
    on_error: str = "raise",
    **options: Any,
) -> Any:
    """A PT flash and its derivatives by the implicit function theorem (one factorisation of
    the converged equilibrium's Hessian, no extra flash).

    Fields besides those of the flash: ``d_<x>_dt`` (per K), ``d_<x>_dp`` (per Pa) and
    ``d_<x>_dn`` (per mol of each feed component, one row per component) for ``x`` in
    ``phase_amounts`` (mol), ``compositions``, ``volume`` (m3), ``enthalpy`` (J), ``entropy``
    (J/K) of the whole system; ``cp_equilibrium`` (J/(mol K)) and the equilibrium
    compressibility, thermal expansion and Joule–Thomson coefficient. Options: those of the PT
    flash. A state at a critical point, or a pure substance split between two phases, has no
    such derivatives (:class:`NoSolutionError`).
    """
    return calculate(
        "flash_sensitivities", model, temperature, pressure, feed=feed, block=block, threads=threads,
        progress=progress, on_error=on_error, **options,
    )


def phase_envelope(
    model: Model, feed: Any, *, threads: Optional[int] = None, on_error: str = "raise", **options: Any
) -> Any:
    """The saturation boundary of a mixture: the bubble branch, the critical point and the dew
    branch traced by continuation in ln K, ln T, ln p (Michelsen 1980).

    Fields: ``temperature`` (K), ``pressure`` (Pa), ``vapor_fraction`` (0 on the bubble branch,
    1 on the dew branch) and ``incipient`` (composition of the other phase) in trace order;
    ``critical_temperature``/``critical_pressure`` (where the trace crossed a critical point);
    ``cricondenbar_*`` and ``cricondentherm_*``; ``quality_line_fraction``,
    ``quality_line_temperature``, ``quality_line_pressure`` (the requested quality lines,
    concatenated). Options: ``start_pressure`` (Pa, default 1e5), ``quality_lines`` (vapour
    fractions), ``max_points``, ``max_step``, ``tolerance``. Rows of feeds give a
    :class:`~tieline.Sweep` (vectors padded with NaN).
    """
    return calculate("phase_envelope", model, feed=feed, threads=threads, on_error=on_error, **options)


def critical_point(
    model: Model, feed: Any, *, threads: Optional[int] = None, on_error: str = "raise", **options: Any
) -> Any:
    """The critical point of a mixture (Heidemann & Khalil 1980 criteria, in Michelsen's 1984
    form): fields ``temperature`` (K), ``pressure`` (Pa), ``molar_volume`` (m3/mol),
    ``iterations``. Options: ``tolerance``, ``max_iterations``, ``initial_temperature``,
    ``initial_volume``."""
    return calculate("critical_point", model, feed=feed, threads=threads, on_error=on_error, **options)
