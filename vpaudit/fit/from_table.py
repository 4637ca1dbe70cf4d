"""Fits and conversions for the command line: the points of a substance in a table in,
records with their provenance out; a record written in another form, base or units.
"""

from __future__ import annotations

import math

import numpy as np

from ..equations.forms import FORMS, WAGNER
from ..errors import EquationError, FitError
from .pair import PairFitResult, fit_pair
from .points import FitResult, fit_points


def _points(table, substance: str, phase: str | None):
    from .._columns import eq

    pts = table.points
    if not len(pts):
        raise FitError("the table has no measured points to fit")
    m = eq(pts["substance"], substance)
    if phase:
        m = m & eq(pts["phase"], phase)  # eq may hand back a read-only view
    if not m.any():
        own = eq(pts["substance"], substance)
        if phase and own.any():
            phases = " and ".join(sorted(set(pts.loc[own, "phase"].astype(object).dropna())))
            raise FitError(
                f"{substance!r} has measured points of the {phases} only, none of the {phase}"
            )
        from ..substance import near_names

        have = sorted(set(pts["substance"].astype(object).dropna()))
        raise FitError(
            f"no points of {substance!r}{near_names(substance, have, 'substance(s) with points')}"
        )
    sel = pts.loc[m]
    t = sel["T_K"].to_numpy(dtype=float)
    p = sel["P_Pa"].to_numpy(dtype=float)
    u = sel["uncertainty"].to_numpy(dtype=float, na_value=np.nan)
    unc = None if np.isnan(u).all() else np.where(np.isnan(u), np.nanmax(u), u)
    sources = sorted(set(sel["source"].astype(object).dropna()))
    return t, p, unc, sources, sel


def _reference(table, substance: str, quantity: str) -> float | None:
    from .._columns import eq

    refs = table.references
    if not len(refs):
        return None
    m = eq(refs["substance"], substance) & eq(refs["quantity"], quantity)
    return float(refs.loc[m, "value_si"].iloc[0]) if m.any() else None


def provenance(sources: list[str], n: int, what: str, extra: str = "") -> dict[str, str]:
    """The source, note, entered_by and entered_on of a fitted record."""
    import datetime as _dt

    from ..revisions import _who

    return {
        "source": f"{what} to {n} measured points: " + "; ".join(sources),
        "note": f"fitted by vpaudit on {_dt.date.today().isoformat()}{extra}",
        "entered_by": _who(None),
        "entered_on": _dt.date.today().isoformat(),
    }


def fit_table(
    table,
    substance: str,
    form: str,
    phase: str | None = None,
    *,
    robust: bool = False,
    t_crit: float | None = None,
    p_crit: float | None = None,
    record_id: str | None = None,
) -> tuple[FitResult, dict]:
    """Fit ``form`` to the measured points of ``substance`` (one phase) in ``table``.

    Wagner forms take the critical point from ``t_crit``/``p_crit`` or the table's
    ``critical_temperature``/``critical_pressure`` references. Returns the fit and the new
    record (base e, Pa, K) with the points' sources as provenance.
    """
    t, p, unc, sources, sel = _points(table, substance, phase)
    phases = sorted(set(sel["phase"].astype(object)))
    if len(phases) > 1:
        raise FitError(
            f"{substance!r} has points of both phases; choose one with --phase, or fit both "
            "together with --pair"
        )
    if form in WAGNER:
        t_crit = t_crit or _reference(table, substance, "critical_temperature")
        p_crit = p_crit or _reference(table, substance, "critical_pressure")
    res = fit_points(t, p, form, unc, robust=robust, t_crit=t_crit, p_crit=p_crit)
    extra = f"; RMS {res.rms:.3g} in ln P"
    if len(res.rejected):
        extra += f"; {len(res.rejected)} point(s) rejected as outliers"
    rec = res.record(
        id=record_id or f"{substance}-{phases[0][0]}-fit",
        substance=substance,
        phase=phases[0],
        uncertainty=float(f"{max(res.rms, 1e-6):.3g}"),
        **provenance(sources, t.size - len(res.rejected), f"{form} fit", extra),
    )
    return res, rec


def fit_table_pair(
    table,
    substance: str,
    form: str = "three-term",
    *,
    triple_temperature: float | None = None,
    triple_pressure: float | None = None,
    fusion_enthalpy: float | None = None,
    use_references: bool = True,
) -> tuple[PairFitResult, list[dict]]:
    """Fit the solid and liquid points of ``substance`` together, meeting at the triple
    point (given, else the table's ``triple_point_temperature`` reference, else fitted).
    With ``use_references`` the reference enthalpy of fusion is imposed too.
    """
    ts, ps, us, src_s, _ = _points(table, substance, "solid")
    tl, pl, ul, src_l, _ = _points(table, substance, "liquid")
    if use_references:
        triple_temperature = triple_temperature or _reference(
            table, substance, "triple_point_temperature"
        )
        triple_pressure = triple_pressure or _reference(table, substance, "triple_point_pressure")
        fusion_enthalpy = fusion_enthalpy or _reference(table, substance, "enthalpy_of_fusion")
    res = fit_pair(
        (ts, ps, us),
        (tl, pl, ul),
        form,
        triple_temperature=triple_temperature,
        triple_pressure=triple_pressure,
        fusion_enthalpy=fusion_enthalpy,
    )
    extra = (
        f"; fitted as a pair meeting at {res.triple_temperature:.6g} K "
        f"(constraint cost: chi-square {res.chi2_free:.4g} -> {res.chi2:.4g})"
    )
    recs = []
    for fit, phase, src, n in (
        (res.solid, "solid", src_s, ts.size),
        (res.liquid, "liquid", src_l, tl.size),
    ):
        rec = fit.record(
            id=f"{substance}-{phase[0]}-pairfit",
            substance=substance,
            phase=phase,
            uncertainty=float(f"{max(fit.rms, 1e-6):.3g}"),
            **provenance(src, n, f"{form} pair fit", extra),
        )
        # the solid ends and the liquid starts at the triple point
        if phase == "solid":
            rec["t_max"] = max(rec["t_max"], res.triple_temperature)
        else:
            rec["t_min"] = min(rec["t_min"], res.triple_temperature)
        recs.append(rec)
    return res, recs


