"""Type stubs of the compiled extension ``tieline._core`` (units: K, Pa, mol, m3, J)."""

from os import PathLike
from typing import Any, Callable, Dict, List, Mapping, Optional, Sequence, Tuple, Union, final

import numpy as np
import numpy.typing as npt

from ._results import (
    BubbleDewPoint,
    Coexistence,
    FlashResult,
    IceProperties,
    PhasePoint,
    Properties,
    SaturationPoint,
    SolidFlashResult,
    SolidProperties,
    SolidPropertyTable,
    StabilityResult,
    StablePhase,
    TriplePoint,
    WaterProperties,
    WaterSaturation,
)

__version__: str

_F64 = npt.NDArray[np.float64]
_Progress = Optional[Callable[[int, int], Any]]

@final
class ComponentBank:
    """A data bank of pure components (critical constants, ideal-gas heat capacities ...)."""

    @staticmethod
    def embedded() -> ComponentBank: ...
    @staticmethod
    def from_toml(text: str, include_embedded: bool = False) -> ComponentBank: ...
    @staticmethod
    def from_file(path: Union[str, PathLike[str]], include_embedded: bool = False) -> ComponentBank: ...
    @property
    def names(self) -> List[str]: ...
    def component(self, name: str) -> Dict[str, Any]: ...
    def __contains__(self, name: str, /) -> bool: ...
    def __len__(self) -> int: ...
    def __reduce__(self) -> Tuple[Any, ...]: ...

@final
class Model:
    """A thermodynamic model of a fluid mixture, or of water by IAPWS-95 (immutable; shared
    freely between threads)."""

    def __new__(
        cls,
        components: Sequence[Union[str, Mapping[str, Any]]],
        kind: str = "peng_robinson",
        kij: Optional[Union[Sequence[Sequence[float]], npt.ArrayLike, Mapping[Tuple[Union[int, str], Union[int, str]], Union[float, Tuple[float, float]]]]] = None,
        volume_shift: Optional[Union[str, Sequence[float]]] = None,
        bank: Optional[ComponentBank] = None,
    ) -> Model: ...
    @staticmethod
    def water() -> Model: ...
    @classmethod
    def from_json(cls, text: str, bank: Optional[ComponentBank] = None) -> Model: ...
    @classmethod
    def from_description(cls, description: Union[str, Mapping[str, Any]], bank: Optional[ComponentBank] = None) -> Model: ...
    def to_json(self) -> str: ...
    def to_dict(self) -> Dict[str, Any]: ...
    @property
    def components(self) -> List[str]: ...
    @property
    def num_components(self) -> int: ...
    @property
    def kind(self) -> str: ...
    @property
    def molar_masses(self) -> _F64: ...
    @property
    def critical_temperatures(self) -> _F64: ...
    @property
    def critical_pressures(self) -> _F64: ...
    @property
    def acentric_factors(self) -> _F64: ...
    def kij(self, temperature: float = 298.15) -> _F64: ...
    def index(self, name: str) -> int: ...
    def __eq__(self, other: object, /) -> bool: ...
    def __hash__(self) -> int: ...
    def __reduce__(self) -> Tuple[Any, ...]: ...

@final
class FlashOptions:
    """Options of the PT flash (built by ``tieline.flash`` from its keyword arguments)."""

    def __new__(
        cls,
        tolerance: Optional[float] = None,
        max_ss_iterations: Optional[int] = None,
        max_newton_iterations: Optional[int] = None,
        certificate: Optional[bool] = None,
        negative_flash: Optional[bool] = None,
        stability_tolerance: Optional[float] = None,
        max_phases: Optional[int] = None,
    ) -> FlashOptions: ...
    def to_dict(self) -> Dict[str, Any]: ...

@final
class PhaseState:
    """A fluid phase at temperature (K), pressure (Pa) and amounts (mol) on a volume root."""

    def __new__(
        cls, model: Model, temperature: float, pressure: float, amounts: Sequence[float], root: str = "stable"
    ) -> PhaseState: ...
    @property
    def temperature(self) -> float: ...
    @property
    def pressure(self) -> float: ...
    @property
    def amounts(self) -> _F64: ...
    @property
    def composition(self) -> _F64: ...
    @property
    def volume(self) -> float: ...
    @property
    def molar_volume(self) -> float: ...
    @property
    def ln_phi(self) -> _F64: ...
    @property
    def fugacity(self) -> _F64: ...
    @property
    def z(self) -> float: ...
    @property
    def kind(self) -> str: ...
    @property
    def model(self) -> Model: ...
    def properties(self) -> Properties: ...
    def __reduce__(self) -> Tuple[Any, ...]: ...

@final
class Solid:
    """A pure solid phase of one species (immutable; shared freely between threads)."""

    @staticmethod
    def ice_ih() -> Solid: ...
    @staticmethod
    def carbon_dioxide(model: Model, component: Optional[Union[int, str]] = None) -> Solid: ...
    @staticmethod
    def from_fusion_data(model: Model, component: Union[int, str], data: Dict[str, Any]) -> Solid: ...
    @property
    def kind(self) -> str: ...
    @property
    def species(self) -> str: ...
    @property
    def molar_mass(self) -> float: ...
    @property
    def validity(self) -> Dict[str, float]: ...
    @property
    def triple_point_estimate(self) -> Tuple[float, float]: ...
    @property
    def anchor_pressure(self) -> Optional[float]: ...
    @property
    def fusion_data(self) -> Optional[Dict[str, Any]]: ...
    def properties(
        self, temperature: npt.ArrayLike, pressure: npt.ArrayLike, *, on_error: str = "raise"
    ) -> Union[SolidProperties, SolidPropertyTable]: ...
    def specific_properties(self, temperature: float, pressure: float) -> IceProperties: ...
    def ln_fugacity(self, model: Model, temperature: float, pressure: float) -> float: ...
    def to_json(self) -> str: ...
    def to_dict(self) -> Dict[str, Any]: ...
    def __eq__(self, other: object, /) -> bool: ...
    def __hash__(self) -> int: ...
    def __reduce__(self) -> Tuple[Any, ...]: ...

