"""What every check reads: the table's records as arrays, their curves and references.

Built once per audit; the expensive shared pieces (range extrema, pairs and their crossings,
source groups) are computed on first use and cached, so each check stays a few lines of
array code.
"""

from __future__ import annotations

from collections.abc import Callable
from functools import cached_property
from typing import TYPE_CHECKING, Any, NamedTuple

import numpy as np
import pandas as pd
import pyarrow as pa

from .._columns import TEXT, codes, eq, text_codes
from ..equations.engine import (
    Curves,
    curves_from_frame,
)
from ..readers.table import Table
from ..runtime import DEFAULT, Runtime, SharedBlocks, in_thread
from ._registry import Severity
from .blocks import ValueColumn
from .crossings import MeltingSlopes, Pairs, find_pairs
from .evidence import EvidenceColumn, clean
from .extrema import RangeExtrema, extrema_over_ranges
from .finding import Finding, Findings
from .hits import Hit, Hits
from .joins import match, same_key_pairs

if TYPE_CHECKING:
    from ..policy import Policy

__all__ = [
    "AuditContext",
    "P_STANDARD",
    "LN_P_STANDARD",
    "match",
    "same_key_pairs",
    "stated_tolerance",
]

#: Standard pressure of the normal boiling point and of Trouton's rule. [Pa]
P_STANDARD = 101325.0
LN_P_STANDARD = float(np.log(P_STANDARD))


class ReferenceRows(NamedTuple):
    """The reference values of one quantity, one per row of the references table."""

    rows: np.ndarray  # rows of the references table
    codes: np.ndarray  # the substance code of each
    value: np.ndarray  # the value in SI units
    uncertainty: np.ndarray  # its stated absolute uncertainty in SI units, NaN where none


