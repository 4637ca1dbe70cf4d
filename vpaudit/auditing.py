"""Run the audit: every registered check over the whole table, one result object.

A check that raises becomes an ``internal-error`` finding naming the check, and the run goes
on: one broken check never hides the others' results.
"""

from __future__ import annotations

import traceback
from dataclasses import dataclass, field
from pathlib import Path
from typing import Any

import numpy as np

from . import checks as _checks  # noqa: F401  (registers every check)
from ._caution import CAUTION  # the caution every report carries (re-exported)
from .checks._context import AuditContext
from .checks._registry import REGISTRY, Severity, get_check, ordered
from .checks.finding import Finding, Findings
from .checks.hits import Hits
from .checks.witness import DISAGREEMENTS, NEAR_RANGE, Witnesses, vouched
from .policy import Policy, load_policy
from .readers.table import Table
from .runtime import DEFAULT, PARALLEL_ROWS, Runtime

__all__ = ["AuditResult", "audit", "audit_table", "run_checks", "CAUTION"]


@dataclass
class AuditResult:
    """Everything one audit found, for every reporter; with ``gate`` set, a gate's result,
    whose findings carry a status (new, existing or accepted) against the base revision.
    """

    findings: Findings
    summary: dict[str, int]
    policy_description: dict[str, Any]
    table_path: str = ""
    checks_run: list[str] = field(default_factory=list)
    gate: GateInfo | None = None

    def __post_init__(self) -> None:
        if not isinstance(self.findings, Findings):  # a list of findings made by hand
            self.findings = Findings.of(self.findings)

    @property
    def gated(self) -> bool:
        """Whether this is a gate's result (its findings have a status)."""
        return self.gate is not None

    @staticmethod
    def status_of(f: Finding) -> str:
        """new, existing or accepted (a finding the gate has not judged counts as new)."""
        return f.status or "new"

    def statuses(self) -> list[str]:
        """The status of every finding, in the table's order, as :meth:`status_of` reads
        it (from the status column: no row view).
        """
        return [status or "new" for status in self.findings.status]

    def worst(self) -> Severity | None:
        """The most serious severity found, or None when nothing was found."""
        if not self.findings:
            return None
        return max(set(self.findings.severity), key=lambda s: s.rank)

    def fails(self, fail_on: str) -> bool:
        """Whether anything (in a gate, anything *new*) is at or above ``fail_on`` (error,
        warning or never).
        """
        if fail_on == "never":
            return False
        level = Severity(fail_on).rank
        return any(
            sev.rank >= level and (not self.gated or status == "new")
            for sev, status in zip(self.findings.severity, self.statuses(), strict=True)
        )

    def to_dict(self) -> dict[str, Any]:
        """The JSON output contract."""
        out = {
            "summary": self.summary_dict(),
            "findings": self.findings.dicts(status=self.gated),
        }
        if self.gate is not None:
            out["resolved"] = self.resolved_dicts()
        return out

    def resolved_dicts(self) -> list[dict[str, Any]]:
        """A gate's findings at the base that the change cleared, for the JSON output
        (``resolved``: check, severity, substance, records, message); none for an audit.
        """
        return [
            {
                "check": f.check,
                "severity": f.severity.value,
                "substance": f.substance,
                "records": list(f.records),
                "message": f.message,
            }
            for f in (self.gate.resolved if self.gate is not None else ())
        ]

    def summary_dict(self) -> dict[str, Any]:
        """The ``summary`` of :meth:`to_dict`; a gate's adds the count of new findings, the
        base and the number of substances re-audited.
        """
        if self.gate is None:
            return dict(self.summary)
        return {
            **self.summary,
            "new": self.statuses().count("new"),
            "resolved": len(self.gate.resolved),
            "base": self.gate.base,
            "substances_reaudited": self.gate.affected,
        }


@dataclass(frozen=True)
class GateInfo:
    """What a gate's result adds: the base revision, the substances re-audited, and the
    findings the base had on them that the change cleared.
    """

    base: str
    affected: int
    resolved: tuple[Finding, ...] = ()


