"""The audit context's preparation: the same arrays whether the substance codes are made on
a second thread (large tables) or on this one, on the Alcock, Itkin & Horrigan (1984) metal
equations as carried by the chemicals package (tests/_support/refdata.py)."""

import dataclasses

import numpy as np
import pytest
from hypothesis import given
from hypothesis import strategies as st
from refdata import alcock_table

import vpaudit.checks._context as context
from vpaudit import runtime as rt
from vpaudit.checks._registry import REGISTRY
from vpaudit.policy import Policy

#: Two threads from the first row, whatever the machine.
THREADED = rt.Runtime(jobs=2, parallel_rows=0)


def test_codes_made_on_a_second_thread_equal_those_made_here():
    table = alcock_table()
    here = context.AuditContext(table, Policy())
    threaded = context.AuditContext(table, Policy(), THREADED)
    for name in ("codes", "ref_codes", "point_codes", "evaluable"):
        assert np.array_equal(getattr(here, name), getattr(threaded, name)), name
    assert here._names.equals(threaded._names) and here.n_names == threaded.n_names > 30
    assert np.array_equal(here.curves.params, threaded.curves.params)


def test_an_error_on_the_second_thread_reaches_the_caller():
    def broken():
        raise ValueError("no codes")

    wait = rt.in_thread(broken)
    with pytest.raises(ValueError, match="no codes"):
        wait()
    assert rt.in_thread(lambda a, b: a + b, 2, 3)() == 5


def _checks_of(table, beside: bool):
    from vpaudit import auditing as audit_module
    from vpaudit.checks._registry import ordered

    # two threads whatever the machine or --jobs; the pairs beside the checks or not at all
    runtime = THREADED if beside else rt.Runtime(jobs=2, parallel_rows=10**12)
    seen = []
    ctx = context.AuditContext(table, Policy(), runtime)
    names = [c.name for c in ordered()]
    found = audit_module.run_checks(ctx, names, lambda done, total, name: seen.append(name))
    return found, seen, names


def test_pairs_made_beside_the_other_checks_give_the_same_findings_in_order(sample_db):
    # Large tables compute the pairs on a second thread while the other checks run; the
    # findings, and their order, must be those of the one-thread run, and progress must
    # still be told of every check. The invented demo table draws findings from record,
    # pair and source checks alike.
    from vpaudit.readers import load_table

    table = load_table(sample_db)
    one, seen_one, names = _checks_of(table, beside=False)
    two, seen_two, _ = _checks_of(table, beside=True)
    checks = [f.check for f in one]
    assert "no-crossing" in checks and "missing-source" in checks
    assert two == one
    assert seen_one == names and sorted(seen_two) == sorted(names)
    assert seen_two != seen_one  # reordered: the pair checks last


def test_a_check_that_reads_the_pairs_runs_after_them_on_the_threaded_path():
    # reference-contradicted weighs several melting points by the solid/liquid pairs
    # (reads_pairs): beside the pairs' thread it must wait for them and find the same.
    # Landolt's odd-CAS solid/liquid pairs with every method's melting point (chemicals)
    from compilations import _complete, every_boiling_point, landolt
    from refdata import table_from_rows

    records, refs = landolt(None, pairs_only=True)
    records = [r for r in records if _complete(r)]
    table = table_from_rows(records, every_boiling_point(refs, "melting_point"))
    one, _, _ = _checks_of(table, beside=False)
    two, seen, names = _checks_of(table, beside=True)
    assert two == one
    named = [f for f in one if f.check == "reference-contradicted" and "melting" in f.message]
    assert named  # (a melting point the pairs contradict: e.g. chlorine's second value)
    others = [n for n in names if not REGISTRY[n].needs_pairs]
    assert seen.index("reference-contradicted") > max(seen.index(n) for n in others)


def test_an_error_while_making_the_pairs_becomes_each_pair_checks_internal_error(monkeypatch):
    from refdata import alcock_table

    from vpaudit.checks._registry import REGISTRY

    def broken(self):
        raise RuntimeError("pairs broke")

    monkeypatch.setattr(
        context.AuditContext, "pairs", property(broken)
    )  # every access fails, on either thread
    found, _, names = _checks_of(alcock_table(), beside=True)
    internal = [f for f in found if f.check == "internal-error"]
    pair_checks = [n for n in names if REGISTRY[n].scope.value == "pair"]
    assert sorted(f.evidence["check"] for f in internal) == sorted(pair_checks)
    assert all("pairs broke" in f.message for f in internal)


