"""One self-contained HTML report: summary, a sortable and filterable findings table, and a
section per flagged substance with its picture and numbers.

No network, no external scripts, styles or fonts: the CSS and the few lines of script are
inline, pictures are inline SVG. Every piece of text from the table is escaped.
"""

from __future__ import annotations

import html
import io
from pathlib import Path

import numpy as np

from ..auditing import CAUTION
from ..checks._text import confidence
from ._escape import visible
from ._fixes import Explained, Undecided, apply_command, every_finding_command, fix_key

__all__ = ["render_report"]

_CSS = """
body{font:15px/1.45 system-ui,'Segoe UI',Helvetica,Arial,sans-serif;color:#1a1a1a;
 background:#fff;margin:1.5em auto;max-width:76em;padding:0 1em}
h1{font-size:1.5em;margin:.2em 0}h2{font-size:1.2em;border-bottom:2px solid #d8d8d8;
 margin-top:1.8em;padding-bottom:.15em}h3{font-size:1.05em;margin:1.4em 0 .4em}
.run{color:#444;font-size:.9em}.run dt{font-weight:600;float:left;clear:left;width:8.5em}
.run dd{margin:0 0 .1em 8.5em}
.caution{border-left:4px solid #6b6b6b;padding:.4em .8em;background:#f3f3f3}
.coverage{border-left:4px solid #9a9a9a;padding:.4em .8em;background:#fafafa}
.shared{border-left:4px solid #dcb86a;padding:.4em .8em;background:#fdf8ec}
.clean{border:2px solid #2f6b3a;background:#eef6ef;padding:.6em .9em;font-weight:600}
table{border-collapse:collapse;width:100%;font-size:.9em;margin:.4em 0}
th,td{border:1px solid #c8c8c8;padding:.25em .45em;vertical-align:top;text-align:left}
th{background:#efefef}#findings th{cursor:pointer;user-select:none}
th.sorted-asc:after{content:" \\25B2"}th.sorted-desc:after{content:" \\25BC"}
.sev{display:inline-block;min-width:6.2em;padding:0 .35em;border-radius:3px;
 font-weight:700;font-size:.85em;letter-spacing:.02em;white-space:nowrap}
.sev-error{background:#fbe3e3;color:#8e1010;border:1px solid #d99}
.sev-warning{background:#fdf1d6;color:#6e4a00;border:1px solid #dcb86a}
.sev-note{background:#e6eef8;color:#1f4673;border:1px solid #9bb3d3}
.counts .sev{margin-right:.6em;font-size:.95em;padding:.1em .5em}
.fix{color:#1f5a2a}.conf{font-weight:600}
td.num{text-align:right;white-space:nowrap;font-variant-numeric:tabular-nums}
.controls{margin:.6em 0}.controls input[type=search]{width:22em;padding:.2em}
code{font-size:.95em}#triage code,#findings code,.id{white-space:nowrap}figure{margin:.5em 0}
svg{max-width:100%;height:auto}
@media print{.controls{display:none}#findings th{cursor:auto}}
"""

_JS = """
(function(){
 var table=document.getElementById('findings'); if(!table) return;
 var body=table.tBodies[0], heads=table.tHead.rows[0].cells;
 function key(row,i){var c=row.cells[i];return c.getAttribute('data-key')||c.textContent;}
 function sortBy(i,desc){
  var rows=Array.prototype.slice.call(body.rows);
  rows.sort(function(a,b){var x=key(a,i),y=key(b,i);
   var nx=parseFloat(x),ny=parseFloat(y);
   var r=(!isNaN(nx)&&!isNaN(ny))?nx-ny:x.localeCompare(y);return desc?-r:r;});
  rows.forEach(function(r){body.appendChild(r);});
  for(var j=0;j<heads.length;j++){heads[j].className='';}
  heads[i].className=desc?'sorted-desc':'sorted-asc';
 }
 for(var i=0;i<heads.length;i++){(function(i){heads[i].addEventListener('click',function(){
  sortBy(i,heads[i].className==='sorted-asc');});})(i);}
 var box=document.getElementById('filter'), sev=document.querySelectorAll('input.sev');
 function filter(){var q=box.value.toLowerCase(),on={};
  sev.forEach(function(c){on[c.value]=c.checked;});
  Array.prototype.forEach.call(body.rows,function(r){
   var show=on[r.getAttribute('data-severity')]&&r.textContent.toLowerCase().indexOf(q)>=0;
   r.style.display=show?'':'none';});}
 box.addEventListener('input',filter);sev.forEach(function(c){c.addEventListener('change',filter);});
 var m=/sort=(\\d+)(-desc)?/.exec(location.hash); if(m){sortBy(+m[1],!!m[2]);}
})();
"""