def point_at_suspects(
    ctx: AuditContext, findings: Findings, witnesses: Witnesses | None = None
) -> None:
    """Locate each finding on several records, and without a suggestion, at its likely
    culprit: the one record that the substance's other findings single out (a finding on it
    alone), when exactly one is, so that a pair's mismatch lands on the suspect liquid, not
    on its clean solid partner; failing that, for two curves that disagree, the one that no
    witness pins more finely than the disagreement when the other is so pinned
    (:func:`checks.witness.vouched`), which the finding then says. Changes ``findings``
    in place.
    """
    n = len(findings)
    if not n:
        return
    recs, checks = findings.records, findings.check
    n_rec = np.fromiter(map(len, recs), dtype=np.int64, count=n)
    table_rows = _table_rows(ctx, findings, n_rec)
    known = np.fromiter(map(len, table_rows), dtype=np.int64, count=n) == n_rec
    first = np.array([r[0] if r else -1 for r in table_rows], dtype=np.int64)
    alone = np.zeros(ctx.n, dtype=bool)  # the records that a finding names alone
    alone[first[known & (n_rec == 1)]] = True
    unsure = known & (n_rec >= 2)  # on several records, without a suggestion
    unsure &= np.fromiter((not s for s in findings.suggestion), dtype=bool, count=n)
    # pairs (nearly all of them): whether each record is named alone, as arrays
    two = np.flatnonzero(unsure & (n_rec == 2))
    second = np.array([table_rows[k][1] for k in two.tolist()], dtype=np.int64)
    named_first, named_second = alone[first[two]], alone[second]
    move_k = two[named_second & ~named_first].tolist()
    move_to = second[named_second & ~named_first].tolist()
    neither = two[~named_first & ~named_second].tolist()
    for k in np.flatnonzero(unsure & (n_rec > 2)).tolist():  # three records or more
        named = [r for r in table_rows[k] if alone[r]]
        if len(named) == 1 and named[0] != table_rows[k][0]:
            move_k.append(k)
            move_to.append(named[0])
    pending: dict[int, tuple[float, float]] = {}
    if witnesses is not None:
        asked = [k for k in neither if checks[k] in DISAGREEMENTS]
        evidence = findings.evidence.dicts(np.array(asked, dtype=np.int64))
        for k, ev in zip(asked, evidence, strict=True):
            size_key, at_key = DISAGREEMENTS[checks[k]]
            size, at = ev.get(size_key), ev.get(at_key)
            if size is not None and at is not None:
                pending[k] = (abs(float(size)), float(at))
    if move_k:  # the locations of the moved findings
        file, line = ctx.located(np.array(move_to, dtype=np.int64))
        findings.file.put(move_k, file)
        findings.line.put(move_k, line)
    c = ctx.curves
    lo, hi = 1.0 - NEAR_RANGE, 1.0 + NEAR_RANGE
    for k, (size, at) in pending.items():
        a, b = findings.records[k]
        rows = dict(zip((a, b), table_rows[k], strict=True))
        # a witness vouches for its curve where the two disagree only within (or near)
        # the curve's own range, and only as finely as its tolerance
        pins = [
            witnesses.resolution[rows[r]] < size
            and c.t_min[rows[r]] * lo <= at <= c.t_max[rows[r]] * hi
            for r in (a, b)
        ]
        if pins[0] == pins[1]:
            continue
        culprit, partner = (b, a) if pins[0] else (a, b)
        p = rows[partner]
        findings.set(
            k,
            message=f"{findings.message[k]} {partner} meets {witnesses.words(p)} (within "
            f"{witnesses.resolution[p]:.2g} in ln P, less than the two curves differ "
            f"here); {culprit} has no such witness and is the likelier culprit.",
            evidence={**findings.evidence[k], "likely_culprit": culprit},
        )
        if culprit != a:
            findings.set(k, **ctx.location(rows[culprit]))


def _table_rows(ctx: AuditContext, findings: Findings, n_rec: np.ndarray) -> list[tuple[int, ...]]:
    """The table rows of each finding's records (``n_rec`` of them): as the check gave
    them, else (for a finding made by hand) looked up by id; empty when a record id is in
    no record.
    """
    out = findings.rows.tolist()
    n_rows = np.fromiter(map(len, out), dtype=np.int64, count=len(out))
    missing = np.flatnonzero(n_rows != n_rec).tolist()
    if not missing:
        return out
    by_id = ctx.rows_by_id({r for k in missing for r in findings.records[k]})
    for k in missing:
        rec = findings.records[k]
        out[k] = tuple(by_id[r] for r in rec) if all(r in by_id for r in rec) else ()
    return out


