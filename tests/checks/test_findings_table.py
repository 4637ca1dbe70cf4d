"""The findings table (vpaudit.checks.finding.Findings): its columns and its row views agree,
it sorts as the reports expect, and moving a finding to its suspect record works the same
whether the check gave the record rows or not. The tables are the Alcock, Itkin & Horrigan
(1984) metal equations as carried by the chemicals package (tests/_support/refdata.py)."""

import dataclasses

import numpy as np
import pytest
from hypothesis import given
from hypothesis import strategies as st
from refdata import alcock_table

from vpaudit.auditing import point_at_suspects
from vpaudit.checks._context import AuditContext
from vpaudit.checks._registry import Severity
from vpaudit.checks.evidence import EvidenceColumn
from vpaudit.checks.finding import FIELDS, Finding, Findings
from vpaudit.checks.hits import Hit
from vpaudit.policy import Policy

ids = st.text(alphabet="abcz-19", min_size=1, max_size=4)
findings = st.builds(
    Finding,
    check=st.sampled_from(["no-crossing", "range-gap", "slope-not-positive"]),
    severity=st.sampled_from(list(Severity)),
    substance=st.sampled_from(["", "Fe", "Zn", "Cu"]),
    records=st.lists(ids, max_size=3).map(tuple),
    message=st.text(max_size=8),
    evidence=st.dictionaries(st.sampled_from(["a_K", "b_lnP"]), st.floats(allow_nan=False)),
    suggestion=st.none() | st.just({"kind": "log-base"}),
    file=st.none() | st.just("records.csv"),
    line=st.none() | st.integers(1, 9),
    status=st.none() | st.sampled_from(["new", "existing", "accepted"]),
)


@given(st.lists(findings, max_size=30))
def test_rows_round_trip_and_the_columns_agree(rows):
    table = Findings.of(rows)
    assert len(table) == len(rows) and list(table) == rows
    for name in FIELDS:
        assert getattr(table, name) == [getattr(f, name) for f in rows]
    assert table[1:4] == rows[1:4]
    picked = [k for k in (2, 0) if k < len(rows)]
    assert table.take(picked) == [rows[k] for k in picked]
    assert table.keys() == [f.key for f in rows]
    for sev in Severity:
        assert table.count(sev) == sum(f.severity is sev for f in rows)


@given(st.lists(findings, max_size=30))
def test_the_default_order_is_errors_first_then_substance_check_records_and_stable(rows):
    table = Findings.of(rows)
    table.sort()
    expected = sorted(rows, key=lambda f: (-f.severity.rank, f.substance, f.check, f.records))
    assert list(table) == expected


@given(
    st.lists(
        st.builds(
            Finding,
            check=st.text(alphabet="ab-", max_size=3),
            severity=st.sampled_from(list(Severity)),
            # case, accents, digits and spaces: ranked as Python orders text
            substance=st.text(alphabet="aBz9 éßΩ", max_size=3),
            records=st.lists(ids, max_size=2).map(tuple),
            message=st.text(max_size=3),
        ),
        max_size=60,
    )
)
def test_the_default_order_ranks_any_text_as_python_sorts_it(rows):
    table = Findings.of(rows)
    table.sort()
    expected = sorted(rows, key=lambda f: (-f.severity.rank, f.substance, f.check, f.records))
    assert list(table) == expected


@given(st.lists(findings, max_size=30))
def test_json_rows_from_the_columns_equal_each_findings_own(rows):
    table = Findings.of(rows)
    assert table.dicts() == [f.to_dict() for f in rows]
    gated = table.dicts(status=True)
    assert [d["status"] for d in gated] == [f.status or "new" for f in rows]


def test_a_row_view_is_a_copy_and_set_changes_the_table():
    f = Finding("no-crossing", Severity.error, "Fe", ("a", "b"), "m")
    table = Findings.of([f, dataclasses.replace(f, substance="Zn")])
    view = table[0]
    view.status = "accepted"
    assert table.status == [None, None]
    table.set(0, status="accepted", line=7)
    assert table[0].status == "accepted" and table[0].line == 7
    with pytest.raises(TypeError):
        table.set(0, colour="red")
    with pytest.raises(ValueError):  # columns of different lengths
        Findings(check=["a"], severity=[Severity.note], substance=["x"], records=[()], message=[])
    with pytest.raises(TypeError):  # a field without a default is missing
        Findings(check=["a"], message=["m"])


@pytest.fixture(scope="module")
def ctx():
    return AuditContext(alcock_table(), Policy())


def test_a_pair_finding_moves_to_the_record_named_alone_with_or_without_rows(ctx):
    k = 0
    s, lq = int(ctx.pairs.solid[k]), int(ctx.pairs.liquid[k])
    error = Severity.error
    pair_hit = Hit(s, "the curves do not cross", {}, (ctx.id(s), ctx.id(lq)), (s, lq))
    pair = ctx.finding("no-crossing", error, pair_hit)
    alone = ctx.finding("slope-not-positive", error, Hit(lq, "the liquid's slope", {}))
    assert pair.rows == (s, lq) and alone.rows == (lq,)
    for rows in ((s, lq), ()):  # as a check makes it, and as made by hand
        table = Findings.of([dataclasses.replace(pair, rows=rows), alone])
        point_at_suspects(ctx, table)
        assert (table.file[0], table.line[0]) == (alone.file, alone.line)
        assert table.line[0] != pair.line  # it did move, from the solid to the liquid
    lone = Findings.of([pair])  # nothing singles a record out: it stays at the solid
    point_at_suspects(ctx, lone)
    assert lone.line[0] == pair.line == int(ctx.line[s])
    assert np.all(ctx.line >= 1)


columns = st.integers(1, 12).flatmap(
    lambda n: st.tuples(
        st.just(n),
        st.lists(st.floats(allow_nan=True, allow_infinity=True), min_size=n, max_size=n).map(
            np.array
        ),
        st.lists(st.booleans(), min_size=n, max_size=n).map(np.array),
        st.lists(st.text(max_size=3), min_size=n, max_size=n),
    )
)


@given(columns, columns, st.data())
def test_the_evidence_column_behaves_as_its_list_of_dicts(one, two, data):
    made, expected = EvidenceColumn(), []
    for n, x, flag, word in (one, two):
        made.extend(
            EvidenceColumn.of_columns({"x_K": x, "flag": flag, "word": word, "k": np.inf}, n)
        )
        expected += [
            {"x_K": v if np.isfinite(v) else None, "flag": f, "word": w, "k": None}
            for v, f, w in zip(x.tolist(), flag.tolist(), word, strict=True)
        ]
    made.append({"hand": 1})
    expected.append({"hand": 1})
    assert made == expected and len(made) == len(expected)
    assert [made[i] for i in range(len(made))] == expected  # one row at a time
    assert all(type(d["flag"]) is bool for d in made if "flag" in d)
    order = data.draw(st.permutations(range(len(expected))))
    assert made.take(order) == [expected[i] for i in order]
    part = made[1:-1]
    part[0] = {"changed": True}
    assert made == expected  # a slice is a copy
    assert part == [{"changed": True}, *expected[2:-1]]
    assert made[len(expected) - 1] == {"hand": 1}


def test_an_audits_findings_survive_a_pickle_round_trip():
    """Findings whose fields are made when read (the checks' own functions, which pickle
    cannot carry) travel as their values: a result can go to another process."""
    import pickle

    from vpaudit.auditing import audit_table

    found = audit_table(alcock_table(), diagnose=False).findings
    assert len(found) > 0
    back = pickle.loads(pickle.dumps(found))
    assert list(back) == list(found) and back.dicts() == found.dicts()