_RANK = {"error": 2, "warning": 1, "note": 0}


def _e(text) -> str:
    return html.escape(visible(text), quote=True)


def _ids(records) -> str:
    """Record ids, each kept on one line (a browser breaks ``propane-l`` at its hyphen)."""
    return ", ".join(f"<span class='id'>{_e(r)}</span>" for r in records)


def _svg(table, substance: str) -> str:
    from ..plot import plot_substance

    buf = io.StringIO()
    import tempfile

    with tempfile.TemporaryDirectory() as tmp:
        path = Path(tmp) / "p.svg"
        plot_substance(table, substance, path)
        buf.write(path.read_text(encoding="utf-8"))
    text = buf.getvalue()
    return text[text.index("<svg") :]  # drop the XML prolog and doctype inside HTML


_MARK = {"error": "\u2716 ERROR", "warning": "\u25b2 WARNING", "note": "\u25cf NOTE"}


def _badge(severity: str) -> str:
    """A severity shown by colour *and* by a symbol and a word (readable without colour)."""
    return f"<span class='sev sev-{severity}'>{_MARK[severity]}</span>"


def _provenance(result) -> list[tuple[str, str]]:
    """When, by which vpaudit, under which policy, on which revision of which table."""
    import datetime as dt
    import subprocess

    from .. import __version__

    where = Path(result.table_path or ".")
    folder = where if where.is_dir() else where.parent
    revision = "not in a git work tree"
    try:
        head = subprocess.run(
            ["git", "-C", str(folder), "rev-parse", "--short", "HEAD"],
            capture_output=True,
            text=True,
            timeout=10,
        )
        if head.returncode == 0:
            dirty = subprocess.run(
                ["git", "-C", str(folder), "status", "--porcelain", "--", "."],
                capture_output=True,
                text=True,
                timeout=10,
            ).stdout.strip()
            revision = head.stdout.strip() + (" with uncommitted changes" if dirty else "")
    except (OSError, subprocess.SubprocessError):
        pass
    return [
        ("table", str(result.table_path)),
        ("git revision", revision),
        ("policy", str(result.policy_description.get("label", ""))),
        ("vpaudit", __version__),
        ("written", dt.datetime.now(dt.UTC).strftime("%Y-%m-%d %H:%M UTC")),
    ]


#: The most flagged substances a page lists (worst first), with their findings, by default
#: (``vpaudit report --max-substances``): a page a browser opens and a reviewer reads (the
#: default audit diagnoses as many); the JSON and CSV reports list every finding.
MAX_SUBSTANCES = 1000
#: The most substance sections (records, findings, picture) a page has, worst first.
MAX_SECTIONS = 100