def convert_or_refit(
    record: dict,
    *,
    form: str | None = None,
    log_base: str | None = None,
    pressure_unit: str | None = None,
    temperature_unit: str | None = None,
    max_deviation: float = 1e-3,
    t_crit: float | None = None,
    p_crit: float | None = None,
) -> tuple[dict, float, bool]:
    """Write ``record`` in another form, base or units: exactly where the algebra allows
    (:func:`vpaudit.equations.convert.convert_record`), otherwise by a refit over its range.

    Returns
    -------
    record : dict
        The converted record.
    deviation : float
        The largest |ln P| difference from the original over the range (0 when exact).
    exact : bool

    Raises
    ------
    EquationError
        When a refit deviates by more than ``max_deviation`` in ln P.
    """
    from ..equations.convert import convert_record
    from ..equations.engine import curves_from_frame, evaluate

    src_form = str(record["form"])
    target_form = form or src_form
    spec = FORMS[target_form]
    if target_form == src_form and (
        temperature_unit is None or temperature_unit in spec.temperature_units
    ):
        out = convert_record(
            record,
            log_base=log_base,
            pressure_unit=pressure_unit,
            temperature_unit=temperature_unit,
        )
        return out, 0.0, True
    from ..readers.table import RECORD_COLUMNS, records_table

    names = {c.name for c in RECORD_COLUMNS}
    fields = {k: v for k, v in record.items() if k in names or k[:-5] in names}
    # the curve needs only the equation's fields; the reader also asks for these
    fields = {"id": "x", "substance": "x", "phase": "liquid", "source": "x", **fields}
    curve = curves_from_frame(records_table([fields]).records)  # the reader's own path
    lo, hi = float(curve.t_min[0]), float(curve.t_max[0])
    if not (0.0 < lo <= hi < math.inf):  # NaN fails too
        raise EquationError(
            f"record {record.get('id', '?')!r} has no range a refit could sample "
            f"({record.get('t_min')}..{record.get('t_max')} K, in K: {lo:g}..{hi:g}): "
            "give it a range of positive temperatures (the audit's range-invalid says why)"
        )
    t = 1.0 / np.linspace(1.0 / hi, 1.0 / lo, 200)
    y = evaluate(curve, t, 0)[0].reshape(-1)
    if target_form in WAGNER:
        t_crit = t_crit or record.get("t_crit")
        p_crit = p_crit or record.get("p_crit")
        if not (t_crit and p_crit):
            raise EquationError(f"form {target_form!r} needs --t-crit and --p-crit")
        t_crit, p_crit = float(t_crit), float(p_crit)
    with np.errstate(over="ignore", under="ignore", invalid="ignore"):
        p = np.exp(y)
    if not np.all(np.isfinite(p) & (p > 0)):
        finite = y[np.isfinite(y)]
        span = (
            f"ln(P/Pa) from {finite.min():.4g} to {finite.max():.4g}"
            if finite.size
            else "ln(P/Pa) is nowhere a finite number"
        )
        raise EquationError(
            f"record {record.get('id')!r} cannot be refitted: its pressure is not a finite, "
            f"representable number everywhere over {lo:g}..{hi:g} K ({span}); check its "
            "coefficients first (vpaudit audit)"
        )
    fit = fit_points(t, p, target_form, t_crit=t_crit, p_crit=p_crit)
    dev = float(np.max(np.abs(fit.ln_pressure(t) - y)))
    if not dev <= max_deviation:
        raise EquationError(
            f"form {target_form!r} cannot represent record {record.get('id')!r} over "
            f"{lo:g}..{hi:g} K: a refit deviates by up to {dev:.3g} in ln P, above the "
            f"allowed {max_deviation:g} (raise --max-deviation to accept it)"
        )
    keep = {
        k: v
        for k, v in record.items()
        if k in ("id", "substance", "phase", "modification", "source", "source_locator")
    }
    out = fit.record(**keep)
    out["t_min"], out["t_max"] = lo, hi
    note = f"refitted from form {src_form} over {lo:g}..{hi:g} K; max deviation {dev:.3g} in ln P"
    out["note"] = f"{record['note']}; {note}" if record.get("note") else note
    out["uncertainty"] = record.get("uncertainty")
    for key in ("entered_by", "entered_on"):  # a conversion of the record, not a new entry
        out[key] = record.get(key)
    if log_base or pressure_unit or temperature_unit:
        out = convert_record(
            out, log_base=log_base, pressure_unit=pressure_unit, temperature_unit=temperature_unit
        )
    return out, dev, False
