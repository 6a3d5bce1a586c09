"""Result records of tieline: plain data with numpy attributes, ``to_dict()``, ``to_json()``
and, when pandas is installed, ``to_dataframe()``.

Units are SI throughout: K, Pa, mol, m3, J; molar quantities are per mol of phase.
"""

from __future__ import annotations

import dataclasses
import json
from dataclasses import dataclass
from typing import TYPE_CHECKING, Any, Dict, List, Optional, Tuple

import numpy as np

from ._core import FlashDiagnostics, FlashResult, Phase, Properties, SaturationPoint, TieLine

if TYPE_CHECKING:  # pragma: no cover
    import pandas  # type: ignore[import-untyped, unused-ignore]

    from ._core import Model, PhaseState  # noqa: F401

__all__ = [
    "Phase",
    "TieLine",
    "FlashDiagnostics",
    "FlashResult",
    "StationaryPoint",
    "StabilityResult",
    "SaturationPoint",
    "BubbleDewPoint",
    "Properties",
    "FlashSweep",
    "SaturationCurve",
    "BubbleDewCurve",
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
    "SolidPhase",
    "SolidMargin",
    "SolidFlashDiagnostics",
    "SolidFlashResult",
]


def _plain(v: Any) -> Any:
    if isinstance(v, (_Record, _NATIVE)):
        return v.to_dict()
    if isinstance(v, np.ndarray):
        return v.tolist()
    if isinstance(v, np.generic):
        return v.item()
    if isinstance(v, (list, tuple)):
        return [_plain(x) for x in v]
    if isinstance(v, dict):
        return {k: _plain(x) for k, x in v.items()}
    if isinstance(v, BaseException):
        return {"type": type(v).__name__, "message": str(v), "index": getattr(v, "index", None)}
    return v


def _pandas() -> Any:
    try:
        import pandas
    except ImportError as e:  # pragma: no cover - exercised only without pandas
        raise ImportError(
            "to_dataframe() needs pandas; install it with `pip install pandas` "
            "(or `pip install tieline[pandas]`)"
        ) from e
    return pandas


def _array_frame(record: Any, skip: Tuple[str, ...]) -> "pandas.DataFrame":
    """One row per point, one column per array attribute of ``record`` not in ``skip``."""
    pd = _pandas()
    names = [f.name for f in dataclasses.fields(record) if f.name not in skip]
    return pd.DataFrame({n: getattr(record, n).ravel() for n in names})


class _Record:
    """Common behaviour of the result records."""

    def to_dict(self) -> Dict[str, Any]:
        """The record as plain Python data (lists instead of arrays), SI units."""
        return {f.name: _plain(getattr(self, f.name)) for f in dataclasses.fields(self)}  # type: ignore[arg-type]

    def to_json(self) -> str:
        """The record as JSON text (see :meth:`to_dict`); non-finite numbers become null."""
        return _json_text(self.to_dict())

    def __eq__(self, other: object) -> bool:
        if type(other) is not type(self):
            return NotImplemented
        return _same(self.to_dict(), other.to_dict())  # type: ignore[attr-defined]

    __hash__ = None  # type: ignore[assignment]


def _json_text(d: Dict[str, Any]) -> str:
    """Plain record data as JSON text; non-finite numbers become null."""

    def clean(v: Any) -> Any:
        if isinstance(v, float) and not np.isfinite(v):
            return None
        if isinstance(v, list):
            return [clean(x) for x in v]
        if isinstance(v, dict):
            return {k: clean(x) for k, x in v.items()}
        return v

    return json.dumps(clean(d))


# The records of single-point flashes, saturation states and phase properties are compact
# compiled classes (tieline._core): they hold the numbers as computed and build numpy arrays
# when an attribute is read, so that a scalar call costs little more than the calculation.
# Their methods that need Python libraries are these functions.
_NATIVE = (Phase, TieLine, FlashDiagnostics, FlashResult, SaturationPoint, Properties)


def _flash_phase_states(r: FlashResult, model: "Model") -> List["PhaseState"]:
    from ._core import _phase_state

    return [
        _phase_state(
            model,
            r.temperature,
            r.pressure,
            list(p.composition * p.amount),
            p.molar_volume * p.amount,
            p.kind,
        )
        for p in r.phases
    ]


def _flash_properties(r: FlashResult, model: "Model") -> List[Properties]:
    return [s.properties() for s in _flash_phase_states(r, model)]


def _flash_frame(r: FlashResult) -> "pandas.DataFrame":
    pd = _pandas()
    rows = []
    for p in r.phases:
        row: Dict[str, Any] = {
            "kind": p.kind,
            "amount": p.amount,
            "fraction": p.fraction,
            "molar_volume": p.molar_volume,
            "z": p.z,
        }
        for i, x in enumerate(p.composition):
            row[f"x[{i}]"] = x
        rows.append(row)
    return pd.DataFrame(rows)


