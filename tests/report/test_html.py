"""The HTML report: self-contained, all table text escaped, and it works in a real browser
(headless Chromium, Debian's package; the browser test skips when it is absent)."""

import re
import shutil
import subprocess
from pathlib import Path

import pytest
from refdata import table_from_rows

from vpaudit.auditing import audit_table
from vpaudit.readers import load_table
from vpaudit.report.html import render_report

CHROMIUM = shutil.which("chromium") or shutil.which("chromium-browser")
FLAGS = [
    "--headless",
    "--no-sandbox",
    "--disable-gpu",
    "--disable-quic",
    "--no-first-run",
    "--disable-background-networking",
    "--disable-component-update",
    "--disable-sync",
    "--enable-logging=stderr",
    "--v=0",
]


def _hostile_table():
    base = {
        "substance": "s<b>",
        "form": "two-term",
        "log_base": "e",
        "pressure_unit": "Pa",
        "source": "a & b <i>c</i>",
    }
    return table_from_rows(
        [
            {
                **base,
                "id": "x1",
                "phase": "liquid",
                "A": 25.0,
                "B": 12000.0,
                "t_min": 300.0,
                "t_max": 600.0,
                "note": "<script>alert('owned')</script>",
            },
        ]
    )


def test_all_table_text_is_escaped_and_nothing_is_fetched(tmp_path):
    table = _hostile_table()
    page = render_report(audit_table(table, table_path="t"), table, plots=True)
    assert "<script>alert" not in page
    assert "&lt;script&gt;alert(&#x27;owned&#x27;)&lt;/script&gt;" in page
    assert "s&lt;b&gt;" in page and "a &amp; b &lt;i&gt;c&lt;/i&gt;" in page
    # self-contained: no external scripts, styles, fonts or images
    assert not re.search(r"(src|href)=['\"](https?:)?//", page)
    assert page.count("<script>") == 1  # our own inline script only


def _chromium(url: str, *extra: str, tmp: Path) -> subprocess.CompletedProcess:
    return subprocess.run(
        [CHROMIUM, *FLAGS, f"--user-data-dir={tmp / 'profile'}", *extra, url],
        capture_output=True,
        text=True,
        timeout=120,
    )


def _console_errors(stderr: str) -> list[str]:
    return [line for line in stderr.splitlines() if "CONSOLE" in line or "Uncaught" in line]


@pytest.mark.skipif(
    CHROMIUM is None,
    reason="headless Chromium is not installed (.ci/run installs Debian's chromium package)",
)
def test_report_loads_without_console_errors_sorts_and_renders(tmp_path, sample_db):
    table = load_table(sample_db)
    page = tmp_path / "report.html"
    page.write_text(
        render_report(audit_table(table, table_path="sample_db"), table), encoding="utf-8"
    )
    # control: a page with a script error is caught by the same console check
    bad = tmp_path / "bad.html"
    bad.write_text("<html><body><script>undefinedFunction();</script></body></html>")
    assert _console_errors(_chromium(bad.as_uri(), "--dump-dom", tmp=tmp_path).stderr)
    # the report itself: no console errors
    run = _chromium(page.as_uri(), "--dump-dom", tmp=tmp_path)
    assert run.returncode == 0 and not _console_errors(run.stderr), run.stderr[-2000:]
    # sorting: #sort=1 sorts by the check column on load (the same code as a header click)
    dom = _chromium(page.as_uri() + "#sort=1", "--dump-dom", tmp=tmp_path).stdout
    body = dom[dom.index('id="findings"') :]
    body = body[body.index("<tbody>") : body.index("</tbody>")]
    checks = re.findall(
        r"<tr data-severity=\"\w+\"><td[^>]*><span[^>]*>[^<]+</span></td>"
        r"<td><code>([^<]+)</code>",
        body,
    )
    assert len(checks) == len(audit_table(table).findings)
    assert checks == sorted(checks) and checks != [f.check for f in audit_table(table).findings]
    assert 'class="sorted-asc"' in dom
    shot = tmp_path / "report.png"
    _chromium(page.as_uri(), f"--screenshot={shot}", "--window-size=1200,1600", tmp=tmp_path)
    assert shot.read_bytes()[:8] == b"\x89PNG\r\n\x1a\n" and shot.stat().st_size > 20_000


