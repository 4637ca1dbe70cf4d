"""All candidates audited at once: the synthetic table of variants, its screening
(:func:`_misfit`, :func:`_hard_failures`) and the full checks on the best of them.
"""

from __future__ import annotations

from collections import defaultdict
from dataclasses import dataclass

import numpy as np
import pandas as pd
import pyarrow as pa
import pyarrow.compute as pc

from .._columns import TEXT, text_series
from ..checks._context import AuditContext, match, same_key_pairs
from ..checks._registry import REGISTRY, Severity
from ..checks.boiling import boiling_residuals
from ..checks.finding import Finding
from ..checks.implied import standard_entropy, without_effect
from ..checks.record import flatter_than_real, pressure_tiers, too_flat
from ..checks.triple import fusion_reference, fusion_tolerance, melting_tolerance
from ..constants import R
from ..equations.engine import evaluate
from ..readers.files import RawFrame
from ..readers.rules import Collector, record_rules
from ..readers.table import Table, text_categorical
from .candidates import Change

# --- variants: all candidates audited at once ------------------------------------------------

#: Checks that say nothing about the numbers of a record (they are the same in every variant).
_NOT_EVIDENCE = frozenset(
    {"missing-source", "duplicate-record", "internal-error", "reference-contradicted"}
)
#: Candidates per substance that go on from the screening to the full checks.
_VERIFIED = 10
#: Variant rows audited at once (bounds the memory of the synthetic tables).
_CHUNK_ROWS = 200_000


def _quiet(func):
    """Run ``func`` with numpy's floating-point warnings off: candidate corrections are
    wrong on purpose, and their overflows become evidence, never warnings.
    """
    import functools

    @functools.wraps(func)
    def wrapper(*args, **kwargs):
        with np.errstate(all="ignore"):
            return func(*args, **kwargs)

    return wrapper


def _key(f: Finding) -> tuple[str, tuple[str, ...]]:
    """A finding's identity across variants (whose substances are renamed): check and ids."""
    return key_of(f.check, f.records)


def key_of(check: str, records: tuple[str, ...]) -> tuple[str, tuple[str, ...]]:
    """:func:`_key` of a finding of ``check`` on ``records`` (read from a table's columns)."""
    return (check, tuple(sorted(records)))


def _errors_and_warnings(out: _Outcome) -> set:
    """The identities of an outcome's errors and warnings."""
    return {_key(f) for f in out.findings if f.severity.rank >= 1}


def _key_rows(out: _Outcome) -> np.ndarray | None:
    """An outcome's key as one row per record (:func:`~vpaudit.diagnose.variants._unit_keys`:
    ln P at five temperatures, the range ends, whether liquid); None if malformed.
    """
    k = np.frombuffer(out.key)
    return None if k.size % _KEY_WIDTH else k.reshape(-1, _KEY_WIDTH)


def _rho(z: np.ndarray) -> np.ndarray:
    """The robust (soft-L1) cost of a standardized residual."""
    return 2.0 * (np.sqrt(1.0 + z * z) - 1.0)


def _groups(codes: np.ndarray, wanted=None) -> dict[int, np.ndarray]:
    """The rows of each code in ``wanted`` (all non-negative codes by default)."""
    if wanted is None:
        order = np.argsort(codes, kind="stable")
        sc = codes[order]
        wanted = np.unique(sc[sc >= 0])
    else:  # a few codes of a large table: sort only their rows
        wanted = np.asarray(sorted(set(int(w) for w in wanted)), dtype=np.int64)
        rows = np.flatnonzero(np.isin(codes, wanted))
        order = rows[np.argsort(codes[rows], kind="stable")]
        sc = codes[order]
    lo = np.searchsorted(sc, wanted, side="left")
    hi = np.searchsorted(sc, wanted, side="right")
    return {int(c): order[a:b] for c, a, b in zip(wanted, lo, hi, strict=True) if b > a}


_TEXT_FIELDS = ("phase", "log_base", "pressure_unit", "temperature_unit")


def _arrow_text(column: pd.Series) -> pa.ChunkedArray | pa.Array:
    """A text column (Arrow-backed, a categorical of the original file, or objects as a
    store gives them) as Arrow strings, without a Python object per cell where it is
    Arrow-backed or a categorical.
    """
    if isinstance(column.dtype, pd.CategoricalDtype):
        return pa.array(column).dictionary_decode().cast(pa.string())
    if column.dtype != TEXT:  # a table from a store: object columns
        column = column.astype(TEXT)
    return column.array.__arrow_array__()