def _same(a: Any, b: Any) -> bool:
    """Equality that treats NaN as equal to NaN (records hold NaN for absent values)."""
    if isinstance(a, float) and isinstance(b, float):
        return a == b or (a != a and b != b)
    if isinstance(a, list) and isinstance(b, list):
        return len(a) == len(b) and all(_same(x, y) for x, y in zip(a, b))
    if isinstance(a, dict) and isinstance(b, dict):
        return a.keys() == b.keys() and all(_same(a[k], b[k]) for k in a)
    return bool(a == b)


# ---------------------------------------------------------------------------------------------
# Single points


@dataclass(frozen=True, eq=False)
class StationaryPoint(_Record):
    """A stationary point of the tangent-plane distance.

    Attributes
    ----------
    composition : numpy.ndarray
        Normalised trial-phase mole fractions.
    amounts : numpy.ndarray
        Unnormalised trial amounts W (their ratio to the feed gives K-values).
    tpd : float
        Normalised tangent-plane distance −ln ΣW (dimensionless, per RT per mol).
    liquid_like : bool
        Whether the trial phase is liquid-like.
    iterations : int
        Iterations spent.
    """

    composition: np.ndarray
    amounts: np.ndarray
    tpd: float
    liquid_like: bool
    iterations: int


@dataclass(frozen=True, eq=False)
class StabilityResult(_Record):
    """Result of a tangent-plane stability test.

    Attributes
    ----------
    stable : bool
        Whether no stationary point has a negative distance (below −threshold).
    min_tpd : float
        Minimum tangent-plane distance found (dimensionless; 0 if all trials were trivial).
    points : tuple of StationaryPoint
        The distinct non-trivial stationary points, most negative first.
    iterations, trivial_trials, unconverged_trials : int
        Total iterations, trials that collapsed to the feed, trials that hit the limit.
    """

    stable: bool
    min_tpd: float
    points: Tuple[StationaryPoint, ...]
    iterations: int
    trivial_trials: int
    unconverged_trials: int


@dataclass(frozen=True, eq=False)
class BubbleDewPoint(_Record):
    """A bubble or dew point of a mixture.

    Attributes
    ----------
    kind : str
        ``"bubble_pressure"``, ``"dew_pressure"``, ``"bubble_temperature"`` or
        ``"dew_temperature"``.
    temperature : float
        Temperature, K.
    pressure : float
        Pressure, Pa.
    feed : numpy.ndarray
        Mole fractions of the bulk phase.
    incipient : numpy.ndarray
        Mole fractions of the incipient phase (vapour at a bubble point, liquid at a dew point).
    k_values : numpy.ndarray
        K-values y_i/x_i.
    feed_molar_volume, incipient_molar_volume : float
        Molar volumes of the bulk and incipient phases, m3/mol.
    residual : float
        Final max |ln f_i^V − ln f_i^L|.
    ss_iterations, newton_iterations : int
        Successive-substitution and Newton iterations.
    """

    kind: str
    temperature: float
    pressure: float
    feed: np.ndarray
    incipient: np.ndarray
    k_values: np.ndarray
    feed_molar_volume: float
    incipient_molar_volume: float
    residual: float
    ss_iterations: int
    newton_iterations: int


# ---------------------------------------------------------------------------------------------
# Many points

_KINDS = np.array(["", "vapor", "liquid", "liquid2", "solid", "liquid3", "other"])


def _frame_columns(names: List[str], prefix: str, values: np.ndarray) -> Dict[str, np.ndarray]:
    return {f"{prefix}{n}": values[..., i].ravel() for i, n in enumerate(names)}