def render_report(
    result,
    table=None,
    plots: bool = True,
    max_sections: int = MAX_SECTIONS,
    max_substances: int = MAX_SUBSTANCES,
    progress=None,
) -> str:
    """Render an audit (or gate) result as one self-contained HTML page made for triage.

    The page opens with the run's provenance, the counts, the caution and what could not be
    tested; then one row per flagged substance (worst severity, counts, the suggested fix
    once), the findings table (sortable, filterable), and a section per substance with its
    records, coefficients, findings and picture.

    Parameters
    ----------
    result : AuditResult
    table : Table, optional
        The audited table; with it, each flagged substance gets its records and picture.
    plots : bool
        Draw the pictures (needs matplotlib).
    max_sections : int
        At most this many substance sections (worst first).
    max_substances : int
        At most this many flagged substances (worst first) in the triage and findings
        tables, with all their findings and the table-wide ones; the page says how many
        it leaves to the JSON or CSV report.
    progress : callable, optional
        ``progress(done, total)`` after each picture (a picture takes about a second).
    """
    from ._coverage import coverage_sentence
    from ._shared import shared_slip_sentences

    s = result.summary
    status_of = result.status_of if result.gated else None
    out = [
        "<!DOCTYPE html>",
        "<html lang='en'><head><meta charset='utf-8'>",
        "<meta name='viewport' content='width=device-width, initial-scale=1'>",
        f"<title>vpaudit report: {_e(result.table_path)}</title>",
        f"<style>{_CSS}</style></head><body>",
        f"<h1>vpaudit report: {_e(result.table_path)}</h1>",
        "<dl class='run'>"
        + "".join(f"<dt>{_e(k)}</dt><dd>{_e(v)}</dd>" for k, v in _provenance(result))
        + "</dl>",
        f"<p>{s['records']} records, {s['substances']} substances, {s['pairs']} "
        "solid/liquid pairs audited.</p>",
        "<p class='counts'>"
        + "".join(
            f"<span class='sev sev-{k}'>{_MARK[k]}: {s[k]}</span>"
            for k in ("error", "warning", "note")
        )
        + "</p>",
    ]
    out += [f"<p class='shared'>{_e(sentence)}</p>" for sentence in shared_slip_sentences(s)]
    covered = coverage_sentence(s)
    if covered:
        out.append(f"<p class='coverage'>{_e(covered)}</p>")
    out.append(f"<p class='caution'><b>Caution.</b> {_e(CAUTION)}</p>")
    if not result.findings:
        out += [
            "<p class='clean'>No findings: none of the tests found an inconsistency in this "
            "table. That is not evidence that its values are right, only that they showed none "
            "of the inconsistencies tested"
            + (" (see above for what could not be tested)." if covered else ".")
            + "</p>",
            "</body></html>",
        ]
        return "\n".join(out) + "\n"
    groups, order, shown, sections = page_plan(result.findings, max_substances, max_sections)
    rows = sorted(i for name in shown for i in groups[name])
    if len(shown) < len(order):
        out.append(_left_out(result, len(order), len(shown), len(rows)))
    out += _triage(result, groups, shown)
    out += [
        "<h2>All findings</h2>" if len(rows) == len(result.findings) else "<h2>Findings</h2>",
        "<div class='controls'><label>Filter: <input type='search' id='filter' "
        "placeholder='substance, check, record, text'></label> "
        + " ".join(
            f"<label><input type='checkbox' class='sev' value='{v}' checked> {v}</label>"
            for v in ("error", "warning", "note")
        )
        + "</div>",
        "<table id='findings'><thead><tr><th>severity</th><th>check</th><th>substance</th>"
        "<th>records</th><th>finding</th><th>where</th>"
        + ("<th>status</th>" if status_of else "")
        + "</tr></thead><tbody>",
    ]
    for f in result.findings.take(rows):
        sev = f.severity.value
        where = f"{f.file}:{f.line}" if f.file and f.line else (f.file or "")
        out.append(
            f"<tr data-severity='{sev}'><td data-key='{_RANK[sev]}'>{_badge(sev)}"
            f"</td><td><code>{_e(f.check)}</code></td><td><a href='#s-{_e(f.substance)}'>"
            f"{_e(f.substance)}</a></td><td>{_ids(f.records)}</td>"
            f"<td>{_e(f.message)}</td><td>{_e(where)}</td>"
            + (f"<td>{_e(status_of(f))}</td>" if status_of else "")
            + "</tr>"
        )
    out.append("</tbody></table>")
    if table is not None:
        out += _sections(result, table, plots, sections, groups, progress)
    out.append(f"<script>{_JS}</script></body></html>")
    return "\n".join(out) + "\n"