def _with_cells(column: pd.Series, at: np.ndarray, values: list) -> pd.Series:
    """``column`` as Arrow text with the cells ``at`` (distinct rows) set to ``values``
    (text or None).
    """
    mask = np.zeros(len(column), dtype=bool)
    mask[at] = True
    order = np.argsort(at, kind="stable")  # the replacements in the order of the rows
    new = pa.array([values[i] for i in order.tolist()], type=pa.string())
    return text_series(pc.replace_with_mask(_arrow_text(column), pa.array(mask), new))


def _replicate(frame: pd.DataFrame, codes: np.ndarray, unit_codes: np.ndarray, names: pa.Array):
    """The rows of each unit's substance, unit after unit (each substance's rows in table
    order), with the unit's index as its substance (``names``: each index as text); and
    each of those substances' rows with its place among them.

    Returns (frame, rows per unit, the rows of the units' substances, their places).
    """
    wanted = np.unique(unit_codes)
    rows = np.flatnonzero(np.isin(codes, wanted))
    order = rows[np.argsort(codes[rows], kind="stable")]
    sc = codes[order]
    lo = np.searchsorted(sc, unit_codes, side="left")
    sizes = np.searchsorted(sc, unit_codes, side="right") - lo
    starts = np.cumsum(sizes) - sizes
    idx = order[np.repeat(lo - starts, sizes) + np.arange(int(sizes.sum()))]
    out = frame.iloc[idx].reset_index(drop=True)
    out["substance"] = text_series(names.take(np.repeat(np.arange(unit_codes.size), sizes)))
    return out, sizes, order, np.arange(order.size) - np.searchsorted(sc, sc, side="left")


def _variant_table(
    table: Table, ctx: AuditContext, units: list[tuple[int, tuple[Change, ...]]]
) -> Table:
    """One table holding every unit (a substance code and the changes applied to it) as its
    own substance, named by the unit's index.
    """
    unit_codes = np.fromiter((code for code, _ in units), dtype=np.int64, count=len(units))
    names = pa.array(np.arange(len(units)).astype(str))
    recs, sizes, rows, places = _replicate(table.records, ctx.codes, unit_codes, names)
    # where each change lands: its unit's first row, plus the changed row's place among the
    # rows of its substance
    place = dict(zip(rows.tolist(), places.tolist(), strict=True))
    starts = np.concatenate(([0], np.cumsum(sizes))).tolist()
    edits: dict[str, list[tuple[int, object, str | None]]] = defaultdict(list)
    for u, (_, changes) in enumerate(units):
        for ch in changes:
            edits[ch.field].append((starts[u] + place[ch.row], ch.value, ch.text))
    for field, items in edits.items():
        at = np.array([i for i, _, _ in items], dtype=np.int64)
        if field in _TEXT_FIELDS:
            recs[field] = _with_cells(recs[field], at, [v for _, v, _ in items])
        else:
            col = recs[field].to_numpy(dtype=float, copy=True)
            col[at] = [float(v) for _, v, _ in items]  # type: ignore[arg-type]
            recs[field] = col
            recs[field + "_text"] = _with_cells(recs[field + "_text"], at, [t for _, _, t in items])
    for field in _TEXT_FIELDS:  # categoricals of the original file cannot take new values
        if isinstance(recs[field].dtype, pd.CategoricalDtype):
            recs[field] = text_series(_arrow_text(recs[field]))
    recs["file"] = text_categorical(np.zeros(len(recs), dtype=np.int8), ["<variant>"])
    recs["line"] = np.arange(1, len(recs) + 1, dtype=np.int64)
    refs = _replicate(table.references, ctx.ref_codes, unit_codes, names)[0]
    pts = _replicate(table.points, ctx.point_codes, unit_codes, names)[0]
    out = Collector()
    raw = RawFrame("<variant>", list(recs.columns), {}, recs["line"].tolist())
    record_rules(recs, raw, out)
    problems = pd.DataFrame(
        out.problems, columns=["file", "line", "column", "rule", "message", "id", "substance"]
    )
    return Table(recs, refs, pts, problems)


