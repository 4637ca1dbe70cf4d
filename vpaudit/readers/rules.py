"""The rules of the table format that a row can break while it reads fine: a record's range,
its source, a duplicate id, an Antoine pole inside the range, a reference's unit, a
point's temperature. Each broken rule is a row of :attr:`~vpaudit.readers.table.Table.problems`
(file, line, column, rule, message, id, substance): the import rejects such a table, the
audit reports each as a finding.
"""

from __future__ import annotations

from dataclasses import dataclass, field

import numpy as np
import pandas as pd

from .._columns import empty as blank
from .._columns import eq, isin, lookup
from ..equations.forms import COEFFICIENTS, FORMS
from ..errors import Location, TableError
from ..units import (
    ENTHALPY_UNITS,
    ENTROPY_UNITS,
    MOLAR_MASS_UNITS,
    PRESSURE_UNITS,
    QUANTITY_UNITS,
    TEMPERATURE_UNITS,
)
from .files import RawFrame


@dataclass
class Collector:
    """What reading a file found: read errors, rule problems and typographic rewrites."""

    errors: list[TableError] = field(default_factory=list)
    problems: list[dict] = field(default_factory=list)
    rewrites: list[dict] = field(default_factory=list)

    def error(self, raw: RawFrame, row: int | None, column: str | None, message: str) -> None:
        """A read error at row ``row`` (its line in ``raw``) and ``column``."""
        line = raw.lines[row] if row is not None else None
        self.errors.append(TableError(message, Location(raw.path, line, column)))


def problem(
    out: Collector, frame: pd.DataFrame, rows: np.ndarray, rule: str, column: str, messages
) -> None:
    """Rows ``rows`` of ``frame`` break ``rule`` in ``column``: one problem each, with its
    file, line, id and substance (``messages`` one per row, or one for all).
    """
    if not len(rows):
        return
    if isinstance(messages, str):
        messages = [messages] * len(rows)
    rows = np.asarray(rows, dtype=np.int64)

    def pick(name):  # the cells of these rows only, one column access each
        return frame[name].take(rows).astype(object).tolist()

    files, lines, subs = pick("file"), frame["line"].to_numpy()[rows], pick("substance")
    ids = pick("id") if "id" in frame else [None] * len(rows)
    for k, msg in enumerate(messages):
        out.problems.append(
            {
                "file": files[k],
                "line": int(lines[k]),
                "column": column,
                "rule": rule,
                "message": msg,
                "id": None if ids[k] is pd.NA else ids[k],
                "substance": None if subs[k] is pd.NA else subs[k],
            }
        )


def _kelvin(values: np.ndarray, units: pd.Series) -> np.ndarray:
    """Temperatures in kelvin from values in the units of each row (K, degC, degF)."""
    scale = lookup(units, {u: s for u, (s, _) in TEMPERATURE_UNITS.items()}, 1.0)
    offset = lookup(units, {u: o for u, (_, o) in TEMPERATURE_UNITS.items()}, 0.0)
    return values * scale + offset


def record_rules(frame: pd.DataFrame, raw: RawFrame, out: Collector) -> None:
    """The rules of coefficient records (``frame``, read from ``raw``), into ``out``."""
    # Coefficients must fit the form exactly (a read error: the equation cannot be
    # interpreted otherwise).
    for name, spec in FORMS.items():
        rows = eq(frame["form"], name)
        if not rows.any():
            continue
        for c in COEFFICIENTS:
            given = ~np.isnan(frame[c].to_numpy()) | frame[c + "_text"].notna().to_numpy()
            if c in spec.coefficients:
                for i in np.flatnonzero(rows & ~given):
                    out.error(
                        raw, int(i), c, f"form {name!r} needs coefficient {c} ({spec.equation})"
                    )
            else:
                for i in np.flatnonzero(rows & given):
                    out.error(
                        raw,
                        int(i),
                        c,
                        f"form {name!r} does not use coefficient {c} "
                        f"({spec.equation}); leave it empty",
                    )
        units = frame["temperature_unit"]
        bad_unit = rows & ~isin(units, spec.temperature_units)
        for i in np.flatnonzero(bad_unit):
            out.error(
                raw,
                int(i),
                "temperature_unit",
                f"form {name!r} needs an absolute "
                f"temperature: temperature_unit must be {', '.join(spec.temperature_units)}"
                f", not {units.iat[i]!r}",
            )
        if spec.needs_critical:
            for c in ("t_crit", "p_crit"):
                v = frame[c].to_numpy()
                for i in np.flatnonzero(rows & ~(v > 0)):
                    out.error(raw, int(i), c, f"form {name!r} needs a positive {c}")
    # Rules: range, source, pole (reported, not raised).
    unit = frame["temperature_unit"]
    lo = _kelvin(frame["t_min"].to_numpy(), unit)
    hi = _kelvin(frame["t_max"].to_numpy(), unit)
    missing = np.isnan(lo) | np.isnan(hi)
    problem(
        out,
        frame,
        np.flatnonzero(missing),
        "range",
        "t_min",
        "the validity range is missing (t_min and t_max are required)",
    )
    with np.errstate(invalid="ignore"):
        nonpos = ~missing & (lo <= 0)
        order = ~missing & ~nonpos & ~(lo < hi)
    problem(
        out,
        frame,
        np.flatnonzero(nonpos),
        "range",
        "t_min",
        [
            f"t_min is {lo[i]:g} K: an absolute temperature must be positive"
            for i in np.flatnonzero(nonpos)
        ],
    )
    problem(
        out,
        frame,
        np.flatnonzero(order),
        "range",
        "t_max",
        [
            f"the range is empty: t_min {frame['t_min'].iat[i]:g} is not below t_max "
            f"{frame['t_max'].iat[i]:g}"
            for i in np.flatnonzero(order)
        ],
    )
    antoine = eq(frame["form"], "antoine")
    if antoine.any():
        pole = -frame["C"].to_numpy()
        with np.errstate(invalid="ignore"):
            inside = (
                antoine
                & ~missing
                & (frame["t_min"].to_numpy() <= pole)
                & (pole <= frame["t_max"].to_numpy())
            )
        problem(
            out,
            frame,
            np.flatnonzero(inside),
            "pole",
            "C",
            [
                f"the Antoine pole theta = -C = {pole[i]:g} {unit.iat[i]} lies inside the range "
                f"{frame['t_min'].iat[i]:g}..{frame['t_max'].iat[i]:g}"
                for i in np.flatnonzero(inside)
            ],
        )
    source_rule(frame, out)
    unc = frame["uncertainty"].to_numpy()
    with np.errstate(invalid="ignore"):
        bad = ~np.isnan(unc) & ~(unc > 0)
    for i in np.flatnonzero(bad):
        out.error(
            raw, int(i), "uncertainty", "uncertainty must be a positive relative value (0.05 = 5 %)"
        )