def page_plan(findings, max_substances: int = MAX_SUBSTANCES, max_sections: int = MAX_SECTIONS):
    """What a page shows of ``findings``: (the rows of each substance's findings, the
    substances worst first, those the page lists, those given a section).

    The triage and findings tables list the ``max_substances`` worst (worst severity, then
    most findings, then by name); the sections, with their pictures, are the
    ``max_sections`` first of those by worst severity, then by name.
    """
    groups = _by_substance(findings)
    sev = findings.severity
    worst = {name: max(sev[i].rank for i in rows) for name, rows in groups.items()}
    order = sorted(groups, key=lambda n: (-worst[n], -len(groups[n]), n))
    shown = order[:max_substances]
    sections = sorted((n for n in shown if n), key=lambda n: (-worst[n], n))[:max_sections]
    return groups, order, shown, sections


def _by_substance(findings) -> dict[str, list[int]]:
    """The rows of the findings of each substance ("" for the table-wide ones), in order."""
    groups: dict[str, list[int]] = {}
    for i, name in enumerate(findings.substance):
        groups.setdefault(name, []).append(i)
    return groups


def _left_out(result, n_flagged: int, n_shown: int, n_rows: int) -> str:
    """The sentence that says what a capped page leaves to the JSON or CSV report."""
    command = f"{every_finding_command(result)} -o findings.csv"
    return (
        f"<p class='coverage'>This page lists the {n_shown:,} worst of the {n_flagged:,} "
        f"substances with findings and their {n_rows:,} findings; the other "
        f"{len(result.findings) - n_rows:,} findings (counted above) are in the JSON or CSV "
        f"report: <code>{_e(command)}</code>.</p>"
    )


def _triage(result, groups: dict[str, list[int]], shown: list[str]) -> list[str]:
    """One row per flagged substance of ``shown`` (worst first): its worst severity, its
    counts, the checks that fired and the suggested fix, once.
    """
    # substances given no fix although several readings each clear their errors
    open_ = {u["substance"]: len(u["fixes"]) for u in result.summary.get("undecided", ())}
    out = [
        "<h2>Substances to look at, worst first</h2>",
        "<table id='triage'><thead><tr><th>worst</th><th>substance</th><th>errors</th>"
        "<th>warnings</th><th>notes</th><th>checks</th><th>suggested fix</th></tr></thead>"
        "<tbody>",
    ]
    for name in shown:
        fs = list(result.findings.take(groups[name]))
        worst = max(fs, key=lambda f: f.severity.rank).severity.value
        counts = [sum(f.severity.value == k for f in fs) for k in ("error", "warning", "note")]
        checks = sorted({f.check for f in fs})
        fixes = list({fix_key(f.suggestion): f.suggestion for f in fs if f.suggestion}.values())
        label = _e(name) if name else "(the table as a whole)"
        none = _fix(None)
        if name in open_:
            none = (
                f"<span class='fix'>none singled out; {open_[name]} readings each clear it "
                "(below)</span>"
            )
        out.append(
            f"<tr><td>{_badge(worst)}</td><td><a href='#s-{_e(name)}'>{label}</a></td>"
            + "".join(f"<td class='num'>{n or ''}</td>" for n in counts)
            + f"<td>{'<br>'.join(f'<code>{_e(c)}</code>' for c in checks)}</td>"
            f"<td>{'<br>'.join(_fix(x) for x in fixes) or none}</td></tr>"
        )
    out.append("</tbody></table>")
    return out