def _misfit(ctx: AuditContext) -> tuple[np.ndarray, np.ndarray]:
    """|z| of every piece of continuous evidence: (substance code, |z|) arrays."""
    policy = ctx.policy
    out_codes: list[np.ndarray] = []
    out_cost: list[np.ndarray] = []

    def add(codes: np.ndarray, z: np.ndarray) -> None:
        z = np.asarray(z, dtype=float)
        # a residual that cannot be computed counts as the worst (it is capped later)
        out_codes.append(np.asarray(codes, dtype=np.int64))
        out_cost.append(np.where(np.isfinite(z), np.abs(z), np.inf))

    def add_widened(codes: np.ndarray, resid: np.ndarray, sigma: np.ndarray, widen) -> None:
        """A residual whose scale ``sigma`` was widened by ``widen`` (>= 1) for an
        extrapolation, with the normalization of its Gaussian likelihood, 2 ln(widen): a
        reading that moves a range away from its witness predicts it less sharply and must
        not fit better for that. Both go into one |z| (z^2 + 2 ln widen), capped as one: the
        normalization belongs to the consistent part of the mixture likelihood, and a piece
        of evidence that is broken anyway (capped) costs the cap, however wide its scale.
        """
        with np.errstate(invalid="ignore", divide="ignore"):
            occam2 = np.nan_to_num(2.0 * np.log(np.maximum(widen, 1.0)), nan=0.0)
            z = np.asarray(resid / sigma, dtype=float)
            add(codes, np.sqrt(z * z + occam2))

    # a correction that makes a curve unusable over its range (an Antoine pole moved into it)
    # must not escape the evidence that the other checks would weigh
    unusable = ctx.codes[~ctx.evaluable & (ctx.codes >= 0)]
    add(unusable, np.full(unusable.size, np.inf))
    # solid/liquid pairs at the reference melting point, and Hess's law at the crossing
    pr = ctx.pairs
    has_tm = np.isfinite(pr.tm)
    if has_tm.any():
        s, lq, tm = pr.solid[has_tm], pr.liquid[has_tm], pr.tm[has_tm]
        ys, ys1, _ = evaluate(ctx.curves.take(s), tm, order=1)
        yl, yl1, _ = evaluate(ctx.curves.take(lq), tm, order=1)
        d = ys - yl
        th_m = policy.thresholds("melting-point-mismatch")
        tol = melting_tolerance(pr.tm_uncertainty[has_tm], ys1 - yl1, th_m)[0]
        add(ctx.codes[s], d / (0.5 * tol))
        # a solid range usually ends, and a liquid range starts, at the melting point
        gap = np.abs(ctx.curves.t_max[s] - tm) + np.abs(ctx.curves.t_min[lq] - tm)
        add(ctx.codes[s], gap / (0.05 * tm))
    # Hess's law as fusion-enthalpy-mismatch tests it: at the reference melting point, else
    # at the crossing, against the reference value the pair meets best, relative to dH_sub
    # (for the pairs the check does not judge too, their ranges far from the melting point:
    # a candidate must not escape the evidence by moving a range away)
    ms = ctx.melting_slopes
    hs, hl = R * ms.at**2 * ms.s1, R * ms.at**2 * ms.l1
    hfus, u_fus = fusion_reference(ctx, pr.solid, hs - hl)
    has_ref = np.isfinite(hfus)
    # a reference dH_fus is evidence under every hypothesis: a pair with neither a melting
    # point nor a crossing cannot meet it, and that counts as broken evidence, as an
    # uncomputable residual does
    lost = has_ref & ~np.isfinite(ms.at)
    add(ctx.codes[pr.solid[lost]], np.full(int(lost.sum()), np.inf))
    judged = has_ref & np.isfinite(ms.at)
    if judged.any():
        with np.errstate(invalid="ignore", divide="ignore"):
            resid = (hs[judged] - hl[judged] - hfus[judged]) / np.abs(hs[judged])
        hess = policy.thresholds("fusion-enthalpy-mismatch")
        tol = fusion_tolerance(u_fus[judged], hs[judged], hess)[0]
        add(ctx.codes[pr.solid[judged]], resid / (0.5 * tol))
    rows = np.flatnonzero(ctx.evaluable)
    # the normal boiling point, in ln P, looser the farther it lies outside the range (each
    # liquid against the reference of its substance that it meets best, as the check has it)
    got = boiling_residuals(ctx)
    if got is not None:
        r, c, t, d = got.rows, got.curves, got.t, got.d
        dist = np.maximum(c.t_min - t, t - c.t_max).clip(min=0.0) / t
        tol_b = policy.thresholds("boiling-point-mismatch")["tolerance"]
        widen = 1.0 + 20.0 * dist
        add_widened(ctx.codes[r], d, 0.5 * tol_b * widen, widen)
    # the entropy of the phase change (Trouton's rule generalised), outside its band, where
    # the check tests it (the reference boiling point in a liquid's range, else mid-range)
    th = policy.thresholds("enthalpy-implausible")
    if rows.size:
        ds, lo, hi = standard_entropy(ctx, th, rows)[5:8]
        add(ctx.codes[rows], np.maximum(lo - ds, 0.0) / 10.0 + np.maximum(ds - hi, 0.0) / 10.0)
    # the 298.15 K anchor: the standard enthalpy and entropy, each against the warning
    # allowance of its check (the checks' own definitions: checks.anchor.anchor_values)
    from ..checks.anchor import allowances, anchor_values

    a = anchor_values(ctx)
    if a is not None:
        al = allowances(ctx, a)
        # no cut at max_ratio here: a candidate must not escape the evidence by moving its
        # range away from 298.15 K (the allowance still grows with the distance)
        # the third-law entropy rests on the same extrapolation as the second-law enthalpy:
        # where the enthalpy misses its standard value beyond the allowance (an associating
        # vapour, a wrong standard value), the entropy is a weaker witness by as much
        with np.errstate(invalid="ignore", divide="ignore"):
            miss_h = np.abs(a.h - a.h_ref) / al.h_warn
        doubt = np.where(np.isfinite(miss_h), np.maximum(miss_h, 1.0), 1.0)
        for value, ref, allow, base in (
            (a.h, a.h_ref, al.h_warn, al.h_base),
            (a.s, a.s_ref, al.s_warn * doubt, al.s_base),
        ):
            m = np.isfinite(ref)
            # widened with the extrapolation: an Antoine range read in degC, farther from
            # 298.15 K, gains nothing by its wider allowance
            add_widened(ctx.codes[a.rows[m]], value[m] - ref[m], 0.5 * allow[m], allow[m] / base[m])
    # other sources of the same substance and phase, at the middle of the common range
    key = np.where(ctx.evaluable, ctx.codes * 2 + ctx.liquid, -1)
    ev = np.flatnonzero(key >= 0)
    i, j = same_key_pairs(key, ev, ev)
    keep = i < j
    i, j = i[keep], j[keep]
    if i.size:
        lo = np.maximum(ctx.curves.t_min[i], ctx.curves.t_min[j])
        hi = np.minimum(ctx.curves.t_max[i], ctx.curves.t_max[j])
        lo, hi = np.where(lo < hi, lo, hi), np.where(lo < hi, hi, lo)  # no overlap: the gap
        t = 2.0 / (1.0 / lo + 1.0 / hi)
        d = evaluate(ctx.curves.take(i), t, 0)[0] - evaluate(ctx.curves.take(j), t, 0)[0]
        u_def = policy.thresholds("sources-disagree")["default_uncertainty"]
        ui = np.nan_to_num(ctx.uncertainty[i], nan=u_def)
        uj = np.nan_to_num(ctx.uncertainty[j], nan=u_def)
        add(ctx.codes[i], d / np.sqrt(ui**2 + uj**2))
    # measured points of the same substance and phase within the range
    pts = ctx.table.points
    if len(pts):
        pt_key = np.where(
            ctx.point_codes >= 0,
            ctx.point_codes * 2 + (pts["phase"].astype(object) == "liquid").to_numpy(),
            -1,
        )
        r, p = match(key, pt_key)
        if r.size:
            t = pts["T_K"].to_numpy(dtype=float)[p]
            c = ctx.curves.take(r)
            inside = (t >= c.t_min * 0.98) & (t <= c.t_max * 1.02)
            res = np.log(pts["P_Pa"].to_numpy(dtype=float)[p]) - evaluate(c, t, 0)[0]
            u_def = policy.thresholds("points-misfit")["default_uncertainty"]
            u_pt = np.nan_to_num(
                pts["uncertainty"].to_numpy(dtype=float, na_value=np.nan)[p], nan=u_def
            )
            z2 = np.where(inside, (res / u_pt) ** 2, 0.0)
            n = np.bincount(r, weights=inside.astype(float), minlength=ctx.n)
            ss = np.bincount(r, weights=z2, minlength=ctx.n)
            has = np.flatnonzero(n > 0)
            # the RMS standardized residual counts as two pieces of evidence
            add(
                np.repeat(ctx.codes[has], 2),
                np.repeat(np.sqrt(ss[has] / n[has]), 2),
            )
    if not out_codes:
        return np.empty(0, dtype=np.int64), np.empty(0)
    return np.concatenate(out_codes), np.concatenate(out_cost)


