"""The saturated vapour as a real gas: how far an enthalpy and an entropy read from the slope
and the level of a vapour-pressure curve lie from the true ones and from the ideal-gas
standard state of thermochemical tables.

The exact Clapeyron equation gives dlnP/dT = dH / (R T^2 dZ), with dZ = Z_vapour -
Z_condensed, so R T^2 y' is an apparent enthalpy dH/dZ. Standard tables refer the gas to
the ideal gas at P0 = 1 bar. With the vapour's volume V = R T / P + B(T) (the virial
equation cut after its second coefficient) the ideal gas differs from the real one at the
same T and P by

    H_ideal - H = P (T dB/dT - B)        S_ideal - S = P dB/dT

(both from dH = (V - T dV/dT) dP and dS = -(dV/dT) dP along an isotherm), so

    dH0(T) = dZ R T^2 y' + P (T dB/dT - B)
    dS0(T) = dZ R T y' + P dB/dT + R ln(P / P0)

B comes from the Pitzer-Curl correlation in Abbott's form, B Pc / (R Tc) = B0 + omega B1
with B0 = 0.083 - 0.422 / Tr^1.6 and B1 = 0.139 - 0.172 / Tr^4.2 (coefficients as widely
tabulated; written from memory), and the saturated liquid's Z from Rackett's equation with
the Yamada-Gunn critical compressibility, Zc = 0.29056 - 0.08775 omega (likewise from
memory). A
solid's own Z is neglected (its vapour pressure is low where it is a solid).

Checked against the reference equations of state in CoolProp at 298.15 K
(``tests/checks/test_real_gas.py``): for n-hexane (20 kPa) the ideal reading misses the
standard dH0 by +1.2 % and dS0 by +1.4 J/(mol K), the corrected one by +0.02 % and +0.03;
for propane (952 kPa, Tr 0.81) +15.9 % and +10.0 against +1.5 % and +0.9. The correction
needs Tc and Pc: the medians of the substance's reference values, else a Wagner record's
own; for the 298.15 K anchor of a liquid with neither, an estimate from its own curve
(:func:`estimated_critical_constants`: Guldberg's rule and the acentric factor's
vapour-pressure relation). Without them it is not made (NaN). ``vpaudit eval`` uses dZ for
the enthalpy of the phase change at saturation, dZ R T^2 y', with given Tc and Pc only
(``vpaudit.substance``).
"""

from __future__ import annotations

from typing import NamedTuple

import numpy as np

from ..constants import R
from ..equations.engine import evaluate, temperature_at
from ._context import LN_P_STANDARD, AuditContext

#: ln of the standard pressure of thermochemical tables, P0 = 1 bar, in Pa.
LN_P0_BAR = float(np.log(1e5))

#: The largest |B P / (R T)| corrected. A real saturated vapour reaches -0.29 at 0.95 Tc
#: (propane, n-hexane, benzene and argon alike, CoolProp); up to -0.15 (0.8 Tc) the
#: estimated dZ is within 3 % of the true one, at -0.29 it is 30 % short of the whole
#: correction, and always nearer the truth than the ideal reading. A curve whose pressure
#: gives more is no saturated vapour at that temperature (a wrong unit): not corrected.
MAX_VIRIAL_TERM = 0.3


#: The least |B P / (R T)| for which Tc and Pc estimated from a curve are used: below, the
#: vapour is ideal to 0.1 % and the correction moves dS0 by about 0.1 J/(mol K) or less
#: (the last figure a finding shows), so an estimate would add words, not information.
MIN_ESTIMATED_TERM = 1e-3


class Departure(NamedTuple):
    """The real-gas terms of records at temperatures ``t`` (arrays; NaN where Tc or Pc is
    not known).
    """

    delta_z: np.ndarray  # Z_vapour - Z_condensed [-]
    h_ideal: np.ndarray  # H_ideal - H of the vapour at T and P, P (T dB/dT - B) [J/mol]
    s_ideal: np.ndarray  # S_ideal - S of the vapour at T and P, P dB/dT [J/(mol K)]
    estimated: np.ndarray  # bool: Tc and Pc estimated from the curve itself


