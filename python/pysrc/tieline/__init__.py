"""tieline: phase equilibrium of real fluids by Gibbs-energy minimisation.

Build a :class:`Model` from component names, flash it at a temperature (K) and pressure
(Pa), and read the phases::

    import tieline as tl
    model = tl.Model(["methane", "n-butane"], kind="peng_robinson")
    result = tl.flash(model, 300.0, 5.0e6, [0.5, 0.5])
    print(result.vapor_fraction, result.phases[0].composition)

Every function also takes numpy arrays (broadcast together) and then computes in parallel
with the GIL released. Units are SI throughout: K, Pa, mol, m3, J.

Water is :meth:`Model.water` (IAPWS-95); solids are :class:`Solid` (ice Ih by IAPWS-06, dry
ice from fusion data); :class:`PureSubstance` gives the stable phase, melting, boiling and
sublimation curves, triple points and Gibbs-energy curves of one substance over its fluid and
solid phases; :func:`flash_with_solids` and :func:`frost_point_temperature` handle freeze-out
from mixtures.

Caution: tieline is an aid to engineering judgement, not a substitute for it. Respect the
validity ranges of every model and correlation.
"""

from __future__ import annotations

from ._core import ComponentBank, Model, PhaseState, Solid, __version__
from ._api import (
    bubble_pressure,
    bubble_temperature,
    dew_pressure,
    dew_temperature,
    flash,
    flash_with_solids,
    frost_point_temperature,
    get_threads,
    phase_properties,
    saturation_pressure,
    saturation_temperature,
    set_threads,
    stability,
    water_properties,
    water_saturation,
)
from ._pure import PureSubstance
from ._calc import Record, Sweep, calculate, calculations, describe
from ._named import (
    critical_point,
    flash_ph,
    flash_ps,
    flash_sensitivities,
    flash_tv,
    flash_uv,
    phase_envelope,
    reaction_hp,
    reaction_sp,
    reaction_tp,
    reaction_tp_fluid_phases,
    activity_coefficients,
    azeotrope_at_pressure,
    azeotrope_at_temperature,
    flash_multiphase,
    reaction_tv,
    reaction_uv,
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
    Coexistence,
    CoexistenceCurve,
    Crossing,
    FlashDiagnostics,
    FlashResult,
    FlashSweep,
    GibbsCurves,
    IceProperties,
    Phase,
    PhasePoint,
    Properties,
    PropertyTable,
    SaturationCurve,
    SaturationPoint,
    SolidFlashDiagnostics,
    SolidFlashResult,
    SolidMargin,
    SolidPhase,
    SolidProperties,
    SolidPropertyTable,
    StabilityResult,
    StablePhase,
    StablePhaseMap,
    StationaryPoint,
    TieLine,
    TriplePoint,
    WaterProperties,
    WaterSaturation,
)

__all__ = [
    "__version__",
    "Model",
    "ComponentBank",
    "PhaseState",
    "Solid",
    "PureSubstance",
    "calculate",
    "flash_ph",
    "flash_ps",
    "flash_tv",
    "flash_uv",
    "flash_sensitivities",
    "phase_envelope",
    "critical_point",
    "reaction_tp",
    "reaction_hp",
    "reaction_sp",
    "reaction_tv",
    "reaction_uv",
    "reaction_tp_fluid_phases",
    "activity_coefficients",
    "azeotrope_at_pressure",
    "azeotrope_at_temperature",
    "flash_multiphase",
    "calculations",
    "describe",
    "Record",
    "Sweep",
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
    "SolidProperties",
    "SolidPropertyTable",
    "IceProperties",
    "PhasePoint",
    "StablePhase",
    "StablePhaseMap",
    "Coexistence",
    "CoexistenceCurve",
    "TriplePoint",
    "Crossing",
    "GibbsCurves",
    "SolidFlashResult",
    "SolidPhase",
    "SolidMargin",
    "SolidFlashDiagnostics",
    "TielineError",
    "InvalidInputError",
    "UnknownComponentError",
    "OutsideValidityError",
    "NoSolutionError",
    "ConvergenceError",
    "DataError",
]
