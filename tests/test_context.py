"""The audit context's preparation: the same arrays whether the substance codes are made on
a second thread (large tables) or on this one, on the Alcock, Itkin & Horrigan (1984) metal
equations as carried by the chemicals package (tests/refdata.py)."""

import numpy as np
import pytest
from refdata import alcock_table

import vpaudit.checks._context as context
from vpaudit.policy import Policy


def test_codes_made_on_a_second_thread_equal_those_made_here(monkeypatch):
    table = alcock_table()
    here = context.AuditContext(table, Policy())
    monkeypatch.setattr(context, "_THREAD_RECORDS", 0)
    threaded = context.AuditContext(table, Policy())
    for name in ("codes", "ref_codes", "point_codes", "evaluable"):
        assert np.array_equal(getattr(here, name), getattr(threaded, name)), name
    assert here._names.equals(threaded._names) and here.n_names == threaded.n_names > 30
    assert np.array_equal(here.curves.params, threaded.curves.params)


def test_an_error_on_the_second_thread_reaches_the_caller():
    def broken():
        raise ValueError("no codes")

    wait = context._in_thread(broken)
    with pytest.raises(ValueError, match="no codes"):
        wait()
    assert context._in_thread(lambda a, b: a + b, 2, 3)() == 5