#: The acentric factors of real substances, with a margin: helium-3's -0.47 to about 2 for
#: the heaviest organics (values from memory). Of the 1,233 clean liquids of the four
#: compilations with a Tc and a Pc in chemicals, the curves give -0.48 to 1.46, but for
#: three Landolt curves far from their ranges at 0.7 Tc (-3.9, -1.4, 10.6). Outside it a
#: curve is no real one at 0.7 Tc (a wrong unit, or an extrapolation far from its range) and
#: is not corrected: the correlations could give a B of the wrong sign (a kPa slip moves
#: omega by 3).
OMEGA_RANGE = (-0.5, 2.0)


def abbott(tr: np.ndarray, omega: np.ndarray) -> tuple[np.ndarray, np.ndarray]:
    """The reduced second virial coefficient B Pc / (R Tc) = B0 + omega B1 and its
    derivative with respect to Tr (Pitzer-Curl correlation, Abbott's form). Dimensionless.
    """
    b = 0.083 - 0.422 / tr**1.6 + omega * (0.139 - 0.172 / tr**4.2)
    db = 0.422 * 1.6 / tr**2.6 + omega * 0.172 * 4.2 / tr**5.2
    return b, db


def rackett_z(tr: np.ndarray, pr: np.ndarray, omega: np.ndarray) -> np.ndarray:
    """Z = P V / (R T) of the saturated liquid at reduced temperature ``tr`` and pressure
    ``pr``: Rackett's V = (R Tc / Pc) Zc^(1 + (1 - Tr)^(2/7)) with Zc = 0.29056 - 0.08775
    omega (Yamada and Gunn). Dimensionless; NaN at or above Tc.
    """
    with np.errstate(invalid="ignore"):
        zc = 0.29056 - 0.08775 * omega
        return pr / tr * zc ** (1.0 + (1.0 - tr) ** (2.0 / 7.0))


def critical_constants(ctx: AuditContext, rows: np.ndarray):
    """Tc [K], Pc [Pa] and the acentric factor of records ``rows``: Tc and Pc the medians
    of the substance's reference values (a correction of a few per cent, which the spread
    of evaluations moves by a few per cent of itself), else a Wagner record's own; the
    acentric factor omega = -1 - log10(P(0.7 Tc) / Pc) from the curve itself. NaN where
    not known, and the acentric factor where no real substance's is (:data:`OMEGA_RANGE`).
    """
    tc = ctx.critical_temperature()[rows]
    pc = ctx.reference_median("critical_pressure", rows)
    pc = np.where(np.isnan(pc), np.exp(ctx.curves.own_ln_p_crit[rows]), pc)
    y07 = evaluate(ctx.curves.take(rows), 0.7 * tc, order=0)[0]
    with np.errstate(invalid="ignore", divide="ignore"):
        omega = -1.0 - (y07 - np.log(pc)) / np.log(10.0)
    return tc, pc, _real_omega(omega)


def _real_omega(omega: np.ndarray) -> np.ndarray:
    """``omega`` where it lies within :data:`OMEGA_RANGE`, else NaN."""
    lo, hi = OMEGA_RANGE
    with np.errstate(invalid="ignore"):
        return np.where((omega >= lo) & (omega <= hi), omega, np.nan)


#: T_b/T_c of real liquids at the median: 0.68 over the 1,005 substances for which chemicals
#: knows both (Guldberg's rule, about 2/3; measured with boiling-point-mismatch's
#: ``boiling_over_critical``, its 99.5th percentile; tests/checks/test_boiling.py).
GULDBERG_RATIO = 0.68