def test_shared_blocks_are_each_done_once_by_whichever_thread_takes_them():
    import threading

    n, size = 1000, 7
    done = np.zeros(n, dtype=int)
    by = {}
    others = threading.Event()

    def work(r):
        if r.start == 0:  # the thread with the first block waits: another must do the rest
            assert others.wait(timeout=10)
        else:
            others.set()
        done[r] += 1
        by[r.start] = threading.current_thread().name

    shared = context.SharedBlocks(n, size, work)
    other = threading.Thread(target=shared.run, name="other")
    other.start()
    shared.run()
    shared.wait()
    other.join()
    assert (done == 1).all()
    assert set(by.values()) == {"MainThread", "other"}


def test_an_error_in_a_shared_block_is_raised_by_wait_after_the_others_are_done():
    done = []

    def work(r):
        if r.start == 20:
            raise ValueError("block 20")
        done.append(r.start)

    shared = context.SharedBlocks(50, 10, work)
    shared.run()
    with pytest.raises(ValueError, match="block 20"):
        shared.wait()
    assert sorted(done) == [0, 10, 30, 40]


def test_pairs_made_while_another_thread_lends_a_hand_equal_pairs_made_alone():
    import threading

    table = alcock_table()
    alone = context.AuditContext(table, Policy()).pairs
    # many blocks, so that both threads take some
    ctx = context.AuditContext(table, Policy(), rt.Runtime(block_rows=2))
    maker = threading.Thread(target=lambda: ctx.pairs)
    maker.start()
    for _ in range(200):
        ctx.lend_a_hand()
    maker.join()
    shared = ctx.pairs
    for f in dataclasses.fields(alone):
        got, want = getattr(shared, f.name), getattr(alone, f.name)
        assert np.array_equal(got, want, equal_nan=True), f.name


def test_curves_at_the_melting_point_taken_in_the_pair_blocks_equal_the_engine():
    # melting_slopes is filled block by block while the crossings are searched; it must
    # equal the engine's evaluation of every pair's two curves at the reference melting
    # point (else the crossing, else 1 K), to the bit, whatever the block size.
    from vpaudit.equations.engine import evaluate_rows

    ctx = context.AuditContext(alcock_table(), Policy(), rt.Runtime(block_rows=5))
    pr, ms = ctx.pairs, ctx.melting_slopes
    at = np.where(np.isfinite(pr.tm), pr.tm, pr.t_cross)
    at = np.where(np.isfinite(at), at, 1.0)
    ys, s1, _ = evaluate_rows(ctx.curves, pr.solid, at, 1)
    yl, l1, _ = evaluate_rows(ctx.curves, pr.liquid, at, 1)
    for key, want in (("at", at), ("ys", ys), ("s1", s1), ("yl", yl), ("l1", l1)):
        assert np.array_equal(getattr(ms, key), want, equal_nan=True), key
    ctx.drop_shared()  # made again, with the pairs
    assert np.array_equal(ctx.melting_slopes.s1, s1, equal_nan=True)


def test_the_critical_temperature_cut_is_skipped_only_where_it_cuts_nothing():
    """The range extrema skip the 0.7 Tc cut of the dCp range when no record can have a
    critical temperature; forcing the cut there must change nothing, and a table with a
    reference Tc must take it (above ~0.7 Tc the slope gives dH/dZ and its derivative is no
    longer dCp). Invented three-term records whose pressure stays below the 10 kPa limit."""
    from refdata import table_from_rows

    records = [
        {
            "id": f"r{i}",
            "substance": f"s{i}",
            "phase": "liquid",
            "form": "three-term",
            "A": 20.0,
            "B": -8000.0 - 100.0 * i,
            "C": -1.5,
            "t_min": 300.0,
            "t_max": 500.0,
            "log_base": "e",
            "pressure_unit": "Pa",
            "source": "invented for this test",
        }
        for i in range(6)
    ]
    tc = {
        "substance": "s2",
        "quantity": "critical_temperature",
        "value": 600.0,
        "unit": "K",
        "source": "invented for this test",
    }
    boiling = dict(tc, quantity="normal_boiling_point", value=450.0)
    ctx = context.AuditContext(table_from_rows(records, [boiling]), Policy())
    assert not ctx.any_critical
    with np.errstate(all="ignore"):
        skipped = ctx.extrema_over_ranges()
        ctx.__dict__["any_critical"] = True  # the cut taken with every Tc unknown
        taken = ctx.extrema_over_ranges()
    assert np.isfinite(skipped.cp_hi).all()
    for f in dataclasses.fields(skipped):
        np.testing.assert_array_equal(
            getattr(skipped, f.name), getattr(taken, f.name), err_msg=f.name
        )

    ctx = context.AuditContext(table_from_rows(records, [boiling, tc]), Policy())
    assert ctx.any_critical
    with np.errstate(all="ignore"):
        cut = ctx.extrema_over_ranges()
    assert cut.cp_hi[2] == pytest.approx(0.7 * 600.0)
    others = [0, 1, 3, 4, 5]
    np.testing.assert_array_equal(cut.cp_hi[others], skipped.cp_hi[others])


