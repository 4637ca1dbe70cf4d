"""Turn raw text cells into typed, column-wise tables, and load whole table directories.

The bulk path is column-wise: each column is validated and parsed at once (the number
grammar over a whole column, choices by set membership, the rules by array comparisons).
Only rows that fail get a per-row message. Two kinds of problem are kept apart:

* *read errors* -- input that cannot be read as written (a number that does not parse, an
  unknown column, form, unit or phase, coefficients that do not fit the form): collected and
  raised together as :class:`~vpaudit.errors.TableErrors`;
* *rule problems* -- records that read fine but break a rule of the format (range, source,
  duplicate id, an Antoine pole in range; :mod:`.rules`): returned in :attr:`Table.problems`,
  so that the import rejects the table while the audit reports each as a finding.
"""

from __future__ import annotations

import re
import tomllib
from collections.abc import Iterable
from concurrent.futures import ThreadPoolExecutor
from dataclasses import dataclass, field
from pathlib import Path

import numpy as np
import pandas as pd
import pyarrow as pa
import pyarrow.compute as pc

from .._columns import text_series
from ..equations.forms import COEFFICIENTS, FORMS
from ..errors import Location, PolicyError, TableError, TableErrors
from ..runtime import DEFAULT, PARALLEL_ROWS, Runtime
from ..units import (
    PRESSURE_UNITS,
    QUANTITY_UNITS,
    TEMPERATURE_UNITS,
)
from .files import PARTS, RawFrame, read_raw, table_files
from .grammar import explain, normalize_typography, parse_number_column, parse_number_texts
from .rules import Collector, point_rules, problem, record_rules, reference_rules

__all__ = [
    "PARTS",
    "RawFrame",
    "Table",
    "load_table",
    "read_file",
    "frame_from_raw",
    "RECORD_COLUMNS",
    "REFERENCE_COLUMNS",
    "POINT_COLUMNS",
    "detect_kind",
]


@dataclass(frozen=True)
class _Col:
    name: str
    kind: str  # "text", "number" or "choice"
    required: bool = False  # the column must exist and every cell be filled (a read error)
    choices: tuple[str, ...] = ()
    default: str | None = None
    encode: bool = False  # a low-cardinality text column: dictionary-encode it once


_TEXT_OPTIONAL = ("note", "entered_by", "entered_on", "source_locator", "modification")

RECORD_COLUMNS: tuple[_Col, ...] = (
    _Col("id", "text", True),
    _Col("substance", "text", True),
    _Col("phase", "choice", True, ("solid", "liquid")),
    _Col("modification", "text", encode=True),
    _Col("form", "choice", True, tuple(FORMS)),
    _Col("log_base", "choice", True, ("e", "10")),
    _Col("pressure_unit", "choice", True, tuple(PRESSURE_UNITS)),
    _Col("temperature_unit", "choice", False, tuple(TEMPERATURE_UNITS), "K"),
    *(_Col(c, "number") for c in COEFFICIENTS),
    _Col("t_crit", "number"),
    _Col("p_crit", "number"),
    _Col("t_min", "number"),
    _Col("t_max", "number"),
    _Col("source", "text", encode=True),
    _Col("source_locator", "text", encode=True),
    _Col("uncertainty", "number"),
    _Col("note", "text"),
    _Col("entered_by", "text", encode=True),
    _Col("entered_on", "text"),
)
REFERENCE_COLUMNS: tuple[_Col, ...] = (
    _Col("substance", "text", True),
    _Col("quantity", "choice", True, tuple(QUANTITY_UNITS)),
    _Col("value", "number", True),
    _Col("unit", "text", True, encode=True),
    _Col("at_temperature", "number"),
    _Col("uncertainty", "number"),
    _Col("source", "text", encode=True),
    _Col("note", "text"),
)
POINT_COLUMNS: tuple[_Col, ...] = (
    _Col("substance", "text", True),
    _Col("phase", "choice", True, ("solid", "liquid")),
    _Col("T", "number", True),
    _Col("P", "number", True),
    _Col("temperature_unit", "choice", False, tuple(TEMPERATURE_UNITS), "K"),
    _Col("pressure_unit", "choice", False, tuple(PRESSURE_UNITS), "Pa"),
    _Col("source", "text", encode=True),
    _Col("uncertainty", "number"),
    _Col("note", "text"),
)
_SPECS = {"records": RECORD_COLUMNS, "references": REFERENCE_COLUMNS, "points": POINT_COLUMNS}