def coverage(ctx: AuditContext) -> dict[str, int]:
    """What the audit could not test for want of data, by the substances it concerns.

    Each key names the missing data (:data:`vpaudit.report._coverage.NOT_TESTED` says
    which tests it stops); each value counts the substances (with records) concerned.
    Checks are silent where their data are missing, so a single file audited alone, or a
    table without references, looks cleaner than it is: every report says so.
    """
    codes = ctx.codes
    has = codes >= 0
    n = ctx.n_names
    solid = np.bincount(codes[has & ctx.solid], minlength=n) > 0
    liquid = np.bincount(codes[has & ctx.liquid], minlength=n) > 0
    present = solid | liquid
    both = solid & liquid

    def referenced(*quantities: str) -> np.ndarray:
        out = np.zeros(n, dtype=bool)
        for q in quantities:
            arr = ctx._refs_by_code.get(q)
            if arr is not None:
                out |= ~np.isnan(arr)
        return out

    points = np.zeros(n, dtype=bool)
    if len(ctx.table.points):
        pc = ctx.point_codes
        points[pc[pc >= 0]] = True
    per_phase = np.bincount(codes[has], minlength=n)
    # the 298.15 K anchor judges a curve whose range starts within its reach of 298.15 K
    reach = ctx.policy.thresholds("anchor-enthalpy")["max_ratio"]
    near = (
        has
        & ctx.evaluable
        & (ctx.curves.t_min <= reach * 298.15)
        & (ctx.curves.t_max >= 298.15 / reach)
    )
    liquid_near = np.bincount(codes[near & ctx.liquid], minlength=n) > 0
    solid_near = np.bincount(codes[near & ctx.solid], minlength=n) > 0
    vaporization = referenced(
        "standard_enthalpy_of_vaporization", "standard_entropy_of_vaporization"
    )
    sublimation = referenced("standard_enthalpy_of_sublimation", "standard_entropy_of_sublimation")
    out = {
        "no_partner_phase": present & ~both,
        "no_melting_reference": both & ~referenced("melting_point", "triple_point_temperature"),
        "no_boiling_reference": liquid & ~referenced("normal_boiling_point"),
        "no_enthalpy_reference": present
        & ~referenced("enthalpy_of_vaporization", "enthalpy_of_sublimation", "enthalpy_of_fusion"),
        "no_standard_reference": (liquid_near & ~vaporization) | (solid_near & ~sublimation),
        "single_source": present & (per_phase <= np.where(both, 2, 1)),
        "no_points": present & ~points,
    }
    out = {k: int(np.count_nonzero(v)) for k, v in out.items()}
    return {k: v for k, v in out.items() if v}


