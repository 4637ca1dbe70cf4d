"""Weighing the candidates as hypotheses, the suggestion made of the winner (worded by
:mod:`.wording`), and its attachment to the audit's findings.
"""

from __future__ import annotations

import math
from collections import defaultdict
from dataclasses import dataclass
from functools import cache

import numpy as np

from ..checks._context import AuditContext
from ..checks._registry import REGISTRY, Severity
from ..checks._text import confidence
from ..checks.finding import Finding, Findings
from ..equations.forms import FORMS
from ..substance import records_at
from .candidates import SLIP_KINDS, Candidate, Change, _canonical, candidates_for
from .undecided import undecided
from .variants import (
    _KEY_WIDTH,
    _NOT_EVIDENCE,
    _VERIFIED,
    Screening,
    _audit_units,
    _errors_and_warnings,
    _groups,
    _key,
    _key_rows,
    _Outcome,
    _quiet,
    _screen_units,
    key_of,
)
from .wording import _rounded, _runner_up_text, _suggestion, _together_text

# --- scoring and suggestions -----------------------------------------------------------------

#: An error that says the curve itself is impossible (a slope that is not positive or is
#: flatter than any real curve, a pressure that cannot be represented or that no real curve
#: reaches) is much likelier from a slip than from anything else. Measured
#: (``benchmarks/calibrate.py --priors``, 5 December 2026): of the labelled set's flagged
#: single slips (tests/_support/slips.py, Alcock and Poling), 142 draw such an error and 331
#: only other errors; of the real compilations' substances that draw an error with no slip
#: planted (tests/_support/compilations.py, all four), 8 and 194. The odds differ by
#: (142/331)/(8/194) = 10.4, which on the misfit scale (S/2T a negative log-likelihood) is
#: 2 ln 10.4 = 4.68 above an ordinary error's cost. (``slope-flatter-than-real`` is an
#: ordinary error here: its floor lies only a sixth below the least real curve.)
_IMPOSSIBLE_ODDS = (142 / 331) / (8 / 194)

#: Calibrated constants of the scoring (benchmarks/diagnosis_accuracy.py): the temperature
#: T dividing the misfit, the prior of "no single slip explains it", the cost of an error,
#: of a warning and of an error that says the curve is impossible (above, for T = 1), and
#: the lowest confidence reported as a suggestion.
CALIBRATION = {
    "temperature": 1.0,
    "prior_none": 0.3,
    "loss": "quadratic",
    "component_cap": 8.0,
    "error_cost": 3.0,
    "warning_cost": 1.0,
    "impossible_cost": round(3.0 + 2.0 * math.log(_IMPOSSIBLE_ODDS), 2),
    "min_confidence": 0.15,
    "require_clear": True,
    "logit_scale": 1.802,
    "logit_shift": 0.570,
}


def _logsumexp(x: np.ndarray) -> float:
    """log(sum(exp(x))) without overflow (the largest term factored out); scipy.special's
    version is dear to import (docs/performance.md).
    """
    top = float(np.max(x))
    if not np.isfinite(top):
        return top
    return top + float(np.log(np.sum(np.exp(x - top))))


@dataclass
class Dropped:
    """The candidates of one substance that the screening left out of the full checks, as
    columns: their log priors and their units in the screening, whose evidence still
    enters the normalization of the posterior (:func:`choose`).
    """

    log_prior: np.ndarray
    units: np.ndarray
    screening: Screening

    def __len__(self) -> int:
        return int(self.units.size)


def _suspects(findings: Findings, limit: int | None) -> tuple[dict[str, set[str]], int]:
    """The records of each substance with errors or warnings, worst substances first, at
    most ``limit`` substances; returns them and how many were left out.
    """
    suspects: dict[str, set[str]] = defaultdict(set)
    weight: dict[str, tuple[int, int]] = defaultdict(lambda: (0, 0))
    columns = (findings.check, findings.severity, findings.substance, findings.records)
    for check, sev, sub, recs in zip(*columns, strict=True):
        if sev.rank >= 1 and check not in _NOT_EVIDENCE and sub:
            suspects[sub].update(recs)
            w = weight[sub]
            weight[sub] = (max(w[0], sev.rank), w[1] + 1)
    if limit is None or len(suspects) <= limit:
        return dict(suspects), 0
    order = sorted(suspects, key=lambda n: (-weight[n][0], -weight[n][1], n))
    return {n: suspects[n] for n in order[:limit]}, len(order) - limit


