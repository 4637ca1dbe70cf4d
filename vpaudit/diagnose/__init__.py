"""Diagnosis: the likely transcription slip behind a suspect record, and its fix.

Most bad entries carry one slip, and each slip leaves a fingerprint (a log-base slip
scales the implied dH by 2.3, a pressure unit shifts ln P by the log of its factor, ...).
For every record involved in an error or warning, each hypothesis below is tested by
applying the inverse of the slip and re-running the checks on the corrected record together
with everything that bears on it: its partner phase, the other sources of its substance,
its reference values and its measured points.

========================  ==================================================================
kind                      hypothesis
========================  ==================================================================
``log-base``              the coefficients are in the other log base than the record says
``pressure-unit``         the pressure unit is another one of the supported units
``temperature-unit``      degC/degF/K confusion (Antoine)
``sign``                  one coefficient's sign was lost or added
``phase-swap``            the solid and liquid labels of a pair are swapped
``decimal-shift``         one coefficient is off by a power of ten (10^-3 .. 10^3)
``coefficient-swap``      two coefficients were entered in each other's columns
``digit-transposition``   two adjacent digits of one coefficient are swapped
========================  ==================================================================

How it is computed
------------------
All candidates are audited at once: each becomes a *variant* substance in one synthetic
table (the substance's records with one slip undone, its references and points copied), so
the work runs over whole arrays, never once per candidate. A screening pass computes the
continuous evidence and the errors the hard checks must give (no findings are built); the
ten best candidates of each substance then run through every registered check exactly as
in the audit. Each variant gets a misfit score

    S = sum over findings (3 per error, 1 per warning, 7.70 per error that says the curve
        is impossible: its measured odds, scoring._IMPOSSIBLE_ODDS)
        + sum of min(rho(z), cap) over the continuous evidence (z = residual / its scale),

with rho(z) = 2 (sqrt(1 + z^2) - 1), a robust (soft-L1) cost, capped per piece of
evidence (each residual is either consistent, or off for a reason of its own by an amount
no slip predicts -- a mixture likelihood, so one broken piece of evidence weighs as much
as any other whatever its size): the ln P difference of the
solid and liquid curves at the reference melting point, the Hess residual of the fusion
enthalpy, ln P at the reference normal boiling point, the distance of the implied entropy
of the phase change from its plausible band, the differences between sources, and the
residuals of measured points. Candidates are weighed as hypotheses:

    posterior(c)  ~  prior(c) exp(-S_c / (2 T)),
    posterior(no single slip)  ~  P0 exp(-S_0 / (2 T)),

where S_0 is the misfit of the records as written, so that a correction must bring
several pieces of evidence to consistency, not merely improve one, to win;

where the prior of each kind is shared equally among its variants (a kind with 40 possible
digit transpositions gives each a fortieth: the penalty for how unlikely one particular
slip is) and among the suspect records. Corrections that give the same curve and range
(Torr and mmHg differ by 1.4e-7) are one fix and their weights add. The confidence of a
suggestion is its posterior through a Platt scaling; T, P0 and the cap were chosen, and the
scaling fitted, on corrupted real data (``benchmarks/diagnosis_accuracy.py``,
docs/diagnosis.md) so that a confidence c is right about a fraction c of the time. When the
evidence does not single out one fix the suggestion is ``None``; when the runner-up is
close it is reported too. A fix that leaves an error no single slip explains is held at even
odds; when it leaves one on a record it does not touch, a fix of that record may be offered
beside it, held too (``scoring._second_fix``).
"""

from __future__ import annotations

from .candidates import SLIP_KINDS, Candidate, Change, candidates_for
from .scoring import CALIBRATION, DIAGNOSE_LIMIT, attach_suggestions, choose, diagnose, hypotheses

__all__ = [
    "SLIP_KINDS",
    "Candidate",
    "Change",
    "attach_suggestions",
    "candidates_for",
    "choose",
    "diagnose",
    "hypotheses",
    "CALIBRATION",
    "DIAGNOSE_LIMIT",
]