def audit_table(
    table: Table,
    policy: Policy | None = None,
    only: list[str] | None = None,
    substances: list[str] | None = None,
    table_path: str = "",
    progress=None,
    diagnose: int | bool = True,
    runtime: Runtime = DEFAULT,
) -> AuditResult:
    """Audit a table that has been read.

    Parameters
    ----------
    table : Table
        From :func:`vpaudit.readers.load_table` or the store.
    policy : Policy, optional
        Thresholds and severities; the table's own ``vpaudit.toml`` or the defaults.
    only : list of str, optional
        Run only these checks.
    substances : list of str, optional
        Audit only these substances.
    progress : callable, optional
        ``progress(done, total, check)`` before each check (for progress bars).
    diagnose : bool or int
        Look for the likely slip behind each error and warning and attach it as the
        finding's ``suggestion`` (:mod:`vpaudit.diagnose`); an integer is the most
        substances diagnosed (default :data:`vpaudit.diagnose.DIAGNOSE_LIMIT`), 0 or False
        none.
    runtime : Runtime
        Threads for the shared array work (:mod:`vpaudit.runtime`).

    Returns
    -------
    AuditResult
    """
    policy = policy or load_policy(table.policy_path)
    names = [c.name for c in ordered()] if not only else [get_check(n).name for n in only]
    if substances:
        from .substance import check_substances

        check_substances(table, substances)  # an unknown name is an error, not "nothing found"
        table = restrict(table, set(substances))
    ctx = AuditContext(table, policy, runtime)
    findings = run_checks(ctx, names, progress)
    witnesses = vouched(ctx) if not DISAGREEMENTS.keys().isdisjoint(findings.check) else None
    not_checked = coverage(ctx) if len(table.records) else {}
    n_pairs = len(ctx.pairs.solid) if any(REGISTRY[n].scope.value == "pair" for n in names) else 0
    ctx.drop_shared()  # not needed any more: the diagnosis and the output use their memory
    skipped, shared, open_ = 0, [], []
    if diagnose:
        if ctx.n >= PARALLEL_ROWS:  # the diagnosis' Arrow columns cannot reuse numpy's
            from .runtime import release_scratch

            release_scratch()
        from .diagnose import DIAGNOSE_LIMIT, attach_suggestions
        from .diagnose.shared import shared_slips

        limit = DIAGNOSE_LIMIT if diagnose is True else int(diagnose)
        skipped, open_ = attach_suggestions(ctx, findings, limit)
        shared = shared_slips(ctx, findings)
    point_at_suspects(ctx, findings, witnesses)
    findings.sort()
    summary = {
        "records": int(len(table.records)),
        "substances": int(np.count_nonzero(np.bincount(ctx.codes[ctx.codes >= 0])))
        if len(table.records)
        else 0,
        "pairs": int(n_pairs),
        "error": findings.count(Severity.error),
        "warning": findings.count(Severity.warning),
        "note": findings.count(Severity.note),
        "not_checked": not_checked,
    }
    if skipped:
        summary["not_diagnosed"] = skipped
    if shared:
        summary["shared_slips"] = shared
    if open_:
        summary["undecided"] = open_
    return AuditResult(findings, summary, policy.describe(), table_path, names)


def run_checks(ctx: AuditContext, names: list[str], progress=None) -> Findings:
    """Run the checks ``names`` over one prepared context; a check that raises becomes an
    ``internal-error`` finding and the others still run. The findings come in the order of
    ``names``, as one table.

    On a large table the solid/liquid pairs are computed on a second thread while this one
    runs the checks that do not need them (:func:`_pairs_beside`).
    """
    policy = ctx.policy
    active = [n for n in names if policy.severity(n) is not None]
    waiting = _pairs_beside(ctx, active)
    order = names
    if waiting is not None:  # the checks without pairs first, while the pairs are made
        order = [n for n in names if not REGISTRY[n].needs_pairs]
        order += [n for n in names if REGISTRY[n].needs_pairs]
    found: dict[str, Findings] = {}
    try:
        for done, name in enumerate(order):
            if progress is not None:
                progress(done, len(names), name)
            if policy.severity(name) is None:
                continue
            if waiting is not None and REGISTRY[name].needs_pairs:
                ctx.lend_a_hand()  # the rest of the crossing search, on both threads
                waiting()
                waiting = None
            found[name] = _run_one(ctx, name)
    finally:
        if waiting is not None:
            waiting()
    out = Findings()
    for name in active:
        out.extend(found[name])
    return out


def _run_one(ctx: AuditContext, name: str) -> Findings:
    """The findings of one check, or its ``internal-error`` finding.

    The check yields its hits (:mod:`vpaudit.checks.hits`): blocks (:class:`Hits`) or one
    at a time (:class:`Hit`). Each becomes findings of this check, at the severity of its
    declared tier under the policy, in the order yielded.
    """
    spec = REGISTRY[name]
    policy = ctx.policy.severity(name)
    severities: dict[str | None, Severity] = {}

    def severity(tier: str | None) -> Severity:
        sev = severities.get(tier)
        if sev is None:
            sev = severities[tier] = spec.severity_under(policy, tier)
        return sev

    out = Findings()
    singles: list[Finding] = []  # joined to the table together, in the order yielded
    try:
        # overflow and NaN are handled explicitly by the checks (a non-finite value is a
        # finding, never a crash), so numpy's floating-point warnings are silenced here
        with np.errstate(all="ignore"):
            for hit in spec.func(ctx, ctx.thresholds(name)):
                if isinstance(hit, Hits):
                    out.extend(Findings.of(singles))
                    singles = []
                    out.extend(ctx.findings(name, severity(hit.tier), hit))
                else:
                    singles.append(ctx.finding(name, severity(hit.tier), hit))
        out.extend(Findings.of(singles))
        return out
    except Exception as exc:  # one broken check never hides the others
        return Findings.of(
            [
                Finding(
                    check="internal-error",
                    severity=Severity.error,
                    substance="",
                    records=(),
                    message=f"check {name!r} failed: {type(exc).__name__}: {exc}",
                    evidence={"check": name, "traceback": traceback.format_exc(limit=3)},
                )
            ]
        )