def _cost_key(cal: dict) -> tuple:
    """What a misfit depends on under the calibration ``cal``: the loss, the cap, and the
    cost of an error, a warning and an error that says the curve is impossible (in the
    order of :attr:`Screening.floors`).
    """
    return (
        cal["loss"],
        cal["component_cap"],
        cal["error_cost"],
        cal["warning_cost"],
        cal["impossible_cost"],
    )


def _evidence_costs(z: np.ndarray, cal: dict) -> np.ndarray:
    """The cost of each piece of evidence |z| under the calibration ``cal``: its loss,
    NaN taken as infinite, capped at the component cap.
    """
    with np.errstate(invalid="ignore", over="ignore"):
        cost = z * z if cal["loss"] == "quadratic" else _rho(z)
    return np.minimum(np.where(np.isnan(cost), np.inf, cost), cal["component_cap"])


@dataclass
class Screening:
    """The screening stage's outcome of many units, as columns: every unit's continuous
    evidence one after the other, and what the checks must report for it. Its scores are
    computed for all units at once (one pass over all their evidence), never one unit at
    a time.
    """

    z: np.ndarray  # |standardized residual| of every piece of evidence, unit after unit
    bounds: np.ndarray  # unit u's evidence is z[bounds[u]:bounds[u + 1]]
    floors: np.ndarray  # (units, 3): errors, warnings and impossible errors the checks must give
    keys: list[bytes]  # what each unit's correction amounts to (:func:`_unit_keys`)

    def __len__(self) -> int:
        return len(self.keys)

    def scores(self, cal: dict) -> np.ndarray:
        """The misfit S of every unit under ``cal``: capped evidence costs plus the floor of
        findings the checks must give (cached per calibration).
        """
        key = _cost_key(cal)
        cache = self.__dict__.setdefault("_scores", {})
        if key not in cache:
            n = len(self.keys)
            owner = np.repeat(np.arange(n), np.diff(self.bounds))
            evidence = np.bincount(owner, weights=_evidence_costs(self.z, cal), minlength=n)
            cache[key] = evidence + self.floors @ np.array(key[2:])
        return cache[key]


