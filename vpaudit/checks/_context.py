"""What every check reads: the table's records as arrays, their curves and references.

Built once per audit; the expensive shared pieces (range extrema, pairs and their crossings,
source groups) are computed on first use and cached, so each check stays a few lines of
array code.
"""

from __future__ import annotations

import itertools
import math
from functools import cached_property
from typing import TYPE_CHECKING

import numpy as np
import pandas as pd
import pyarrow as pa

from .._columns import TEXT, codes, eq, text_codes
from ..constants import R
from ..equations.engine import (
    Curves,
    bracketed_root,
    curves_from_frame,
    evaluate,
    temperature_at,
)
from ..readers.table import Table
from ..runtime import DEFAULT, Runtime, SharedBlocks, in_thread
from ._registry import REGISTRY, Severity
from .finding import Finding

if TYPE_CHECKING:
    from ..policy import Policy

__all__ = ["AuditContext", "P_STANDARD", "LN_P_STANDARD"]

#: Standard pressure of the normal boiling point and of Trouton's rule. [Pa]
P_STANDARD = 101325.0
LN_P_STANDARD = float(np.log(P_STANDARD))
_WAGNER_GRID = 64
#: Rows per block of the (rows x grid) array work: keeps temporaries below glibc's
#: dynamic mmap threshold (32 MB), so they are reused instead of page-faulted anew.
CHUNK = 32768