@_quiet
def hypotheses(
    ctx: AuditContext,
    findings: Findings,
    limit: int | None = None,
    suspects: dict[str, set[str]] | None = None,
) -> dict[str, tuple]:
    """Every single-slip candidate of every suspect record, audited (the costly part).

    ``limit`` bounds the substances diagnosed (worst first); ``suspects`` are those
    substances' records when the caller has found them already (:func:`_suspects`).

    Returns
    -------
    dict
        Substance -> (outcome as written, the verified candidates, their outcomes, the
        candidates the screening left out as :class:`Dropped`), for :func:`choose`.
    """
    table = ctx.table
    if suspects is None:
        suspects = _suspects(findings, limit)[0]
    if not suspects:
        return {}
    wanted = {i for s in suspects.values() for i in s}
    row_of: dict[str, int] = {}
    for r in np.flatnonzero(table.records["id"].isin(list(wanted)).to_numpy()):
        row_of.setdefault(ctx.id(r), int(r))
    # the substance code of each suspect (from one of its rows), and the rows of those codes
    code_of = {
        name: int(ctx.codes[row_of[i]])
        for name, rids in suspects.items()
        for i in rids
        if i in row_of
    }
    members = _groups(ctx.codes, set(code_of.values()))
    as_written = dict(zip(row_of.values(), records_at(table, row_of.values()), strict=True))
    cal = CALIBRATION
    prior_kind = math.log((1.0 - cal["prior_none"]) / len(SLIP_KINDS))
    units: list[tuple[int, tuple[Change, ...]]] = []
    plan: dict[str, tuple[int, list[Candidate]]] = {}
    for name, rids in suspects.items():
        rows = sorted(row_of[i] for i in rids if i in row_of)
        if not rows:
            continue
        code = code_of[name]
        cands: list[Candidate] = []
        seen: set = set()
        sub_rows = members.get(code, np.empty(0, dtype=np.int64))
        for row in rows:
            rec = as_written[row]
            if rec.get("form") not in FORMS:
                continue
            partners = [
                (int(p), ctx.id(p))
                for p in sub_rows
                if p != row and ctx.phase_of(p) != rec["phase"]
            ]
            for c in candidates_for(rec, row, partners, prior_kind - math.log(len(rows))):
                key = (c.kind, frozenset(c.changes))
                if key in seen:  # a phase swap is proposed from both of its records
                    continue
                seen.add(key)
                cands.append(c)
        plan[name] = (len(units), cands)
        units.append((code, ()))
        units.extend((code, c.changes) for c in cands)
    # Screening: the continuous evidence of every candidate (arrays only, no findings); the
    # checks then run on the best few of each substance. A screened-out candidate still
    # counts in the normalization with its evidence alone -- an upper bound on its weight, so
    # the confidence of the chosen fix can only be understated by the screening.
    screened = _screen_units(table, ctx, units)
    scores = screened.scores(cal)
    units2: list[tuple[int, tuple[Change, ...]]] = []
    plan2: dict[str, tuple[int, list[Candidate], Dropped]] = {}
    for name, (start, cands) in plan.items():
        # a reading of the metadata that leaves an equation real tables rarely hold is that
        # much less likely (what the correction amounts to is known from the screening)
        rare = _rarities(cands, screened.keys[start : start + 1 + len(cands)])
        if rare.any():
            cands = [
                c._replace(log_prior=c.log_prior + r) if r else c
                for c, r in zip(cands, rare.tolist(), strict=True)
            ]
        prior = np.fromiter((c.log_prior for c in cands), dtype=float, count=len(cands))
        fit = prior - scores[start + 1 : start + 1 + len(cands)] / (2 * cal["temperature"])
        rank = np.argsort(-fit, kind="stable")
        keep = np.sort(rank[:_VERIFIED]).tolist()
        rest = rank[_VERIFIED:]
        plan2[name] = (
            len(units2),
            [cands[k] for k in keep],
            Dropped(prior[rest], start + 1 + rest, screened),
        )
        units2.append(units[start])
        units2.extend(units[start + 1 + k] for k in keep)
    outcomes = _audit_units(table, ctx, units2)
    return {
        name: (outcomes[start], cands, outcomes[start + 1 : start + 1 + len(cands)], dropped)
        for name, (start, cands, dropped) in plan2.items()
    }