def source_rule(frame: pd.DataFrame, out: Collector) -> None:
    """Every row cites a source."""
    empty = blank(frame["source"])
    problem(
        out,
        frame,
        np.flatnonzero(empty),
        "source",
        "source",
        "no source is cited: every value needs its citation",
    )


_UNIT_FACTORS = {
    "pressure": PRESSURE_UNITS,
    "enthalpy": ENTHALPY_UNITS,
    "molar_mass": MOLAR_MASS_UNITS,
    "entropy": ENTROPY_UNITS,
}


def reference_rules(frame: pd.DataFrame, raw: RawFrame, out: Collector) -> None:
    """The rules of reference values (``frame``, read from ``raw``), into ``out``."""
    q = frame["quantity"]
    unit = frame["unit"]
    value = frame["value"].to_numpy()
    si = np.full(len(frame), np.nan)
    unit_missing = unit.isna().to_numpy()
    for quantity, (kind, units) in QUANTITY_UNITS.items():
        rows = eq(q, quantity)
        if not rows.any():
            continue
        ok = rows & isin(unit, units)
        for i in np.flatnonzero(rows & ~ok & ~unit_missing):
            out.error(
                raw,
                int(i),
                "unit",
                f"unit {unit.iat[i]!r} does not fit {quantity}; use {', '.join(units)}",
            )
        if kind == "temperature":
            si[ok] = _kelvin(value, unit)[ok]
        else:
            factors = _UNIT_FACTORS[kind]
            si[ok] = (value * lookup(unit, factors))[ok]
    with np.errstate(invalid="ignore"):
        # an entropy of the phase change may be of either sign in principle; every other
        # quantity but the enthalpy of fusion is a size
        signed = eq(q, "enthalpy_of_fusion") | eq(q, "standard_entropy_of_vaporization")
        signed |= eq(q, "standard_entropy_of_sublimation")
        bad = ~np.isnan(si) & (si <= 0) & ~signed
    for i in np.flatnonzero(bad):
        out.error(
            raw, int(i), "value", f"{q.iat[i]} must be positive, got {value[i]:g} {unit.iat[i]}"
        )
    frame["value_si"] = si
    source_rule(frame, out)


def point_rules(frame: pd.DataFrame, raw: RawFrame, out: Collector) -> None:
    """The rules of measured points (``frame``, read from ``raw``), into ``out``."""
    with np.errstate(invalid="ignore", over="ignore"):
        t = _kelvin(frame["T"].to_numpy(), frame["temperature_unit"])
        p = frame["P"].to_numpy() * lookup(frame["pressure_unit"], PRESSURE_UNITS)
        for i in np.flatnonzero(~np.isnan(t) & (t <= 0)):
            out.error(raw, int(i), "T", "T must be a positive absolute temperature")
        for i in np.flatnonzero(~np.isnan(p) & (p <= 0)):
            out.error(raw, int(i), "P", "P must be positive")
        for i in np.flatnonzero(np.isinf(p) | np.isinf(t)):  # finite as written, not in SI
            col = "P" if np.isinf(p[i]) else "T"
            out.error(raw, int(i), col, f"{col} is beyond the largest double once in SI units")
    frame["T_K"] = t
    frame["P_Pa"] = p
    source_rule(frame, out)
