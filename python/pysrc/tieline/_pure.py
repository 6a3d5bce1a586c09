"""Phase equilibrium of a pure substance over one fluid model and any number of solids:
:class:`PureSubstance`.

Units are SI: temperatures in K, pressures in Pa, molar energies in J/mol, molar entropies in
J/(mol K), molar volumes in m3/mol.
"""

from __future__ import annotations

from typing import Any, Optional, Sequence, Tuple, Union

import numpy as np
from numpy.typing import ArrayLike

from . import _core
from ._api import (
    _array,
    _broadcast_tp,
    _check_model,
    _check_threads,
    _component,
    _failures,
    _is_scalar,
    _on_error,
    _scalar,
    _solid_list,
)
from ._core import Model, Solid
from ._errors import _invalid
from ._results import (
    Coexistence,
    CoexistenceCurve,
    GibbsCurves,
    PhasePoint,
    StablePhase,
    StablePhaseMap,
    TriplePoint,
)

__all__ = ["PureSubstance"]

PhasePair = Tuple[str, str]


def _pair(phases: Any) -> PhasePair:
    if isinstance(phases, (str, bytes)):
        raise _invalid("phases", f"{phases!r}; a pair of phase names such as (\"solid\", \"liquid\") is required")
    try:
        items = tuple(phases)
    except TypeError:
        raise _invalid("phases", f"{type(phases).__name__}; a pair of phase names is required") from None
    if len(items) != 2 or not all(isinstance(x, str) for x in items):
        raise _invalid("phases", f"{phases!r}; a pair of phase names such as (\"liquid\", \"vapor\") is required")
    return (items[0], items[1])


def _optional(x: Optional[float], what: str) -> Optional[float]:
    return None if x is None else _scalar(x, what)


