"""Table text in every human-readable report is shown, never obeyed."""

from __future__ import annotations

import re
import shutil

import pytest
from click.testing import CliRunner

from vpaudit.cli import main

HOSTILE = "dorv\r# Fake heading\r![x](http://example.invalid/a.png)\r@admin\r<!--\x1b[2J\u202e"


@pytest.fixture
def hostile_table(tmp_path, sample_db):
    out = tmp_path / "t"
    shutil.copytree(sample_db, out, ignore=shutil.ignore_patterns("*.py", "*.md", "PLANTED*"))
    metals = out / "records" / "metals.csv"
    text = metals.read_text(encoding="utf-8")
    quoted = '"' + HOSTILE + '"'
    text = text.replace(",dorvane,", "," + quoted + ",")
    metals.write_text(text, encoding="utf-8", newline="")
    return out


def _report(table, fmt):
    out = CliRunner().invoke(main, ["audit", str(table), "--format", fmt, "--fail-on", "never"])
    assert out.exit_code == 0, out.output
    return out.output


def test_markdown_comment_cannot_be_rewritten_by_a_substance_name(hostile_table):
    # a CR in a substance name once added a heading, an image, a mention and an open
    # comment that hid the rest of a pull-request comment
    md = _report(hostile_table, "markdown")
    assert "\r" not in md and "\x1b" not in md and "\u202e" not in md
    headings = [ln for ln in md.splitlines() if ln.startswith("#")]
    assert all(ln.startswith("## vpaudit") for ln in headings), headings
    assert "<!--" not in md and "![" not in md and "@admin" not in md
    assert "dorv\\\\r\\# Fake heading" in md  # shown, escaped


@pytest.mark.parametrize("fmt", ["text"])
def test_terminal_report_shows_control_characters_as_escapes(hostile_table, fmt):
    text = _report(hostile_table, fmt)
    assert not re.search("[\r\x1b\u202e]", text)
    assert "dorv\\r# Fake heading" in text and "\\x1b[2J" in text and "\\u202e" in text


def test_show_prints_control_characters_as_escapes(hostile_table):
    out = CliRunner().invoke(main, ["show", str(hostile_table), HOSTILE])
    assert out.exit_code == 0, out.output
    assert not re.search("[\r\x1b\u202e]", out.output)


def test_html_report_shows_control_characters_as_escapes(hostile_table, tmp_path):
    page = tmp_path / "r.html"
    out = CliRunner().invoke(main, ["report", str(hostile_table), "-o", str(page), "--no-plots"])
    assert out.exit_code == 0, out.output
    html = page.read_text(encoding="utf-8")
    assert not re.search("[\r\x1b\u202e]", html)
    assert "dorv\\r# Fake heading" in html