#: A unit in brackets at the end of a column name: ``Tmin (K)``, ``P [mmHg]``.
_UNIT_IN_NAME = re.compile(r"\s*[(\[][^)\]]*[)\]]\s*$")


def _squashed(name: str) -> str:
    """A column name without case, spaces, underscores, hyphens and a trailing unit in
    brackets: ``Tmin (K)``, ``T_MIN`` and ``t_min`` are one name to :func:`near_column`.
    """
    name = _UNIT_IN_NAME.sub("", str(name))
    return re.sub(r"[\s_\-]", "", name).casefold()


def near_column(name: str, valid: Iterable[str]) -> str | None:
    """The valid column that ``name`` spells differently only in case, spacing,
    underscores or a unit in brackets (``Substance`` for ``substance``, ``Tmin (K)`` for
    ``t_min``); None when there is none or more than one.
    """
    want = _squashed(name)
    hits = [v for v in valid if v != name and _squashed(v) == want]
    return hits[0] if len(hits) == 1 else None


def detect_kind(columns: Iterable[str]) -> str | None:
    """Recognise a file's kind from its columns: ``form`` means records, ``quantity``
    references, ``T`` and ``P`` points.
    """
    cols = set(columns)
    if "form" in cols:
        return "records"
    if "quantity" in cols:
        return "references"
    if {"T", "P"} <= cols:
        return "points"
    return None


#: Stands for an absent text column until the frame is made (:func:`frame_from_raw`).
_ABSENT_TEXT = object()


def _text_column(raw: RawFrame, name: str, default: str | None = None) -> pa.Array | object:
    """The cells of a text column as an Arrow string array, null (or ``default``) where
    empty; :data:`_ABSENT_TEXT` for an absent column without a default.
    """
    values = raw.cells.get(name)
    n = len(raw)
    if values is None:  # an absent column: one value throughout, without a list of cells
        if default is None:
            return _ABSENT_TEXT  # frame_from_raw gives every such column one null array
        return pa.repeat(pa.scalar(default, pa.string()), n)
    arr = (
        values
        if isinstance(values, pa.Array | pa.ChunkedArray)
        else pa.array(values, type=pa.string())
    )
    blank = pc.or_kleene(pc.is_null(arr), pc.equal(arr, ""))
    if not pc.any(blank).as_py():
        return arr  # nothing to replace: no copy
    return pc.if_else(blank, pa.scalar(default, pa.string()), arr)


def text_categorical(codes: np.ndarray, categories: list) -> pd.Categorical:
    """A categorical of text from its codes, its categories always of object dtype.

    pandas 3 infers a string dtype for a list of text but object for an empty list, and
    refuses to join categoricals whose categories differ in dtype: so a column present in
    one file and absent from another would stop the load. One dtype for every piece.
    """
    return pd.Categorical.from_codes(
        codes, dtype=pd.CategoricalDtype(pd.Index(categories, dtype=object))
    )


def _categorical(arr) -> pd.Categorical:
    """A low-cardinality text column, dictionary-encoded once (codes serve every join)."""
    if isinstance(arr, pa.ChunkedArray):
        arr = arr.combine_chunks()
    enc = pc.dictionary_encode(arr)
    idx = enc.indices.to_numpy(zero_copy_only=False)
    idx = np.where(enc.indices.is_null().to_numpy(zero_copy_only=False), -1, idx)
    return text_categorical(idx.astype(np.int32), enc.dictionary.to_pylist())