@_quiet
def diagnose(
    ctx: AuditContext,
    findings: Findings,
    calibration: dict | None = None,
    limit: int | None = None,
    suspects: dict[str, set[str]] | None = None,
) -> dict[str, dict]:
    """The best single-slip fix for each substance with errors or warnings.

    Parameters
    ----------
    ctx : AuditContext
        The audit's context (the table, its curves and the policy).
    findings : Findings
        The audit's findings.
    calibration : dict, optional
        Scoring constants; :data:`CALIBRATION` by default.
    limit : int, optional
        Diagnose at most this many substances, those with errors and most findings first.
    suspects : dict, optional
        Those substances' suspect record ids, when already found (:func:`_suspects`).

    Returns
    -------
    dict
        Substance -> ``{"suggestion": dict or None, "clears": set of finding keys, "leaves":
        the keys of the errors and warnings it leaves (with a suggestion), "second": a fix of
        another record beside it (where there is one)}``.
    """
    cal = {**CALIBRATION, **(calibration or {})}
    diag = {
        name: choose(ctx, h, calibration)
        for name, h in hypotheses(ctx, findings, limit, suspects).items()
    }
    _weigh_together(ctx, diag, cal)
    for d in diag.values():
        d.pop("together", None)
    return diag


@_quiet
def choose(ctx: AuditContext, hypothesis: tuple, calibration: dict | None = None) -> dict:
    """Weigh the audited candidates of one substance (from :func:`hypotheses`) and return
    ``{"suggestion": dict or None, "clears": set of finding keys, "none": float}``, and with
    a suggestion ``"leaves"``: the keys of the errors and warnings the fix leaves, and
    ``"second"`` where a fix of a second slip in another record goes beside it
    (:func:`_second_fix`).
    """
    cal = {**CALIBRATION, **(calibration or {})}
    base, cands, outs, dropped = hypothesis
    T = cal["temperature"]
    before = _errors_and_warnings(base)
    if not cands:
        return {"suggestion": None, "clears": set(), "none": 1.0}
    # A fix that creates an error the records as written do not have (a pole moved into
    # the range, a range made invalid, a slope made negative) is disqualified outright: it
    # is not a capped penalty that the substance's other problems could outweigh.
    errors_before = {_key(f) for f in base.findings if f.severity is Severity.error}
    harmful = [
        any(f.severity is Severity.error and _key(f) not in errors_before for f in o.findings)
        for o in outs
    ]
    # hypotheses: no single slip (the records as written), and each verified candidate
    logw = np.array(
        [math.log(cal["prior_none"]) - base.score(cal) / (2 * T)]
        + [
            -math.inf if bad else c.log_prior - o.score(cal) / (2 * T)
            for c, o, bad in zip(cands, outs, harmful, strict=True)
        ]
    )
    # Screened-out candidates: one whose correction is equivalent to a verified one (same
    # curves, ranges and phases, so the same evidence) takes that one's score and joins its
    # group; the others enter the normalization with an upper bound of their weight.
    verified = {}
    for k, o in enumerate(outs):
        if not harmful[k]:
            verified.setdefault(o.key, logw[1 + k] - cands[k].log_prior)
    joined: dict[bytes, list[float]] = defaultdict(list)
    keys = [dropped.screening.keys[u] for u in dropped.units.tolist()]
    alone = np.array([k not in verified for k in keys], dtype=bool)
    for lp, k in zip(dropped.log_prior[~alone].tolist(), np.flatnonzero(~alone), strict=True):
        joined[keys[k]].append(lp + verified[keys[k]])
    scores = dropped.screening.scores(cal)[dropped.units[alone]]
    rest = dropped.log_prior[alone] - scores / (2 * T)
    extra = [w for ws in joined.values() for w in ws]
    z = _logsumexp(np.concatenate([logw, rest, extra]))
    post = np.exp(logw - z)
    # merge equivalent corrections (same curves, ranges and phases)
    # stable: equally likely fixes keep the order they were made in, whatever numpy's sort
    order = np.argsort(-post[1:], kind="stable")
    groups: dict[bytes, list[int]] = {}
    # two names of one pressure unit (Torr and mmHg, 1.4e-7 apart) are one fix even where
    # the rounding of their keys falls apart
    key_of: dict[tuple, bytes] = {}
    for k in order:
        if post[1 + k] < 1e-4:
            break
        key = key_of.setdefault(_canonical(cands[k].changes), outs[k].key)
        groups.setdefault(key, []).append(int(k))
    ranked = sorted(
        (
            (
                sum(post[1 + k] for k in ks)
                + sum(math.exp(w - z) for kk in {outs[m].key for m in ks} for w in joined[kk]),
                ks,
            )
            for ks in groups.values()
        ),
        key=lambda g: -g[0],
    )

    def abstain() -> dict:
        """No fix suggested; the readings that each clear every error, where they do."""
        open_ = undecided(ctx, ranked, cands, outs, harmful, errors_before, cal)
        out = {"suggestion": None, "clears": set(), "none": float(post[0])}
        if open_ is not None:
            out["undecided"] = open_
        return out

    # the errors no single slip explains, made once and only when asked for
    unexplained = cache(lambda: _unexplained(ctx, cands, outs, harmful, errors_before))
    # the likeliest fix that explains its own record: where a likelier one fails that, the
    # next (its confidence is its own posterior share, so it says how little it is sure)
    # the likeliest fix passed over for not explaining its record, and why
    passed_over: tuple[Candidate, str] | None = None
    for pick in range(len(ranked)):
        raw, ks = ranked[pick]
        if raw < max(cal["min_confidence"], post[0]):
            return abstain()
        # equivalent fixes: the one the evidence fits best (to rounding), then the likelier
        # kind, then the first generated (Torr before mmHg)
        best = min(ks, key=lambda k: (round(outs[k].score(cal), 3), -cands[k].log_prior, k))
        cleared = before - _errors_and_warnings(outs[best])
        if not cleared & errors_before:
            # warnings alone (a range gap, a small heat-capacity excursion) are no evidence
            # of a transcription slip: a fix that clears no error is not suggested
            passed_over = passed_over or (cands[best], "clears no error on")
            continue
        rid = ctx.id(cands[best].row)
        # the errors on the fixed record that the fix leaves
        left = [f for f in outs[best].findings if f.severity is Severity.error and rid in f.records]
        # a fix must clear the errors on the record it corrects: one that leaves them is at
        # best part of the story, and is not suggested -- save errors that no single slip
        # explains (a reference the curve misses whatever its reading, a partner phase with
        # a problem of its own): no candidate that leaves its own record without an error
        # clears them (one that trades an error for another, a range read in degF that
        # escapes a critical temperature but misses the boiling point, explains nothing).
        # They do not hold back the fix of a slip, provided it clears an error of its
        # record alone (what it clears is then the record's own, not another symptom of
        # the problem it leaves: a solid and liquid 0.38 apart in ln P at the melting
        # point are made to cross by many a fix). Its confidence is held below, and the
        # suggestion names what it leaves.
        if (
            cal["require_clear"]
            and left
            and not _fixes_its_record(
                ctx, cands[best], outs[best], cleared, errors_before, unexplained
            )
        ):
            passed_over = passed_over or (cands[best], "leaves an error on")
            continue
        break
    else:
        return abstain()
    conf = _stated(raw, cal)
    held = _held_because(ctx, base, outs[best], cands[best])
    if left:  # named with what remains (_suggestion): here only why it holds the fix
        held.append(
            f"No single slip explains the error{'s' if len(left) > 1 else ''} it leaves on "
            f"{rid}: the record has another problem, or the fix is not the whole story"
        )
    held_down = bool(held) and conf > SCATTER_CAP
    if held_down:
        conf = SCATTER_CAP
    sug = _suggestion(
        ctx, cands[best], outs[best], conf, cleared, before, ks, cands, held=held_down
    )
    if held_down:
        sug["explanation"] += f" {'. '.join(held)}, so its confidence is held at {SCATTER_CAP:g}."
    if passed_over is not None:
        other, why = passed_over
        sug["explanation"] += (
            f" A likelier reading is not suggested, since it {why} {ctx.id(other.row)}: "
            f"{other.label}."
        )
    after = ranked[pick + 1 :]
    if after and after[0][0] >= 0.5 * raw:  # a close runner-up is reported too
        raw2, ks2 = after[0]
        k2 = ks2[0]
        c2 = _stated(raw2, cal)
        cleared2 = before - _errors_and_warnings(outs[k2])
        sug["runner_up"] = _suggestion(ctx, cands[k2], outs[k2], c2, cleared2, before, ks2, cands)
        # shown rounded down, as the suggestion's own figure is: never above the fix's
        sug["explanation"] += f" Close runner-up ({confidence(c2)}): {cands[k2].label}."
        # two readings as one hypothesis: their posterior shares add
        sug["explanation"] += _runner_up_text(
            ctx, cands[best], outs[best], cands[k2], outs[k2], _stated(raw + raw2, cal)
        )
    leaves = _errors_and_warnings(outs[best]) & before
    out = {"suggestion": sug, "clears": cleared, "leaves": leaves, "none": float(post[0])}
    second = _second_fix(
        ctx, cands, outs, harmful, post, best, before, errors_before, unexplained, cal
    )
    if second is not None:
        out["second"], other = second
        # what weighing both fixes together needs (:func:`_weigh_together`)
        out["together"] = _Together(cands[best], other, z, before, errors_before)
    return out


