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

__all__ = ["flash_ph", "flash_ps", "flash_tv", "flash_uv", "flash_sensitivities", "phase_envelope", "critical_point", "reaction_tp", "reaction_hp", "reaction_sp", "reaction_tv", "reaction_uv", "reaction_tp_fluid_phases", "activity_coefficients", "flash_multiphase", "azeotrope_at_pressure", "azeotrope_at_temperature"]


def flash_sensitivities(
    model: Model,
    temperature: Any,
    pressure: Any,
    feed: Any,
    *,
    block: Optional[int] = None,
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


_STATE_DOC = """{title}

Parameters
----------
model : Model
    The fluid model (cubic equations of state, or IAPWS-95 water).
{a} : float or array_like
    {a_doc}
{b} : float or array_like
    {b_doc}
feed : array_like
    Feed amounts, mol (one row, or rows broadcast with the other inputs).
block, threads, progress, on_error
    Vectorised calls: points per block (default: 1/64 of the points, 16 to 64; each point
    starts from the previous one's solution when the two are near, as in :func:`calculate`),
    thread count, a ``progress(done, total)`` callback, and ``"raise"`` or ``"flag"`` for
    failed points.
**options
    ``tolerance`` (relative, on the specification; default 1e-10), ``max_iterations``,
    ``temperature_range`` and ``pressure_range`` (search ranges, K and Pa), and ``flash``
    (a dict of PT-flash options).

Returns
-------
Record or Sweep
    The fields of a PT flash at the solution (``temperature``, ``pressure``, phases,
    compositions, ``enthalpy`` ...), with ``outer_iterations``, ``pt_flashes``,
    ``spec_residual``, and the derivatives of the solution with respect to the
    specification ({derivs}; absent, with ``derivatives_error``, where the equilibrium has
    none, as for a pure substance inside its two-phase dome).

A specification outside what the model's range allows is an :class:`OutsideValidityError`
or :class:`NoSolutionError` naming the reachable bound.
"""


def _state(name: str, model: Model, a: Any, b: Any, feed: Any, kw: Any) -> Any:
    return calculate(name, model, a, b, feed=feed, **kw)


def flash_ph(model: Model, pressure: Any, enthalpy: Any, feed: Any, **kw: Any) -> Any:
    return _state("flash_ph", model, pressure, enthalpy, feed, kw)


def flash_ps(model: Model, pressure: Any, entropy: Any, feed: Any, **kw: Any) -> Any:
    return _state("flash_ps", model, pressure, entropy, feed, kw)


def flash_tv(model: Model, temperature: Any, volume: Any, feed: Any, **kw: Any) -> Any:
    return _state("flash_tv", model, temperature, volume, feed, kw)


def flash_uv(model: Model, internal_energy: Any, volume: Any, feed: Any, **kw: Any) -> Any:
    return _state("flash_uv", model, internal_energy, volume, feed, kw)


flash_ph.__doc__ = _STATE_DOC.format(
    title="PH flash: the equilibrium state at given pressure and molar enthalpy (a valve, a heater).",
    a="pressure", a_doc="Pressure(s), Pa.", b="enthalpy", b_doc="Molar enthalpy of the feed, J/mol.",
    derivs="``d_temperature_d_pressure`` (K/Pa), ``d_temperature_d_enthalpy`` (K mol/J)")
flash_ps.__doc__ = _STATE_DOC.format(
    title="PS flash: the equilibrium state at given pressure and molar entropy (an isentropic machine).",
    a="pressure", a_doc="Pressure(s), Pa.", b="entropy", b_doc="Molar entropy of the feed, J/(mol K).",
    derivs="``d_temperature_d_pressure``, ``d_temperature_d_entropy``")
flash_tv.__doc__ = _STATE_DOC.format(
    title="TV flash: the equilibrium state at given temperature and volume per mol of feed.",
    a="temperature", a_doc="Temperature(s), K.", b="volume", b_doc="Volume per mol of feed, m3/mol.",
    derivs="``d_pressure_d_temperature`` (Pa/K), ``d_pressure_d_volume`` (Pa mol/m3)")
flash_uv.__doc__ = _STATE_DOC.format(
    title="UV flash: the equilibrium state of a closed rigid vessel (internal energy and volume per mol).",
    a="internal_energy", a_doc="Molar internal energy, J/mol.", b="volume", b_doc="Volume per mol of feed, m3/mol.",
    derivs="``d_temperature_d_internal_energy``, ``d_temperature_d_volume``, ``d_pressure_d_*``")


_REACTION_DOC = """{title}

The species are the model's components followed by ``extra_species`` (names or aliases in the
species data: radicals such as ``"OH"``, ``"H"``, ``"O"``, ``"NO"``, or condensed species such as
``"graphite"`` and ``"liquid water"``); the feed lists their amounts in that order (mol). The gas
is ideal unless ``real_gas=True`` (fugacity coefficients from the model; the extra species must
then be condensed). Method: the Lagrangian Newton of Gordon & McBride (1994) under the element
balances; species whose elements the feed lacks are excluded (``excluded_species``).

Fields: ``temperature`` (K), ``pressure`` (Pa), ``species``, ``amounts`` (mol),
``gas_mole_fractions``, ``condensed`` (present condensed species), ``elements`` and
``element_potentials`` (J/mol, the Lagrange multipliers), ``enthalpy`` (J), ``entropy`` (J/K),
``gibbs_energy`` (J), ``cp_equilibrium`` and ``cp_frozen`` (J/K), ``certificate`` (least reduced
Gibbs energy of the absent species; ≥ 0 at the minimum), ``iterations``.

Options: ``extra_species``, ``real_gas``, ``tolerance``, ``max_iterations``, ``condensed``
(allow condensed species), ``t_min``, ``t_max``, ``t_guess`` (HP/SP/UV search, K), ``p_min``,
``p_max`` (TV/UV pressure search, Pa).

Caution: equilibrium is a limit, not a prediction of kinetics; design of burners, vents and
relief systems defers to the applicable codes and licensed practice.
"""


def reaction_tp(model: Model, temperature: Any, pressure: Any, feed: Any, **kw: Any) -> Any:
    return calculate("reaction_tp", model, temperature, pressure, feed=feed, **kw)


def reaction_hp(model: Model, pressure: Any, enthalpy: Any, feed: Any, **kw: Any) -> Any:
    return calculate("reaction_hp", model, pressure, enthalpy, feed=feed, **kw)


def reaction_sp(model: Model, pressure: Any, entropy: Any, feed: Any, **kw: Any) -> Any:
    return calculate("reaction_sp", model, pressure, entropy, feed=feed, **kw)


def reaction_tv(model: Model, temperature: Any, volume: Any, feed: Any, **kw: Any) -> Any:
    return calculate("reaction_tv", model, temperature, volume, feed=feed, **kw)


def reaction_uv(model: Model, internal_energy: Any, volume: Any, feed: Any, **kw: Any) -> Any:
    return calculate("reaction_uv", model, internal_energy, volume, feed=feed, **kw)


reaction_tv.__doc__ = _REACTION_DOC.format(
    title="Chemical equilibrium at given temperature (K) and total volume (m3): a closed rigid vessel.")
reaction_uv.__doc__ = _REACTION_DOC.format(
    title="Chemical equilibrium at given total internal energy (J) and volume (m3): a constant-volume explosion.")
reaction_tp.__doc__ = _REACTION_DOC.format(
    title="Chemical equilibrium at given temperature (K) and pressure (Pa): the least Gibbs energy.")
reaction_hp.__doc__ = _REACTION_DOC.format(
    title="Chemical equilibrium at given pressure (Pa) and total enthalpy (J): the adiabatic flame.")
reaction_sp.__doc__ = _REACTION_DOC.format(
    title="Chemical equilibrium at given pressure (Pa) and total entropy (J/K): isentropic expansion.")


def reaction_tp_fluid_phases(model: Model, temperature: Any, pressure: Any, feed: Any, **kw: Any) -> Any:
    """Chemical and phase equilibrium together at given temperature (K) and pressure (Pa): the
    reacting mixture's tangent-plane stability test (at the equilibrium the element-potential
    plane is the phase's tangent plane) and, where it fails, the split into two fluid phases
    of the model (a condensing water or methanol liquid), by the Gordon & McBride Newton
    extended to two phases. The species are the model's components (the gas is real: ln φ
    from the model); pure condensed species are not used here.

    Fields: ``num_phases``, ``phase_kinds``, ``phase_amounts`` (mol), ``compositions`` (one
    row per phase), ``molar_volumes``, ``amounts`` (totals, mol), ``element_potentials``
    (J/mol), ``one_phase_min_tpd`` (the one-phase test), ``certificate`` (the test of the
    answer, ≥ 0 up to round-off at the minimum), ``stable``.
    """
    return calculate("reaction_tp_fluid_phases", model, temperature, pressure, feed=feed, **kw)


def activity_coefficients(
    model: Model, temperature: Any, composition: Any, *, threads: Optional[int] = None, on_error: str = "raise"
) -> Any:
    """Activity coefficients of a liquid of the model's activity-coefficient model (the liquid of
    a solution model, or the excess Gibbs model of a cubic's EOS/G^E mixing rule) at
    ``temperature`` (K) and ``composition`` (amounts or mole fractions, mol).

    Fields: ``ln_gamma``, ``gamma``, ``d_ln_gamma_dt`` (1/K), ``d_ln_gamma_dn`` (1/mol, one row
    per component), ``excess_gibbs``, ``excess_enthalpy`` (J/mol), ``excess_entropy``
    (J/(mol K)). Arrays of temperatures or rows of compositions give a :class:`~tieline.Sweep`.
    A model without an activity-coefficient liquid is an :class:`InvalidInputError`; a
    temperature outside the parameters' range an :class:`OutsideValidityError`.
    """
    return calculate("activity_coefficients", model, temperature, feed=composition, threads=threads, on_error=on_error)


def flash_multiphase(
    model: Model,
    temperature: Any,
    pressure: Any,
    feed: Any,
    *,
    block: Optional[int] = None,
    threads: Optional[int] = None,
    progress: Optional[Any] = None,
    on_error: str = "raise",
    **options: Any,
) -> Any:
    """The phases of least Gibbs energy at ``temperature`` (K) and ``pressure`` (Pa) with any
    number of fluid phases: a vapour and up to three liquids, found by stability-driven phase
    addition and removal with Newton on the Gibbs energy (works with cubic, IAPWS-95 and
    solution models).

    Options: ``allow_vapor`` (``False`` for liquid–liquid equilibrium only), ``max_liquids``
    (1–3), ``tolerance``, ``max_ss_iterations``, ``max_newton_iterations``, ``certificate``,
    ``stability`` (a dict). Fields: those of a PT flash (``num_phases``, ``phase_kinds`` —
    ``"vapor"``, ``"liquid"``, ``"liquid2"``, ``"liquid3"`` by decreasing density after the
    vapour —, ``phase_fractions``, ``compositions`` ...).
    """
    return calculate(
        "flash_multiphase", model, temperature, pressure, feed=feed, block=block, threads=threads,
        progress=progress, on_error=on_error, **options,
    )


_AZEOTROPE_DOC = """The azeotrope of a binary model at given {given}: the state where the liquid and the vapour
have the same composition, by Newton on equal fugacities, started from the composition of
``feed`` (two amounts, mol) and, failing that, from a scan of x1 over (0, 1).

Fields: ``temperature`` (K), ``pressure`` (Pa), ``composition`` (x = y), ``ln_phi``,
``molar_volumes`` (m3/mol; liquid, vapour), ``residual``, ``iterations``. Options:
``tolerance``, ``max_iterations``, ``scan_points``. A binary without an azeotrope there is a
:class:`NoSolutionError` giving the range of ln(K1/K2) seen.
"""


def azeotrope_at_pressure(model: Model, pressure: Any, feed: Any = (0.5, 0.5), **options: Any) -> Any:
    return calculate("azeotrope_at_pressure", model, pressure, feed=feed, **options)


def azeotrope_at_temperature(model: Model, temperature: Any, feed: Any = (0.5, 0.5), **options: Any) -> Any:
    return calculate("azeotrope_at_temperature", model, temperature, feed=feed, **options)


azeotrope_at_pressure.__doc__ = _AZEOTROPE_DOC.format(given="pressure (Pa)")
azeotrope_at_temperature.__doc__ = _AZEOTROPE_DOC.format(given="temperature (K)")