def _np(mask) -> np.ndarray:
    """An Arrow boolean result as a numpy bool array (null as False)."""
    return pc.fill_null(mask, False).to_numpy(zero_copy_only=False).astype(bool)


def _original(raw: RawFrame, name: str, i: int) -> str:
    values = raw.cells[name]
    return values[i].as_py() if isinstance(values, pa.Array | pa.ChunkedArray) else values[i]


def _parse_numbers(
    raw: RawFrame, name: str, out: Collector, normalize: bool
) -> tuple[np.ndarray, np.ndarray, np.ndarray]:
    """Parse one numeric column; returns values, their text (:data:`_ABSENT_TEXT` for an
    absent column), and the missing mask.
    """
    cells = raw.cells.get(name)
    if cells is None:  # absent: NaN throughout, held by one read-only value, no array
        n = len(raw)
        return np.broadcast_to(np.float64(np.nan), (n,)), _ABSENT_TEXT, np.ones(n, dtype=bool)
    values, missing, invalid, texts = parse_number_texts(cells)
    texts = texts.to_pylist() if invalid.any() and normalize else texts
    for i in np.flatnonzero(invalid):
        original = _original(raw, name, int(i))
        if normalize:
            new, rewrites = normalize_typography(original)
            v, m, bad = parse_number_column([new])
            if rewrites and not bad[0] and not m[0]:
                values[i] = v[0]
                texts[i] = new.strip(" \t")
                invalid[i] = False
                out.rewrites.append(
                    {
                        "file": raw.path,
                        "line": raw.lines[i],
                        "column": name,
                        "before": original,
                        "after": texts[i],
                        "rewrites": "; ".join(rewrites),
                    }
                )
                continue
        out.error(
            raw,
            int(i),
            name,
            explain(original) if _is_syntax(original) else _range_message(original),
        )
    if isinstance(texts, list):
        texts = pa.array(texts, type=pa.string())
    return values, texts, missing


def _is_syntax(text: str) -> bool:
    from .grammar import _NUMBER

    return _NUMBER.fullmatch(text.strip(" \t")) is None


def _range_message(text: str) -> str:
    from .grammar import NumberSyntaxError, parse_number

    try:
        parse_number(text)
    except NumberSyntaxError as exc:
        return str(exc)
    return f"{text!r} cannot be read"  # pragma: no cover - both paths agree by test


def _column(raw: RawFrame, col: _Col, normalize: bool) -> tuple[dict[str, object], Collector]:
    """Parse and validate one column; returns its entries and its own errors."""
    out = Collector()
    n = len(raw)
    present = col.name in raw.cells
    if col.required and not present:
        near = near_column(col.name, raw.columns)
        out.error(
            raw,
            None,
            col.name,
            f"required column {col.name!r} is missing"
            + (f" (the file has {near!r})" if near is not None else ""),
        )
        if col.kind == "number":
            return {col.name: np.full(n, np.nan), col.name + "_text": pa.nulls(n, pa.string())}, out
        return {col.name: pa.nulls(n, pa.string())}, out
    if col.kind == "number":
        values, texts, missing = _parse_numbers(raw, col.name, out, normalize)
        if col.required and present:
            for i in np.flatnonzero(missing):
                out.error(raw, int(i), col.name, f"{col.name} is empty")
        return {col.name: values, col.name + "_text": texts}, out
    if not present and (col.kind == "choice" or col.encode):
        # an absent column is its default (or empty) throughout: its codes are known
        cats = [col.default] if col.default is not None else []
        fill = 0 if cats else -1
        return {col.name: text_categorical(np.full(n, fill, dtype=np.int8), cats)}, out
    if not present:  # its default throughout, or null (one array for all such columns)
        return {col.name: _text_column(raw, col.name, col.default)}, out
    arr = _text_column(raw, col.name, col.default)
    none = _np(pc.is_null(arr))
    if col.required and present:
        for i in np.flatnonzero(none):
            out.error(raw, int(i), col.name, f"{col.name} is empty")
    if col.kind == "choice" or col.encode:
        cat = _categorical(arr)
        if col.kind == "choice":  # decided once per distinct value, then by code
            allowed = np.isin(np.asarray(cat.categories, dtype=object), list(col.choices))
            c = cat.codes
            bad = (c >= 0) & ~np.append(allowed, True)[np.where(c >= 0, c, allowed.size)]
            for i in np.flatnonzero(bad):
                out.error(
                    raw,
                    int(i),
                    col.name,
                    f"unknown {col.name} {arr[int(i)].as_py()!r}; valid: {', '.join(col.choices)}",
                )
        arr = cat
    return {col.name: arr}, out