@dataclass
class _Together:
    """Two fixes of two records of one substance, to be weighed as one hypothesis: the
    chosen fix, the second, the log of the normalizer of the single-slip posterior, and the
    errors and warnings as written (their keys), and the errors alone.
    """

    first: Candidate
    second: Candidate
    log_norm: float
    before: set
    errors_before: set


def _unexplained(ctx, cands, outs, harmful, errors_before: set) -> set:
    """The errors as written that no single slip explains: that no candidate clears while
    leaving its own record without an error (one that trades an error for another explains
    nothing).
    """
    unexplained = set(errors_before)
    for c, o, bad in zip(cands, outs, harmful, strict=True):
        rid = ctx.id(c.row)
        if not bad and not any(
            f.severity is Severity.error and rid in f.records for f in o.findings
        ):
            unexplained &= {_key(f) for f in o.findings if f.severity is Severity.error}
    return unexplained


def _fixes_its_record(ctx, cand, out, cleared: set, errors_before: set, unexplained) -> bool:
    """Whether the fix ``cand`` (outcome ``out``, clearing ``cleared``) clears an error of
    its record alone and leaves on it only errors no single slip explains
    (``unexplained()``, :func:`_unexplained`).
    """
    rid = ctx.id(cand.row)
    if not any(key[1] == (rid,) for key in cleared & errors_before):
        return False
    left = {_key(f) for f in out.findings if f.severity is Severity.error and rid in f.records}
    return left <= unexplained()