@dataclass
class _Outcome:
    """One unit audited by the full checks: its findings and its continuous evidence."""

    findings: list[Finding]
    z: np.ndarray  # |standardized residual| of each piece of continuous evidence
    key: bytes = b""  # what the correction amounts to (curves, ranges, phases), rounded

    def score(self, cal: dict) -> float:
        """The misfit S: capped evidence costs plus the cost of each finding (cached per
        calibration).
        """
        key = _cost_key(cal)
        cache = self.__dict__.setdefault("_scores", {})
        if key not in cache:
            counts = np.zeros(3)
            for f in self.findings:
                if f.severity.rank >= 1:
                    counts[_column(f.check, f.severity)] += 1
            cache[key] = float(_evidence_costs(self.z, cal).sum()) + float(
                counts @ np.array(key[2:])
            )
        return cache[key]


def _severity(vctx: AuditContext, check: str, tier: str | None = None) -> Severity | None:
    """The severity of ``check``'s findings in ``tier`` under the policy (None when the
    policy turns the check off), as the runner gives it.
    """
    policy = vctx.policy.severity(check)
    return None if policy is None else REGISTRY[check].severity_under(policy, tier)


def _hard_failures(vctx: AuditContext, unit_of_code: np.ndarray, n: int) -> np.ndarray:
    """Errors and warnings that some checks must report for each unit (pressure-not-finite,
    pressure-too-low, slope-not-positive, slope-too-flat, slope-flatter-than-real,
    term-without-effect, heat-capacity-sign, no-crossing, melting-point-mismatch), counted
    from the same arrays as those checks without building findings: a lower bound of each
    unit's findings cost.
    Returns an (n, 3) array of counts: errors, warnings, and errors of checks that declare
    the curve impossible (:attr:`CheckSpec.impossible`).
    """
    ex = vctx.range_extrema
    ev = vctx.evaluable
    th = vctx.thresholds("heat-capacity-sign")
    factor = np.where(vctx.antoine, th["antoine_factor"], 1.0)
    # the pressure checks' own tiers (a placeholder lower end, a top below 1e-30 Pa)
    not_finite, at_bottom, too_low = pressure_tiers(vctx, ex)
    with np.errstate(invalid="ignore"):
        far = ex.cp_max > th["error_above"] * factor
        flat = too_flat(ex, vctx.thresholds("slope-too-flat"))
        unreal = flatter_than_real(ex, vctx.thresholds("slope-flatter-than-real")) & ~flat
        tiers = [
            (not_finite, "pressure-not-finite", None),
            (too_low, "pressure-too-low", None),
            (at_bottom, "pressure-not-finite", "placeholder-lower-end"),
            (ev & ~(ex.h_min > 0), "slope-not-positive", None),
            (ev & flat, "slope-too-flat", None),
            (ev & unreal, "slope-flatter-than-real", None),
            (
                without_effect(vctx, vctx.thresholds("term-without-effect")),
                "term-without-effect",
                None,
            ),
            (ev & far, "heat-capacity-sign", "beyond-error-above"),
            (ev & (ex.cp_max > th["tolerance"] * factor) & ~far, "heat-capacity-sign", None),
        ]
    # each at the severity the policy gives it (a lowered check counts for less)
    counts = np.zeros((3, vctx.n))  # errors, warnings, impossible errors
    for mask, name, tier in tiers:
        sev = _severity(vctx, name, tier)
        if sev is not None and sev.rank >= 1:
            counts[_column(name, sev)][mask] += 1.0
    # the pair checks no-crossing and melting-point-mismatch, counted at the solid record
    pr = vctx.pairs
    with np.errstate(invalid="ignore"):
        fails = {"no-crossing": pr.checkable & (pr.crossings == 0)}
        at = np.flatnonzero(pr.checkable & np.isfinite(pr.tm))
        ys, ys1, _ = evaluate(vctx.curves.take(pr.solid[at]), pr.tm[at], 1)
        yl, yl1, _ = evaluate(vctx.curves.take(pr.liquid[at]), pr.tm[at], 1)
        d = ys - yl
        th_m = vctx.thresholds("melting-point-mismatch")
        tol = melting_tolerance(pr.tm_uncertainty[at], ys1 - yl1, th_m)[0]
        mm = np.zeros(pr.solid.size, dtype=bool)
        mm[at] = ~(np.abs(d) <= tol)
        fails["melting-point-mismatch"] = mm
    for name, bad in fails.items():
        sev = _severity(vctx, name)
        if sev is not None and sev.rank >= 1:
            np.add.at(counts[_column(name, sev)], pr.solid[bad], 1.0)
    unit = np.where(vctx.codes >= 0, unit_of_code[np.maximum(vctx.codes, 0)], -1)
    ok = unit >= 0
    return np.column_stack(
        [np.bincount(unit[ok], weights=c[ok], minlength=n).astype(int) for c in counts]
    )