@dataclass(frozen=True, eq=False)
class FlashSweep(_Record):
    """Results of a vectorised PT flash: arrays shaped like the broadcast inputs.

    With ``shape`` the broadcast shape of temperature, pressure and the feed rows, each
    point holds up to two phases in "slots" (slot 0 the lighter, slot 1 the denser); an
    absent phase has kind ``""`` and NaN values.

    Attributes
    ----------
    components : list of str
        Component names.
    temperature, pressure : numpy.ndarray
        K and Pa, of ``shape``.
    feed : numpy.ndarray
        Feed amounts, mol: ``(nc,)`` when shared by every point, else ``shape + (nc,)``.
    num_phases : numpy.ndarray of int
        Phases present at each point (0 where the point failed).
    vapor_fraction : numpy.ndarray
        Vapour amount over feed amount.
    phase_kind : numpy.ndarray of str, ``shape + (max_phases,)`` (2 unless ``max_phases=3``)
        ``"vapor"``, ``"liquid"``, ``"liquid2"`` or ``""`` per slot.
    phase_fraction, phase_amount, molar_volume, z : numpy.ndarray, ``shape + (max_phases,)`` (2 unless ``max_phases=3``)
        Phase fraction, amount (mol), molar volume (m3/mol) and compressibility per slot.
    composition, ln_phi : numpy.ndarray, ``shape + (max_phases, nc)``
        Mole fractions and ln φ per slot.
    residual, certificate, gibbs : numpy.ndarray
        Final fugacity residual, stability certificate (NaN when switched off) and reduced
        Gibbs energy per mol of feed (dimensionless).
    stability_iterations, ss_iterations, newton_iterations : numpy.ndarray of int
        Iterations per point.
    warm_start : numpy.ndarray of bool
        Whether the point was warm-started from the previous point of its block.
    ok : numpy.ndarray of bool
        False where the point failed (only with ``on_error="flag"``).
    failures : list of (tuple, TielineError)
        The index in ``shape`` and the exception of each failed point.
    """

    components: List[str]
    temperature: np.ndarray
    pressure: np.ndarray
    feed: np.ndarray
    num_phases: np.ndarray
    vapor_fraction: np.ndarray
    phase_kind: np.ndarray
    phase_fraction: np.ndarray
    phase_amount: np.ndarray
    molar_volume: np.ndarray
    z: np.ndarray
    composition: np.ndarray
    ln_phi: np.ndarray
    residual: np.ndarray
    certificate: np.ndarray
    gibbs: np.ndarray
    stability_iterations: np.ndarray
    ss_iterations: np.ndarray
    newton_iterations: np.ndarray
    warm_start: np.ndarray
    ok: np.ndarray
    failures: List[Tuple[Tuple[int, ...], BaseException]]

    @property
    def shape(self) -> Tuple[int, ...]:
        """The broadcast shape of the inputs."""
        return tuple(self.temperature.shape)

    def __len__(self) -> int:
        return int(self.temperature.size)

    def _of_kind(self, kind: str) -> np.ndarray:
        mask = self.phase_kind == kind
        first = np.argmax(mask, axis=-1)
        has = mask.any(axis=-1)
        comp = np.take_along_axis(self.composition, first[..., None, None], axis=-2)[..., 0, :]
        return np.where(has[..., None], comp, np.nan)

    @property
    def vapor_composition(self) -> np.ndarray:
        """Mole fractions of the vapour, ``shape + (nc,)``; NaN where there is no vapour."""
        return self._of_kind("vapor")

    @property
    def liquid_composition(self) -> np.ndarray:
        """Mole fractions of the (denser) liquid, ``shape + (nc,)``; NaN where there is none."""
        return self._of_kind("liquid")

    def to_dataframe(self) -> "pandas.DataFrame":
        """One row per point: T (K), p (Pa), phases, vapour fraction, then per phase slot k
        the kind, fraction, molar volume (m3/mol) and mole fractions ``x{k}_<name>``, and the
        diagnostics (needs pandas)."""
        pd = _pandas()
        cols: Dict[str, Any] = {
            "temperature": self.temperature.ravel(),
            "pressure": self.pressure.ravel(),
            "num_phases": self.num_phases.ravel(),
            "vapor_fraction": self.vapor_fraction.ravel(),
        }
        for k in range(self.phase_kind.shape[-1]):
            cols[f"kind{k}"] = self.phase_kind[..., k].ravel()
            cols[f"fraction{k}"] = self.phase_fraction[..., k].ravel()
            cols[f"molar_volume{k}"] = self.molar_volume[..., k].ravel()
            cols.update(_frame_columns(self.components, f"x{k}_", self.composition[..., k, :]))
        for name in ("residual", "certificate", "gibbs", "ss_iterations", "newton_iterations", "ok"):
            cols[name] = getattr(self, name).ravel()
        return pd.DataFrame(cols)


@dataclass(frozen=True, eq=False)
class SaturationCurve(_Record):
    """Saturation states of a pure component at many temperatures (or pressures).

    Attributes
    ----------
    component : str
        The component.
    temperature, pressure : numpy.ndarray
        K and Pa (the given coordinate is kept where a point failed).
    liquid_molar_volume, vapor_molar_volume : numpy.ndarray
        m3/mol.
    liquid_density, vapor_density : numpy.ndarray
        Molar densities, mol/m3.
    enthalpy_of_vaporization : numpy.ndarray
        J/mol.
    residual : numpy.ndarray
        Final |ln φ_L − ln φ_V|.
    iterations : numpy.ndarray of int
        Iterations per point.
    ok : numpy.ndarray of bool
        False where the point failed (only with ``on_error="flag"``).
    failures : list of (tuple, TielineError)
        Index and exception of each failed point.
    """

    component: str
    temperature: np.ndarray
    pressure: np.ndarray
    liquid_molar_volume: np.ndarray
    vapor_molar_volume: np.ndarray
    liquid_density: np.ndarray
    vapor_density: np.ndarray
    enthalpy_of_vaporization: np.ndarray
    residual: np.ndarray
    iterations: np.ndarray
    ok: np.ndarray
    failures: List[Tuple[Tuple[int, ...], BaseException]]

    def __len__(self) -> int:
        return int(self.temperature.size)

    def to_dataframe(self) -> "pandas.DataFrame":
        """One row per point, one column per array attribute (needs pandas)."""
        return _array_frame(self, ("component", "failures"))


