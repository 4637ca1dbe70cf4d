"""How low a real vapour-pressure curve tops out: the highest ln(P/Pa) over each range of
real equations (chemicals: Landolt's odd-CAS Antoine rows, Poling's Antoine and Wagner
tables, McGarry's Wagner table, Perry's table 2-8, and the Alcock et al. 1984 metals), the
premise of ``pressure-too-low``."""

import numpy as np
import pytest
from compilations import _complete, landolt, perry, poling_antoine, wagner
from refdata import alcock_pairs, table_from_rows

from vpaudit.auditing import audit_table
from vpaudit.checks._context import AuditContext
from vpaudit.checks._registry import REGISTRY
from vpaudit.policy import Policy

LIMIT = REGISTRY["pressure-too-low"].thresholds["min_top_lnP"].default


def _tops(records):
    ctx = AuditContext(table_from_rows(records), Policy())
    return ctx.range_extrema.y_max[ctx.evaluable], ctx


@pytest.mark.parametrize("build", [landolt, poling_antoine, wagner, perry, alcock_pairs])
def test_no_real_curve_tops_out_below_the_limit(build):
    records = [r for r in build()[0] if _complete(r)]
    tops, _ = _tops(records)
    assert np.nanmin(tops) > LIMIT + np.log(1e9)  # nine decades to spare at least
    result = audit_table(table_from_rows(records), diagnose=False)
    assert not [f for f in result.findings if f.check == "pressure-too-low"]


def test_the_lowest_real_curve_is_solid_tin_at_its_melting_point():
    # measured 4 December 2026: Alcock's solid Sn tops out at ln(P/Pa) = -46.2 (1e-20 Pa at
    # 505 K), In at -41.9; the compilations' liquids stay above -11.1 (1.5e-5 Pa)
    records, _ = alcock_pairs()
    tops, ctx = _tops(records)
    k = int(np.flatnonzero(ctx.evaluable)[np.nanargmin(tops)])
    assert records[k]["substance"] == "Sn" and records[k]["phase"] == "solid"
    assert np.nanmin(tops) == pytest.approx(-46.2, abs=0.1)
    assert LIMIT == pytest.approx(np.log(1e-30), abs=0.01)