def _fix(suggestion) -> str:
    """A suggested fix: the changed fields and the confidence, the explanation after."""
    if not suggestion:
        return "<span class='fix'>none singled out</span>"
    changes = ", ".join(
        f"{_e(k)} &rarr; {_e((suggestion.get('corrected_text') or {}).get(k, v))}"
        for k, v in suggestion["corrected"].items()
    )
    for also in suggestion.get("also", []):
        changes += f"; <b>{_e(also['record'])}</b>: " + ", ".join(
            f"{_e(k)} &rarr; {_e(v)}" for k, v in also["corrected"].items()
        )
    return (
        f"<span class='fix'><b>{_e(suggestion['record'])}</b>: {changes} "
        f"({_e(suggestion['kind'])}, <span class='conf'>confidence "
        f"{confidence(suggestion['confidence'])}</span>)</span>"
    )


def _sections(
    result, table, plots: bool, names: list[str], groups: dict[str, list[int]], progress=None
) -> list[str]:
    """A section for each substance of ``names``: its records, findings and picture."""
    if not names:
        return []
    from ..auditing import restrict

    out = ["<h2>Each flagged substance</h2>"]
    undecided = Undecided(result.summary)
    pictured = restrict(table, set(names)) if plots else table  # one pass, not one per picture
    rec = table.records
    substance = rec["substance"].astype(str)
    rows_of: dict[str, list[int]] = {}  # each substance's rows, in table order
    for row in np.flatnonzero(substance.isin(names).to_numpy()).tolist():
        rows_of.setdefault(substance.iat[row], []).append(row)
    coef = ["A", "B", "C", "D", "E", "t_crit", "p_crit"]
    for done, name in enumerate(names, 1):
        out.append(f"<h3 id='s-{_e(name)}'>{_e(name)}</h3>")
        rows = rec.iloc[rows_of.get(name, [])]
        used = [c for c in coef if rows[c + "_text"].notna().any()]
        notes = rows["note"].notna().any()
        out.append(
            "<table><thead><tr><th>record</th><th>phase</th><th>form</th>"
            "<th>convention</th><th>range [K or as written]</th>"
            + "".join(f"<th>{c}</th>" for c in used)
            + "<th>source</th>"
            + ("<th>note</th>" if notes else "")
            + "</tr></thead><tbody>"
        )
        for _, r in rows.iterrows():
            out.append(
                f"<tr><td class='id'>{_e(r['id'])}</td><td>{_e(r['phase'])}</td>"
                f"<td>{_e(r['form'])}</td>"
                f"<td>log{_e(r['log_base'])} {_e(r['pressure_unit'])} "
                f"{_e(r['temperature_unit'])}</td><td class='num'>{_e(_text(r['t_min_text']))}"
                f"..{_e(_text(r['t_max_text']))}</td>"
                + "".join(f"<td class='num'>{_e(_text(r[c + '_text']))}</td>" for c in used)
                + f"<td>{_e(_text(r['source']))}</td>"
                + (f"<td>{_e(_text(r['note']))}</td>" if notes else "")
                + "</tr>"
            )
        out.append("</tbody></table><ul>")
        explained = Explained()  # each fix explained once, at the first finding with it
        for f in result.findings.take(groups[name]):
            out.append(
                f"<li>{_badge(f.severity.value)} <code>{_e(f.check)}</code>: {_e(f.message)}</li>"
            )
            lead = undecided.sentence(f)
            if lead:
                out.append(f"<li class='fix'>{_e(lead)}</li>")
            if f.suggestion and explained.first(f.suggestion):
                out.append(
                    f"<li class='fix'>Suggested fix: {_e(f.suggestion['explanation'])} "
                    f"To apply it: <code>{_e(apply_command(result.table_path, f.spec))}"
                    "</code></li>"
                )
        out.append("</ul>")
        if plots:
            try:
                out.append(f"<figure>{_svg(pictured, name)}</figure>")
            except Exception as exc:  # a picture that cannot be drawn never hides the report
                out.append(f"<p>(no picture: {_e(exc)})</p>")
            if progress is not None:
                progress(done, len(names))
    return out


def _text(value) -> str:
    """A cell as text: empty for a missing value (never '<NA>' or 'nan')."""
    import pandas as pd

    return "" if value is None or (not isinstance(value, str) and pd.isna(value)) else str(value)
