"""Type stubs of the compiled extension ``tieline._core`` (units: K, Pa, mol, m3, J)."""

from os import PathLike
from typing import Any, Callable, Dict, List, Mapping, Optional, Sequence, Tuple, Union, final

import numpy as np
import numpy.typing as npt

from ._results import (
    BubbleDewPoint,
    FlashResult,
    Properties,
    SaturationPoint,
    StabilityResult,
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
def water_state(temperature: float, by: str, value: float, root: str = "stable") -> WaterProperties: ...
def water_saturation_point(by: str, value: float) -> WaterSaturation: ...
def set_threads(n: int) -> None: ...
def get_threads() -> int: ...