class AuditContext:
    """Arrays of one table, prepared for the checks.

    Attributes
    ----------
    table : Table
    policy : Policy
    n : int
        Number of records.
    curves : Curves
        Canonical curves of all records (row i is record i).
    evaluable : ndarray of bool
        Records whose range is valid, so their curve can be evaluated over it.
    """

    def __init__(self, table: Table, policy: Policy, runtime: Runtime = DEFAULT) -> None:
        self.table = table
        self.policy = policy
        self.runtime = runtime
        rec = table.records
        self.n = len(rec)
        # Integer codes of the substances of records, references and points together: every
        # join below is on these, with numpy. The hashing of the names (0.4-0.6 s for the
        # 4 x 10^6 of a million-substance table) releases the GIL: a large table does it on
        # a second thread while this one builds the curves and goes on to the range
        # extrema, which need no codes; the first use of a code waits for them (_coded).
        parts = [rec["substance"], table.references["substance"], table.points["substance"]]
        self._sizes = [len(p) for p in parts]
        names_of = pd.concat([p.astype(TEXT) for p in parts], ignore_index=True)
        if runtime.split(self.n):
            self._coding = in_thread(text_codes, names_of, name="vpaudit-codes")
        else:
            done = text_codes(names_of)
            self._coding = lambda: done
        self._ids = rec["id"]
        self.line = rec["line"].to_numpy()
        self.file_code, self._files = codes(rec["file"])
        self.uncertainty = rec["uncertainty"].to_numpy(dtype=float, na_value=np.nan)
        self.liquid = eq(rec["phase"], "liquid")
        self.solid = eq(rec["phase"], "solid")
        self.antoine = eq(rec["form"], "antoine")
        self.curves: Curves = curves_from_frame(rec)
        self._name_cache: dict[int, str] = {}
        lo, hi = self.curves.t_min, self.curves.t_max
        with np.errstate(invalid="ignore"):
            ok = np.isfinite(lo) & np.isfinite(hi) & (lo > 0) & (lo < hi)
        problems = table.problems
        if len(problems):
            bad = problems.loc[problems["rule"].isin(["range", "pole"])]
            rows = self.rows_of(bad["file"], bad["line"])
            ok[rows[rows >= 0]] = False
        self.evaluable = ok
        self._severities: dict[str, Severity] = {}
        self._pair_blocks: SharedBlocks | None = None
        self._melting: dict[str, np.ndarray] | None = None

    # --- substance codes ------------------------------------------------------------------
    def _coded(self) -> tuple[np.ndarray, np.ndarray, np.ndarray, pa.Array]:
        """The codes of records, references and points, and the distinct names, once the
        hashing is done (waiting for it on first use; see ``__init__``).
        """
        got = self.__dict__.get("_coded_parts")
        if got is None:  # two threads may both get here: they store the same arrays
            all_codes, names = self._coding()
            a, b = self._sizes[0], self._sizes[0] + self._sizes[1]
            got = self.__dict__["_coded_parts"] = (
                all_codes[:a],
                all_codes[a:b],
                all_codes[b:],
                names,
            )
        return got

    @property
    def codes(self) -> np.ndarray:
        """The substance code of each record (-1 where it names none)."""
        return self._coded()[0]

    @property
    def ref_codes(self) -> np.ndarray:
        """The substance code of each reference value."""
        return self._coded()[1]

    @property
    def point_codes(self) -> np.ndarray:
        """The substance code of each measured point."""
        return self._coded()[2]

    @property
    def _names(self) -> pa.Array:
        return self._coded()[3]

    @property
    def n_names(self) -> int:
        """Number of distinct substances (records, references and points together)."""
        return len(self._coded()[3])

    @cached_property
    def equation_hashes(self) -> np.ndarray:
        """A 64-bit hash of each record's equation, for ``duplicate-record``."""
        from .provenance import equation_hashes

        return equation_hashes(self)

    def drop_shared(self) -> None:
        """Forget the range extrema and the pairs (a few hundred bytes per record); they
        are computed again if asked for.
        """
        self.__dict__.pop("range_extrema", None)
        self.__dict__.pop("pairs", None)
        self.__dict__.pop("melting_slopes", None)
        self._melting = None

    def rows_of(self, files, lines) -> np.ndarray:
        """The record row standing at each (file, line) pair, -1 where there is none (for
        rule problems, which the readers locate by file and line).
        """
        files = list(files)
        lines = np.asarray(list(lines), dtype=np.int64)
        if not files:
            return np.empty(0, dtype=np.int64)
        cand = np.flatnonzero(np.isin(self.line, lines))
        index = {(self._files[self.file_code[i]], int(self.line[i])): int(i) for i in cand}
        found = [index.get((f, int(n)), -1) for f, n in zip(files, lines, strict=True)]
        return np.asarray(found, dtype=np.int64)

    @cached_property
    def names(self) -> np.ndarray:
        """The substance of each code, as Python strings (built on first use: the findings
        look names up one at a time instead).
        """
        return np.asarray(self._names.to_pylist(), dtype=object)

    @cached_property
    def _id_values(self) -> pa.Array:
        ids = pa.array(self._ids.array, type=pa.string())
        return ids.combine_chunks() if isinstance(ids, pa.ChunkedArray) else ids

    def id(self, row: int) -> str:
        """The id of record ``row``."""
        return str(self._id_values[int(row)].as_py())

    def location(self, row: int) -> dict:
        """Where record ``row`` stands: ``{"file", "line"}``."""
        return {"file": str(self._files[self.file_code[int(row)]]), "line": int(self.line[row])}

    def substance_of(self, row: int) -> str:
        """The substance of record ``row``."""
        code = int(self.codes[int(row)])
        name = self._name_cache.get(code)
        if name is None:  # each substance is looked up once, whatever its findings
            name = self._name_cache[code] = str(self._names[code].as_py())
        return name

    def phase_of(self, row: int) -> str:
        """The phase of record ``row``."""
        return "liquid" if self.liquid[int(row)] else "solid"

    # --- references ----------------------------------------------------------------------
    @cached_property
    def _refs_by_code(self) -> dict[str, np.ndarray]:
        """For each quantity, the first reference value (SI units) per substance code."""
        refs = self.table.references
        out: dict[str, np.ndarray] = {}
        if not len(refs):
            return out
        ref_codes = self.ref_codes
        q_code, q_names = codes(refs["quantity"])
        value = refs["value_si"].to_numpy(dtype=float)
        for k, q in enumerate(q_names):
            m = (q_code == k) & (ref_codes >= 0)
            first_codes, first = np.unique(ref_codes[m], return_index=True)
            arr = np.full(self.n_names, np.nan)
            arr[first_codes] = value[m][first]
            out[q] = arr
        return out

    @cached_property
    def _ref_uncertainty_by_code(self) -> dict[str, np.ndarray]:
        """For each quantity, the stated absolute uncertainty (SI units) of the first
        reference value per substance code, NaN where none is stated.
        """
        from ..units import (
            ENTHALPY_UNITS,
            ENTROPY_UNITS,
            MOLAR_MASS_UNITS,
            QUANTITY_UNITS,
            pressure_factor,
            temperature_affine,
        )

        refs = self.table.references
        out: dict[str, np.ndarray] = {}
        if not len(refs) or "uncertainty" not in refs:
            return out
        ref_codes = self.ref_codes
        q_code, q_names = codes(refs["quantity"])
        u = refs["uncertainty"].to_numpy(dtype=float, na_value=np.nan)
        units = refs["unit"].astype(object).to_numpy()
        for k, q in enumerate(q_names):
            m = (q_code == k) & (ref_codes >= 0)
            kind = QUANTITY_UNITS.get(str(q), ("", ()))[0]
            scale = {
                "temperature": lambda n: temperature_affine(n)[0],
                "pressure": pressure_factor,
                "enthalpy": lambda n: ENTHALPY_UNITS[n],
                "molar_mass": lambda n: MOLAR_MASS_UNITS[n],
                "entropy": lambda n: ENTROPY_UNITS[n],
            }.get(kind)
            if scale is None:
                continue
            first_codes, first = np.unique(ref_codes[m], return_index=True)
            rows = np.flatnonzero(m)[first]
            arr = np.full(self.n_names, np.nan)
            arr[first_codes] = [u[r] * scale(str(units[r])) for r in rows]
            out[q] = arr
        return out

    def reference_uncertainty(self, quantity: str, rows: np.ndarray | None = None) -> np.ndarray:
        """The stated absolute uncertainty (SI units) of the reference ``quantity`` for the
        substance of each record in ``rows``; NaN where none is stated.
        """
        codes_ = self.codes if rows is None else self.codes[rows]
        arr = self._ref_uncertainty_by_code.get(quantity)
        if arr is None:
            return np.full(codes_.shape, np.nan)
        return arr[codes_]

    def reference(self, quantity: str, rows: np.ndarray | None = None) -> np.ndarray:
        """The reference ``quantity`` (SI units) for the substance of each record in ``rows``
        (all records by default); NaN where the table has none.
        """
        codes = self.codes if rows is None else self.codes[rows]
        arr = self._refs_by_code.get(quantity)
        if arr is None:
            return np.full(codes.shape, np.nan)
        return arr[codes]

    def melting_reference(self, rows: np.ndarray | None = None) -> np.ndarray:
        """Reference melting point, or the triple-point temperature where none is given. [K]"""
        tm = self.reference("melting_point", rows)
        ttp = self.reference("triple_point_temperature", rows)
        return np.where(np.isnan(tm), ttp, tm)

    def critical_temperature(self) -> np.ndarray:
        """Critical temperature per record: reference, else the Wagner record's own. [K]"""
        tc = self.reference("critical_temperature")
        if not self.any_critical:
            return tc  # all NaN
        own = np.where(self.curves.family == 2, self.curves.params[:, 6], np.nan)
        return np.where(np.isnan(tc), own, tc)

    @cached_property
    def any_critical(self) -> bool:
        """Whether any record may have a critical temperature: the table has a reference
        value of one, or a Wagner record (asked without the substance codes, which the
        range extrema do not wait for).
        """
        refs = self.table.references
        given = bool(len(refs)) and bool(eq(refs["quantity"], "critical_temperature").any())
        return given or bool((self.curves.family == 2).any())

    # --- findings ------------------------------------------------------------------------
    def severity(self, check: str) -> Severity | None:
        """The policy's severity of ``check`` (None when turned off)."""
        return self.policy.severity(check)

    def at_most(self, check: str, cap: Severity) -> Severity:
        """The policy's severity of ``check``, but no higher than ``cap``: for a check's
        milder tier (a warning below its error bound), which a policy that lowers the check
        must lower too, never raise.
        """
        sev = self.policy.severity(check) or cap
        return sev if sev.rank <= cap.rank else cap

    def thresholds(self, check: str) -> dict[str, float]:
        """The policy's thresholds of ``check``."""
        return self.policy.thresholds(check)

    def finding(
        self,
        check: str,
        row: int,
        message: str,
        evidence: dict,
        records: tuple[str, ...] | None = None,
        severity: Severity | None = None,
    ) -> Finding:
        """A finding about record ``row`` (and ``records`` when several are involved)."""
        sev = severity or self._severities.get(check)
        if sev is None:
            sev = self._severities[check] = self.severity(check) or REGISTRY[check].severity
        return Finding(
            check=check,
            severity=sev,
            substance=self.substance_of(row),
            records=records if records is not None else (self.id(row),),
            message=message,
            evidence=_clean(evidence),
            file=str(self._files[self.file_code[int(row)]]),
            line=int(self.line[row]),
        )

    def findings(
        self,
        check: str,
        rows: np.ndarray,
        messages: list[str],
        evidence: dict,
        records: list[tuple[str, ...]] | None = None,
        severity: Severity | None = None,
    ) -> list[Finding]:
        """One finding per record in ``rows``, built together: what :meth:`finding` does
        one at a time (the substance, the record id, the file and line), taken for all
        rows in a few array operations, for checks that report thousands of records.

        ``messages`` holds one sentence per row. ``evidence`` maps each key to a column
        (an array, one value per row; or a list, taken as it is) or to one value shared by
        all rows; float arrays become Python floats, with None where not finite.
        """
        rows = np.asarray(rows, dtype=np.int64)
        if rows.size == 0:
            return []
        sev = severity or self._severities.get(check)
        if sev is None:
            sev = self._severities[check] = self.severity(check) or REGISTRY[check].severity
        codes = self.codes[rows]
        subs = self._names.take(pa.array(np.maximum(codes, 0))).to_pylist()
        for i in np.flatnonzero(codes < 0).tolist():  # a record without a substance
            subs[i] = ""
        if records is None:
            records = [(i,) for i in self.ids(rows)]
        files = self._files[self.file_code[rows]].tolist()
        lines = self.line[rows].tolist()
        return [
            Finding(check, sev, sub, rec, msg, ev, None, str(f), ln)
            for sub, rec, msg, ev, f, ln in zip(
                subs,
                records,
                messages,
                _evidence_rows(evidence, rows.size),
                files,
                lines,
                strict=True,
            )
        ]

    def pair_findings(
        self,
        check: str,
        ks: np.ndarray,
        messages: list[str],
        evidence: dict,
        severity: Severity | None = None,
    ) -> list[Finding]:
        """:meth:`findings` about the pairs ``ks`` (both record ids, located at the solid
        record), as :meth:`pair_finding` makes them one at a time.
        """
        pr = self.pairs
        ks = np.asarray(ks, dtype=np.int64)
        s, lq = pr["s"][ks], pr["l"][ks]
        records = list(zip(self.ids(s), self.ids(lq), strict=True))
        return self.findings(check, s, messages, evidence, records, severity)

    def ids(self, rows: np.ndarray) -> list[str]:
        """The ids of records ``rows``, as Python strings."""
        return self._id_values.take(pa.array(np.asarray(rows, dtype=np.int64))).to_pylist()

    # --- per-record quantities over the validity range -----------------------------------
    @cached_property
    def range_extrema(self) -> dict[str, np.ndarray]:
        """:meth:`extrema_over_ranges`, computed once."""
        return self.extrema_over_ranges()

    def extrema_over_ranges(self, closed_form: bool = True) -> dict[str, np.ndarray]:
        """Exact extrema of dH(T), dCp(T) and ln P over each record's range.

        dH and ln P are taken over the whole range. dCp is taken only over the part where the
        vapour is near-ideal, P <= ``max_pressure`` of ``heat-capacity-sign`` (10 kPa by
        default) and T <= 0.7 Tc where Tc is known: above, the slope gives dH/dZ, whose
        temperature derivative is not dCp (physics notes, section 2). Keys ``cp_lo``/``cp_hi``
        give that sub-range; NaN where the record has none.

        Log-linear and Antoine curves: ends of the range plus the analytic stationary points
        (dH is stationary where dCp = 0: T^E = -C/(D E (E+1)); the Antoine dCp where
        T = C'/2). Wagner curves: a 64-point grid plus the ends. Log-linear curves without a
        D term (the common case) are reduced in closed form over whole columns
        (:func:`_plain_extrema`); ``closed_form=False`` sends them through the blocks like the
        others (for the test that compares the two).
        """
        n = self.n
        out = {
            k: np.full(n, np.nan)
            for k in (
                "h_min",
                "h_min_T",
                "h_max",
                "y_min",
                "y_max",
                "cp_min",
                "cp_min_T",
                "cp_max",
                "cp_max_T",
                "cp_lo",
                "cp_hi",
            )
        }
        rows = np.flatnonzero(self.evaluable)
        if rows.size == 0:
            return out
        c = self.curves if rows.size == n else self.curves.take(rows)  # no copy when all are
        ln_p_max = np.log(self.policy.thresholds("heat-capacity-sign")["max_pressure"])
        y_lo = np.empty(rows.size)
        y_hi = np.empty(rows.size)
        simple = (c.family == 0) & (c.params[:, 3] == 0)  # log-linear without a D term
        plain = np.flatnonzero(simple) if closed_form else None
        if plain is not None:  # in blocks too: fresh pages cost more than the arithmetic
            for a in range(0, plain.size, CHUNK):
                part = plain[a : a + CHUNK]
                y_lo[part], y_hi[part] = _plain_extrema(c, part, rows[part], out)
        blocks = list(_blocks(c, simple, plain=not closed_form))
        for part in blocks:  # one block at a time: temporaries stay block-sized
            cb = c.take(part)
            r = rows[part]
            h, ts, y, _ = self._sampled(cb, cb.t_min, cb.t_max, need_cp=False)
            k = np.arange(part.size)
            with np.errstate(invalid="ignore"):
                hm = np.argmin(np.where(np.isnan(h), np.inf, h), axis=1)
                out["h_min"][r] = np.where(np.isnan(h).any(axis=1), np.nan, h[k, hm])
                out["h_min_T"][r] = ts[k, hm]
                out["h_max"][r] = np.nanmax(np.where(np.isnan(h), -np.inf, h), axis=1)
                finite = np.isfinite(y).all(axis=1)
                out["y_min"][r] = np.where(finite, y.min(axis=1), np.nan)
                out["y_max"][r] = np.where(finite, y.max(axis=1), np.nan)
            wagner = cb.family[0] == 2  # a block holds one kind of curve (_blocks)
            y_lo[part] = y[:, 0]  # the ends are sampled first (a grid: first and last)
            y_hi[part] = y[:, -1] if wagner else y[:, 1]
        # The near-ideal part of the range, for dCp: up to where P reaches the limit (solved
        # for all records at once: the root finder's cost is per call, not per record).
        hi = c.t_max.copy()
        with np.errstate(invalid="ignore"):
            straddle = np.flatnonzero((y_lo <= ln_p_max) & (y_hi > ln_p_max))
        if straddle.size:
            t_cut = temperature_at(c.take(straddle), ln_p_max)
            hi[straddle] = np.where(np.isfinite(t_cut), t_cut, c.t_max[straddle])
        if self.any_critical:  # else every Tc is NaN and fmin keeps hi
            hi = np.fmin(hi, 0.7 * self.critical_temperature()[rows])
        with np.errstate(invalid="ignore"):
            ideal = (y_lo <= ln_p_max) & (hi > c.t_min)
        if plain is not None and plain.size:  # dCp = R C: the same at every temperature
            sub = plain[ideal[plain]]
            rs = rows[sub]
            cp = R * c.params[sub, 2]
            lo_t = c.t_min[sub]
            out["cp_min"][rs] = out["cp_max"][rs] = cp
            out["cp_min_T"][rs] = out["cp_max_T"][rs] = lo_t  # the first, as argmin takes
            out["cp_lo"][rs], out["cp_hi"][rs] = lo_t, hi[sub]
        for part in blocks:
            sub = part[ideal[part]]
            if not sub.size:
                continue
            cs = c.take(sub)
            _, tcp, _, cp = self._sampled(cs, cs.t_min, hi[sub], need_h=False)
            j = np.arange(sub.size)
            with np.errstate(invalid="ignore"):
                lo_i = np.argmin(np.where(np.isnan(cp), np.inf, cp), axis=1)
                hi_i = np.argmax(np.where(np.isnan(cp), -np.inf, cp), axis=1)
            rs = rows[sub]
            out["cp_min"][rs], out["cp_min_T"][rs] = cp[j, lo_i], tcp[j, lo_i]
            out["cp_max"][rs], out["cp_max_T"][rs] = cp[j, hi_i], tcp[j, hi_i]
            out["cp_lo"][rs], out["cp_hi"][rs] = cs.t_min, hi[sub]
        return out

    @staticmethod
    def _sampled(
        c: Curves, lo: np.ndarray, hi: np.ndarray, need_h: bool = True, need_cp: bool = True
    ):
        """dH, the temperatures, ln P and dCp at the candidate extrema of each curve in
        [lo, hi]: the ends (columns 0 and 1, or first and last for a grid) and the analytic
        stationary points; Wagner curves get a grid (66 columns) and are evaluated apart, so
        other forms do not pay for it.

        Where no curve has a stationary point in its form (a log-linear curve without a D
        term, the common case) the ends alone are taken, in closed form: dH = R (C T - B)
        is linear in T and dCp = R C constant, so nothing but ln P needs a logarithm. The
        quantities not asked for (``need_h``, ``need_cp``) are None on that path.
        """
        m = c.family.size
        p = c.params
        if not (c.family != 0).any() and not p[:, 3].any():  # also the empty case
            ts = np.column_stack([lo, hi])
            a, b, cc = (p[:, i : i + 1] for i in range(3))
            with np.errstate(divide="ignore", invalid="ignore", over="ignore"):
                y = a + b * (1.0 / ts) + cc * np.log(ts)  # as the engine evaluates it
                h = R * (cc * ts - b) if need_h else None
                cp = np.broadcast_to(R * cc, ts.shape) if need_cp else None
            return h, ts, y, cp
        wag = c.family == 2
        if wag.any():
            width = _WAGNER_GRID + 2
            ts = np.empty((m, width))
            frac = np.linspace(0.0, 1.0, width)[None, :]
            ts[wag] = lo[wag, None] + (hi - lo)[wag, None] * frac
        rest = ~wag
        if rest.any():
            p = p[rest]
            fam = c.family[rest]
            with np.errstate(divide="ignore", invalid="ignore", over="ignore"):
                dee = p[:, 3] * p[:, 4] * (p[:, 4] + 1.0)
                t_h = np.where((fam == 0) & (dee != 0), (-p[:, 2] / dee) ** (1.0 / p[:, 4]), np.nan)
                t_cp = np.where(fam == 1, p[:, 2] / 2.0, np.nan)
            l_r, h_r = lo[rest], hi[rest]
            inner = [t for t in (t_h, t_cp) if not np.isnan(t).all()]
            cand = np.column_stack([l_r, h_r, *inner])
            if inner:
                cand = np.where(np.isfinite(cand), cand, l_r[:, None])
                cand = np.clip(cand, l_r[:, None], h_r[:, None])
            if wag.any():
                ts[rest] = np.pad(cand, ((0, 0), (0, ts.shape[1] - cand.shape[1])), mode="edge")
            else:
                ts = cand
        y, y1, y2 = evaluate(c, ts)
        return R * ts * ts * y1, ts, y, R * (2.0 * ts * y1 + ts * ts * y2)

    # --- solid/liquid pairs --------------------------------------------------------------
    @cached_property
    def pairs(self) -> dict[str, np.ndarray]:
        """Every solid record whose range reaches the melting region against every liquid
        record of the same substance, with the crossing of their curves.

        Returns a dict of arrays, one entry per pair: ``s``, ``l`` (record rows), ``anchor``
        (reference melting point, else the middle of the ranges' gap or overlap) [K],
        ``checkable``, ``extrapolation`` (relative), ``crossings`` (sign changes in the
        window), ``significant_crossings`` (sign changes between points where the curves
        differ by more than the melting-point tolerance),
        ``T`` (crossing nearest the anchor) [K], ``y`` (ln P there), ``slope_diff``
        (d(y_s - y_l)/dT there) [1/K].
        """
        p = self.policy.thresholds("no-crossing")
        reach = self.policy.thresholds("pair-not-checkable")["max_extrapolation"]
        rows = np.arange(self.n)
        s, lq = same_key_pairs(
            self.codes, rows[self.solid & self.evaluable], rows[self.liquid & self.evaluable]
        )
        t_max_s = self.curves.t_max[s]
        t_min_l = self.curves.t_min[lq]
        tm = self.melting_reference(s)
        anchor = np.where(np.isnan(tm), 0.5 * (t_max_s + t_min_l), tm)
        # Keep, per substance, the solids whose range reaches the melting region; a solid
        # modification that ends far below it (it transforms before melting) is not paired.
        if s.size:
            best = np.full(self.n_names, -np.inf)
            np.maximum.at(best, self.codes[s], t_max_s)
            keep = (t_max_s >= best[self.codes[s]] - 1e-9) | (t_max_s >= anchor * (1 - reach))
            s, lq, anchor, tm = s[keep], lq[keep], anchor[keep], tm[keep]
            t_max_s, t_min_l = t_max_s[keep], t_min_l[keep]
        ext_s = np.maximum(0.0, anchor - self.curves.t_max[s]) / anchor
        ext_s = np.maximum(ext_s, np.maximum(0.0, self.curves.t_min[s] - anchor) / anchor)
        ext_l = np.maximum(0.0, self.curves.t_min[lq] - anchor) / anchor
        ext_l = np.maximum(ext_l, np.maximum(0.0, anchor - self.curves.t_max[lq]) / anchor)
        extrapolation = np.maximum(ext_s, ext_l)
        checkable = extrapolation <= reach
        # Crossings in the window [anchor/(1+w), anchor*(1+w)], searched in x = 1/T, one
        # block of pairs at a time: every temporary stays block-sized.
        w = p["window"]
        k = s.size
        tol = self.policy.thresholds("melting-point-mismatch")["tolerance"]
        count = np.zeros(k, dtype=np.int64)
        significant = np.zeros(k, dtype=np.int64)
        t_cross, y_cross, slope_diff = (np.full(k, np.nan) for _ in range(3))

        # both curves at the reference melting point, else at the crossing (melting_slopes),
        # taken in the same blocks while their curves are at hand
        melt = {key: np.empty(k) for key in ("at", "ys", "s1", "yl", "l1")}

        def block(r: slice) -> None:
            cs, cl = self.curves.take(s[r]), self.curves.take(lq[r])
            count[r], significant[r], t_cross[r], y_cross[r], slope_diff[r] = _crossings(
                cs, cl, anchor[r], w, int(p["grid"]), tol
            )
            at = np.where(np.isfinite(tm[r]), tm[r], t_cross[r])
            melt["at"][r] = at = np.where(np.isfinite(at), at, 1.0)
            melt["ys"][r], melt["s1"][r], _ = evaluate(cs, at, order=1)
            melt["yl"][r], melt["l1"][r], _ = evaluate(cl, at, order=1)

        # The blocks are open to another thread while they last (lend_a_hand).
        work = self._pair_blocks = SharedBlocks(k, CHUNK, block)
        try:
            work.run()
            work.wait()
        finally:
            self._pair_blocks = None
        self._melting = melt
        return {
            "s": s,
            "l": lq,
            "anchor": anchor,
            "tm": tm,
            "checkable": checkable,
            "extrapolation": extrapolation,
            "crossings": count,
            "significant_crossings": significant,
            "T": t_cross,
            "y": y_cross,
            "slope_diff": slope_diff,
        }

    def lend_a_hand(self) -> None:
        """Take blocks of the pairs' crossing search while another thread is making the
        pairs; return when none is left (at once when none is being made).
        """
        work = self._pair_blocks
        if work is not None:
            work.run()

    @cached_property
    def melting_slopes(self) -> dict[str, np.ndarray]:
        """Both curves of every pair, ln P (``ys``, ``yl``) and d ln P/dT (``s1``, ``l1``),
        at ``at``: the reference melting point, else the crossing (1 K where there is
        neither; the user masks those).
        Shared by ``melting-point-mismatch`` and ``fusion-enthalpy-mismatch``.
        """
        self.pairs  # noqa: B018  (made with the pairs, block by block)
        return self._melting

    def pair_finding(
        self, check: str, k: int, message: str, evidence: dict, severity: Severity | None = None
    ) -> Finding:
        """A finding about pair ``k`` (both record ids, located at the solid record)."""
        pr = self.pairs
        s, lq = int(pr["s"][k]), int(pr["l"][k])
        return self.finding(
            check,
            s,
            message,
            evidence,
            records=(self.id(s), self.id(lq)),
            severity=severity,
        )


