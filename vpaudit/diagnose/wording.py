"""A suggestion in words and in the output contract's form: the fix, its stated
confidence and the sentence that explains it (what it clears and leaves, which other record
agrees with it, the second fix it was weighed with).
"""

from __future__ import annotations

import math

import numpy as np

from ..checks._context import AuditContext
from ..checks._text import confidence
from .candidates import Candidate
from .variants import _errors_and_warnings, _key_rows, _Outcome


def _suggestion(
    ctx: AuditContext,
    cand: Candidate,
    out: _Outcome,
    conf: float,
    cleared: set,
    before: set,
    group: list[int],
    cands: list[Candidate],
    held: bool = False,
) -> dict:
    """The suggestion of one fix, in the output contract's form (``held``: its confidence
    was held down: the fix is smaller than sources disagree, moves its record farther from
    an independent witness, or leaves a curve flatter than any real one).
    """
    rid = ctx.id(cand.row)
    corrected = {ch.field: ch.value for ch in cand.changes if ch.row == cand.row}
    texts = {ch.field: ch.text for ch in cand.changes if ch.row == cand.row and ch.text}
    sug: dict = {
        "kind": cand.kind,
        "record": rid,
        "corrected": corrected,
        "confidence": _rounded(conf),
        "explanation": "",
        "location": ctx.location(cand.row),
    }
    if texts:
        sug["corrected_text"] = texts
    others = [ch for ch in cand.changes if ch.row != cand.row]
    if others:
        sug["also"] = [
            {
                "record": ctx.id(ch.row),
                "corrected": {ch.field: ch.value},
                "location": ctx.location(ch.row),
            }
            for ch in others
        ]
    remaining = _errors_and_warnings(out)
    n_before = len(before)
    stated = sug["confidence"]
    text = f"{_lead(stated, held)} {cand.label} [{cand.kind}, confidence {confidence(stated)}]."
    if n_before:
        text += (
            f" With that fixed, {len(cleared)} of the {n_before} error(s) and warning(s) on "
            f"{ctx.substance_of(cand.row)} clear"
            + (
                f"; {len(remaining)} {'remains' if len(remaining) == 1 else 'remain'}"
                if remaining
                else " and none remain."
            )
        )
        if remaining:  # what the fix does not explain, by name
            named = [f"{check} ({', '.join(ids)})" for check, ids in sorted(remaining)]
            more = f" and {len(named) - 3} more" if len(named) > 3 else ""
            text += f", which it does not explain: {'; '.join(named[:3])}{more}."
    same = _same_curve_as(ctx, out, cand.row)
    if same:
        text += (
            f" With it, {rid} gives the same curve over the same range as "
            f"{' and '.join(same)}, which {'agrees' if len(same) == 1 else 'agree'} with the"
            " fix; if they came from one source, the table then holds that source twice."
        )
    alt = sorted({cands[k].label for k in group if cands[k].label != cand.label})
    if alt:
        text += f" Equivalent: {alt[0]}."
    sug["explanation"] = text
    return sug


def _rounded(conf: float) -> float:
    """A confidence as stated: rounded down, as the text shows it, never above what it is
    (0.9996 is not 1.0, 0.7996 not the 0.8 of "Almost certainly" and of --min-confidence
    0.8); a posterior that reaches 1 in floating point is stated as 0.999: a diagnosis
    from the numbers alone is never certain.
    """
    return min(math.floor(float(conf) * 1000 + 1e-9) / 1000, 0.999)


def _lead(stated: float, held: bool = False) -> str:
    """The words a suggestion opens with, by its stated confidence (a held one is possible)."""
    if held:
        return "Possibly"
    if stated >= 0.8:
        return "Almost certainly"
    if stated >= 0.5:
        return "Probably"
    return "Possibly (the evidence does not single out one fix)"