@dataclass(frozen=True, eq=False)
class BubbleDewCurve(_Record):
    """Bubble or dew points of a mixture at many temperatures (or pressures).

    Attributes
    ----------
    kind : str
        ``"bubble_pressure"``, ``"dew_pressure"``, ``"bubble_temperature"`` or
        ``"dew_temperature"``.
    components : list of str
        Component names.
    temperature, pressure : numpy.ndarray
        K and Pa (the given coordinate is kept where a point failed).
    incipient, k_values : numpy.ndarray, ``shape + (nc,)``
        Incipient-phase mole fractions and K-values.
    feed_molar_volume, incipient_molar_volume : numpy.ndarray
        m3/mol.
    residual : numpy.ndarray
        Final fugacity residual.
    iterations : numpy.ndarray of int
        Successive-substitution plus Newton iterations.
    ok : numpy.ndarray of bool
        False where no point was found (only with ``on_error="flag"``).
    failures : list of (tuple, TielineError)
        Index and exception of each failed point.
    """

    kind: str
    components: List[str]
    temperature: np.ndarray
    pressure: np.ndarray
    incipient: np.ndarray
    k_values: np.ndarray
    feed_molar_volume: np.ndarray
    incipient_molar_volume: np.ndarray
    residual: np.ndarray
    iterations: np.ndarray
    ok: np.ndarray
    failures: List[Tuple[Tuple[int, ...], BaseException]]

    def __len__(self) -> int:
        return int(self.temperature.size)

    def to_dataframe(self) -> "pandas.DataFrame":
        """One row per point: T (K), p (Pa), incipient mole fractions ``y_<name>`` and the
        rest (needs pandas)."""
        pd = _pandas()
        cols: Dict[str, Any] = {"temperature": self.temperature.ravel(), "pressure": self.pressure.ravel()}
        cols.update(_frame_columns(self.components, "incipient_", self.incipient))
        cols.update(_frame_columns(self.components, "k_", self.k_values))
        for n in ("feed_molar_volume", "incipient_molar_volume", "residual", "iterations", "ok"):
            cols[n] = getattr(self, n).ravel()
        return pd.DataFrame(cols)


@dataclass(frozen=True, eq=False)
class PropertyTable(_Record):
    """Properties of single phases at many points (see :class:`Properties` for the meaning
    and units of each attribute); arrays shaped like the broadcast inputs, ``ln_phi`` and
    ``fugacity`` with a trailing component axis.

    Attributes
    ----------
    components : list of str
        Component names.
    root : str
        The volume root asked for: ``"stable"``, ``"liquid"`` or ``"vapor"``.
    kind : numpy.ndarray of str
        The kind of phase found on that root at each point.
    ok : numpy.ndarray of bool
        False where the point failed (only with ``on_error="flag"``).
    failures : list of (tuple, TielineError)
        Index and exception of each failed point.
    """

    components: List[str]
    root: str
    temperature: np.ndarray
    pressure: np.ndarray
    kind: np.ndarray
    molar_volume: np.ndarray
    molar_density: np.ndarray
    mass_density: np.ndarray
    molar_mass: np.ndarray
    z: np.ndarray
    ln_phi: np.ndarray
    fugacity: np.ndarray
    enthalpy: np.ndarray
    entropy: np.ndarray
    gibbs: np.ndarray
    internal_energy: np.ndarray
    helmholtz: np.ndarray
    cp: np.ndarray
    cv: np.ndarray
    speed_of_sound: np.ndarray
    joule_thomson: np.ndarray
    isothermal_compressibility: np.ndarray
    thermal_expansion: np.ndarray
    residual_enthalpy: np.ndarray
    residual_entropy: np.ndarray
    residual_gibbs: np.ndarray
    ok: np.ndarray
    failures: List[Tuple[Tuple[int, ...], BaseException]]

    def __len__(self) -> int:
        return int(self.temperature.size)

    def to_dataframe(self) -> "pandas.DataFrame":
        """One row per point, one column per scalar property (needs pandas)."""
        pd = _pandas()
        skip = ("components", "root", "failures", "ln_phi", "fugacity")
        names = [f.name for f in dataclasses.fields(self) if f.name not in skip]
        cols: Dict[str, Any] = {n: getattr(self, n).ravel() for n in names}
        cols.update(_frame_columns(self.components, "fugacity_", self.fugacity))
        return pd.DataFrame(cols)


# ---------------------------------------------------------------------------------------------
# Water by IAPWS-95 in its own terms