def _crossings(
    cs: Curves,
    cl: Curves,
    anchor: np.ndarray,
    w: float,
    grid: int,
    tol: float,
    exact: bool = True,
):
    """The crossing of each solid curve ``cs`` with its liquid curve ``cl`` nearest the
    anchor, in the window [anchor/(1+w), anchor (1+w)]: sign changes of y_s - y_l on a grid
    in x = 1/T, then safeguarded Newton on the bracket nearest the anchor.

    Where y_s - y_l = A + B x - C ln x (both curves log-linear without a D term, the common
    case) the grid's verdicts follow from four of its points (:func:`_convex_crossings`),
    with the same results; ``exact=False`` scans every grid point (for the test that
    compares the two).

    Returns the number of sign changes, the number of significant ones, and at the
    crossing its temperature [K], ln P and d(y_s - y_l)/dT [1/K] (NaN without one).
    """
    x_hi = (1.0 + w) / anchor
    x_lo = 1.0 / (anchor * (1.0 + w))
    simple, diff = _difference_curves(cs, cl)
    d_a, d_b, d_c = (np.ascontiguousarray(diff.params[:, i]) for i in range(3))
    k = anchor.size
    count = np.zeros(k, dtype=np.int64)
    significant = np.zeros(k, dtype=np.int64)
    lo_b = np.full(k, np.nan)
    hi_b = np.full(k, np.nan)
    root = np.full(k, np.nan)
    with np.errstate(invalid="ignore"):
        fast = (
            simple
            & np.isfinite(diff.params[:, :3]).all(axis=1)
            & (x_lo > 0)
            & (x_hi > x_lo)
            & np.isfinite(x_hi)
        )
    if not exact:
        fast[:] = False
    if fast.any():
        f = np.flatnonzero(fast)
        count[f], significant[f], root[f] = _convex_crossings(
            diff.take(f), x_lo[f], x_hi[f], 1.0 / anchor[f], grid, tol
        )
    slow = np.flatnonzero(~fast)
    if slow.size:
        count[slow], significant[slow], lo_b[slow], hi_b[slow] = _scan_crossings(
            cs.take(slow),
            cl.take(slow),
            simple[slow],
            diff.take(slow),
            x_lo[slow],
            x_hi[slow],
            1.0 / anchor[slow],
            grid,
            tol,
        )

    def fun(x, r):
        t = 1.0 / x
        g = np.empty(r.size)
        dg = np.empty(r.size)
        easy = simple[r]
        if easy.any():  # the difference curve in x = 1/T: A + B x - C ln x
            re, xe = r[easy], x[easy]
            g[easy] = d_a[re] + d_b[re] * xe - d_c[re] * np.log(xe)
            dg[easy] = d_b[re] - d_c[re] / xe
        if (~easy).any():
            rr, tt = r[~easy], t[~easy]
            ys, ys1, _ = evaluate(cs.take(rr), tt, order=1)
            yl, yl1, _ = evaluate(cl.take(rr), tt, order=1)
            g[~easy], dg[~easy] = ys - yl, -(ys1 - yl1) * tt * tt
        return g, dg

    has = slow[count[slow] > 0]
    if has.size:
        root[has] = bracketed_root(lambda x, r: fun(x, has[r]), lo_b[has], hi_b[has])
    with np.errstate(divide="ignore", invalid="ignore"):
        t_cross = 1.0 / root
        at = np.where(np.isnan(t_cross), anchor, t_cross)
        ys, ys1, _ = evaluate(cs, at, order=1)
        _, yl1, _ = evaluate(cl, at, order=1)
    none = np.isnan(t_cross)
    return (
        count,
        significant,
        t_cross,
        np.where(none, np.nan, ys),
        np.where(none, np.nan, ys1 - yl1),
    )


