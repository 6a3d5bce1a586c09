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

__all__ = ["flash_sensitivities"]


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
