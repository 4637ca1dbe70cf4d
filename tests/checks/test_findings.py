"""Findings built together (AuditContext.findings, pair_findings) equal findings built one
at a time (finding, pair_finding), on the Alcock, Itkin & Horrigan (1984) metal equations as
carried by the chemicals package (tests/_support/refdata.py)."""

import numpy as np
import pytest
from refdata import alcock_table

from vpaudit.checks._context import AuditContext
from vpaudit.checks._registry import Severity
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
    together = ctx.findings(
        "slope-not-positive",
        rows,
        messages,
        {"at_K": t, "flag": flag, "word": words, "limit": 0.5, "none": np.nan},
    )
    one = [
        ctx.finding(
            "slope-not-positive",
            int(r),
            m,
            {"at_K": t[i], "flag": flag[i], "word": words[i], "limit": 0.5, "none": np.nan},
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
    together = ctx.pair_findings(
        "melting-point-mismatch", ks, messages, {"crossing_K": t}, severity=Severity.note
    )
    one = [
        ctx.pair_finding(
            "melting-point-mismatch", int(k), m, {"crossing_K": t[i]}, severity=Severity.note
        )
        for i, (k, m) in enumerate(zip(ks, messages, strict=True))
    ]
    assert together == one
    assert all(len(f.records) == 2 and f.severity is Severity.note for f in together)
    assert ctx.findings("slope-not-positive", np.array([], dtype=int), [], {}) == []