def match(key_a: np.ndarray, key_b: np.ndarray) -> tuple[np.ndarray, np.ndarray]:
    """Every (i, j) with key_a[i] == key_b[j] (an inner join on integer keys), vectorized;
    negative keys never match.
    """
    a = np.flatnonzero(key_a >= 0)
    b = np.flatnonzero(key_b >= 0)
    keys = np.concatenate([key_a, key_b])
    ia, ib = same_key_pairs(keys, a, b + key_a.size)
    return ia, ib - key_a.size


def same_key_pairs(keys: np.ndarray, a: np.ndarray, b: np.ndarray) -> tuple[np.ndarray, np.ndarray]:
    """Every (i, j) with i from ``a`` and j from ``b`` and keys[i] == keys[j], vectorized.

    Parameters
    ----------
    keys : ndarray of int
        A key per row (e.g. the substance code).
    a, b : ndarray of int
        Row indices of the two sides.

    Returns
    -------
    ia, ib : ndarray of int
        The pairs, grouped by ``a`` in its order.
    """
    if a.size == 0 or b.size == 0:
        return np.empty(0, dtype=np.int64), np.empty(0, dtype=np.int64)
    order = np.argsort(keys[b], kind="stable")
    b_sorted = b[order]
    kb = keys[b_sorted]
    ka = keys[a]
    lo = np.searchsorted(kb, ka, side="left")
    hi = np.searchsorted(kb, ka, side="right")
    counts = hi - lo
    ia = np.repeat(a, counts)
    starts = np.repeat(lo - np.concatenate(([0], np.cumsum(counts)[:-1])), counts)
    ib = b_sorted[starts + np.arange(ia.size)]
    return ia.astype(np.int64), ib.astype(np.int64)