def _column(check: str, severity: Severity) -> int:
    """The column of :attr:`Screening.floors` that a finding of ``check`` at ``severity``
    counts in: 0 an error, 1 a warning, 2 an error that says the curve is impossible.
    """
    if severity is not Severity.error:
        return 1
    return 2 if REGISTRY[check].impossible else 0


def _chunks(table: Table, ctx: AuditContext, units: list[tuple[int, tuple[Change, ...]]]):
    """The units (a substance code and the changes of one correction) as variant tables of
    at most :data:`_CHUNK_ROWS` records: yields (the chunk's units, its audit context, the
    unit of each of its substance codes).
    """
    sizes = np.bincount(ctx.codes[ctx.codes >= 0], minlength=ctx.n_names)
    a = 0
    while a < len(units):
        b, rows = a, 0
        while b < len(units) and (b == a or rows + sizes[units[b][0]] <= _CHUNK_ROWS):
            rows += sizes[units[b][0]]
            b += 1
        part = units[a:b]
        vctx = AuditContext(_variant_table(table, ctx, part), ctx.policy, ctx.runtime)
        yield part, vctx, np.array([int(n) for n in vctx.names], dtype=np.int64)
        a = b


def _evidence_by_unit(vctx: AuditContext, unit_of_code: np.ndarray, n: int):
    """The continuous evidence of a chunk's ``n`` units (:func:`_misfit`), grouped unit
    after unit: (|z| of every piece, bounds of each unit's pieces).
    """
    with np.errstate(all="ignore"):
        codes, z = _misfit(vctx)
    unit = unit_of_code[codes] if codes.size else codes
    order = np.argsort(unit, kind="stable")
    return z[order], np.searchsorted(unit[order], np.arange(n + 1))