@dataclass(frozen=True, eq=False)
class WaterProperties(_Record):
    """Properties of water at one state by IAPWS-95, **per kg** in the IAPWS-95 reference
    state (saturated liquid at the triple point has u = 0 and s = 0), as the IAPWS release
    tabulates them. (:func:`phase_properties` gives the same states per mol in the library's
    reference state.)

    Attributes
    ----------
    temperature : float
        K.
    density : float
        Mass density, kg/m3.
    pressure : float
        Pa.
    internal_energy, enthalpy, gibbs, helmholtz : float
        J/kg.
    entropy, cv, cp : float
        J/(kg K).
    speed_of_sound : float
        m/s.
    joule_thomson : float
        (∂T/∂p)_h, K/Pa.
    isothermal_compressibility : float
        1/Pa.
    thermal_expansion : float
        1/K.
    """

    temperature: float
    density: float
    pressure: float
    internal_energy: float
    enthalpy: float
    entropy: float
    gibbs: float
    helmholtz: float
    cv: float
    cp: float
    speed_of_sound: float
    joule_thomson: float
    isothermal_compressibility: float
    thermal_expansion: float


@dataclass(frozen=True, eq=False)
class WaterSaturation(_Record):
    """A vapour–liquid saturation state of water by IAPWS-95, both phases per kg.

    Attributes
    ----------
    temperature : float
        K.
    pressure : float
        Vapour pressure, Pa.
    liquid, vapor : WaterProperties
        The saturated liquid and vapour (per kg, IAPWS-95 reference state).
    iterations : int
        Newton iterations of the phase-equilibrium solve.
    residual : float
        Final residual of the equal-pressure and equal-Gibbs-energy conditions
        (dimensionless).
    """

    temperature: float
    pressure: float
    liquid: WaterProperties
    vapor: WaterProperties
    iterations: int
    residual: float

    @property
    def enthalpy_of_vaporization(self) -> float:
        """h'' − h', J/kg."""
        return self.vapor.enthalpy - self.liquid.enthalpy

    @property
    def clapeyron_slope(self) -> float:
        """dp/dT = (s'' − s')/(v'' − v') along the saturation curve, Pa/K."""
        return (self.vapor.entropy - self.liquid.entropy) / (1.0 / self.vapor.density - 1.0 / self.liquid.density)


# ---------------------------------------------------------------------------------------------
# Solids


@dataclass(frozen=True, eq=False)
class SolidProperties(_Record):
    """Molar properties of a pure solid at (T, p), in the library's reference state (the
    same as that of the fluid models, so that solid and fluid Gibbs energies compare
    directly).

    Attributes
    ----------
    species : str
        The species.
    temperature, pressure : float
        K, Pa.
    gibbs, enthalpy : float
        J/mol.
    entropy : float
        J/(mol K).
    molar_volume : float
        m3/mol.
    cp : float
        Isobaric heat capacity, J/(mol K).
    """

    species: str
    temperature: float
    pressure: float
    gibbs: float
    enthalpy: float
    entropy: float
    molar_volume: float
    cp: float


@dataclass(frozen=True, eq=False)
class SolidPropertyTable(_Record):
    """Molar properties of a pure solid at many (T, p) points (see :class:`SolidProperties`
    for meanings and units), arrays shaped like the broadcast inputs.

    Attributes
    ----------
    ok : numpy.ndarray of bool
        False where the point failed (outside the model's range; only with
        ``on_error="flag"``), with NaN values.
    failures : list of (tuple, TielineError)
        Index and exception of each failed point.
    """

    species: str
    temperature: np.ndarray
    pressure: np.ndarray
    gibbs: np.ndarray
    enthalpy: np.ndarray
    entropy: np.ndarray
    molar_volume: np.ndarray
    cp: np.ndarray
    ok: np.ndarray
    failures: List[Tuple[Tuple[int, ...], BaseException]]

    def __len__(self) -> int:
        return int(self.temperature.size)

    def to_dataframe(self) -> "pandas.DataFrame":
        """One row per point, one column per array attribute (needs pandas)."""
        return _array_frame(self, ("species", "failures"))


@dataclass(frozen=True, eq=False)
class IceProperties(_Record):
    """Properties of ice Ih by the IAPWS-06 Gibbs function, **per kg** in the IAPWS-06
    reference state (that of IAPWS-95), as the release tabulates them.

    Attributes
    ----------
    temperature, pressure : float
        K, Pa.
    gibbs, enthalpy, helmholtz, internal_energy : float
        J/kg.
    entropy, cp : float
        J/(kg K).
    density : float
        kg/m3.
    thermal_expansion : float
        Cubic expansion coefficient, 1/K.
    pressure_coefficient : float
        (∂p/∂T)_ρ, Pa/K.
    isothermal_compressibility, isentropic_compressibility : float
        1/Pa.
    """

    temperature: float
    pressure: float
    gibbs: float
    enthalpy: float
    helmholtz: float
    internal_energy: float
    entropy: float
    cp: float
    density: float
    thermal_expansion: float
    pressure_coefficient: float
    isothermal_compressibility: float
    isentropic_compressibility: float


# ---------------------------------------------------------------------------------------------
# Pure substances over several phases