def _second_fix(ctx, cands, outs, harmful, post, best, before, errors_before, unexplained, cal):
    """A fix of another record of the substance, when the chosen one leaves an error it
    does not explain on a record it does not touch: two records may each carry a slip (a
    new one beside an old one). The likeliest candidate of another record that clears an
    error of its record alone and one of those the first fix leaves, and leaves on its
    record only errors no single slip explains; held at even odds at most, as a fix weighed
    one slip at a time. Returns ({"suggestion", "clears", "leaves"}, its candidate) or
    None.
    """
    row1 = cands[best].row
    left1 = {
        _key(f)
        for f in outs[best].findings
        if f.severity is Severity.error and ctx.id(row1) not in f.records
    }
    if not left1:
        return None
    # weighed against the other readings of the records the first fix leaves alone (and no
    # slip at all): given that one, how likely each of them is
    apart = np.array([not any(ch.row == row1 for ch in c.changes) for c in cands], dtype=bool)
    norm = float(post[0] + post[1:][apart].sum())
    for k in np.argsort(-post[1:], kind="stable").tolist():
        if post[1 + k] < 1e-4:
            break
        c = cands[k]
        if harmful[k] or not apart[k]:
            continue
        cleared = before - _errors_and_warnings(outs[k])
        if not cleared & left1:
            continue
        if not _fixes_its_record(ctx, c, outs[k], cleared, errors_before, unexplained):
            continue
        conf = min(_stated(float(post[1 + k]) / norm, cal), SCATTER_CAP)
        sug = _suggestion(ctx, c, outs[k], conf, cleared, before, [k], cands, held=True)
        sug["beside"] = ctx.id(row1)  # the record of the substance's first suggestion
        sug["explanation"] += (
            f" A second slip beside the fix suggested for {ctx.id(row1)}: each is weighed as"
            " if it were the only one, so neither is stated as more than possible."
        )
        fix = {
            "suggestion": sug,
            "clears": cleared,
            "leaves": _errors_and_warnings(outs[k]) & before,
        }
        return fix, c
    return None


#: The prior odds that a second record of a substance with one slip carries a slip too:
#: the fraction of the real compilations' records that the diagnosis gives a fix as
#: carried, 31 of 4,359 (Landolt odd-CAS, Poling, McGarry and Poling Wagner, Perry via
#: chemicals; an upper bound of their slip rate, as some of those fixes are wrong).
_SECOND_SLIP = math.log(31 / 4359)


