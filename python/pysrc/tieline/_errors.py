"""Exceptions raised by tieline.

Every error the library raises derives from :class:`TielineError`. Problems with the
arguments (wrong shape, non-finite or non-positive values, unknown names, malformed
descriptions) also derive from :class:`ValueError`, so code that already handles bad values
keeps working.
"""

from __future__ import annotations

from typing import Any, Dict, List, Optional

__all__ = [
    "TielineError",
    "InvalidInputError",
    "UnknownComponentError",
    "OutsideValidityError",
    "NoSolutionError",
    "ConvergenceError",
    "DataError",
]


class TielineError(Exception):
    """Base class of every tieline error.

    Attributes
    ----------
    index : int or None
        For a failure inside a vectorised call, the flat index of the point that failed.
    """

    index: Optional[int] = None


class InvalidInputError(TielineError, ValueError):
    """An argument is outside its allowed domain (non-finite, non-positive, wrong length ...).

    Attributes
    ----------
    what : str
        Which argument.
    detail : str
        What was wrong and what is allowed.
    """

    what: str = ""
    detail: str = ""


class UnknownComponentError(InvalidInputError):
    """A component name, alias or CAS number is not in the data bank.

    Attributes
    ----------
    name : str
        The name that was asked for.
    suggestions : list of str
        The closest known names, best first.
    """

    name: str = ""
    suggestions: List[str] = []


class OutsideValidityError(TielineError, ValueError):
    """The conditions lie outside the validity range of a model or correlation.

    Attributes
    ----------
    what : str
        Which quantity.
    value, min, max : float
        Its value and the validity range, in SI units (K, Pa ...).
    detail : str
        Which model or correlation, and what to do.
    """

    what: str = ""
    value: float = float("nan")
    min: float = float("nan")
    max: float = float("nan")
    detail: str = ""


class NoSolutionError(TielineError):
    """The requested state does not exist (saturation above the critical point, a dew point
    above the cricondentherm ...)."""


class ConvergenceError(TielineError):
    """An iterative method stopped before reaching its tolerance.

    Attributes
    ----------
    method : str
        Which method.
    iterations : dict of str to int
        Iterations spent, per stage.
    residual : float
        The last value of the convergence measure (dimensionless).
    tolerance : float
        The tolerance it had to reach (dimensionless).
    """

    method: str = ""
    iterations: Dict[str, int] = {}
    residual: float = float("nan")
    tolerance: float = float("nan")


class DataError(TielineError, ValueError):
    """Component or model data could not be parsed or is inconsistent."""


def _invalid(what: str, detail: str) -> InvalidInputError:
    """An :class:`InvalidInputError` with the message format of the compiled core."""
    e = InvalidInputError(f"invalid input: {what}: {detail}")
    e.what = what
    e.detail = detail
    return e


def _attrs(e: BaseException) -> Dict[str, Any]:
    """The diagnostic attributes of an exception (for reports)."""
    return {k: v for k, v in vars(e).items() if not k.startswith("_")}