def _same_curve_as(ctx: AuditContext, out: _Outcome, row: int) -> list[str]:
    """The other records of ``row``'s substance whose curve, range and phase the fixed
    record then matches (from the outcome's keys, ln P at five temperatures over each range
    to 1e-4, whose rows are the substance's records in table order:
    :func:`~vpaudit.diagnose.variants._unit_keys`): another source that agrees with the fix.
    """
    k = _key_rows(out)
    if k is None or len(k) < 2:
        return []
    with np.errstate(invalid="ignore"):
        same = (np.abs(k[:, None, :5] - k[None, :, :5]).max(axis=2) <= 1e-4) & (
            np.abs(k[:, None, 5:] - k[None, :, 5:]).max(axis=2) <= 1e-6
        )
    np.fill_diagonal(same, False)
    if not same.any():  # the usual case, told without looking up the substance's rows
        return []
    members = np.flatnonzero(ctx.codes == ctx.codes[row])
    if len(k) != members.size:
        return []
    j = int(np.searchsorted(members, row))
    return [ctx.id(int(r)) for r in members[same[j]]]


def _together_text(
    ctx: AuditContext, cand: Candidate, other: Candidate, conf: float, before: set, left: list
) -> str:
    """The explanation of one of two fixes weighed together (:func:`_weigh_together`)."""
    text = (
        f"{_lead(conf)} {cand.label} [{cand.kind}, confidence {confidence(conf)}], and beside it, "
        f"in {ctx.id(other.row)}, {other.label} [{other.kind}]: two slips, one in each "
        "record, weighed together. With both fixed, "
        f"{len(before) - len(left)} of the {len(before)} error(s) and warning(s) on "
        f"{ctx.substance_of(cand.row)} clear"
    )
    if not left:
        return text + " and none remain; either fix alone leaves the other record's errors."
    named = [f"{check} ({', '.join(ids)})" for check, ids in left]
    more = f" and {len(named) - 3} more" if len(named) > 3 else ""
    return (
        text + f"; {len(left)} {'remains' if len(left) == 1 else 'remain'}: "
        f"{'; '.join(named[:3])}{more}. Either fix alone leaves the other record's errors."
    )


def _runner_up_text(
    ctx: AuditContext,
    a: Candidate,
    out_a: _Outcome,
    b: Candidate,
    out_b: _Outcome,
    together: float,
) -> str:
    """What a suggestion adds of its close runner-up ``b`` when the two fixes of one record
    differ in the curve's level alone, the ranges and phases equal (compared on what each
    amounts to: :func:`~vpaudit.diagnose.variants._key_rows`), else "". Within the record's
    uncertainty (its stated one, or the default the boiling-point check takes for a record
    that states none) no data can tell them apart, as bar and atm (1.3 % apart): said so,
    with ``together``, the confidence of the two as one hypothesis. Beyond it, as mmHg and
    mbar (a factor 1.33 at every temperature): the factor, and the witnesses that would
    decide.
    """
    ka, kb = _key_rows(out_a), _key_rows(out_b)
    if a.row != b.row or ka is None or kb is None or ka.shape != kb.shape or not ka.size:
        return ""
    if not np.array_equal(ka[:, 5:], kb[:, 5:]) or not np.all(np.abs(ka[:, :5]) < 1e299):
        return ""  # another range or phase, or a curve without a value
    diff = ka[:, :5] - kb[:, :5]
    gap = float(np.max(np.abs(diff)))
    u = float(ctx.uncertainty[a.row])
    if not math.isfinite(u):
        u = ctx.policy.thresholds("boiling-point-mismatch")["default_uncertainty"]
    if gap == 0.0:
        return ""
    if gap <= math.log1p(u):
        return (
            f" The two readings give the same pressures to within {math.expm1(gap) * 100:.2g} "
            f"% over the range, inside the record's uncertainty ({u * 100:.2g} %), so no data "
            f"can tell them apart; together their confidence is {confidence(together)}. Either "
            "serves for the pressures; the source as printed decides which to write."
        )
    # beyond it, only a shift of the level alone: the same at every temperature (the keys
    # are rounded to 1e-6), and only in the fixed record
    changed = np.any(diff != 0.0, axis=1)
    if changed.sum() != 1 or float(np.ptp(diff[changed])) > 1e-5:
        return ""
    # a normal boiling point witnesses a liquid's curve only
    tb = "a normal boiling point near the range, " if ctx.liquid[a.row] else ""
    return (
        f" The two readings differ by a factor {math.exp(gap):.3g} in pressure at every "
        f"temperature: a witness of the pressure level finer than that ({tb}measured points, "
        "the other phase's curve) would tell them apart."
    )