def _bank_from_json(text: str, embedded: bool) -> ComponentBank: ...
def _model_from_json(text: str) -> Model: ...
def _state_from_json(model: str, state: str) -> PhaseState: ...
def _phase_state(
    model: Model, temperature: float, pressure: float, amounts: Sequence[float], volume: float, kind: str
) -> PhaseState: ...
def flash_point(model: Model, temperature: float, pressure: float, amounts: _F64, options: FlashOptions) -> FlashResult: ...
def stability_point(
    model: Model,
    temperature: float,
    pressure: float,
    amounts: _F64,
    tolerance: Optional[float] = None,
    threshold: Optional[float] = None,
) -> StabilityResult: ...
def saturation_point(
    model: Model,
    by: str,
    value: float,
    component: int,
    tolerance: Optional[float] = None,
    max_iterations: Optional[int] = None,
) -> SaturationPoint: ...
def bubble_dew_point(
    model: Model,
    which: str,
    value: float,
    amounts: _F64,
    tolerance: Optional[float] = None,
    max_iterations: Optional[int] = None,
) -> BubbleDewPoint: ...
def flash_sweep(
    model: Model,
    temperature: _F64,
    pressure: _F64,
    amounts: _F64,
    options: FlashOptions,
    block: int,
    threads: Optional[int] = None,
    progress: _Progress = None,
    raise_errors: bool = True,
) -> Dict[str, Any]: ...
def saturation_sweep(
    model: Model,
    by: str,
    values: _F64,
    component: int,
    tolerance: Optional[float] = None,
    max_iterations: Optional[int] = None,
    threads: Optional[int] = None,
    progress: _Progress = None,
    raise_errors: bool = True,
) -> Dict[str, Any]: ...
def bubble_dew_sweep(
    model: Model,
    which: str,
    values: _F64,
    amounts: _F64,
    tolerance: Optional[float] = None,
    max_iterations: Optional[int] = None,
    threads: Optional[int] = None,
    progress: _Progress = None,
    raise_errors: bool = True,
) -> Dict[str, Any]: ...
def properties_sweep(
    model: Model,
    temperature: _F64,
    pressure: _F64,
    amounts: _F64,
    root: str,
    threads: Optional[int] = None,
    raise_errors: bool = True,
) -> Dict[str, Any]: ...
def _solid_from_json(text: str) -> Solid: ...
def _solid_point(solid: Solid, temperature: float, pressure: float) -> SolidProperties: ...
def _solid_sweep(solid: Solid, temperature: _F64, pressure: _F64, raise_errors: bool = True) -> Dict[str, Any]: ...
def solid_flash_point(
    model: Model,
    solids: Sequence[Solid],
    temperature: float,
    pressure: float,
    amounts: _F64,
    options: FlashOptions,
    tolerance: Optional[float] = None,
) -> SolidFlashResult: ...
def frost_point(
    model: Model, solid: Solid, pressure: float, amounts: _F64, t_guess: float, options: FlashOptions
) -> float: ...
def pure_phases(model: Model, component: int, solids: Sequence[Solid]) -> List[str]: ...
def pure_evaluate(
    model: Model, component: int, solids: Sequence[Solid], phase: str, temperature: float, pressure: float
) -> Optional[PhasePoint]: ...
def pure_stable_phase(
    model: Model, component: int, solids: Sequence[Solid], temperature: float, pressure: float
) -> StablePhase: ...
def pure_stable_sweep(
    model: Model,
    component: int,
    solids: Sequence[Solid],
    temperature: _F64,
    pressure: _F64,
    threads: Optional[int] = None,
    raise_errors: bool = True,
) -> Dict[str, Any]: ...
def pure_coexistence(
    model: Model,
    component: int,
    solids: Sequence[Solid],
    by: str,
    phase_a: str,
    phase_b: str,
    value: float,
    guess: Optional[float] = None,
) -> Coexistence: ...
def pure_trace(
    model: Model,
    component: int,
    solids: Sequence[Solid],
    by: str,
    phase_a: str,
    phase_b: str,
    values: _F64,
    guess: Optional[float] = None,
) -> Dict[str, Any]: ...
def pure_triple_point(
    model: Model, component: int, solids: Sequence[Solid], solid: str, t_guess: Optional[float] = None
) -> TriplePoint: ...
def pure_gibbs_curves(
    model: Model, component: int, solids: Sequence[Solid], by: str, fixed: float, grid: _F64
) -> Dict[str, Any]: ...
def water_state(temperature: float, by: str, value: float, root: str = "stable") -> WaterProperties: ...
def water_saturation_point(by: str, value: float) -> WaterSaturation: ...
def set_threads(n: int) -> None: ...
def format_number(x: float) -> str: ...

MAX_THREADS: int
MAX_ITERATIONS: int
MAX_POINTS: int
MAX_COMPONENTS: int
def get_threads() -> int: ...