def test_the_triage_view_gives_each_substance_once_with_its_fix_and_a_clean_state(
    tmp_path, sample_db
):
    table = load_table(sample_db)
    page = render_report(audit_table(table, table_path=str(sample_db)), table, plots=False)
    triage = page[page.index("id='triage'") : page.index("</table>", page.index("id='triage'"))]
    # one row per flagged substance, the worst first, severity by colour class and by word
    assert triage.count("<tr>") == 11 + 1  # header + the eleven flagged demo substances
    assert triage.index("bellorium") < triage.index("norrane")
    assert "sev-error" in triage and "\u2716 ERROR" in triage
    assert "elmsite-s1</b>: phase &rarr; solid; <b>elmsite-l1</b>: phase &rarr; liquid" in triage
    assert "&lt;NA&gt;" not in page and "<NA>" not in page
    for label in ("git revision", "policy", "vpaudit", "written"):
        assert f"<dt>{label}</dt>" in page
    assert "Not tested for want of data" in page
    # the long fix text is given once per substance section, not on every row
    assert page.count("Suggested fix: Almost certainly the coefficients are for log10") == 1
    clean = tmp_path / "clean.csv"
    lines = (sample_db / "records" / "volatiles.csv").read_text().splitlines()
    clean.write_text("\n".join(ln for ln in lines if ln.startswith(("id,", "rostane"))) + "\n")
    t = load_table(clean)
    empty = render_report(audit_table(t, table_path=str(clean)), t, plots=False)
    assert "class='clean'>No findings" in empty and "Each flagged substance" not in empty


def test_a_second_fix_beside_the_first_is_in_the_triage_view_and_its_section(tmp_path, sample_db):
    """The demo's bellorium (invented) with its log-base slip and, as a pull request would
    bring it, a lost sign of B on its solid: the diagnosis offers two fixes, one per record.
    The report showed only the first; each is now in the triage row and explained once in
    the substance's section."""
    root = tmp_path / "db"
    shutil.copytree(sample_db, root)
    metals = root / "records" / "metals.csv"
    text = metals.read_text()
    assert text.count(",-14736.5418,") == 1
    metals.write_text(text.replace(",-14736.5418,", ",14736.5418,"))
    table = load_table(root)
    result = audit_table(table, table_path=str(root), substances=["bellorium"])
    page = render_report(result, table, plots=False)
    triage = page[page.index("id='triage'") : page.index("</table>", page.index("id='triage'"))]
    assert "<b>bellorium-l1</b>: log_base &rarr; 10" in triage
    assert "<b>bellorium-s1</b>: B &rarr; -14736.5418" in triage
    assert page.count("Suggested fix: Almost certainly the coefficients are for log10") == 1
    assert page.count("Suggested fix: Almost certainly the sign of B was lost") == 1


def test_a_page_lists_the_worst_substances_and_says_where_the_rest_are(sample_db, tmp_path):
    """A table with thousands of flagged substances made a page of hundreds of megabytes
    that no browser opens (a whole compilation typed in under one wrong header); the page
    lists the worst substances, all their findings, and names the report that has the
    rest. Shown here with a cap of 3 on the demo's eleven flagged substances."""
    from click.testing import CliRunner

    from vpaudit.cli import main
    from vpaudit.report.html import MAX_SUBSTANCES

    table = load_table(sample_db)
    result = audit_table(table, table_path=str(sample_db))
    full = render_report(result, table, plots=False)
    page = render_report(result, table, plots=False, max_substances=3)
    triage = page[page.index("id='triage'") : page.index("</table>", page.index("id='triage'"))]
    names = re.findall(r"<a href='#s-([^']+)'>", triage)
    full_triage = full[
        full.index("id='triage'") : full.index("</table>", full.index("id='triage'"))
    ]
    assert names == re.findall(r"<a href='#s-([^']+)'>", full_triage)[:3]  # the worst three
    rows = page[page.index("id='findings'") : page.index("</table>", page.index("id='findings'"))]
    listed = [i for i, f in enumerate(result.findings) if f.substance in names]
    assert rows.count("<tr data-severity=") == len(listed) < len(result.findings)
    assert re.findall(r"<h3 id='s-([^']+)'>", page) == sorted(
        names, key=lambda n: (-max(f.severity.rank for f in result.findings if f.substance == n), n)
    )
    flagged = len({f.substance for f in result.findings})
    assert (
        f"This page lists the 3 worst of the {flagged} substances with findings and their "
        f"{len(listed)} findings; the other {len(result.findings) - len(listed)} findings"
    ) in page
    assert f"vpaudit audit {sample_db} --format csv -o findings.csv" in page
    # uncapped (the default cap is above the demo's count) the page is the whole audit
    assert "This page lists" not in full and "<h2>All findings</h2>" in full
    assert full.count("<tr data-severity=") == len(result.findings)
    # the command's default is the library's, and it says what it left out
    option = next(p for p in main.commands["report"].params if p.name == "max_substances")
    assert option.default == MAX_SUBSTANCES
    out = CliRunner().invoke(
        main, ["report", str(sample_db), "-o", "-", "--no-plots", "--max-substances", "3"]
    )
    assert out.exit_code == 0 and "This page lists the 3 worst" in out.output
    page_file = tmp_path / "page.html"
    args = ["report", str(sample_db), "-o", str(page_file), "--no-plots", "--max-substances", "3"]
    said = CliRunner().invoke(main, args).output
    assert f"the page lists the 3 worst of {flagged} substances with findings" in said
