"""What the family modules share."""

from __future__ import annotations

from dataclasses import dataclass
from typing import NamedTuple

import numpy as np


@dataclass(frozen=True)
class FormSpec:
    """What one equation form needs.

    Attributes
    ----------
    name : str
        The ``form`` value in tables.
    family : str
        ``log-linear``, ``antoine`` or ``wagner``: which evaluator serves it.
    coefficients : tuple of str
        The coefficient columns the form uses; every one is required, all others must be empty.
    equation : str
        The equation as written in the table format (y = log P in the record's base).
    temperature_units : tuple of str
        Temperature units the form may be written in.
    needs_critical : bool
        Whether ``t_crit`` and ``p_crit`` are required.
    exponent : float or None
        For log-linear forms, the fixed exponent of the D term (D*T^E), or None when E is a
        coefficient (``power-term``) or the form has no D term.
    """

    name: str
    family: str
    coefficients: tuple[str, ...]
    equation: str
    temperature_units: tuple[str, ...] = ("K",)
    needs_critical: bool = False
    exponent: float | None = None


def shaped(p: np.ndarray, t: np.ndarray) -> np.ndarray:
    """A column of canonical parameters shaped to broadcast against temperatures ``t``
    (one row per curve).
    """
    return p.reshape((-1,) + (1,) * (t.ndim - 1))


class Written(NamedTuple):
    """Records as the table writes them, one entry per record, for ``canonical``: what the
    engine reads from the frame, conventions resolved to numbers. A family module computes
    its parameters for every entry; the engine keeps those of the family's own records.
    """

    #: The form of each record, as a code into ``forms``.
    form: np.ndarray
    #: The form names the codes stand for.
    forms: tuple[str, ...]
    #: Whether each record's form has a D term (log-linear forms).
    has_d: np.ndarray
    #: The fixed exponent of each record's D term, NaN where E is a coefficient or absent.
    exponent: np.ndarray
    #: The coefficients as written, an empty cell as 0.
    A: np.ndarray
    B: np.ndarray
    C: np.ndarray
    D: np.ndarray
    E: np.ndarray
    #: The critical temperature [K] and pressure [in the record's unit] as written (NaN
    #: where empty).
    t_crit: np.ndarray
    p_crit: np.ndarray
    #: ln 10 for coefficients of log10 P, 1 for ln P.
    log_factor: np.ndarray
    #: ln of the record's pressure unit in Pa.
    ln_unit: np.ndarray
    #: The record's temperature scale: T [K] = scale * theta + offset.
    scale: np.ndarray
    offset: np.ndarray