def _blocks(c: Curves, simple: np.ndarray, plain: bool = True):
    """Index blocks of at most CHUNK rows of one kind each: log-linear curves without a D
    term (``simple``; taken in closed form, left out with ``plain=False``), the other
    log-linear and Antoine curves (ends and stationary points), Wagner curves (a grid).
    """
    wagner = c.family == 2
    groups = [np.flatnonzero(~simple & ~wagner), np.flatnonzero(wagner)]
    if plain:
        groups.insert(0, np.flatnonzero(simple))
    for group in groups:
        for a in range(0, group.size, CHUNK):
            yield group[a : a + CHUNK]


def _plain_extrema(c: Curves, part: np.ndarray, rows: np.ndarray, out: dict):
    """Range extrema of the log-linear curves ``part`` of ``c`` (no D term), whose records
    are ``rows``, written into ``out``; returns ln P at the two ends of the ranges.

    y = A + B/T + C ln T has dH = R (C T - B), linear in T, so dH and ln P (monotone
    wherever dH keeps its sign, and taken at the ends as for the other forms) have their
    extrema at the range ends. These are the reductions the blocks make over two sampled
    columns, done over whole 1-D columns: the same values, to the bit, at a fraction of
    the cost (a test compares the two paths).
    """
    a, b, cc = (c.params[part, i] for i in range(3))
    lo, hi = c.t_min[part], c.t_max[part]
    with np.errstate(divide="ignore", invalid="ignore", over="ignore"):
        y_lo = a + b * (1.0 / lo) + cc * np.log(lo)  # as the engine evaluates it
        y_hi = a + b * (1.0 / hi) + cc * np.log(hi)
        h_lo = R * (cc * lo - b)
        h_hi = R * (cc * hi - b)
        nan_lo, nan_hi = np.isnan(h_lo), np.isnan(h_hi)
        # argmin over (lo, hi) with NaN as +inf: the high end only where strictly lower
        at_hi = np.where(nan_hi, np.inf, h_hi) < np.where(nan_lo, np.inf, h_lo)
        out["h_min"][rows] = np.where(nan_lo | nan_hi, np.nan, np.where(at_hi, h_hi, h_lo))
        out["h_min_T"][rows] = np.where(at_hi, hi, lo)
        out["h_max"][rows] = np.maximum(
            np.where(nan_lo, -np.inf, h_lo), np.where(nan_hi, -np.inf, h_hi)
        )
        finite = np.isfinite(y_lo) & np.isfinite(y_hi)
        out["y_min"][rows] = np.where(finite, np.minimum(y_lo, y_hi), np.nan)
        out["y_max"][rows] = np.where(finite, np.maximum(y_lo, y_hi), np.nan)
    return y_lo, y_hi


