"""The Markdown report is a pull-request comment: it must stay within what the host takes."""

import re

from vpaudit.auditing import audit_table
from vpaudit.readers import load_table
from vpaudit.report import RENDERERS
from vpaudit.report import markdown as md
from vpaudit.report._escape import markdown_text


def test_the_comment_limit_is_githubs():
    # GitHub's REST API refuses a comment body longer than this: "Body is too long (maximum
    # is 65536 characters)" (its 422 response, as quoted in many public bug reports)
    assert md.COMMENT_LIMIT == 65_536


def test_a_long_report_keeps_to_the_limit_and_counts_what_it_leaves_out(sample_db, monkeypatch):
    """A table with thousands of findings made a comment the host refuses; the report lists
    findings worst first while they fit and says how many it left to the other reports.
    The mechanism shown on the demo (invented data) with the limit lowered to 6000."""
    table = load_table(sample_db)
    result = audit_table(table, table_path=str(sample_db))
    full = RENDERERS["markdown"](result)
    assert len(full) < md.COMMENT_LIMIT and "not shown" not in full  # the demo fits whole
    monkeypatch.setattr(md, "COMMENT_LIMIT", 6000)
    short = RENDERERS["markdown"](result)
    assert len(short) <= 6000
    shown = short.count("\n| ERROR |") + short.count("\n| WARNING |") + short.count("\n- `")
    (left,) = re.findall(r"\*(\d+) more finding\(s\) not shown", short)
    assert 0 < shown and shown + int(left) == len(result.findings)
    # what is shown is the start of the full report, worst first, and it ends as it does
    rows = [ln for ln in short.splitlines() if ln.startswith("| ")]
    assert rows == [ln for ln in full.splitlines() if ln.startswith("| ")][: len(rows)]
    assert short.endswith(full[full.index("> vpaudit screens") :])
    assert f"(vpaudit audit {markdown_text(sample_db)} --format csv)" in short