def _screen_units(
    table: Table, ctx: AuditContext, units: list[tuple[int, tuple[Change, ...]]]
) -> Screening:
    """The screening stage: the continuous evidence of every unit and the errors and
    warnings some checks must give it (:func:`_hard_failures`), as columns; no finding is
    built.
    """
    zs, bounds, floors, keys = [], [np.zeros(1, dtype=np.int64)], [], []
    offset = 0
    for part, vctx, unit_of_code in _chunks(table, ctx, units):
        z, b = _evidence_by_unit(vctx, unit_of_code, len(part))
        zs.append(z)
        bounds.append(b[1:] + offset)
        offset += z.size
        floors.append(_hard_failures(vctx, unit_of_code, len(part)))
        keys.extend(_unit_keys(vctx, len(part)))
    return Screening(
        np.concatenate(zs) if zs else np.empty(0),
        np.concatenate(bounds),
        np.concatenate(floors) if floors else np.zeros((0, 3), dtype=np.int64),
        keys,
    )


def _audit_units(
    table: Table, ctx: AuditContext, units: list[tuple[int, tuple[Change, ...]]]
) -> list[_Outcome]:
    """Audit every unit (a substance with one correction) by the full checks."""
    from ..auditing import run_checks

    names = [n for n in REGISTRY if n not in _NOT_EVIDENCE]
    outcomes: list[_Outcome] = []
    for part, vctx, unit_of_code in _chunks(table, ctx, units):
        with np.errstate(all="ignore"):
            found = run_checks(vctx, names)
        by_unit: dict[int, list[Finding]] = defaultdict(list)
        for f in found:  # the variants' findings are few: row views
            if f.substance:
                by_unit[int(f.substance)].append(f)
        z, b = _evidence_by_unit(vctx, unit_of_code, len(part))
        keys = _unit_keys(vctx, len(part))
        outcomes.extend(_Outcome(by_unit[u], z[b[u] : b[u + 1]], keys[u]) for u in range(len(part)))
    return outcomes


#: Numbers per record in a unit's key: ln P at five temperatures, the range, the phase.
_KEY_WIDTH = 8


def _unit_keys(vctx: AuditContext, n_units: int) -> list[bytes]:
    """What each unit's records amount to: their curves at five temperatures over their
    ranges, the ranges and the phases, rounded (equal keys are one fix written two ways,
    such as Torr and mmHg). Rows of a unit are contiguous and in the same order in every
    unit of a substance.
    """
    c = vctx.curves
    frac = np.linspace(0.0, 1.0, 5)[None, :]
    t = c.t_min[:, None] + (c.t_max - c.t_min)[:, None] * frac
    y = evaluate(c, t, 0)[0]
    parts = np.column_stack([y, c.t_min, c.t_max, vctx.liquid.astype(float)])  # _KEY_WIDTH
    parts = np.round(np.nan_to_num(parts, nan=1e300, posinf=1e300, neginf=-1e300), 6)
    unit = np.array([int(n) for n in vctx.names], dtype=np.int64)[vctx.codes]
    bounds = np.searchsorted(unit, np.arange(n_units + 1))
    return [parts[bounds[u] : bounds[u + 1]].tobytes() for u in range(n_units)]