def frame_from_raw(
    raw: RawFrame,
    kind: str,
    out: Collector,
    normalize: bool = False,
    runtime: Runtime = DEFAULT,
) -> pd.DataFrame:
    """Validate and parse one raw frame of a known kind, column by column.

    Read errors are appended to ``out.errors``; rule problems to ``out.problems``. The
    returned frame has one typed column per field, ``<field>_text`` beside each number
    (the text it was read from), and ``file`` and ``line``.
    """
    spec = _SPECS[kind]
    known = {c.name for c in spec}
    for name in raw.columns:
        if name not in known:
            near = near_column(name, known)
            # a unit written into the header is not read: it goes in the unit columns
            unit = (
                " and a unit goes in its own column, not in the header"
                if _UNIT_IN_NAME.search(str(name))
                else ""
            )
            out.error(
                raw,
                None,
                name,
                f"unknown column {name!r} for {kind}; "
                + (
                    f"did you mean {near!r}? (column names are matched exactly{unit})"
                    if near is not None
                    else f"valid columns: {', '.join(c.name for c in spec)}"
                ),
            )
    n = len(raw)
    # Each column is parsed on its own (pyarrow's kernels release the GIL, so large tables
    # use both cores); errors are merged back in column order, so output is deterministic.
    workers = runtime.workers()
    ids = raw.cells.get("id") if kind == "records" else None
    distinct: list[int] = []

    def count_ids() -> None:  # for the duplicate-id rule, beside the columns' work
        if isinstance(ids, pa.Array | pa.ChunkedArray):
            distinct.append(len(pc.unique(ids)))

    if n >= runtime.parallel_rows and workers > 1:
        with ThreadPoolExecutor(max_workers=workers) as pool:
            counted = pool.submit(count_ids)
            results = list(pool.map(lambda c: _column(raw, c, normalize), spec))
            counted.result()
    else:
        results = [_column(raw, c, normalize) for c in spec]
        count_ids()
    data: dict[str, object] = {}
    for entries, local in results:
        data.update(entries)
        out.errors.extend(local.errors)
        out.rewrites.extend(local.rewrites)
    # the absent text columns (and the text of absent numbers) share one null array
    if any(v is _ABSENT_TEXT for v in data.values()):
        nulls = pa.nulls(n, pa.string())
        data = {k: nulls if v is _ABSENT_TEXT else v for k, v in data.items()}
    data["file"] = text_categorical(np.zeros(n, dtype=np.int8), [raw.path])
    data["line"] = np.asarray(raw.lines, dtype=np.int64)
    # copy=False keeps one block per column: no consolidation copy of the numbers
    frame = pd.DataFrame(
        {
            k: text_series(v).array if isinstance(v, pa.Array | pa.ChunkedArray) else v
            for k, v in data.items()
        },
        copy=False,
    )
    if distinct:
        frame.attrs["distinct_ids"] = distinct[0]  # cells as written, empty ones included
    if kind == "records":
        record_rules(frame, raw, out)
    elif kind == "references":
        reference_rules(frame, raw, out)
    else:
        point_rules(frame, raw, out)
    return frame


