"""Provenance hygiene: every value cites its source, and no record is entered twice."""

from __future__ import annotations

import numpy as np
import pandas as pd

from .._columns import codes
from ..equations.forms import COEFFICIENTS
from ._context import AuditContext
from ._registry import Scope, Severity, check
from .hits import Hit

__all__: list[str] = []


def _problem_hits(ctx: AuditContext, rules: list[str]):
    """The reader's problems of ``rules``, each at its own file and line."""
    problems = ctx.table.problems
    if not len(problems):
        return
    for _, pr in problems.loc[problems["rule"].isin(rules)].iterrows():
        rid = pr["id"]
        yield Hit(
            None,
            f"{pr['message']}.",
            {"field": pr["column"]},
            records=(str(rid),) if isinstance(rid, str) else (),
            substance=str(pr["substance"]),
            file=str(pr["file"]),
            line=int(pr["line"]),
        )


@check(
    "missing-source",
    Severity.error,
    Scope.record,
    "A record, reference value or measured point cites no source.",
    "Every number in a property table must be traceable to its origin.",
)
def missing_source(ctx: AuditContext, th: dict[str, float]):
    """An empty ``source`` field in any of the three kinds of rows."""
    yield from _problem_hits(ctx, ["source"])


def _equation_columns(ctx: AuditContext, rows=slice(None)):
    """What makes two records the same equation: substance, phase, form, units and the
    coefficients (integer codes and floats), one column at a time, for ``rows``.
    """
    rec = ctx.table.records
    yield "substance", ctx.codes[rows]
    for c in ("phase", "form", "log_base", "pressure_unit", "temperature_unit"):
        col = rec[c]
        if isinstance(col.dtype, pd.CategoricalDtype):  # the codes it has (-1 for empty)
            yield c, col.cat.codes.to_numpy()[rows]
        else:
            yield c, codes(col)[0][rows]
    for c in COEFFICIENTS:
        yield c, np.nan_to_num(rec[c].to_numpy(dtype=float, na_value=np.nan)[rows], nan=-1e308)


def equation_hashes(ctx: AuditContext) -> np.ndarray:
    """One 64-bit hash per record of :func:`_equation_columns`: equal equations hash alike,
    so the exact comparison runs on the few rows whose hashes repeat.
    """
    h = np.zeros(ctx.n, dtype=np.uint64)
    with np.errstate(over="ignore"):
        for _, v in _equation_columns(ctx):
            bits = v.view(np.uint64) if v.dtype == np.float64 else v.astype(np.uint64)
            np.bitwise_xor(h, bits, out=h)  # in place: no fresh 16 MB per column
            np.multiply(h, np.uint64(0x100000001B3), out=h)
    return h


@check(
    "duplicate-record",
    Severity.error,
    Scope.record,
    "Two records share an id, or the same equation is entered twice under two ids.",
    "Ids must be unique and stable; a duplicated entry counts one source twice.",
    tiers={"same-equation-two-ids": Severity.warning},
)
def duplicate_record(ctx: AuditContext, th: dict[str, float]):
    """A repeated id is an error (the id is the record's identity in the store, in findings
    and in the gate). The same substance, phase, form, units and coefficients under two ids
    is reported as a warning: it counts one source twice in the consensus.
    """
    yield from _problem_hits(ctx, ["duplicate-id"])
    rec = ctx.table.records
    if not len(rec):
        return
    h = ctx.equation_hashes
    # records whose id is repeated are reported above (the reader found them)
    dup_id = np.zeros(ctx.n, dtype=bool)
    problems = ctx.table.problems
    if len(problems):
        rep = problems.loc[problems["rule"] == "duplicate-id"]
        rows = ctx.rows_of(rep["file"], rep["line"])
        dup_id[rows[rows >= 0]] = True
    hs = np.sort(h)  # a plain sort finds the repeated hashes (usually none) fastest
    twice = np.unique(hs[1:][hs[1:] == hs[:-1]])
    if not twice.size:
        return
    cand = np.flatnonzero(np.isin(h, twice) & ~dup_id)
    if not cand.size:
        return
    cols = dict(_equation_columns(ctx, cand))  # the exact comparison, on the candidates
    keys = pd.DataFrame(cols, index=cand)
    dup = np.zeros(ctx.n, dtype=bool)
    dup[cand[keys.duplicated(keep=False).to_numpy()]] = True
    if not dup.any():
        return
    keys = keys.loc[dup[cand]]
    for _, members in keys.groupby(list(cols), sort=False):
        group = members.index.to_numpy()
        ids = tuple(ctx.id(r) for r in group)
        yield Hit(
            int(group[0]),
            f"records {', '.join(ids)} hold the same equation: one source counted "
            f"{len(ids)} times.",
            {"records": len(ids)},
            records=ids,
            tier="same-equation-two-ids",
        )