def estimated_critical_constants(
    ctx: AuditContext, rows: np.ndarray, tc: np.ndarray, pc: np.ndarray
) -> tuple[np.ndarray, np.ndarray, np.ndarray]:
    """Tc [K], Pc [Pa] and the acentric factor of liquid records ``rows`` estimated from
    their curves, for a substance whose table lacks a Tc or a Pc (``tc``, ``pc``: the known
    ones, NaN where none; a known one is kept): Tc = T_b / 0.68 (:data:`GULDBERG_RATIO`)
    from the curve's own normal boiling point T_b, then (1 + omega) and Pc from the
    acentric factor's own vapour-pressure relation, log10(P/Pc) = (7/3) (1 + omega) (1 -
    Tc/T) (exact at 0.7 Tc by the definition of omega; common practice elsewhere), held to
    the curve's slope and its 101325 Pa at T_b. NaN for a solid, a curve that does not
    reach 101325 Pa between half its lower and three times its upper range end, or an
    acentric factor outside :data:`OMEGA_RANGE`.

    Measured on Landolt's odd-CAS Antoine liquids with P(298.15 K) between 10 kPa and 2 MPa
    and a Tc and Pc in chemicals (302): the real-gas correction of dS0(298) so estimated is
    1.17 times the one from the tabulated constants at the median (quartiles 1.03 and 1.30,
    5-95 % 0.65-1.99), off by 0.35 J/(mol K) at the median against a median correction of
    -1.54: most of the ideal reading's bias goes, not all.
    """
    c = ctx.curves.take(rows)
    liquid = ctx.liquid[rows]
    with np.errstate(invalid="ignore", divide="ignore", over="ignore"):
        tb = temperature_at(c, np.full(rows.size, LN_P_STANDARD), 0.5 * c.t_min, 3.0 * c.t_max)
        tb = np.where(liquid, tb, np.nan)
        slope = evaluate(c, np.where(np.isfinite(tb), tb, c.t_min), order=1)[1]
        tc = np.where(np.isfinite(tc), tc, tb / GULDBERG_RATIO)
        # d ln P / d(1/T) = -(7/3) ln 10 (1 + omega) Tc, and ln(P0 / Pc) at T_b
        one_omega = slope * tb * tb / (7.0 / 3.0 * np.log(10.0) * tc)
        ln_pc = LN_P_STANDARD - 7.0 / 3.0 * np.log(10.0) * one_omega * (1.0 - tc / tb)
        pc = np.where(np.isfinite(pc), pc, np.exp(ln_pc))
        # an acentric factor no real substance has says the curve is no real one near T_b
        omega = _real_omega(one_omega - 1.0)
    return tc, pc, omega