@dataclass
class Table:
    """A whole table, column-wise: records, references and points as DataFrames.

    Attributes
    ----------
    records, references, points : pandas.DataFrame
        Typed columns (see :data:`RECORD_COLUMNS` ...), ``<field>_text`` beside each number,
        and ``file``/``line`` of each row.
    problems : pandas.DataFrame
        Rule problems of rows that read fine (file, line, column, rule, message, id).
    rewrites : list of dict
        Typography rewrites applied under the explicit opt-in, with location and before/after.
    policy_path : Path or None
        The table's ``vpaudit.toml``, when there is one.
    root : Path or None
        The table directory (or the single file's folder).
    """

    records: pd.DataFrame
    references: pd.DataFrame
    points: pd.DataFrame
    problems: pd.DataFrame
    rewrites: list[dict] = field(default_factory=list)
    policy_path: Path | None = None
    root: Path | None = None
    files: list[str] = field(default_factory=list)


_PROBLEM_COLUMNS = ["file", "line", "column", "rule", "message", "id", "substance"]


def _empty(kind: str) -> pd.DataFrame:
    raw = RawFrame("<none>", [], {}, [])
    return frame_from_raw(raw, kind, Collector())


def _finish(parts: dict[str, list[pd.DataFrame]], out: Collector, **kw) -> Table:
    frames = {}
    for kind in PARTS:
        pieces = [p for p in parts[kind] if len(p)]
        if len(pieces) > 1:  # unify dictionaries so categorical columns stay categorical
            for col in pieces[0].columns:
                if all(isinstance(p[col].dtype, pd.CategoricalDtype) for p in pieces):
                    cats = pd.api.types.union_categoricals([p[col] for p in pieces]).categories
                    for p in pieces:
                        p[col] = p[col].cat.set_categories(cats)
            frames[kind] = pd.concat(pieces, ignore_index=True)
        elif pieces:
            frames[kind] = pieces[0].reset_index(drop=True)
        else:
            frames[kind] = _empty(kind)
    rec = frames["records"]
    pieces = [p for p in parts["records"] if len(p)]
    # one records file whose ids were counted while reading: decided without a second pass
    known = len(pieces) == 1 and pieces[0].attrs.get("distinct_ids") == len(rec)
    if len(rec) and not known and len(pc.unique(pa.array(rec["id"]))) < len(rec):
        dup = rec["id"].duplicated(keep=False).to_numpy() & rec["id"].notna().to_numpy()
        rows = np.flatnonzero(dup)
        firsts = rec.loc[dup].groupby("id")["line"].transform("min")
        files = rec.loc[dup].groupby("id")["file"].transform("first")
        problem(
            out,
            rec,
            rows,
            "duplicate-id",
            "id",
            [
                f"id {rec['id'].iat[i]!r} is used more than once (first at "
                f"{files.iat[k]}:{firsts.iat[k]})"
                for k, i in enumerate(rows)
            ],
        )
    if out.errors:
        raise TableErrors(out.errors)
    problems = pd.DataFrame(out.problems, columns=_PROBLEM_COLUMNS)
    return Table(
        frames["records"], frames["references"], frames["points"], problems, out.rewrites, **kw
    )


def read_file(path: str | Path, kind: str | None = None, normalize: bool = False) -> Table:
    """Read a single table file of any kind (recognised from its columns)."""
    return _load([Path(path)], {Path(path): kind}, normalize, root=Path(path).parent)


