"""Terminal report of a fit (coefficients, uncertainties, residuals, band, audit of the
result) and of a conversion.
"""

from __future__ import annotations

import json

import numpy as np

from ..writers import records_csv
from ._escape import visible


def _coefficients(fit) -> list[str]:
    se = fit.standard_errors
    lines = ["coefficient          value     standard error"]
    for n, v, s in zip(fit.names, fit.values, se, strict=True):
        lines.append(f"  {n:<8} {v:>16.10g} {s:>16.4g}")
    with np.errstate(invalid="ignore", divide="ignore"):
        corr = fit.covariance / np.outer(se, se)
    lines.append("covariance (upper) and correlation (lower):")
    for i, n in enumerate(fit.names):
        row = [
            f"{fit.covariance[i, j]:>11.3e}" if j >= i else f"{corr[i, j]:>11.4f}"
            for j in range(len(fit.names))
        ]
        lines.append(f"  {n:<6}" + "".join(row))
    return lines


def _fit_lines(fit, label: str) -> list[str]:
    t_w, r_w = fit.worst
    kind = "stated uncertainties" if fit.absolute_sigma else "scaled by the reduced chi-square"
    lines = [
        f"{label}: form {fit.form}, {fit.residuals.size} points, "
        f"{fit.t_min:.6g}..{fit.t_max:.6g} K (ln P in Pa, T in K)",
        *_coefficients(fit),
        f"residuals: RMS {fit.rms:.3g} in ln P; worst {r_w:+.3g} at {t_w:.6g} K; "
        f"chi-square {fit.chi2:.4g} on {fit.dof} degrees of freedom (covariance: {kind})",
    ]
    ts = np.linspace(fit.t_min, fit.t_max, 5)
    band = fit.band(ts)
    lines.append(
        "95 % band of ln P: "
        + ", ".join(f"+/-{b:.2g} at {t:.5g} K" for t, b in zip(ts, band, strict=True))
    )
    if len(fit.rejected):
        lines.append(
            f"rejected as outliers (points #{', #'.join(str(int(i) + 1) for i in fit.rejected)} "
            "of the selection): left out of the final fit"
        )
    return lines


#: What the new records are audited with (:func:`vpaudit.auditing.audit_new_records`).
_AUDITED_WITH = (
    "audit of the new record(s), with the substance's references, measured points and "
    "records of the other phase"
)


def _findings(findings) -> list[str]:
    if not findings:
        return [f"{_AUDITED_WITH}: no errors, warnings or notes"]
    out = [f"{_AUDITED_WITH}:"]
    for f in findings:
        out.append(f"  {f.severity.label:<8}{f.check}: {f.message}")
    return out


def render_fit(fit, record: dict, findings) -> str:
    """One fit, the record it makes, and what the audit says of that record."""
    lines = _fit_lines(fit, f"{record['substance']} ({record['phase']})")
    lines += ["", "new record:", records_csv([record]).rstrip("\n"), "", *_findings(findings)]
    return "\n".join(lines) + "\n"


def render_pair(res, records: list[dict], findings) -> str:
    """A pair fit: both curves, the triple point and what the constraint cost."""
    lines = [
        f"triple point: {res.triple_temperature:.10g} K, {res.triple_pressure:.6g} Pa; implied "
        f"enthalpy of fusion {res.fusion_enthalpy / 1000:.4g} kJ/mol",
        f"cost of the constraint: chi-square {res.chi2_free:.5g} (separate fits) -> "
        f"{res.chi2:.5g} (together); RMS solid {res.rms_free[0]:.3g} -> {res.rms[0]:.3g}, "
        f"liquid {res.rms_free[1]:.3g} -> {res.rms[1]:.3g} in ln P",
        "",
        *_fit_lines(res.solid, "solid"),
        "",
        *_fit_lines(res.liquid, "liquid"),
        "",
        "new records:",
        records_csv(records).rstrip("\n"),
        "",
        *_findings(findings),
    ]
    return "\n".join(lines) + "\n"


def render_conversion(record_id: str, record: dict, deviation: float, exact: bool, fmt: str) -> str:
    """A converted record: as a CSV line under a comment that says how it was made
    (``fmt="csv"``), or as JSON with ``exact`` and ``max_deviation_lnP`` (ln P, over the
    record's range) beside it.
    """
    if fmt == "json":
        clean = {
            k: v for k, v in record.items() if not k.endswith("_text") and k not in ("file", "line")
        }
        body = {"record": clean, "exact": exact, "max_deviation_lnP": deviation}
        return json.dumps(body, indent=2, default=str) + "\n"
    how = (
        "exact conversion"
        if exact
        else f"refit; max deviation {deviation:.3g} in ln P over the range"
    )
    return f"# {visible(record_id)}: {how}\n" + records_csv([record])
