"""One self-contained HTML report: summary, a sortable and filterable findings table, and a
section per flagged substance with its picture and numbers.

No network, no external scripts, styles or fonts: the CSS and the few lines of script are
inline, pictures are inline SVG. Every piece of text from the table is escaped.
"""

from __future__ import annotations

import html
import io
from pathlib import Path

from ..auditing import CAUTION
from ._escape import visible

__all__ = ["render_report"]

_CSS = """
body{font:15px/1.45 Georgia,'Times New Roman',serif;color:#111;background:#fff;margin:2em auto;
 max-width:72em;padding:0 1em}
h1{font-size:1.6em;margin:.2em 0}h2{font-size:1.25em;border-bottom:1px solid #999;
 margin-top:2em}h3{font-size:1.05em;margin:1.4em 0 .4em}
.caution{border-left:4px solid #555;padding:.4em .8em;background:#f4f4f4}
.counts span{display:inline-block;margin-right:1.5em;font-weight:bold}
table{border-collapse:collapse;width:100%;font-size:.92em}
th,td{border:1px solid #bbb;padding:.25em .45em;vertical-align:top;text-align:left}
th{background:#eee;cursor:pointer;user-select:none}th.sorted-asc:after{content:" \\25B2"}
th.sorted-desc:after{content:" \\25BC"}
td.sev-error{font-weight:bold}td.sev-warning{font-style:italic}.fix{color:#2f5d34}
.controls{margin:.6em 0}.controls input[type=search]{width:22em;padding:.2em}
code{font-size:.95em}figure{margin:.5em 0}svg{max-width:100%;height:auto}
@media print{.controls{display:none}th{cursor:auto}}
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


def render_report(result, table=None, plots: bool = True, max_sections: int = 100) -> str:
    """Render an audit (or gate) result as one self-contained HTML page.

    Parameters
    ----------
    result : AuditResult
    table : Table, optional
        The audited table; with it, each flagged substance gets its picture and records.
    plots : bool
        Draw the pictures (needs matplotlib).
    max_sections : int
        At most this many substance sections (worst first); the findings table is complete.
    """
    s = result.summary
    status_of = getattr(result, "status_of", None)
    out = [
        "<!DOCTYPE html>",
        "<html lang='en'><head><meta charset='utf-8'>",
        "<meta name='viewport' content='width=device-width, initial-scale=1'>",
        f"<title>vpaudit report: {_e(result.table_path)}</title>",
        f"<style>{_CSS}</style></head><body>",
        f"<h1>vpaudit report: {_e(result.table_path)}</h1>",
        f"<p>{s['records']} records, {s['substances']} substances, {s['pairs']} "
        f"solid/liquid pairs; policy {_e(result.policy_description.get('label', ''))}.</p>",
        "<p class='counts'>"
        + "".join(
            f"<span>{s[k]} {k}{'s' if s[k] != 1 else ''}</span>"
            for k in ("error", "warning", "note")
        )
        + "</p>",
        f"<p class='caution'>{_e(CAUTION)}</p>",
        "<h2>Findings</h2>",
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
    for f in result.findings:
        sev = f.severity.value
        where = f"{f.file}:{f.line}" if f.file else ""
        out.append(
            f"<tr data-severity='{sev}'><td class='sev-{sev}' data-key='{_RANK[sev]}'>{sev}"
            f"</td><td><code>{_e(f.check)}</code></td><td><a href='#s-{_e(f.substance)}'>"
            f"{_e(f.substance)}</a></td><td>{_e(', '.join(f.records))}</td>"
            f"<td>{_e(f.message)}{_suggestion(f)}</td><td>{_e(where)}</td>"
            + (f"<td>{_e(status_of(f))}</td>" if status_of else "")
            + "</tr>"
        )
    out.append("</tbody></table>")
    if table is not None:
        out += _sections(result, table, plots, max_sections)
    out.append(f"<script>{_JS}</script></body></html>")
    return "\n".join(out) + "\n"


def _sections(result, table, plots: bool, max_sections: int) -> list[str]:
    worst: dict[str, int] = {}
    for f in result.findings:
        if f.substance:
            worst[f.substance] = max(worst.get(f.substance, 0), f.severity.rank)
    names = sorted(worst, key=lambda n: (-worst[n], n))[:max_sections]
    out = ["<h2>Substances with findings</h2>"]
    rec = table.records
    for name in names:
        out.append(f"<h3 id='s-{_e(name)}'>{_e(name)}</h3>")
        rows = rec[rec["substance"].astype(str) == name]
        out.append(
            "<table><thead><tr><th>record</th><th>phase</th><th>form</th>"
            "<th>convention</th><th>range</th><th>source</th><th>note</th></tr></thead>"
            "<tbody>"
        )
        for r in rows.itertuples():
            out.append(
                f"<tr><td>{_e(r.id)}</td><td>{_e(r.phase)}</td><td>{_e(r.form)}</td>"
                f"<td>log{_e(r.log_base)} {_e(r.pressure_unit)} "
                f"{_e(r.temperature_unit)}</td><td>{_e(r.t_min_text)}..."
                f"{_e(r.t_max_text)}</td><td>{_e(r.source)}</td>"
                f"<td>{_e(r.note)}</td></tr>"
            )
        out.append("</tbody></table><ul>")
        for f in result.findings:
            if f.substance == name:
                out.append(
                    f"<li><b>{_e(f.severity.value)}</b> <code>{_e(f.check)}</code>: "
                    f"{_e(f.message)}{_suggestion(f)}</li>"
                )
        out.append("</ul>")
        if plots:
            try:
                out.append(f"<figure>{_svg(table, name)}</figure>")
            except Exception as exc:  # a picture that cannot be drawn never hides the report
                out.append(f"<p>(no picture: {_e(exc)})</p>")
    return out


def _suggestion(f) -> str:
    """The diagnosis of a finding, escaped, or nothing."""
    s = f.suggestion
    if not s:
        return ""
    return f"<br><span class='fix'>Suggested fix: {_e(s.get('explanation', ''))}</span>"