def test_jobs_1_hashes_the_codes_on_this_thread(monkeypatch):
    """``--jobs 1`` runs vpaudit's own work on one thread: no thread for the codes."""
    table = alcock_table()
    started = []

    def here(func, *args, name=""):  # stands in for in_thread, noting the call
        started.append(func)
        result = func(*args)
        return lambda: result

    monkeypatch.setattr(context, "in_thread", here)
    one = context.AuditContext(table, Policy(), rt.Runtime(jobs=1, parallel_rows=0))
    assert not started
    two = context.AuditContext(table, Policy(), THREADED)
    assert started
    assert np.array_equal(one.codes, two.codes) and one.n_names == two.n_names > 30


def _invented(values, n_records: int):
    """``n_records`` invented liquids of four substances s0..s3 (record i of s{i % 4}), and a
    critical temperature for each (substance, value) of ``values``, in that order."""
    records = [
        {
            "id": f"r{i}",
            "substance": f"s{i % 4}",
            "phase": "liquid",
            "form": "two-term",
            "A": 20.0,
            "B": -4000.0,
            "t_min": 300.0,
            "t_max": 400.0,
            "log_base": "e",
            "pressure_unit": "Pa",
            "source": "invented for this test",
        }
        for i in range(n_records)
    ]
    refs = [
        {
            "substance": f"s{i}",
            "quantity": "critical_temperature",
            "value": v,
            "unit": "K",
            "source": f"invented {k}",
        }
        for k, (i, v) in enumerate(values)
    ]
    return records, refs


@given(
    st.lists(
        st.tuples(st.integers(0, 3), st.floats(100.0, 1000.0, allow_nan=False)),
        max_size=12,
    )
)
def test_a_reference_median_is_each_substances_median_in_any_order(values):
    """reference_median against numpy's median per substance, and unchanged when the rows of
    the references come in the reverse order (invented values)."""
    from refdata import table_from_rows

    records, refs = _invented(values, 4)
    for rows in (refs, refs[::-1]):
        ctx = context.AuditContext(table_from_rows(records, rows), Policy())
        got = ctx.reference_median("critical_temperature")
        for i in range(4):
            mine = [v for s, v in values if s == i]
            if mine:
                assert got[i] == pytest.approx(np.median(mine), rel=1e-12)
            else:
                assert np.isnan(got[i])


@given(
    st.lists(
        st.tuples(st.integers(0, 3), st.floats(100.0, 1000.0, allow_nan=False)),
        max_size=8,
    ),
    st.lists(st.floats(100.0, 1000.0, allow_nan=False), min_size=6, max_size=6),
)
def test_nearest_references_pick_each_records_nearest_value_first_on_a_tie(values, target):
    """nearest_references against a plain loop (invented values): for each record whose
    substance has a value, the value nearest its target, the first in table order on a tie;
    with at most one value per substance (its shortcut) and with several."""
    from refdata import table_from_rows

    records, refs = _invented(values, 6)
    ctx = context.AuditContext(table_from_rows(records, refs), Policy())
    rows = np.arange(6)[::-1]
    i, j, got = ctx.nearest_references("critical_temperature", rows, np.asarray(target))
    expected = {}
    for p, r in enumerate(rows.tolist()):
        mine = [(abs(target[p] - v), k) for k, (s, v) in enumerate(values) if s == r % 4]
        if mine:
            expected[p] = values[min(mine)[1]][1]
    assert dict(zip(i.tolist(), got.value[j].tolist(), strict=True)) == expected
    # the lower value on a tie: the same whatever the order of the rows
    i, j, got = ctx.nearest_references(
        "critical_temperature", rows, np.asarray(target), lower_on_tie=True
    )
    lower = {}
    for p, r in enumerate(rows.tolist()):
        mine = [(abs(target[p] - v), v) for s, v in values if s == r % 4]
        if mine:
            lower[p] = min(mine)[1]
    assert dict(zip(i.tolist(), got.value[j].tolist(), strict=True)) == lower
    # nearest_values: the same values, NaN where there is none (with one value each it
    # takes them by the substance code)
    value, _ = ctx.nearest_values(
        "critical_temperature", rows, np.asarray(target), lower_on_tie=True
    )
    assert np.array_equal(np.flatnonzero(np.isfinite(value)), np.sort(i))
    assert {p: value[p] for p in lower} == lower