def _pairs_beside(ctx: AuditContext, names: list[str]):
    """Start computing the solid/liquid pairs, their crossings and both curves at the
    melting point on a second thread, and return a function that waits for them (None
    when nothing was started: a small table, one core, ``--jobs 1``, or no pair check or
    no other check to run meanwhile).

    That work is numpy over large arrays, which releases the GIL, so a second core that
    is free does it while this thread computes the range extrema and the equation hashes
    and runs every check that needs no pair, then takes what is left of the crossing
    search (:meth:`AuditContext.lend_a_hand`); docs/performance.md gives what it saves.
    The pairs need the substance codes, which may still
    be being hashed on a third thread (:class:`AuditContext`): this thread does not wait
    for them, as the range extrema need none. An error there is left for the first pair
    check to meet and report as its ``internal-error``.
    """
    if not ctx.runtime.split(ctx.n):
        return None  # small tables, one core, or --jobs 1
    needs = [REGISTRY[n].needs_pairs for n in names]
    if not any(needs) or all(needs):
        return None
    import threading

    def compute() -> None:  # the pairs bring both curves at the melting point with them
        try:
            # first the substance codes (still being hashed when the table is large) and the
            # references per substance, which serve both threads
            ctx._refs_by_code  # noqa: B018
            with np.errstate(all="ignore"):
                ctx.pairs  # noqa: B018
        except Exception:  # noqa: BLE001  (reported by the check that needs it)
            return

    thread = threading.Thread(target=compute, name="vpaudit-pairs", daemon=True)
    thread.start()
    return thread.join


def audit_new_records(table: Table, records: list[dict], substance: str) -> list[Finding]:
    """The findings on new records (a fit's result, before anything is written), audited
    with the table's records of the other phase of their substance (the partner the triple
    point and Hess's law need), its references and points, under the table's policy.

    Parameters
    ----------
    table : Table
        The table the records are meant for.
    records : list of dict
        The new records, as the fit makes them (one substance).
    substance : str
        Their substance.

    Returns
    -------
    list of Finding
        Only the findings that name one of the new records.
    """
    from .readers.table import records_table
    from .substance import records_at

    rec = table.records
    phases = {r.get("phase") for r in records}
    ids = {r.get("id") for r in records}
    partner = (
        (rec["substance"].astype(object) == substance)
        & ~rec["phase"].astype(object).isin(phases)
        & ~rec["id"].astype(object).isin(ids)
    ).to_numpy()
    rows = [int(i) for i in partner.nonzero()[0]]
    others = [
        {k: v for k, v in r.items() if k not in ("file", "line")} for r in records_at(table, rows)
    ]
    new = records_table(records + others, like=table)
    result = audit_table(new, load_policy(table.policy_path), substances=[substance])
    return [f for f in result.findings if ids & set(f.records)]


def restrict(table: Table, names: set[str]) -> Table:
    """The part of ``table`` about the substances ``names``."""

    def keep(frame):
        if not len(frame):
            return frame
        return frame[frame["substance"].astype(str).isin(names)].reset_index(drop=True)

    return Table(
        keep(table.records),
        keep(table.references),
        keep(table.points),
        keep(table.problems),
        table.rewrites,
        table.policy_path,
        table.root,
        table.files,
    )


def audit(path: str | Path, policy: str | None = None, **kw) -> AuditResult:
    """Read the table at ``path`` (directory, file or ``.duckdb`` store) and audit it."""
    from .api import open_table

    table = open_table(path)
    return audit_table(table, load_policy(table.policy_path, policy), table_path=str(path), **kw)