def stated_tolerance(th: dict[str, float], u: np.ndarray) -> tuple[np.ndarray, np.ndarray]:
    """A check's tolerance where a reference states its uncertainty: ``factor`` times that
    uncertainty ``u``, carried into the check's own scale (NaN where none is stated), where
    that is larger than ``tolerance``, else ``tolerance``. Returns (tolerance, whether the
    stated uncertainty set it): one rule for every check that compares with a reference.
    """
    with np.errstate(invalid="ignore"):
        stated = th["factor"] * u
        by_stated = stated > th["tolerance"]  # False where none is stated
    return np.where(by_stated, stated, th["tolerance"]), by_stated


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
        # join below is on these, with numpy. The hashing of the names (a large share of the
        # audit at 10^6 substances: docs/performance.md) releases the GIL: a large table does it on
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
        self._memo: dict[tuple, Any] = {}  # products several checks read: memo()
        lo, hi = self.curves.t_min, self.curves.t_max
        with np.errstate(invalid="ignore"):
            ok = np.isfinite(lo) & np.isfinite(hi) & (lo > 0) & (lo <= hi)
        problems = table.problems
        if len(problems):
            bad = problems.loc[problems["rule"].isin(["range", "pole"])]
            rows = self.rows_of(bad["file"], bad["line"])
            rows = rows[rows >= 0]
            # a range of one temperature is still a temperature the source vouches for: the
            # equation is tested there (range-invalid warns that there is no range)
            ok[rows[~(lo[rows] == hi[rows])]] = False
        self.evaluable = ok
        self._pair_blocks: SharedBlocks | None = None
        self._melting: MeltingSlopes | None = None

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
        """Forget the range extrema, the pairs (a few hundred bytes per record) and what
        :meth:`memo` keeps; they are computed again if asked for.
        """
        self.__dict__.pop("range_extrema", None)
        self.__dict__.pop("pairs", None)
        self.__dict__.pop("melting_slopes", None)
        self._memo.clear()
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

    def rows_by_id(self, ids) -> dict[str, int]:
        """The record row of each id in ``ids`` (ids that no record has are left out)."""
        import pyarrow.compute as pc

        wanted = pa.array([str(i) for i in set(ids)], type=pa.string())
        hit = pc.is_in(self._id_values, value_set=wanted).to_numpy(zero_copy_only=False)
        rows = np.flatnonzero(hit)
        found = self._id_values.take(pa.array(rows)).to_pylist()
        return dict(zip(found, rows.tolist(), strict=True))

    @cached_property
    def _file_names(self) -> np.ndarray:
        """The table's files by their code, as Python strings."""
        return np.array([str(f) for f in self._files.tolist()], dtype=object)

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
        return self._reference_layout[0]

    @cached_property
    def _reference_layout(self) -> tuple[dict[str, np.ndarray], frozenset[str]]:
        """For each quantity, the first reference value (SI units) per substance code; and
        the quantities of which some substance has several rows (one pass for both).
        """
        refs = self.table.references
        out: dict[str, np.ndarray] = {}
        several: set[str] = set()
        if not len(refs):
            return out, frozenset()
        ref_codes = self.ref_codes
        q_code, q_names = codes(refs["quantity"])
        value = refs["value_si"].to_numpy(dtype=float)
        for k, q in enumerate(q_names):
            m = (q_code == k) & (ref_codes >= 0)
            first_codes, first = np.unique(ref_codes[m], return_index=True)
            arr = np.full(self.n_names, np.nan)
            arr[first_codes] = value[m][first]
            out[q] = arr
            if first_codes.size < np.count_nonzero(m):
                several.add(str(q))
        return out, frozenset(several)

    @cached_property
    def _ref_uncertainty_by_code(self) -> dict[str, np.ndarray]:
        """For each quantity, the stated absolute uncertainty (SI units) of the first
        reference value per substance code, NaN where none is stated.
        """
        refs = self.table.references
        out: dict[str, np.ndarray] = {}
        if not len(refs) or "uncertainty" not in refs:
            return out
        ref_codes = self.ref_codes
        q_code, q_names = codes(refs["quantity"])
        for k, q in enumerate(q_names):
            m = (q_code == k) & (ref_codes >= 0)
            first_codes, first = np.unique(ref_codes[m], return_index=True)
            u = self._reference_uncertainty_si(str(q), np.flatnonzero(m)[first])
            if u is None:
                continue
            arr = np.full(self.n_names, np.nan)
            arr[first_codes] = u
            out[q] = arr
        return out

    def _reference_uncertainty_si(self, quantity: str, rows: np.ndarray) -> np.ndarray | None:
        """The stated absolute uncertainty (SI units) of reference rows ``rows`` of
        ``quantity``, NaN where none is stated; None for a quantity without a unit scale.
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
        kind = QUANTITY_UNITS.get(quantity, ("", ()))[0]
        scale = {
            "temperature": lambda n: temperature_affine(n)[0],
            "pressure": pressure_factor,
            "enthalpy": lambda n: ENTHALPY_UNITS[n],
            "molar_mass": lambda n: MOLAR_MASS_UNITS[n],
            "entropy": lambda n: ENTROPY_UNITS[n],
        }.get(kind)
        if scale is None:
            return None
        if "uncertainty" not in refs:
            return np.full(rows.size, np.nan)
        u = refs["uncertainty"].to_numpy(dtype=float, na_value=np.nan)
        unit_code, unit_names = codes(refs["unit"])
        unit_names = [str(n) for n in unit_names] + ["None"]  # code -1: an empty cell
        # each unit's factor once, for the units these rows use
        used = unit_code[rows]
        factor = np.full(len(unit_names), np.nan)
        for c in np.unique(used).tolist():
            factor[c] = scale(unit_names[c])
        return u[rows] * factor[used]

    def references_of(self, quantity: str) -> ReferenceRows:
        """Every reference value of ``quantity`` that names a known substance, in the order
        of the table (a substance may have several, from different sources).
        """
        return self.memo(("references of", quantity), lambda: self._references_of(quantity))

    def _references_of(self, quantity: str) -> ReferenceRows:
        """:meth:`references_of`, computed."""
        refs = self.table.references
        if not len(refs):
            empty = np.empty(0, dtype=np.int64)
            return ReferenceRows(empty, empty, np.empty(0), np.empty(0))
        rows = np.flatnonzero(eq(refs["quantity"], quantity) & (self.ref_codes >= 0))
        value = refs["value_si"].to_numpy(dtype=float)[rows]
        u = self._reference_uncertainty_si(quantity, rows)
        out = ReferenceRows(
            rows,
            self.ref_codes[rows],
            value,
            np.full(rows.size, np.nan) if u is None else u,
        )
        for arr in out:  # shared by every check that asks (memo): read only
            arr.flags.writeable = False
        return out

    def nearest_references(
        self,
        quantity: str,
        rows: np.ndarray,
        target: np.ndarray,
        log: bool = False,
        lower_on_tie: bool = False,
    ) -> tuple[np.ndarray, np.ndarray, ReferenceRows]:
        """For each record of ``rows`` whose substance has a finite reference ``quantity``,
        the value nearest ``target`` (one per record, in ln of the value when ``log``; the
        first in table order on a tie, and where the distance is not a number, or with
        ``lower_on_tie`` the lower value, so that not even a tie depends on the order of
        the rows): returns
        (positions into ``rows``, positions into the returned :class:`ReferenceRows`,
        those reference rows). Every value of a substance is weighed, so that the order of
        the rows never decides which one a record is held to.
        """
        refs = self.references_of(quantity)
        if self.one_value_each(quantity):  # that one, if finite: by the substance code
            j = self._single_position(quantity)[self.codes[rows]]
            i = np.flatnonzero(j >= 0)
            return i, j[i], refs
        i, j = match(self.codes[rows], np.where(np.isfinite(refs.value), refs.codes, -1))
        with np.errstate(invalid="ignore", divide="ignore"):
            value = np.log(refs.value[j]) if log else refs.value[j]
            miss = np.abs(target[i] - value)
        miss = np.where(np.isnan(miss), np.inf, miss)
        tie = refs.value[j] if lower_on_tie else j
        order = np.lexsort((j, tie, miss, i))  # per record the nearest, then by the tie rule
        k = order[np.unique(i[order], return_index=True)[1]]
        return i[k], j[k], refs

    def one_value_each(self, quantity: str) -> bool:
        """Whether no substance has two reference rows of ``quantity`` (then there is
        nothing to weigh between sources).
        """
        return quantity not in self._reference_layout[1]

    def nearest_values(
        self,
        quantity: str,
        rows: np.ndarray,
        target: np.ndarray,
        log: bool = False,
        lower_on_tie: bool = False,
    ) -> tuple[np.ndarray, np.ndarray]:
        """The reference ``quantity`` (SI units) that each record of ``rows`` is held to,
        and its stated uncertainty: of its substance's values the one nearest ``target``
        (:meth:`nearest_references`); NaN where there is none (or none is stated). With one
        value per substance, that value, taken without a join.
        """
        if self.one_value_each(quantity):
            return self.reference(quantity, rows), self.reference_uncertainty(quantity, rows)
        value, u = np.full(rows.size, np.nan), np.full(rows.size, np.nan)
        i, j, refs = self.nearest_references(
            quantity, rows, target, log=log, lower_on_tie=lower_on_tie
        )
        value[i], u[i] = refs.value[j], refs.uncertainty[j]
        return value, u

    def _single_position(self, quantity: str) -> np.ndarray:
        """For a quantity of which no substance has two rows (:meth:`one_value_each`): the
        position in :meth:`references_of` of each substance code's finite value (-1 where it
        has none, and for records of no known substance, code -1).
        """

        def compute() -> np.ndarray:
            refs = self.references_of(quantity)
            ok = np.flatnonzero(np.isfinite(refs.value))
            out = np.full(self.n_names + 1, -1, dtype=np.int64)  # the last: no substance
            out[refs.codes[ok]] = ok
            return out

        return self.memo(("single reference", quantity), compute)

    def reference_row_at(self, row: int) -> tuple[str, str, int]:
        """(source, file, line) of reference row ``row``."""
        source, file, line = self._reference_cells
        return str(source.iat[row]), str(file.iat[row]), int(line[row])

    @cached_property
    def _reference_cells(self) -> tuple[pd.Series, pd.Series, np.ndarray]:
        """The references' source and file columns and their lines, taken from the frame
        once (a cell asked of the frame costs tens of microseconds).
        """
        refs = self.table.references
        return refs["source"], refs["file"], refs["line"].to_numpy()

    def contradicted_candidates(self, ref: np.ndarray, met: np.ndarray) -> list[int]:
        """The reference rows that ``reference-contradicted`` may name, from comparisons of
        records with reference rows ``ref`` (``met``: whether each comparison meets its
        reference): rows compared but never met, whose substance has a reference that some
        comparison meets. The caller confirms each with the records themselves.
        """
        n_refs = len(self.table.references)
        met_any = np.bincount(ref, weights=met, minlength=n_refs) > 0
        tried = np.bincount(ref, minlength=n_refs) > 0
        met_codes = np.zeros(self.n_names + 1, dtype=bool)  # the last: no substance
        met_codes[self.ref_codes[met_any]] = True
        return np.flatnonzero(tried & ~met_any & met_codes[self.ref_codes]).tolist()

    def contradictions(
        self,
        k: np.ndarray,
        ref: np.ndarray,
        met: np.ndarray,
        candidates: list[int] | None = None,
        eligible: np.ndarray | None = None,
    ):
        """The reference rows that records contradict while meeting another reference of
        their substance, from comparisons of record ``k`` with reference row ``ref``
        (``met``: whether each meets it), ordered by record as every caller makes them.

        For each candidate reference row r (``candidates``, ascending; by default
        :meth:`contradicted_candidates`), yields ``(r, at, other, sides)``: ``at`` the
        positions of the comparisons with r (those that are ``eligible``, when given), in
        their order; ``other`` the first reference row met by any of their records (the
        first met comparison of the first such record); ``sides`` whether each of those
        comparisons' record meets ``other``. A candidate whose records meet nothing is left
        out. One pass over the comparisons, whatever the number of candidates.
        """
        if candidates is None:
            candidates = self.contradicted_candidates(ref, met)
        if not len(candidates):
            return
        n_refs = len(self.table.references)
        met_at = np.flatnonzero(met)
        first_met = np.full(int(k.max()) + 1, -1, dtype=np.int64)
        met_k, first = np.unique(k[met_at], return_index=True)
        first_met[met_k] = met_at[first]
        met_keys = np.sort(k[met_at].astype(np.int64) * n_refs + ref[met_at])
        wanted = np.zeros(n_refs, dtype=bool)
        wanted[np.asarray(candidates, dtype=np.int64)] = True
        pick = wanted[ref] if eligible is None else wanted[ref] & eligible
        at_all = np.flatnonzero(pick)
        at_all = at_all[np.argsort(ref[at_all], kind="stable")]
        by_ref = ref[at_all]
        edges = np.flatnonzero(np.r_[True, by_ref[1:] != by_ref[:-1], True])
        for a, b in zip(edges[:-1], edges[1:], strict=False):
            at = at_all[a:b]
            firsts = first_met[k[at]]
            firsts = firsts[firsts >= 0]
            if firsts.size == 0:
                continue
            other = int(ref[firsts.min()])
            keys = k[at].astype(np.int64) * n_refs + other
            found = np.minimum(np.searchsorted(met_keys, keys), met_keys.size - 1)
            yield int(by_ref[a]), at, other, met_keys[found] == keys

    def reference_disagreement(
        self, words: str, row: int, other: int, fmt: Callable[[float], str]
    ) -> tuple[str, str, int]:
        """The opening of a ``reference-contradicted`` message about reference row ``row``
        (a ``words``, such as "critical pressure", written by ``fmt``), which the records
        contradict while they meet reference row ``other``; and the file and line of
        ``row``, where the finding stands.
        """
        value = self.table.references["value_si"]
        source, file, line = self.reference_row_at(row)
        return (
            f"the reference {words} {fmt(float(value.iat[row]))} ({source}) disagrees with the "
            f"substance's other reference {fmt(float(value.iat[other]))} "
            f"({self.reference_row_at(other)[0]}): ",
            file,
            line,
        )

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

    def reference_median(self, quantity: str, rows: np.ndarray | None = None) -> np.ndarray:
        """The median of every reference value of ``quantity`` (SI units) that the substance
        of each record in ``rows`` has (all records by default; with two values, their
        mean); NaN where the table has none. For the readers whose rule of thumb does not
        depend on which evaluation is right (the near-ideal limit 0.7 Tc, a virial
        correction), so that the order of the rows never decides; with one value per
        substance it is that value.
        """
        if self.one_value_each(quantity):
            return self.reference(quantity, rows)
        arr = self.memo(("reference median", quantity), lambda: self._median_of(quantity))
        return arr[self.codes if rows is None else self.codes[rows]]

    def _median_of(self, quantity: str) -> np.ndarray:
        """:meth:`reference_median` per substance code, computed."""
        refs = self.references_of(quantity)
        ok = np.isfinite(refs.value)
        c, v = refs.codes[ok], refs.value[ok]
        order = np.lexsort((v, c))
        c, v = c[order], v[order]
        code, start, count = np.unique(c, return_index=True, return_counts=True)
        arr = np.full(self.n_names, np.nan)
        arr[code] = 0.5 * (v[start + (count - 1) // 2] + v[start + count // 2])
        return arr

    def memo(self, key: tuple, compute: Callable[[], Any]) -> Any:
        """``compute()`` the first time ``key`` is asked for, its result after: for a
        product of this table that several checks read (a module's private helper keys it
        by its own name); :meth:`drop_shared` forgets them.
        """
        if key not in self._memo:
            self._memo[key] = compute()
        return self._memo[key]

    def reference_at(self, quantity: str, code: int) -> tuple[str, str | None, int | None]:
        """(source, file, line) of substance ``code``'s reference ``quantity`` (its first
        row), for a finding that names the reference; ("?", None, None) when there is none.
        """
        refs = self.table.references
        at = np.flatnonzero(eq(refs["quantity"], quantity) & (self.ref_codes == code))
        if not at.size:
            return "?", None, None
        return self.reference_row_at(int(at[0]))

    def melting_reference(self, rows: np.ndarray | None = None) -> np.ndarray:
        """Reference melting point, or the triple-point temperature where none is given. [K]"""
        tm = self.reference("melting_point", rows)
        ttp = self.reference("triple_point_temperature", rows)
        return np.where(np.isnan(tm), ttp, tm)

    def critical_temperature(self) -> np.ndarray:
        """Critical temperature per record: the median of the substance's reference values
        (:meth:`reference_median`), else the Wagner record's own. [K]
        """
        tc = self.reference_median("critical_temperature")
        if not self.any_critical:
            return tc  # all NaN
        own = self.curves.own_t_crit
        return np.where(np.isnan(tc), own, tc)

    @cached_property
    def any_critical(self) -> bool:
        """Whether any record may have a critical temperature: the table has a reference
        value of one, or a Wagner record (asked without the substance codes, which the
        range extrema do not wait for).
        """
        refs = self.table.references
        given = bool(len(refs)) and bool(eq(refs["quantity"], "critical_temperature").any())
        return given or bool(self.curves.is_wagner.any())

    # --- findings ------------------------------------------------------------------------
    def thresholds(self, check: str) -> dict[str, float]:
        """The policy's thresholds of ``check``."""
        return self.policy.thresholds(check)

    def pair_hits(
        self, ks: np.ndarray, messages: list[str], evidence: dict, tier: str | None = None
    ) -> Hits:
        """:class:`Hits` about the pairs ``ks``: both record ids, located at the solid."""
        pr = self.pairs
        ks = np.asarray(ks, dtype=np.int64)
        return Hits(pr.solid[ks], messages, evidence, partners=pr.liquid[ks], tier=tier)

    def finding(self, check: str, severity: Severity, hit: Hit) -> Finding:
        """The finding of one :class:`Hit` of ``check`` (the runner's, with the severity it
        gave the hit's tier): the substance, record id, file and line of its row, unless
        the hit says otherwise.
        """
        row = hit.row
        if row is None:
            substance, records, table_rows = hit.substance or "", hit.records or (), ()
        else:
            substance = self.substance_of(row)
            records = hit.records if hit.records is not None else (self.id(row),)
            table_rows = (int(row),) if hit.records is None else (hit.rows or ())
        file, line = hit.file, hit.line
        if file is None and row is not None:
            file, line = str(self._files[self.file_code[int(row)]]), int(self.line[row])
        return Finding(
            check=check,
            severity=severity,
            substance=substance,
            records=records,
            message=hit.message,
            evidence=clean(hit.evidence),
            file=file,
            line=line,
            rows=table_rows,
        )

    def findings(self, check: str, severity: Severity, hits: Hits) -> Findings:
        """The findings of a block of :class:`Hits` of ``check`` (the runner's, with the
        severity it gave the block's tier): what :meth:`finding` does one at a time (the
        substance, the record ids, the file and line), for checks that report thousands of
        records. Those fields are kept as the rows' codes, ids and lines, taken for the
        block in a few array operations, and made into Python values when read
        (:class:`~vpaudit.checks.blocks.ValueColumn`). Float evidence columns become
        Python floats, with None where not finite.
        """
        rows = np.asarray(hits.rows, dtype=np.int64)
        n = rows.size
        if n == 0:
            return Findings()
        records, partners = hits.records, hits.partners
        codes = self.codes[rows]
        names = self._names.take(pa.array(np.maximum(codes, 0)))
        if (codes < 0).any():  # a record without a substance
            import pyarrow.compute as pc

            names = pc.if_else(pa.array(codes < 0), pa.scalar("", names.type), names)
        ids = self._id_values.take(pa.array(rows))
        if partners is not None:
            partners = np.asarray(partners, dtype=np.int64)
            table_rows = _made(lambda p: _zipped(rows[p].tolist(), partners[p].tolist()), n)
            if records is None:  # the ids of both records
                second = self._id_values.take(pa.array(partners))
                records = _made(lambda p: _zipped(_texts(ids, p), _texts(second, p)), n)
        elif records is None:
            table_rows = _made(lambda p: [(r,) for r in rows[p].tolist()], n)
            records = _made(lambda p: [(i,) for i in _texts(ids, p)], n)
        else:
            table_rows = _made(lambda p: [()] * p.size, n)
        file, line = self.located(rows)
        return Findings.block(
            check,
            severity,
            _made(lambda p: _texts(names, p), n),
            records if isinstance(records, ValueColumn) else ValueColumn.of_list(list(records)),
            hits.messages if isinstance(hits.messages, ValueColumn) else list(hits.messages),
            EvidenceColumn.of_columns(hits.evidence, n),
            file,
            line,
            table_rows,
        )

    def located(self, rows: np.ndarray) -> tuple[ValueColumn, ValueColumn]:
        """The file and the line of records ``rows``, as findings' columns (made when
        read).
        """
        file_code, line, files = self.file_code[rows], self.line[rows], self._file_names
        n = len(rows)
        return (
            _made(lambda p: files[file_code[p]].tolist(), n),
            _made(lambda p: line[p].tolist(), n),
        )

    # --- per-record quantities over the validity range -----------------------------------
    @cached_property
    def range_extrema(self) -> RangeExtrema:
        """:meth:`extrema_over_ranges`, computed once."""
        return self.extrema_over_ranges()

    def extrema_over_ranges(self, closed_form: bool = True) -> RangeExtrema:
        """:func:`vpaudit.checks.extrema.extrema_over_ranges` of this table's records, dCp
        taken up to ``max_pressure`` of ``heat-capacity-sign`` and 0.7 Tc.
        """
        ln_p_max = float(np.log(self.policy.thresholds("heat-capacity-sign")["max_pressure"]))
        t_crit = self.critical_temperature() if self.any_critical else None
        return extrema_over_ranges(
            self.curves,
            self.evaluable,
            ln_p_max,
            t_crit,
            self.runtime.block_rows,
            closed_form,
        )

    # --- solid/liquid pairs --------------------------------------------------------------
    @cached_property
    def pairs(self) -> Pairs:
        """The solid/liquid pairs of the table and their crossings
        (:func:`vpaudit.checks.crossings.find_pairs`), made once.
        """
        pairs, self._melting = find_pairs(self, self._share_blocks)
        return pairs

    def _share_blocks(self, work: SharedBlocks | None) -> None:
        self._pair_blocks = work

    def lend_a_hand(self) -> None:
        """Take blocks of the pairs' crossing search while another thread is making the
        pairs; return when none is left (at once when none is being made).
        """
        work = self._pair_blocks
        if work is not None:
            work.run()

    @cached_property
    def melting_slopes(self) -> MeltingSlopes:
        """Both curves of every pair at the reference melting point, else at the crossing
        (:class:`vpaudit.checks.crossings.MeltingSlopes`); shared by ``melting-point-mismatch``
        and ``fusion-enthalpy-mismatch``.
        """
        self.pairs  # noqa: B018  (made with the pairs, block by block)
        return self._melting


def _made(make: Callable[[np.ndarray], list], n: int) -> ValueColumn:
    """A column of ``n`` values that ``make(positions)`` makes when read."""
    return ValueColumn.made_by(make, n)


def _texts(values: pa.Array, positions: np.ndarray) -> list[str]:
    """The texts at ``positions`` of ``values``, as Python strings (a few, as a row view
    asks for, one by one: an Arrow take costs tens of microseconds).
    """
    if positions.size <= 8:
        return [values[p].as_py() for p in positions.tolist()]
    return values.take(pa.array(positions)).to_pylist()


def _zipped(first: list, second: list) -> list[tuple]:
    """The pairs of ``first`` and ``second``, as tuples."""
    return list(zip(first, second, strict=True))
