"""Findings built together from a block of hits (AuditContext.findings of Hits, pair_hits)
equal findings built one hit at a time (finding of a Hit, pair_hit), on the Alcock, Itkin &
Horrigan (1984) metal equations as carried by the chemicals package
(tests/_support/refdata.py)."""

import numpy as np
import pytest
from refdata import alcock_table

from vpaudit.checks._context import AuditContext
from vpaudit.checks._registry import Severity
from vpaudit.checks.hits import Hit, Hits
from vpaudit.policy import Policy


@pytest.fixture(scope="module")
def ctx():
    return AuditContext(alcock_table(), Policy())


def test_record_findings_together_equal_one_at_a_time(ctx):
    rows = np.array([5, 0, 17, 3])
    t = np.array([300.0, np.nan, np.inf, 1234.5])
    flag = np.array([True, False, True, False])
    words = ["a", "b", "c", "d"]
    messages = [f"message {i}" for i in range(4)]
    error = Severity.error
    together = ctx.findings(
        "slope-not-positive",
        error,
        Hits(
            rows, messages, {"at_K": t, "flag": flag, "word": words, "limit": 0.5, "none": np.nan}
        ),
    )
    one = [
        ctx.finding(
            "slope-not-positive",
            error,
            Hit(
                int(r),
                m,
                {"at_K": t[i], "flag": flag[i], "word": words[i], "limit": 0.5, "none": np.nan},
            ),
        )
        for i, (r, m) in enumerate(zip(rows, messages, strict=True))
    ]
    assert together == one
    assert together[1].evidence["at_K"] is None and together[2].evidence["at_K"] is None
    assert type(together[0].evidence["flag"]) is bool
    assert together[0].evidence["none"] is None


def test_pair_findings_together_equal_one_at_a_time(ctx):
    ks = np.arange(len(ctx.pairs.solid))[::3]
    t = ctx.pairs.t_cross[ks]
    messages = [f"pair {k}" for k in ks]
    note = Severity.note
    hits = ctx.pair_hits(ks, messages, {"crossing_K": t})
    together = ctx.findings("melting-point-mismatch", note, hits)
    pr = ctx.pairs

    def pair_hit(k, m, evidence):  # a pair's finding made by hand, one at a time
        s, lq = int(pr.solid[k]), int(pr.liquid[k])
        return Hit(s, m, evidence, (ctx.id(s), ctx.id(lq)), (s, lq))

    one = [
        ctx.finding("melting-point-mismatch", note, pair_hit(int(k), m, {"crossing_K": t[i]}))
        for i, (k, m) in enumerate(zip(ks, messages, strict=True))
    ]
    assert together == one
    assert all(len(f.records) == 2 and f.severity is Severity.note for f in together)
    empty = Hits(np.array([], dtype=int), [], {})
    assert ctx.findings("slope-not-positive", Severity.error, empty) == []