def _convex_crossings(diff: Curves, x_lo, x_hi, x_anchor, grid: int, tol: float):
    """:func:`_scan_crossings` and the root nearest the anchor, for difference curves
    g(x) = A + B x - C ln x, from four grid points instead of all.

    g'' = C / x^2 keeps one sign, so g is convex (C >= 0) or concave (C < 0) and so is
    its sampled sequence. A convex sequence falls to its smallest value and then rises:
    it changes sign at most once on each side of that point, its points below -tol form one
    block, and those above +tol lie before and after it. So the grid's counts follow from
    its two ends and its extreme point, which lies at one of the two grid points beside the
    stationary point x* = C/B (or at an end). Each sign change is then solved on its side
    of the extreme point, and the one whose grid cell is nearest the anchor is kept, as the
    scan keeps the bracket nearest it. Exact zeros at grid points, which the scan does not
    count as sign changes, are the one case that can differ (a test compares both paths).

    Returns
    -------
    count, significant : ndarray of int
    root : ndarray
        x = 1/T of the crossing nearest the anchor, NaN where there is none. [1/K]
    """
    k = x_lo.size
    a, b, c = (np.ascontiguousarray(diff.params[:, i]) for i in range(3))
    span = x_hi - x_lo
    last = grid - 1
    frac = np.linspace(0.0, 1.0, grid)
    with np.errstate(divide="ignore", invalid="ignore", over="ignore"):
        u = (c / b - x_lo) / span * last  # x* in grid steps
    u = np.where(np.isfinite(u), np.clip(u, 0, last), 0.0)
    idx = np.column_stack([np.zeros(k), np.full(k, float(last)), np.floor(u), np.ceil(u)]).astype(
        np.int64
    )
    xs = x_lo[:, None] + span[:, None] * frac[idx]  # the grid's own points, bit for bit
    with np.errstate(divide="ignore", invalid="ignore"):
        f = ln_p_rows(diff, 1.0 / xs)  # as the scan evaluates them
    convex = c >= 0
    pick = np.where(convex, np.argmin(f, axis=1), np.argmax(f, axis=1))
    rows = np.arange(k)
    f_ext = f[rows, pick]
    f0, f1 = f[:, 0], f[:, 1]
    left = np.sign(f0) * np.sign(f_ext) < 0
    right = np.sign(f_ext) * np.sign(f1) < 0
    count = left.astype(np.int64) + right
    with np.errstate(invalid="ignore"):
        significant = np.where(
            convex,
            (f_ext < -tol) * ((f0 > tol).astype(np.int64) + (f1 > tol)),
            (f_ext > tol) * ((f0 < -tol).astype(np.int64) + (f1 < -tol)),
        )
    x_ext = xs[rows, pick]

    roots = np.full((k, 2), np.nan)
    for side, has, lo, hi in ((0, left, x_lo, x_ext), (1, right, x_ext, x_hi)):
        h = np.flatnonzero(has)
        if h.size:
            start, other = (lo[h], hi[h]) if side == 0 else (hi[h], lo[h])
            roots[h, side] = _newton_from_end(a[h], b[h], c[h], start, other)
    # the grid cell of each root, and the distance of that cell's middle to the anchor
    with np.errstate(invalid="ignore"):
        cell = np.clip(np.floor((roots - x_lo[:, None]) / span[:, None] * last), 0, last - 1)
    cell = np.where(np.isfinite(cell), cell, 0).astype(np.int64)
    x_a = x_lo[:, None] + span[:, None] * frac[cell]
    x_b = x_lo[:, None] + span[:, None] * frac[cell + 1]
    dist = np.where(np.isfinite(roots), np.abs(0.5 * (x_b + x_a) - x_anchor[:, None]), np.inf)
    root = np.where(dist[:, 1] < dist[:, 0], roots[:, 1], roots[:, 0])
    return count, significant, root