@dataclass(frozen=True, eq=False)
class PhasePoint(_Record):
    """One phase of a pure substance at (T, p): molar quantities in the library's reference
    state.

    Attributes
    ----------
    phase : str
        ``"liquid"``, ``"vapor"``, or the solid's name in its set (``"solid"``, or
        ``"solid0"``, ``"solid1"`` ... with several solids).
    temperature, pressure : float
        K, Pa.
    gibbs, enthalpy : float
        J/mol.
    entropy : float
        J/(mol K).
    molar_volume : float
        m3/mol.
    """

    phase: str
    temperature: float
    pressure: float
    gibbs: float
    enthalpy: float
    entropy: float
    molar_volume: float


@dataclass(frozen=True, eq=False)
class StablePhase(_Record):
    """The stable phase of a pure substance at (T, p) and every phase that exists there.

    Attributes
    ----------
    stable : PhasePoint
        The phase of least molar Gibbs energy.
    candidates : tuple of PhasePoint
        Every phase that exists at (T, p) within its model's range, by increasing Gibbs
        energy (the first is ``stable``).
    """

    stable: PhasePoint
    candidates: Tuple[PhasePoint, ...]

    @property
    def phase(self) -> str:
        """The name of the stable phase."""
        return self.stable.phase


@dataclass(frozen=True, eq=False)
class StablePhaseMap(_Record):
    """The stable phase of a pure substance at many (T, p) points, arrays shaped like the
    broadcast inputs.

    Attributes
    ----------
    phases : tuple of str
        The phases of the set.
    temperature, pressure : numpy.ndarray
        K, Pa.
    phase : numpy.ndarray of str
        The stable phase's name at each point (``""`` where the point failed).
    gibbs, enthalpy : numpy.ndarray
        Molar Gibbs energy and enthalpy of the stable phase, J/mol.
    entropy : numpy.ndarray
        J/(mol K).
    molar_volume : numpy.ndarray
        m3/mol.
    ok : numpy.ndarray of bool
        False where the point failed (only with ``on_error="flag"``).
    failures : list of (tuple, TielineError)
        Index and exception of each failed point.
    """

    phases: Tuple[str, ...]
    temperature: np.ndarray
    pressure: np.ndarray
    phase: np.ndarray
    gibbs: np.ndarray
    enthalpy: np.ndarray
    entropy: np.ndarray
    molar_volume: np.ndarray
    ok: np.ndarray
    failures: List[Tuple[Tuple[int, ...], BaseException]]

    def __len__(self) -> int:
        return int(self.temperature.size)

    def to_dataframe(self) -> "pandas.DataFrame":
        """One row per point, one column per array attribute (needs pandas)."""
        return _array_frame(self, ("phases", "failures"))


@dataclass(frozen=True, eq=False)
class Coexistence(_Record):
    """A point where two phases of a pure substance coexist (equal molar Gibbs energy).

    Attributes
    ----------
    phases : (str, str)
        The two phases (a, b), b being the one stable at the higher temperature for melting
        (solid, liquid), boiling (liquid, vapor) and sublimation (solid, vapor).
    temperature, pressure : float
        K, Pa.
    states : (PhasePoint, PhasePoint)
        The two phases' states.
    delta_h : float
        Enthalpy of transition h_b − h_a, J/mol.
    delta_s : float
        Entropy of transition s_b − s_a, J/(mol K).
    delta_v : float
        Volume change v_b − v_a, m3/mol.
    clapeyron_slope : float
        Slope of the boundary dp/dT = Δs/Δv, Pa/K.
    iterations : int
        Newton iterations used.
    """

    phases: Tuple[str, str]
    temperature: float
    pressure: float
    states: Tuple[PhasePoint, PhasePoint]
    delta_h: float
    delta_s: float
    delta_v: float
    clapeyron_slope: float
    iterations: int

    @property
    def gibbs(self) -> float:
        """The common molar Gibbs energy, J/mol."""
        return self.states[0].gibbs


@dataclass(frozen=True, eq=False)
class CoexistenceCurve(_Record):
    """A two-phase boundary of a pure substance traced along temperature or pressure, one
    entry per given value.

    Attributes
    ----------
    phases : (str, str)
        The two phases (a, b), as in :class:`Coexistence`.
    temperature, pressure : numpy.ndarray
        K, Pa.
    gibbs : numpy.ndarray
        The common molar Gibbs energy, J/mol.
    delta_h : numpy.ndarray
        h_b − h_a, J/mol.
    delta_s : numpy.ndarray
        s_b − s_a, J/(mol K).
    delta_v : numpy.ndarray
        v_b − v_a, m3/mol.
    clapeyron_slope : numpy.ndarray
        dp/dT, Pa/K.
    enthalpy, entropy, molar_volume : numpy.ndarray, shape (n, 2)
        Of phases a and b: J/mol, J/(mol K), m3/mol.
    iterations : numpy.ndarray of int
        Newton iterations per point.
    """

    phases: Tuple[str, str]
    temperature: np.ndarray
    pressure: np.ndarray
    gibbs: np.ndarray
    delta_h: np.ndarray
    delta_s: np.ndarray
    delta_v: np.ndarray
    clapeyron_slope: np.ndarray
    enthalpy: np.ndarray
    entropy: np.ndarray
    molar_volume: np.ndarray
    iterations: np.ndarray

    def __len__(self) -> int:
        return int(self.temperature.size)

    def to_dataframe(self) -> "pandas.DataFrame":
        """One row per point: T (K), p (Pa), the transition quantities and, per phase, h, s
        and v (needs pandas)."""
        pd = _pandas()
        cols: Dict[str, Any] = {}
        for n in ("temperature", "pressure", "gibbs", "delta_h", "delta_s", "delta_v", "clapeyron_slope"):
            cols[n] = getattr(self, n)
        for n in ("enthalpy", "entropy", "molar_volume"):
            for k, ph in enumerate(self.phases):
                cols[f"{n}_{ph}"] = getattr(self, n)[:, k]
        cols["iterations"] = self.iterations
        return pd.DataFrame(cols)