def _load(
    paths: list[Path],
    kinds: dict[Path, str | None],
    normalize: bool,
    runtime: Runtime = DEFAULT,
    **kw,
) -> Table:
    out = Collector()
    parts: dict[str, list[pd.DataFrame]] = {k: [] for k in PARTS}
    for path in paths:
        try:
            raw = read_raw(path, runtime.ahead)
        except TableError as exc:
            out.errors.append(exc)
            continue
        kind = kinds.get(path) or raw.kind_hint or detect_kind(raw.columns)
        detected = detect_kind(raw.columns)
        if kind is None:
            near = [
                f"{v!r} for {c!r}"
                for c in raw.columns
                if (v := near_column(c, ("form", "quantity", "T", "P"))) is not None
            ]
            hint = (
                f" (did you mean {', '.join(near)}? column names are matched exactly)"
                if near
                else ""
            )
            out.errors.append(
                TableError(
                    "cannot tell the kind of this file from its columns: records have 'form', "
                    f"references 'quantity', points 'T' and 'P'{hint}",
                    Location(str(path), 1),
                )
            )
            continue
        if detected is not None and detected != kind and len(raw.columns):
            out.errors.append(
                TableError(
                    f"file lies among {kind} but its columns are those of {detected}",
                    Location(str(path), 1),
                )
            )
            continue
        parts[kind].append(frame_from_raw(raw, kind, out, normalize, runtime))
        del raw
    table = _finish(parts, out, files=[str(p) for p in paths], **kw)
    if sum(len(p) for kind in PARTS for p in parts[kind]) >= PARALLEL_ROWS:
        from ..runtime import release_scratch

        release_scratch()  # the reading's scratch space, before the audit allocates its own
    return table


def load_table(path: str | Path, normalize: bool = False, runtime: Runtime = DEFAULT) -> Table:
    """Load a table directory or a single table file.

    Parameters
    ----------
    path : str or Path
        A directory with ``records/``, ``references/`` and ``points/`` folders (any may be
        absent) and an optional ``vpaudit.toml``, or a single CSV/YAML/JSON/Parquet file.
    normalize : bool
        Opt in to rewriting PDF look-alikes in numbers (each rewrite is logged).
    runtime : Runtime
        Threads, and files read ahead (:mod:`vpaudit.runtime`).

    Raises
    ------
    TableErrors
        Listing every read error with its file, line and column.
    """
    p = Path(path)
    if p.is_file():
        return _load([p], {p: None}, normalize, runtime, root=p.parent)
    if not p.is_dir():
        raise TableError("no such table directory or file", Location(str(path)))
    found = table_files(p)
    paths = [f for f, _ in found]
    kinds: dict[Path, str | None] = dict(found)
    policy = p / "vpaudit.toml"
    if not paths:
        raise TableError(
            "the directory holds no table files: expected records/, "
            "references/ or points/ folders with CSV, YAML, JSON or Parquet "
            "files",
            Location(str(path)),
        )
    return _load(
        paths,
        kinds,
        normalize,
        runtime,
        policy_path=policy if policy.is_file() else None,
        root=p,
    )


def read_policy_file(path: Path) -> dict:
    """Read a ``vpaudit.toml`` file into a mapping (validated by the policy layer)."""
    try:
        with open(path, "rb") as fh:
            return tomllib.load(fh)
    except tomllib.TOMLDecodeError as exc:
        raise PolicyError(f"{path}: not valid TOML: {exc}") from None
    except OSError as exc:
        raise PolicyError(f"{path}: cannot be read: {exc}") from None


def records_table(rows: list[dict], like: Table | None = None, path: str = "<new>") -> Table:
    """A table of the records ``rows`` (plain dicts, numbers as values or text), read through
    the same column-wise path as files; references and points come from ``like``.
    """
    cols: list[str] = []
    for r in rows:
        for k in r:
            if k not in cols and not k.endswith("_text"):
                cols.append(k)

    def text(r, c):
        v = r.get(c)
        if v is None or (isinstance(v, float) and v != v):
            return None
        if r.get(c + "_text"):
            return str(r[c + "_text"])
        if isinstance(v, float | int | np.floating) and not isinstance(v, bool):
            return repr(float(v))
        return str(v)

    cells = {c: [text(r, c) for r in rows] for c in cols}
    raw = RawFrame(path, cols, cells, list(range(1, len(rows) + 1)))
    out = Collector()
    frame = frame_from_raw(raw, "records", out)
    if out.errors:
        raise TableErrors(out.errors)
    problems = pd.DataFrame(out.problems, columns=_PROBLEM_COLUMNS)
    if like is None:
        return Table(frame, _empty("references"), _empty("points"), problems)
    return Table(frame, like.references, like.points, problems, policy_path=like.policy_path)