def _newton_from_end(a, b, c, start, other, iterations: int = 40, xtol: float = 1e-14):
    """The root of g(x) = a + b x - c ln x between ``start`` and ``other``, by Newton's
    method from ``start``, for a g that is convex or concave on the bracket with g(start)
    on the side of its curvature (g(start) g'' > 0).

    Fourier's condition: from such an end the tangent lies between the curve and the
    chord, so each Newton step lands between the current point and the root, and the
    iterates approach the root monotonically without leaving the bracket. No safeguard is
    needed, so a step is six array operations instead of the twenty of
    :func:`bracketed_root`, which takes over for a row that has not converged after
    ``iterations`` steps (a near-double root, where Newton is slow), from its last
    iterate. In :func:`_convex_crossings` a bracket always starts from its outer end: the
    extreme point lies between the two sign changes, and g there has the curvature's
    opposite sign.
    """
    x = np.array(start, dtype=float)
    active = np.arange(x.size)
    xa, aa, ba, ca = x, a, b, c
    way = np.sign(other - start)  # the direction of every step
    wa = way
    with np.errstate(divide="ignore", invalid="ignore", over="ignore"):
        for _ in range(iterations):
            step = (aa + ba * xa - ca * np.log(xa)) / (ba - ca / xa)
            # the steps go one way until g is rounding noise: a step back (or none) ends
            back = ~(step * wa < 0)  # also a NaN step (checked below)
            xa = np.where(back, xa, xa - step)
            done = back | (np.abs(step) <= xtol * np.abs(xa))
            if done.any():
                x[active[done]] = xa[done]
                keep = ~done
                active, xa, wa = active[keep], xa[keep], wa[keep]
                aa, ba, ca = aa[keep], ba[keep], ca[keep]
            if not active.size:
                break
        lo, hi = np.minimum(start, other), np.maximum(start, other)
        g_x = a + b * x - c * np.log(x)
        # not converged, or not a root inside the bracket (not expected): the bracket's
        # own safeguarded search
        bad = np.flatnonzero(~((x >= lo) & (x <= hi) & np.isfinite(g_x)))
        redo = np.union1d(active, bad)
        if redo.size:
            x[redo] = bracketed_root(
                lambda xx, r: (
                    a[redo[r]] + b[redo[r]] * xx - c[redo[r]] * np.log(xx),
                    b[redo[r]] - c[redo[r]] / xx,
                ),
                start[redo],
                other[redo],
            )
    return x