class PureSubstance:
    """A pure substance: component ``component`` of a fluid model, taken pure, together with
    solid phases of the same species.

    Its phases are the fluid's liquid and vapour roots (``"liquid"``, ``"vapor"``) and the
    solids, named ``"solid"`` when there is one, else ``"solid0"``, ``"solid1"`` ... in the
    order given (:attr:`phases` lists them). Everything follows from the molar Gibbs energies
    g(T, p) of the phases in the library's common reference state: the stable phase has the
    least g; two phases coexist where their g are equal (melting, boiling, sublimation); the
    triple point is where a solid, the liquid and the vapour all have one g.

    The object is immutable, picklable and safe to share between threads.

    Parameters
    ----------
    model : Model
        The fluid model (e.g. :meth:`Model.water` for water by IAPWS-95, or a cubic model).
    component : int or str
        The component, by index or name (default 0).
    solids : Solid or sequence of Solid
        Solid phases of that component's species (e.g. :meth:`Solid.ice_ih` for water).

    Raises
    ------
    InvalidInputError
        A component not in the model, or a solid of another species.

    Examples
    --------
    >>> water = PureSubstance(Model.water(), solids=[Solid.ice_ih()])
    >>> round(water.coexistence_at_pressure(101325.0, ("solid", "liquid")).temperature, 4)
    273.1525
    """

    __slots__ = ("_model", "_index", "_solids", "_phases")

    _model: Model
    _index: int
    _solids: Tuple[Solid, ...]
    _phases: Tuple[str, ...]

    def __init__(
        self,
        model: Model,
        component: Union[int, str] = 0,
        solids: Union[Solid, Sequence[Solid]] = (),
    ) -> None:
        _check_model(model)
        index = _component(model, component)
        items = tuple(_solid_list(solids))
        phases = tuple(_core.pure_phases(model, index, list(items)))
        object.__setattr__(self, "_model", model)
        object.__setattr__(self, "_index", index)
        object.__setattr__(self, "_solids", items)
        object.__setattr__(self, "_phases", phases)

    def __setattr__(self, name: str, value: Any) -> None:
        raise AttributeError("PureSubstance is immutable")

    def __delattr__(self, name: str) -> None:
        raise AttributeError("PureSubstance is immutable")

    def __reduce__(self) -> Tuple[Any, ...]:
        return (PureSubstance, (self._model, self._index, self._solids))

    def __eq__(self, other: object) -> bool:
        if not isinstance(other, PureSubstance):
            return NotImplemented
        return (self._model, self._index, self._solids) == (other._model, other._index, other._solids)

    def __hash__(self) -> int:
        return hash((self._model, self._index, self._solids))

    def __repr__(self) -> str:
        return f"PureSubstance({self.component!r}, phases={list(self._phases)})"

    @property
    def model(self) -> Model:
        """The fluid model."""
        return self._model

    @property
    def component(self) -> str:
        """The component's name."""
        return self._model.components[self._index]

    @property
    def component_index(self) -> int:
        """The component's index in the model."""
        return self._index

    @property
    def solids(self) -> Tuple[Solid, ...]:
        """The solid phases, in the order given."""
        return self._solids

    @property
    def phases(self) -> Tuple[str, ...]:
        """The names of the phases: ``"liquid"``, ``"vapor"``, then the solids."""
        return self._phases

    def _args(self) -> Tuple[Model, int, list]:
        return (self._model, self._index, list(self._solids))

    def evaluate(self, phase: str, temperature: float, pressure: float) -> Optional[PhasePoint]:
        """One phase at ``temperature`` (K) and ``pressure`` (Pa): its molar g, h, s (J/mol,
        J/(mol K)) and volume (m3/mol), or None where it does not exist (a fluid root absent
        there) or lies outside its model's range."""
        return _core.pure_evaluate(
            *self._args(), phase, _scalar(temperature, "temperature"), _scalar(pressure, "pressure")
        )

    def stable_phase(
        self,
        temperature: ArrayLike,
        pressure: ArrayLike,
        *,
        threads: Optional[int] = None,
        on_error: str = "raise",
    ) -> Union[StablePhase, StablePhaseMap]:
        """The phase of least molar Gibbs energy at ``temperature`` (K) and ``pressure`` (Pa).

        Scalars give a :class:`StablePhase` (with every phase that exists there); arrays,
        broadcast together, give a :class:`StablePhaseMap` computed in parallel with the GIL
        released (``threads`` and ``on_error`` as in :func:`flash`).

        Raises
        ------
        InvalidInputError
            Non-finite or non-positive T or p.
        NoSolutionError
            No phase of the set can be evaluated there.
        """
        if _is_scalar(temperature) and _is_scalar(pressure):
            return _core.pure_stable_phase(
                *self._args(), _scalar(temperature, "temperature"), _scalar(pressure, "pressure")
            )
        raise_errors = _on_error(on_error)
        shape, tf, pf = _broadcast_tp(temperature, pressure)
        raw = _core.pure_stable_sweep(*self._args(), tf, pf, _check_threads(threads), raise_errors)
        names = np.array(self._phases + ("",))
        return StablePhaseMap(
            phases=self._phases,
            temperature=tf.reshape(shape),
            pressure=pf.reshape(shape),
            phase=names[raw["index"]].reshape(shape),
            gibbs=raw["gibbs"].reshape(shape),
            enthalpy=raw["enthalpy"].reshape(shape),
            entropy=raw["entropy"].reshape(shape),
            molar_volume=raw["molar_volume"].reshape(shape),
            ok=raw["ok"].reshape(shape),
            failures=_failures(raw["failures"], shape),
        )

    def _coexistence(
        self, by: str, values: ArrayLike, phases: Any, guess: Optional[float], guess_name: str
    ) -> Union[Coexistence, CoexistenceCurve]:
        a, b = _pair(phases)
        g = _optional(guess, guess_name)
        if _is_scalar(values):
            return _core.pure_coexistence(*self._args(), by, a, b, _scalar(values, by), g)
        x = _array(values, by)
        if x.ndim != 1:
            raise _invalid(by, f"shape {x.shape}; a scalar or a 1-D array (the points of a traced curve) is required")
        raw = _core.pure_trace(*self._args(), by, a, b, np.ascontiguousarray(x), g)
        raw["phases"] = tuple(raw["phases"])
        return CoexistenceCurve(**raw)

    def coexistence_at_temperature(
        self,
        temperature: ArrayLike,
        phases: Sequence[str] = ("liquid", "vapor"),
        *,
        p_guess: Optional[float] = None,
    ) -> Union[Coexistence, CoexistenceCurve]:
        """The pressure (Pa) at which two phases coexist at ``temperature`` (K): the vapour
        pressure (``("liquid", "vapor")``, the default), the sublimation pressure
        (``("solid", "vapor")``) or the melting pressure (``("solid", "liquid")``).

        A scalar temperature gives a :class:`Coexistence`, solved by Newton steps on the
        Gibbs-energy difference from ``p_guess`` (Pa; default the solids' triple-point
        estimate or the fluid's own vapour pressure). A 1-D array traces the boundary point
        by point, each solve started from the previous one by its Clapeyron slope, and gives a
        :class:`CoexistenceCurve`; order the temperatures along the curve.

        Raises
        ------
        InvalidInputError
            An unknown phase name or the same phase twice; bad T.
        NoSolutionError
            The phases do not coexist there within their models' ranges.
        ConvergenceError
            Newton's method did not converge (diagnostics attached).
        """
        return self._coexistence("temperature", temperature, phases, p_guess, "p_guess")

    def coexistence_at_pressure(
        self,
        pressure: ArrayLike,
        phases: Sequence[str] = ("liquid", "vapor"),
        *,
        t_guess: Optional[float] = None,
    ) -> Union[Coexistence, CoexistenceCurve]:
        """The temperature (K) at which two phases coexist at ``pressure`` (Pa): the boiling
        point (``("liquid", "vapor")``, the default), the melting point
        (``("solid", "liquid")``) or the sublimation point (``("solid", "vapor")``).

        A scalar pressure gives a :class:`Coexistence` (Newton steps from ``t_guess``, K;
        default the solids' triple-point temperature, or the fluid's boiling point for
        liquid–vapour); a 1-D array traces the boundary and gives a
        :class:`CoexistenceCurve`. Errors as :meth:`coexistence_at_temperature`.
        """
        return self._coexistence("pressure", pressure, phases, t_guess, "t_guess")

    def triple_point(self, solid: Optional[str] = None, *, t_guess: Optional[float] = None) -> TriplePoint:
        """The triple point where ``solid`` (a phase name; by default the only solid of the
        set), the liquid and the vapour coexist, started from ``t_guess`` (K; default the
        solid's triple-point estimate). Each step follows the liquid–vapour curve and stays
        inside the solid's range of validity (a guess outside it starts from its edge); a
        triple point beyond that range ends the search with :class:`NoSolutionError`. Ice
        Ih's triple point lies at the upper end of its range (273.16 K).

        Raises
        ------
        InvalidInputError
            No solid in the set, or ``solid`` not one of its solids.
        NoSolutionError, ConvergenceError
            No triple point found (diagnostics attached).
        """
        if solid is None:
            if len(self._solids) != 1:
                raise _invalid(
                    "solid",
                    f"the set has {len(self._solids)} solids; name one of {list(self._phases[2:])}"
                    if self._solids
                    else "the set has no solid; a triple point needs one",
                )
            solid = self._phases[2]
        if not isinstance(solid, str):
            raise _invalid("solid", f"{solid!r}; a phase name is required")
        return _core.pure_triple_point(*self._args(), solid, _optional(t_guess, "t_guess"))

    def gibbs_curves_isobaric(self, pressure: float, temperatures: ArrayLike) -> GibbsCurves:
        """Molar Gibbs energies g(T) (J/mol) of every phase at ``pressure`` (Pa) on the grid
        ``temperatures`` (K, at least two, strictly ascending), with the crossings of the
        curves refined by the coexistence solve.

        Raises
        ------
        InvalidInputError
            A grid of fewer than two or not strictly ascending values; bad p.
        """
        return self._curves("temperature", _scalar(pressure, "pressure"), temperatures, "temperatures")

    def gibbs_curves_isothermal(self, temperature: float, pressures: ArrayLike) -> GibbsCurves:
        """Molar Gibbs energies g(p) (J/mol) of every phase at ``temperature`` (K) on the grid
        ``pressures`` (Pa, at least two, strictly ascending), with the crossings of the curves
        refined by the coexistence solve.

        Raises
        ------
        InvalidInputError
            A grid of fewer than two or not strictly ascending values; bad T.
        """
        return self._curves("pressure", _scalar(temperature, "temperature"), pressures, "pressures")

    def _curves(self, along: str, fixed: float, grid: ArrayLike, what: str) -> GibbsCurves:
        x = _array(grid, what)
        if x.ndim != 1:
            raise _invalid(what, f"shape {x.shape}; a 1-D array is required")
        raw = _core.pure_gibbs_curves(*self._args(), along, fixed, np.ascontiguousarray(x))
        g = raw["grid"]
        constant = np.full(g.shape, fixed)
        return GibbsCurves(
            along=along,
            temperature=g if along == "temperature" else constant,
            pressure=constant if along == "temperature" else g,
            phases=tuple(raw["phases"]),
            gibbs=raw["gibbs"],
            crossings=tuple(raw["crossings"]),
        )
