"""When no fix is suggested although slips explain the errors: the readings that each do,
and what the table lacks that could tell them apart.

A lone liquid with its constants for mmHg marked Pa draws an entropy of vaporization below
its plausible band. Read in kPa, mbar, Torr or psi, or with its Antoine constants for degC,
its every error clears: the evidence says "a slip" but not which, and the diagnosis rightly
suggests none (each reading holds a sixth of the posterior). Saying nothing would leave
the reviewer with an error and no lead; this says which readings clear it and which
witnesses (a normal boiling point, the standard data at 298.15 K, a second source, measured
points) the substance lacks. No fix is offered and no confidence is stated: it is a lead
for the reviewer, who must look at the source.
"""

from __future__ import annotations

import numpy as np

from ..checks._context import AuditContext
from ..checks._registry import Severity
from .candidates import Candidate
from .variants import _Outcome
from .wording import _rounded

#: The readings that each clear every error are named when together they hold at least
#: this share of the posterior (they are then likelier than "no single slip", whose share
#: is the rest or less): a round number, not a calibrated one.
UNDECIDED_SHARE = 0.5


def undecided(
    ctx: AuditContext,
    ranked: list[tuple[float, list[int]]],
    cands: list[Candidate],
    outs: list[_Outcome],
    harmful: list[bool],
    errors_before: set,
    cal: dict,
) -> dict | None:
    """The readings that each leave the substance without any error, where no fix is
    suggested: None unless there are at least two, different, and together they hold at
    least :data:`UNDECIDED_SHARE` of the posterior.

    Parameters
    ----------
    ranked : list of (float, list of int)
        The groups of equivalent candidates with their summed posterior, likeliest first
        (as :func:`.scoring.choose` ranks them).
    cands, outs, harmful : list
        The verified candidates, their outcomes, and whether each creates an error.
    errors_before : set
        The keys of the errors of the records as written.

    Returns
    -------
    dict or None
        ``{"record", "location", "share", "fixes": [{"kind", "record", "corrected"[,
        "also"]}], "lacking": [witness, ...]}`` (the output contract's form).
    """
    if not errors_before:
        return None  # warnings alone are no evidence of a slip (as for a suggestion)
    picked, share = [], 0.0
    for raw, ks in ranked:
        best = min(ks, key=lambda k: (round(outs[k].score(cal), 3), -cands[k].log_prior, k))
        if harmful[best] or any(f.severity is Severity.error for f in outs[best].findings):
            continue
        picked.append(cands[best])
        share += raw
    if len(picked) < 2 or share < UNDECIDED_SHARE:
        return None
    row = picked[0].row
    return {
        "record": ctx.id(row),
        "location": ctx.location(row),
        "share": _rounded(share),  # stated as a confidence is: rounded down
        "fixes": [_fix(ctx, c) for c in picked],
        "lacking": lacking(ctx, row),
    }


def _fix(ctx: AuditContext, cand: Candidate) -> dict:
    """One reading as a suggestion states its fix: the record and its corrected fields."""
    fix = {
        "kind": cand.kind,
        "record": ctx.id(cand.row),
        "corrected": {ch.field: ch.value for ch in cand.changes if ch.row == cand.row},
    }
    others = [ch for ch in cand.changes if ch.row != cand.row]
    if others:
        fix["also"] = [
            {"record": ctx.id(ch.row), "corrected": {ch.field: ch.value}} for ch in others
        ]
    return fix


def lacking(ctx: AuditContext, row: int) -> list[str]:
    """The witnesses the substance of record ``row`` has none of, among those that tell
    readings of a record apart: a normal boiling point (a liquid), the standard data of its
    phase change at 298.15 K, a second source of its phase, the other phase, measured points.
    """
    code = int(ctx.codes[row])
    liquid = bool(ctx.liquid[row])
    change = "vaporization" if liquid else "sublimation"

    def has(quantity: str) -> bool:
        return bool(np.any(ctx.references_of(quantity).codes == code))

    out = []
    if liquid and not has("normal_boiling_point"):
        out.append("normal boiling point")
    if not (has(f"standard_enthalpy_of_{change}") or has(f"standard_entropy_of_{change}")):
        out.append(f"standard data of {change} at 298.15 K")
    same = np.flatnonzero(ctx.codes == code)
    phases = ctx.liquid[same]
    if np.count_nonzero(phases == liquid) < 2:
        out.append(f"second source of the {'liquid' if liquid else 'solid'}")
    if not np.any(phases != liquid):
        out.append(f"{'solid' if liquid else 'liquid'} record")
    points = ctx.point_codes
    if not (len(points) and np.any(points == code)):
        out.append("measured points")
    return out