def _difference_curves(cs: Curves, cl: Curves) -> tuple[np.ndarray, Curves]:
    """Where both curves are log-linear without a D term, y_s - y_l is itself such a curve
    (A, B, C subtract): returns that mask and the difference curves (zeros elsewhere).
    """
    simple = (cs.family == 0) & (cl.family == 0) & (cs.params[:, 3] == 0) & (cl.params[:, 3] == 0)
    d = np.zeros_like(cs.params)
    d[simple, :3] = cs.params[simple, :3] - cl.params[simple, :3]
    return simple, Curves(np.zeros_like(cs.family), d, cs.t_min, cs.t_max)


def _difference(
    cs: Curves, cl: Curves, simple: np.ndarray, diff: Curves, ts: np.ndarray
) -> np.ndarray:
    """y_s - y_l at ``ts`` (one row per pair), one evaluation where the difference is itself
    a log-linear curve (``simple``).
    """
    if simple.all():
        return ln_p_rows(diff, ts)
    f = np.empty(ts.shape)
    if simple.any():
        f[simple] = ln_p_rows(diff.take(simple), ts[simple])
    rest = ~simple
    f[rest] = ln_p_rows(cs.take(rest), ts[rest]) - ln_p_rows(cl.take(rest), ts[rest])
    return f


def _scan_crossings(
    cs: Curves,
    cl: Curves,
    simple: np.ndarray,
    diff: Curves,
    x_lo,
    x_hi,
    x_anchor,
    grid: int,
    tol: float,
):
    """Sign changes of y_s - y_l on a grid in x = 1/T over [x_lo, x_hi], for each pair.

    Returns the number of sign changes, the number of *significant* ones (between points
    where the curves differ by more than ``tol``), and the bracket [lo, hi] in x of the
    change nearest ``x_anchor`` (NaN where there is none).
    """
    k = x_lo.size
    frac = np.linspace(0.0, 1.0, grid)[None, :]
    xs = x_lo[:, None] + (x_hi - x_lo)[:, None] * frac
    with np.errstate(divide="ignore", invalid="ignore"):
        ts = 1.0 / xs
        f = _difference(cs, cl, simple, diff, ts)
        sign = np.sign(f)
        finite = np.isfinite(f)
        change = (sign[:, 1:] * sign[:, :-1] < 0) & finite[:, 1:] & finite[:, :-1]
        count = change.sum(axis=1)
        sig = np.where(np.abs(f) > tol, sign, 0.0)
    # previous non-zero sign before each column (a forward fill of column indices)
    cols = np.arange(grid)[None, :]
    last = np.maximum.accumulate(np.where(sig != 0, cols, -1), axis=1)
    prev = np.concatenate([np.full((k, 1), -1), last[:, :-1]], axis=1)
    prev_sign = np.where(prev >= 0, np.take_along_axis(sig, np.maximum(prev, 0), 1), 0)
    significant = ((sig != 0) & (prev_sign != 0) & (sig != prev_sign)).sum(axis=1)
    mid = 0.5 * (xs[:, 1:] + xs[:, :-1])
    dist = np.where(change, np.abs(mid - x_anchor[:, None]), np.inf)
    j = np.argmin(dist, axis=1)
    has = count > 0
    idx = np.arange(k)
    lo = np.where(has, xs[idx, j], np.nan)
    hi = np.where(has, xs[idx, np.minimum(j + 1, grid - 1)], np.nan)
    return count, significant, lo, hi


def ln_p_rows(curves: Curves, temperature: np.ndarray) -> np.ndarray:
    """Ln P of curve i at the temperatures of row i of ``temperature`` (shape (n, m))."""
    return evaluate(curves, temperature, order=0)[0]


def _evidence_rows(evidence: dict, n: int) -> list[dict]:
    """``n`` evidence dicts from columns (see :meth:`AuditContext.findings`)."""
    if not evidence:
        return [{} for _ in range(n)]
    columns = []
    for value in evidence.values():
        if isinstance(value, np.ndarray):
            col = value.tolist()
            if value.dtype.kind == "f":
                for i in np.flatnonzero(~np.isfinite(value)).tolist():
                    col[i] = None
        elif isinstance(value, list):
            col = value
        else:
            col = itertools.repeat(_clean({"v": value})["v"], n)
        columns.append(col)
    keys = list(evidence)
    return [dict(zip(keys, vals, strict=True)) for vals in zip(*columns, strict=True)]


def _clean(evidence: dict) -> dict:
    """Evidence as JSON-ready Python values: numpy scalars unwrapped, non-finite as None."""
    for k, v in evidence.items():
        if type(v) is float or type(v) is np.float64:
            if not math.isfinite(v):
                evidence[k] = None
        elif isinstance(v, np.generic):
            v = v.item()
            evidence[k] = None if isinstance(v, float) and not math.isfinite(v) else v
    return evidence