@dataclass(frozen=True, eq=False)
class TriplePoint(_Record):
    """A point where a solid, the liquid and the vapour of a pure substance coexist.

    Attributes
    ----------
    temperature, pressure : float
        K, Pa.
    phases : (PhasePoint, PhasePoint, PhasePoint)
        The solid, the liquid and the vapour.
    residual : float
        max |g_i − g_j|/(RT) at the solution (dimensionless).
    iterations : int
        Outer iterations.
    """

    temperature: float
    pressure: float
    phases: Tuple[PhasePoint, PhasePoint, PhasePoint]
    residual: float
    iterations: int


@dataclass(frozen=True, eq=False)
class Crossing(_Record):
    """A crossing of two Gibbs-energy curves, refined by the coexistence solve.

    Attributes
    ----------
    point : Coexistence
        The coexistence point.
    gibbs : float
        Molar Gibbs energy at the crossing, J/mol.
    stable : bool
        True if no other phase lies lower there (a phase transition); False for a
        metastable crossing.
    """

    point: Coexistence
    gibbs: float
    stable: bool

    @property
    def phases(self) -> Tuple[str, str]:
        """The two phases that cross."""
        return self.point.phases

    @property
    def temperature(self) -> float:
        """K."""
        return self.point.temperature

    @property
    def pressure(self) -> float:
        """Pa."""
        return self.point.pressure


@dataclass(frozen=True, eq=False)
class GibbsCurves(_Record):
    """Molar Gibbs energies of every phase of a pure substance along temperature at fixed
    pressure (isobaric) or along pressure at fixed temperature (isothermal).

    Attributes
    ----------
    along : str
        ``"temperature"`` (isobaric curves g(T)) or ``"pressure"`` (isothermal g(p)).
    temperature, pressure : numpy.ndarray
        K and Pa at each grid point (one of them constant).
    phases : tuple of str
        The phases, one curve each, in the order of the rows of ``gibbs``.
    gibbs : numpy.ndarray, shape (len(phases), n)
        Molar Gibbs energy, J/mol; NaN where the phase does not exist or is outside its
        model's range.
    crossings : tuple of Crossing
        Where two curves cross, stable (phase transitions) or metastable.
    """

    along: str
    temperature: np.ndarray
    pressure: np.ndarray
    phases: Tuple[str, ...]
    gibbs: np.ndarray
    crossings: Tuple[Crossing, ...]

    @property
    def grid(self) -> np.ndarray:
        """The grid: temperatures (K) for isobaric curves, pressures (Pa) for isothermal ones."""
        return self.temperature if self.along == "temperature" else self.pressure

    def curve(self, phase: str) -> np.ndarray:
        """The Gibbs-energy curve (J/mol) of ``phase`` (one of :attr:`phases`)."""
        if phase == "vapour":
            phase = "vapor"
        if phase not in self.phases:
            from ._errors import _invalid

            raise _invalid("phase", f"{phase!r}; one of {list(self.phases)} is required")
        return self.gibbs[self.phases.index(phase)]

    @property
    def stable_gibbs(self) -> np.ndarray:
        """The least Gibbs energy over the phases at each grid point, J/mol (NaN where no
        phase exists)."""
        g = np.where(np.isnan(self.gibbs), np.inf, self.gibbs)
        low = g.min(axis=0)
        return np.where(np.isinf(low), np.nan, low)

    @property
    def stable_phase(self) -> np.ndarray:
        """The name of the phase of least Gibbs energy at each grid point (``""`` where no
        phase exists)."""
        g = np.where(np.isnan(self.gibbs), np.inf, self.gibbs)
        k = g.argmin(axis=0)
        names = np.array(self.phases + ("",))
        return np.where(np.isinf(g.min(axis=0)), "", names[k])

    @property
    def transitions(self) -> Tuple[Crossing, ...]:
        """The stable crossings (phase transitions), in grid order."""
        return tuple(c for c in self.crossings if c.stable)

    def to_dataframe(self) -> "pandas.DataFrame":
        """One row per grid point: T (K), p (Pa), g of each phase (J/mol) and the stable
        phase (needs pandas)."""
        pd = _pandas()
        cols: Dict[str, Any] = {"temperature": self.temperature, "pressure": self.pressure}
        for k, ph in enumerate(self.phases):
            cols[f"gibbs_{ph}"] = self.gibbs[k]
        cols["stable_phase"] = self.stable_phase
        return pd.DataFrame(cols)