def _weigh_together(ctx: AuditContext, diag: dict[str, dict], cal: dict) -> None:
    """Weigh each substance's two fixes (the chosen one and the second, of another record)
    as one hypothesis, audited with both applied: two slips, one per record, where each fix
    alone leaves the other record's errors. Its prior is the product of both fixes' priors
    and :data:`_SECOND_SLIP`; it is weighed against every single-slip hypothesis and "no
    single slip". Where it explains both records fully (no error left on either, none
    created) and is likelier than the fixes were stated alone, both suggestions take its
    stated confidence and say so (in place).
    """
    from .variants import _audit_units

    pairs = [(name, d["together"]) for name, d in diag.items() if "together" in d]
    if not pairs:
        return
    units = [(int(ctx.codes[t.first.row]), t.first.changes + t.second.changes) for _, t in pairs]
    T = cal["temperature"]
    for (name, t), out in zip(pairs, _audit_units(ctx.table, ctx, units), strict=True):
        d = diag[name]
        rows = {ctx.id(t.first.row), ctx.id(t.second.row)}
        errors = [f for f in out.findings if f.severity is Severity.error]
        if any(_key(f) not in t.errors_before or rows & set(f.records) for f in errors):
            continue  # an error created, or one left on either record: not the whole story
        w = t.first.log_prior + t.second.log_prior + _SECOND_SLIP - out.score(cal) / (2 * T)
        conf = _rounded(_stated(1.0 / (1.0 + math.exp(min(t.log_norm - w, 700.0))), cal))
        first, second = d["suggestion"], d["second"]["suggestion"]
        if conf <= max(first["confidence"], second["confidence"]):
            continue
        left = sorted(_errors_and_warnings(out) & t.before)
        for sug, cand, other in ((first, t.first, t.second), (second, t.second, t.first)):
            sug["confidence"] = conf
            sug["explanation"] = _together_text(ctx, cand, other, conf, t.before, left)
        # what only both fixes clear (the pair's disagreement at the melting point) is
        # explained too: it carries the first fix, whose explanation names the second
        jointly = t.before - _errors_and_warnings(out) - d["clears"] - d["second"]["clears"]
        for fix in (d, d["second"]):
            fix["clears"] = fix["clears"] | jointly
            fix["leaves"] = fix["leaves"] - jointly
        del d["together"]


def _held_because(ctx: AuditContext, base: _Outcome, out: _Outcome, cand: Candidate) -> list:
    """Why the fix ``cand`` (with outcome ``out``) cannot be almost certain, in words: it
    moves its curve by less than sources disagree, moves its record farther from an
    independent witness, or leaves a curve flatter than any real one. Empty when none.
    """
    held = []
    moved = _curve_shift(base, out, cand.kind)
    if moved is not None and moved < SOURCE_SCATTER:
        held.append(
            f"The fix moves the curve by at most {moved:.2g} in ln P over its range, less "
            f"than independent sources of one substance commonly disagree ({SOURCE_SCATTER:g}):"
            " it cannot be told from such a disagreement"
        )
    rid = ctx.id(cand.row)
    farther = _farther_from_witnesses(base, out, rid)
    if farther:
        said = "; ".join(
            f"{check}: {REGISTRY[check].witness} {b:.3g} -> {a:.3g}" for check, b, a in farther
        )
        held.append(
            f"With it, {rid} stands farther from an independent witness than as written "
            f"({said}): the fix contradicts that witness and is at best part of the story"
        )
    flattest = _flattest_slope(out)
    if flattest is not None and flattest < FLATTEST_REAL:
        # the record the slope checks name, else the substance (a grid point the checks'
        # extrema do not single out)
        flat = sorted(
            {
                r
                for f in out.findings
                if f.check in ("slope-not-positive", "slope-too-flat", "slope-flatter-than-real")
                for r in f.records
            }
        )
        which = " and ".join(flat) if flat else f"a curve of {ctx.substance_of(cand.row)}"
        how = (
            f"still falls with temperature (d ln P/d ln T down to {flattest:.2g})"
            if flattest <= 0
            else "is still flatter than any real vapour-pressure curve (d ln P/d ln T down "
            f"to {flattest:.2g}, below {FLATTEST_REAL:g})"
        )
        held.append(f"With it, {which} {how}: the fix does not make the records plausible")
    return held