def departure(
    ctx: AuditContext,
    rows: np.ndarray,
    t: np.ndarray,
    y: np.ndarray,
    estimate: bool = False,
    constants: tuple[np.ndarray, np.ndarray, np.ndarray] | None = None,
) -> Departure:
    """The real-gas terms (:class:`Departure`) of records ``rows`` at temperatures ``t`` [K],
    where their curves give ln(P/Pa) = ``y``: the liquid's Z from :func:`rackett_z`, a
    solid's neglected. With ``estimate``, a liquid whose table gives no Tc or Pc takes
    them from its own curve (:func:`estimated_critical_constants`) where the correction is
    at least :data:`MIN_ESTIMATED_TERM`. NaN where Tc or Pc is not known, at or above Tc,
    where the curve gives no real acentric factor (:data:`OMEGA_RANGE`), or where |B P /
    (R T)| exceeds :data:`MAX_VIRIAL_TERM`. ``constants`` are :func:`critical_constants`
    of ``rows`` when the caller has them already.
    """
    tc, pc, omega = critical_constants(ctx, rows) if constants is None else constants
    unknown = np.zeros(rows.size, dtype=bool)
    if estimate:
        # a table's Tc and Pc whose curve gives no real acentric factor: not corrected
        unknown = ~(np.isfinite(tc) & np.isfinite(pc)) & ctx.liquid[rows]
        if unknown.any():
            at = np.flatnonzero(unknown)
            tc, pc, omega = tc.copy(), pc.copy(), omega.copy()
            tc[at], pc[at], omega[at] = estimated_critical_constants(ctx, rows[at], tc[at], pc[at])
    with np.errstate(invalid="ignore", divide="ignore", over="ignore"):
        tr = np.where((t > 0.0) & (t < tc), t / tc, np.nan)
        pr = np.exp(y) / pc
        b, db = abbott(tr, omega)
        virial = b * pr / tr  # B P / (R T)
        # beyond what a real saturated vapour has, the curve is not one: no correction
        pr = np.where(np.abs(virial) <= MAX_VIRIAL_TERM, pr, np.nan)
        # an estimate is made only where it changes what one can see
        pr = np.where(unknown & (np.abs(virial) < MIN_ESTIMATED_TERM), np.nan, pr)
        z_condensed = np.where(ctx.liquid[rows], rackett_z(tr, pr, omega), 0.0)
        return Departure(
            delta_z=1.0 + b * pr / tr - z_condensed,
            h_ideal=R * t * pr * (db - b / tr),
            s_ideal=R * pr * db,
            estimated=unknown,
        )


class StandardState(NamedTuple):
    """What curves imply for their phase change to the ideal gas at 1 bar (arrays)."""

    h: np.ndarray  # the enthalpy [J/mol], the vapour a real gas where it can be
    s: np.ndarray  # the entropy [J/(mol K)], the same
    real_gas: np.ndarray  # bool: h and s take the vapour as a real gas
    estimated: np.ndarray  # bool: with a Tc and a Pc estimated from the curve itself
    h_ideal_gas: np.ndarray  # the enthalpy read as for an ideal vapour, R T^2 y' [J/mol]
    s_ideal_gas: np.ndarray  # the entropy so read, R T y' + R ln(P / P0) [J/(mol K)]


def standard_state(
    ctx: AuditContext, rows: np.ndarray, t: np.ndarray, y: np.ndarray, y1: np.ndarray
) -> StandardState:
    """The enthalpy and entropy of the phase change to the ideal gas at 1 bar that records
    ``rows`` imply at ``t`` [K] from ln(P/Pa) = ``y`` and its derivative ``y1`` [1/K]
    (:class:`StandardState`): with the terms of :func:`departure` where Tc and Pc are
    known or, for a liquid, can be estimated from its curve, and the curve rises with T; as
    an ideal gas (dZ = 1) elsewhere.
    """
    apparent, ideal_s = ideal_gas(t, y, y1)
    d = departure(ctx, rows, t, y, estimate=True)
    known = np.isfinite(d.delta_z) & np.isfinite(d.h_ideal) & np.isfinite(d.s_ideal)
    # a curve that falls as T rises is no saturation curve there: nothing to correct
    known &= apparent > 0.0
    dz = np.where(known, d.delta_z, 1.0)
    h = dz * apparent + np.where(known, d.h_ideal, 0.0)
    s = dz * apparent / t + np.where(known, d.s_ideal, 0.0) + R * (y - LN_P0_BAR)
    return StandardState(h, s, known, known & d.estimated, apparent, ideal_s)


def ideal_gas(t: np.ndarray, y: np.ndarray, y1: np.ndarray) -> tuple[np.ndarray, np.ndarray]:
    """The enthalpy [J/mol] and entropy [J/(mol K)] of the phase change to the ideal gas at
    1 bar that curves with ln(P/Pa) = ``y`` and slope ``y1`` [1/K] at ``t`` [K] imply read as
    for an ideal vapour: R T^2 y' and R T y' + R ln(P / P0).
    """
    apparent = R * t * t * y1
    return apparent, apparent / t + R * (y - LN_P0_BAR)
