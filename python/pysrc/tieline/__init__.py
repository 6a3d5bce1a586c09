"""tieline: phase equilibrium of real fluids by Gibbs-energy minimisation.

Build a :class:`Model` from component names, flash it at a temperature (K) and pressure
(Pa), and read the phases::

    import tieline as tl
    model = tl.Model(["methane", "n-butane"], kind="peng_robinson")
    result = tl.flash(model, 300.0, 5.0e6, [0.5, 0.5])
    print(result.vapor_fraction, result.phases[0].composition)

Every function also takes numpy arrays (broadcast together) and then computes in parallel
with the GIL released. Units are SI throughout: K, Pa, mol, m3, J.

Water is :meth:`Model.water` (IAPWS-95): every function takes it, and
:func:`water_properties` and :func:`water_saturation` give its states per kg in the
IAPWS-95 reference state.

Caution: tieline is an aid to engineering judgement, not a substitute for it. Respect the
validity ranges of every model and correlation.
"""

from __future__ import annotations

from ._core import ComponentBank, Model, PhaseState, __version__
from ._api import (
    bubble_pressure,
    bubble_temperature,
    dew_pressure,
    dew_temperature,
    flash,
    get_threads,
    phase_properties,
    saturation_pressure,
    saturation_temperature,
    set_threads,
    stability,
    water_properties,
    water_saturation,
)
from ._errors import (
    ConvergenceError,
    DataError,
    InvalidInputError,
    NoSolutionError,
    OutsideValidityError,
    TielineError,
    UnknownComponentError,
)
from ._results import (
    BubbleDewCurve,
    BubbleDewPoint,
    FlashDiagnostics,
    FlashResult,
    FlashSweep,
    Phase,
    Properties,
    PropertyTable,
    SaturationCurve,
    SaturationPoint,
    StabilityResult,
    StationaryPoint,
    TieLine,
    WaterProperties,
    WaterSaturation,
)

__all__ = [
    "__version__",
    "Model",
    "ComponentBank",
    "PhaseState",
    "flash",
    "stability",
    "saturation_pressure",
    "saturation_temperature",
    "bubble_pressure",
    "dew_pressure",
    "bubble_temperature",
    "dew_temperature",
    "phase_properties",
    "water_properties",
    "water_saturation",
    "set_threads",
    "get_threads",
    "FlashResult",
    "FlashSweep",
    "FlashDiagnostics",
    "Phase",
    "TieLine",
    "StabilityResult",
    "StationaryPoint",
    "SaturationPoint",
    "SaturationCurve",
    "BubbleDewPoint",
    "BubbleDewCurve",
    "Properties",
    "PropertyTable",
    "WaterProperties",
    "WaterSaturation",
    "TielineError",
    "InvalidInputError",
    "UnknownComponentError",
    "OutsideValidityError",
    "NoSolutionError",
    "ConvergenceError",
    "DataError",
]