#: How far two independent sources of one substance commonly disagree: the 90th percentile
#: of max |ln P1 - ln P2| over the common range of 1,081 pairs of liquid equations in the
#: literature compilations (benchmarks/calibrate.py --scatter). [ln P]
SOURCE_SCATTER = 0.10
#: The confidence at which a fix is held when it cannot be almost certain
#: (:func:`_held_because`): for one that moves its curve by less than that, the
#: disagreement of sources explains the evidence as well as the fix does. [-]
SCATTER_CAP = 0.5
#: The kinds of fix whose size is how far they move the curve (a phase swap moves none).
_SIZED = frozenset(
    {"digit-transposition", "decimal-shift", "sign", "coefficient-swap", "pressure-unit"}
)


#: d ln P/d ln T of the flattest real vapour-pressure curves (helium-3 near its critical
#: point, 4.4; every other clean equation of the compilations via chemicals is steeper:
#: ``slope-too-flat``). [-]
FLATTEST_REAL = 4.4


def _flattest_slope(out: _Outcome) -> float | None:
    """The least d ln P/d ln T of an outcome's curves, from its keys (ln P at five
    temperatures over each range, :func:`~vpaudit.diagnose.variants._unit_keys`), between
    neighbouring temperatures; None where no curve has two distinct temperatures.
    """
    k = _key_rows(out)
    if k is None:
        return None
    y, lo, hi = k[:, :5], k[:, 5:6], k[:, 6:7]
    with np.errstate(invalid="ignore", divide="ignore", over="ignore"):
        ln_t = np.log(lo + (hi - lo) * np.linspace(0.0, 1.0, 5)[None, :])
        slope = np.diff(y, axis=1) / np.diff(ln_t, axis=1)
    ok = np.isfinite(slope) & (np.abs(y[:, 1:]) < 1e299) & (np.abs(y[:, :-1]) < 1e299)
    return float(slope[ok].min()) if ok.any() else None


def _curve_shift(base: _Outcome, out: _Outcome, kind: str) -> float | None:
    """The largest |change of ln P| that a fix of ``kind`` makes to the substance's curves,
    from the two outcomes' keys (each record's ln P at five temperatures over its range:
    :func:`~vpaudit.diagnose.variants._unit_keys`); None for a kind of fix that is not sized
    so, or keys of different shapes.
    """
    if kind not in _SIZED:
        return None
    a, b = _key_rows(base), _key_rows(out)
    if a is None or b is None or a.shape != b.shape:
        return None
    return float(np.abs(a[:, :5] - b[:, :5]).max())


#: Log of how rare a real liquid equation is whose range never reaches 1 Pa and ends below
#: :data:`_EFFUSION_LIQUIDS` (organic liquids, and the low-melting metals, whose vapour is
#: rarely measured that low): 29 of 4,034 such equations, 0.7 % (all 29 among Landolt's
#: odd-CAS liquids, none of Poling's Antoine, McGarry's and Poling's Wagner, Perry's, or the
#: Alcock liquids of Cd and Zn; via chemicals, ``benchmarks/calibrate.py --priors``).
_LIQUID_BELOW_1_PA = math.log(29 / 4034)
#: Above this the liquids are metals and salts, whose vapour below 1 Pa is routinely
#: measured by effusion (Alcock's Pa, Th and Zr liquids, 3 of 31 ending above it): no such
#: prior there. [K]
_EFFUSION_LIQUIDS = 800.0


#: The kinds of fix that read the metadata of a record anew (its log base, units), which
#: the level of the curve they leave tells apart. A fix of a coefficient restores the curve
#: its source had, whatever its level, and takes no such prior.
_READINGS = frozenset({"log-base", "pressure-unit", "temperature-unit", "metadata-combination"})


def _rarities(cands: list[Candidate], keys: list[bytes]) -> np.ndarray:
    """The log prior of each of a substance's candidates for the kind of equation it leaves,
    from the screening's keys of the records as written (``keys[0]``) and of each candidate
    (``keys[1:]``; :func:`_key_rows`): :data:`_LIQUID_BELOW_1_PA` for a reading of the
    metadata (:data:`_READINGS`) that changes a liquid curve and leaves it below 1 Pa over its
    whole range, which ends below :data:`_EFFUSION_LIQUIDS`; else 0. The records as written
    are not judged so: only a fix is made less likely, never the records.
    """
    out = np.zeros(len(cands))
    reading = np.fromiter((c.kind in _READINGS for c in cands), dtype=bool, count=len(cands))
    # every unit of a substance has the same records, so keys of one length (else: no prior)
    if not reading.any() or len({len(k) for k in keys}) != 1 or len(keys[0]) % _KEY_WIDTH:
        return out
    k = np.frombuffer(b"".join(keys)).reshape(len(keys), -1, _KEY_WIDTH)
    base, fixed = k[0], k[1:]
    changed = np.any(fixed[:, :, :7] != base[None, :, :7], axis=2)  # ln P or the range
    liquid = (fixed[:, :, 7] > 0.5) & (fixed[:, :, 6] < _EFFUSION_LIQUIDS)
    low = np.max(fixed[:, :, :5], axis=2) < 0.0  # ln(1 Pa)
    out[reading & np.any(changed & liquid & low, axis=1)] = _LIQUID_BELOW_1_PA
    return out


