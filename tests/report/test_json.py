"""The JSON report writes its findings a column at a time (report/json.py::_lines). Each
line must be exactly what orjson gives for the finding's dict (Finding.to_dict, the output
contract), whatever the texts and numbers hold: commas and quotes in texts, floats that are
not finite, integers and booleans in the evidence, evidence given as columns or as dicts,
and the other fields given as blocks made when read (as the checks give them) or as values."""

from __future__ import annotations

import numpy as np
import orjson
from hypothesis import given
from hypothesis import strategies as st

from vpaudit.checks import Severity
from vpaudit.checks.blocks import BlockColumn, ValueColumn
from vpaudit.checks.evidence import EvidenceColumn
from vpaudit.checks.finding import FIELDS, Finding, Findings
from vpaudit.report import json as json_report

#: texts rich in what JSON must escape or what would split a list's text: commas, quotes,
#: backslashes, control characters, and any other character
texts = st.text(
    alphabet=st.sampled_from(list(',"\\\n\x00 a')) | st.characters(exclude_categories=("Cs",)),
    max_size=6,
)
ids = st.text(alphabet='a,"\\z-1é', min_size=1, max_size=4)
plain = st.one_of(st.floats(allow_nan=True, allow_infinity=True), st.integers(-9, 9))


def _row(draw) -> Finding:
    return Finding(
        check=draw(st.sampled_from(["no-crossing", "range-gap"])),
        severity=draw(st.sampled_from(list(Severity))),
        substance=draw(texts),
        records=tuple(draw(st.lists(ids, max_size=3))),
        message=draw(texts),
        suggestion=draw(st.none() | st.fixed_dictionaries({"kind": texts, "p": plain})),
        file=draw(st.none() | st.sampled_from(["a.csv", 'b,"c".csv'])),
        line=draw(st.none() | st.integers(1, 10**6)),
        status=draw(st.none() | st.sampled_from(["new", "existing", "accepted"])),
    )


@st.composite
def tables(draw) -> Findings:
    """A table of findings whose evidence is blocks of columns (floats, integers,
    booleans, texts, a value shared by the block) and dicts given whole."""
    rows, evidence, sizes = [], EvidenceColumn(), []
    for _ in range(draw(st.integers(0, 3))):
        n = draw(st.integers(1, 6))
        sizes.append(n)
        rows += [_row(draw) for _ in range(n)]
        floats = st.floats(allow_nan=True, allow_infinity=True)
        columns = {
            "x_K": np.array(draw(st.lists(floats, min_size=n, max_size=n)), dtype=float),
            "count": np.array(draw(st.lists(st.integers(-(2**40), 2**40), min_size=n, max_size=n))),
            "flag": np.array(draw(st.lists(st.booleans(), min_size=n, max_size=n))),
            "word": draw(st.lists(texts, min_size=n, max_size=n)),
            "shared": draw(plain | texts),
        }
        keys = draw(st.lists(st.sampled_from(sorted(columns)), unique=True, max_size=5))
        evidence.extend(EvidenceColumn.of_columns({k: columns[k] for k in keys}, n))
    for _ in range(draw(st.integers(0, 3))):
        rows.append(_row(draw))
        evidence.append(draw(st.dictionaries(st.sampled_from(["a_K", "b"]), plain | texts)))
    table = Findings.of(rows)
    table.evidence = evidence
    for name in ("substance", "records", "message", "file", "line"):  # made when read
        setattr(table, name, _blocks([getattr(f, name) for f in rows], sizes))
    order = draw(st.permutations(range(len(rows))))  # rows of a block need not be together
    for name in FIELDS:
        column = getattr(table, name)
        if isinstance(column, BlockColumn):
            setattr(table, name, column.take(order))
        else:
            setattr(table, name, [column[i] for i in order])
    return table


def _blocks(values: list, sizes: list[int]) -> ValueColumn:
    """A column of ``values`` whose first rows are blocks of ``sizes`` rows, each made when
    read (as the checks' are), and the rest values given on their own.
    """
    column, a = ValueColumn(), 0
    for n in sizes:
        part = values[a : a + n]
        column.extend(ValueColumn.made_by(lambda p, part=part: [part[i] for i in p.tolist()], n))
        a += n
    column.extend(values[a:])
    return column


def _expected(table: Findings, status: bool) -> list[bytes]:
    return [orjson.dumps(d, option=orjson.OPT_SERIALIZE_NUMPY) for d in table.dicts(status=status)]


def _made(table: Findings, first: int) -> dict[str, list]:
    """The values of the fields the report makes once per chunk, from row ``first`` on."""
    rows = np.arange(first, len(table))
    return {name: getattr(table, name).values(rows) for name in json_report._MADE}


@given(tables(), st.booleans())
def test_each_line_is_orjson_of_the_findings_dict(table, status):
    lines = json_report._lines(table, _made(table, 0), 0, 0, len(table), status, {})
    assert lines == _expected(table, status)


@given(tables(), st.integers(0, 8), st.integers(0, 8), st.integers(0, 8))
def test_any_range_of_rows_gives_the_same_lines(table, a, b, first):
    a, b = sorted((min(a, len(table)), min(b, len(table))))
    first = min(first, a)  # the chunk the rows are in starts at or before them
    lines = json_report._lines(table, _made(table, first), first, a, b, False, {})
    assert lines == _expected(table, False)[a:b]