# ---------------------------------------------------------------------------------------------
# The PT flash with solids


@dataclass(frozen=True, eq=False)
class SolidPhase(_Record):
    """A solid phase present in a flash with solids.

    Attributes
    ----------
    candidate : int
        Index of the solid in the list passed in.
    component : int
        The fluid component index of its species.
    species : str
        The species.
    amount : float
        Amount, mol.
    fraction : float
        Amount over the total feed amount.
    molar_volume : float
        m3/mol.
    ln_fugacity : float
        ln of the solid's fugacity, ln(f/Pa).
    """

    candidate: int
    component: int
    species: str
    amount: float
    fraction: float
    molar_volume: float
    ln_fugacity: float


@dataclass(frozen=True, eq=False)
class SolidMargin(_Record):
    """The stability margin of one candidate solid at the result of a flash with solids.

    Attributes
    ----------
    candidate : int
        Index of the solid in the list passed in.
    species : str
        The species.
    present : bool
        Whether the solid is present.
    evaluated : bool
        Whether the solid model could be evaluated at (T, p); a solid outside its range is
        not considered, and its other values are 0.
    ln_fugacity_solid : float
        ln f of the pure solid, ln(f/Pa).
    ln_fugacity_fluid : float
        ln f of the species in the fluid, ln(f/Pa) (−1e300 when the species is absent from
        the fluid).
    margin : float
        ln f_solid − ln f_fluid (dimensionless): ≥ 0 for a stable absent solid, ≈ 0 (within
        the tolerance) for a present one. When a one-species feed is entirely solid, the
        fluid is the one the solid displaced, and the margin of the present solid is < 0.
    """

    candidate: int
    species: str
    present: bool
    evaluated: bool
    ln_fugacity_solid: float
    ln_fugacity_fluid: float
    margin: float


@dataclass(frozen=True, eq=False)
class SolidFlashDiagnostics(_Record):
    """How a flash with solids reached its answer.

    Attributes
    ----------
    active_set_iterations, inner_iterations, fluid_flashes : int
        Active-set iterations, inner (false-position) iterations, fluid flashes performed.
    residual : float
        max |ln f_fluid − ln f_solid| over the present solids (dimensionless).
    min_absent_margin : float
        The least margin over the absent evaluated solids (1e300 if there is none).
    """

    active_set_iterations: int
    inner_iterations: int
    fluid_flashes: int
    residual: float
    min_absent_margin: float


@dataclass(frozen=True, eq=False)
class SolidFlashResult(_Record):
    """Result of a PT flash with pure solid phases.

    Attributes
    ----------
    temperature, pressure : float
        K, Pa.
    feed : numpy.ndarray
        Total feed amounts, mol.
    fluid : FlashResult or None
        The flash of what remains fluid (its ``feed`` is the fluid amounts and its phase
        fractions are relative to them, with its own stability certificate); None when
        everything froze.
    fluid_fractions : numpy.ndarray
        The fluid phases' amounts over the total feed amount, in the order of
        ``fluid.phases``.
    solids : tuple of SolidPhase
        The solids present.
    margins : tuple of SolidMargin
        Every candidate's margin, in the order passed in: the solids' stability certificate.
    diagnostics : SolidFlashDiagnostics
        Iterations and residuals.
    """

    temperature: float
    pressure: float
    feed: np.ndarray
    fluid: Optional[FlashResult]
    fluid_fractions: np.ndarray
    solids: Tuple[SolidPhase, ...]
    margins: Tuple[SolidMargin, ...]
    diagnostics: SolidFlashDiagnostics

    @property
    def num_phases(self) -> int:
        """Number of phases present, fluid and solid."""
        return len(self.solids) + (self.fluid.num_phases if self.fluid is not None else 0)

    @property
    def solid_fraction(self) -> float:
        """Amount of all solids over the feed amount."""
        return float(sum(s.fraction for s in self.solids))

    @property
    def fluid_amount(self) -> float:
        """Amount remaining fluid, mol."""
        return float(self.fluid.feed.sum()) if self.fluid is not None else 0.0

    @property
    def phase_kinds(self) -> Tuple[str, ...]:
        """The kinds of all phases present: the fluid phases, then ``"solid"`` per solid."""
        fluid = tuple(p.kind for p in self.fluid.phases) if self.fluid is not None else ()
        return fluid + ("solid",) * len(self.solids)

    def solid_amounts(self) -> np.ndarray:
        """Amount (mol) of each candidate solid, in the order passed in (0 where absent)."""
        out = np.zeros(len(self.margins))
        for s in self.solids:
            out[s.candidate] = s.amount
        return out