def _witness_gap(f: Finding) -> float:
    """How far a finding's record stands from the independent witness its check compares
    it with (the evidence its check declares as ``witness``; the largest of a list); NaN
    for a check without one.
    """
    key = REGISTRY[f.check].witness if f.check in REGISTRY else None
    value = f.evidence.get(key) if key is not None else None
    values = value if isinstance(value, list) else [value]
    sizes = [abs(float(v)) for v in values if isinstance(v, int | float)]
    return max(sizes) if sizes else math.nan


def _farther_from_witnesses(base: _Outcome, out: _Outcome, rid: str) -> list[tuple]:
    """The findings on record ``rid`` that a fix leaves in place with the record farther
    from their independent witness than as written: (check, distance before, distance
    after), in the unit of the check's witness evidence. Notes count: a boiling point far
    beyond the range is weak evidence of a slip, but a fix that takes the curve farther
    from it still contradicts it.

    Capped evidence cannot see this: a record already beyond the cap of a witness scores
    the same however much farther the fix moves it. A finding the fix makes anew is left to
    the weighing (a new error disqualifies the fix; a new warning may be the same
    disagreement that another check measured before, such as curves that now cross beyond
    a range instead of not crossing).
    """
    before = {_key(f): _witness_gap(f) for f in base.findings}
    farther = []
    for f in out.findings:
        if rid not in f.records or _key(f) not in before:
            continue
        was, now = before[_key(f)], _witness_gap(f)
        if now > was:  # False where either is NaN (a check without a witness)
            farther.append((f.check, was, now))
    return farther


def _stated(p: float, cal: dict) -> float:
    """The confidence stated for a posterior ``p``: logit(c) = a logit(p) + b, with a and b
    fitted on held-out labelled cases (Platt scaling) so that c means what it says.
    """
    p = min(max(float(p), 1e-12), 1 - 1e-12)
    z = cal["logit_scale"] * math.log(p / (1 - p)) + cal["logit_shift"]
    return 1.0 / (1.0 + math.exp(-z))


#: Substances diagnosed in one audit by default (the cost per substance is in
#: docs/performance.md), so a table whose every substance is broken still finishes in
#: seconds; the rest are counted in the summary.
DIAGNOSE_LIMIT = 1000


@_quiet
def attach_suggestions(
    ctx: AuditContext, findings: Findings, limit: int = DIAGNOSE_LIMIT
) -> tuple[int, list[dict]]:
    """Attach the diagnosis to ``findings`` (in place); return the number of substances
    left undiagnosed, and for each substance given no fix although several readings each
    clear its every error, those readings (:func:`.undecided.undecided`, with its
    ``substance``), in the order of the substances' names.

    Each error or warning that the best fix of its substance clears, or that names the
    corrected record, carries it as ``suggestion``, save one that the fix leaves as it is (a
    problem it does not explain; its explanation names it). A finding on several records
    that the fix singles one of out points at that one (its file and line), not at the first
    named: a pair's error lands on the suspect, not on its clean partner.
    """
    suspects, skipped = _suspects(findings, limit)
    diag = diagnose(ctx, findings, limit=limit, suspects=suspects)
    if not diag:
        return skipped, []
    open_ = [
        {"substance": name, **diag[name]["undecided"]}
        for name in sorted(diag)
        if diag[name].get("undecided") is not None
    ]
    columns = zip(
        findings.check, findings.substance, findings.severity, findings.records, strict=True
    )
    for k, (check, sub, sev, recs) in enumerate(columns):
        d = diag.get(sub)
        if not d or d["suggestion"] is None or sev.rank < 1:
            continue
        key = key_of(check, recs)
        for fix in (d, d.get("second")):
            sug = fix["suggestion"] if fix else None
            if sug is not None and (
                key in fix["clears"] or (sug["record"] in recs and key not in fix["leaves"])
            ):
                findings.set(k, suggestion=sug)
                if sug["record"] in recs:
                    findings.set(k, **sug["location"])
                break
    return skipped, open_