#: Reference quantities of which every value is weighed: a substance may have several.
_EVERY_VALUE_WEIGHED = frozenset(
    {
        "normal_boiling_point",
        "critical_temperature",
        "critical_pressure",
        "enthalpy_of_fusion",
        "melting_point",
        "triple_point_temperature",
        "triple_point_pressure",
        # compared row by row, each at its own temperature (enthalpy-mismatch)
        "enthalpy_of_vaporization",
        "enthalpy_of_sublimation",
        "standard_enthalpy_of_vaporization",
        "standard_entropy_of_vaporization",
        "standard_enthalpy_of_sublimation",
        "standard_entropy_of_sublimation",
    }
)


@check(
    "reference-not-used",
    Severity.note,
    Scope.sources,
    "A substance has several differing values of a reference quantity of which only the "
    "first is read (the molar mass).",
    "An audit must not let the order of rows decide silently which of two sources' values "
    "a record is held to.",
)
def reference_not_used(ctx: AuditContext, th: dict[str, float]):
    """A table may keep several sources' values of a reference quantity, and the checks
    weigh every one, so that the order of the rows never decides which value a record is
    held to: each liquid is held to the normal boiling point it meets best, a range to the
    critical temperature that allows it most and to the critical pressure nearest its end
    (``critical-pressure-mismatch`` tries every pairing of the two), each solid/liquid pair
    to the melting point (or triple-point temperature) nearest its crossing, to the
    triple-point pressure nearest its pressure there and to the enthalpy of fusion it meets
    best, and each curve to the standard enthalpy and entropy at 298.15 K it meets best;
    the rules of thumb (the near-ideal limit 0.7 Tc, a virial correction) take the medians,
    and every enthalpy of vaporization or sublimation is compared at its own temperature.
    ``reference-contradicted`` names a value that the records contradict while they meet
    another. What remains is a quantity of which only the first value is read, by the other
    commands (the molar mass, for the evaporation flux of ``vpaudit eval``): when a later
    value differs from the first, this note names both, at the later value's own file and
    line, so that a steward can keep the right one first or remove the other.
    """
    refs = ctx.table.references
    if not len(refs):
        return
    value = refs["value_si"].to_numpy(dtype=float)
    q_code, q_names = codes(refs["quantity"])
    for k, quantity in enumerate(q_names):
        if str(quantity) in _EVERY_VALUE_WEIGHED:
            continue
        rows = np.flatnonzero((q_code == k) & (ctx.ref_codes >= 0) & np.isfinite(value))
        if rows.size < 2:
            continue
        order = rows[np.argsort(ctx.ref_codes[rows], kind="stable")]
        sub = ctx.ref_codes[order]
        first = np.r_[True, sub[1:] != sub[:-1]]
        lead = order[np.maximum.accumulate(np.where(first, np.arange(order.size), 0))]
        differ = ~first & (value[order] != value[lead])
        for r, r0 in zip(order[differ].tolist(), lead[differ].tolist(), strict=True):
            source, file, line = ctx.reference_row_at(r)
            used = ctx.reference_row_at(r0)
            what = str(quantity).replace("_", " ")
            yield Hit(
                None,
                f"the {what} of {refs['substance'].iat[r]} is given twice: "
                f"{refs['value'].iat[r0]:g} {refs['unit'].iat[r0]} ({used[0]}, line "
                f"{used[2]}), which is read, and {refs['value'].iat[r]:g} "
                f"{refs['unit'].iat[r]} ({source}) here, which is not. Keep the "
                "value you trust first, or remove the other.",
                {"quantity": str(quantity), "used_line": used[2]},
                substance=str(refs["substance"].iat[r]),
                file=file,
                line=line,
            )
