"""Pictures of one substance: ln P against 1/T with both phases, ranges, the crossing, the
reference points and measured points, and a residual panel when several sources exist.

The design is plain and print-friendly: white ground, black text, a light grid; solid and
liquid records differ by colour *and* marker (triangles for solids, circles for liquids),
each record is drawn solid over its validity range and dashed where extrapolated.
"""

from __future__ import annotations

import math
from pathlib import Path

import numpy as np

from .checks._context import AuditContext
from .equations.engine import evaluate
from .errors import VpauditError
from .lookup import substance_records
from .policy import load_policy
from .readers.table import Table
from .units import pressure_factor

__all__ = ["plot_substance"]

_STYLE = {
    "solid": {"color": "#b34700", "marker": "^"},
    "liquid": {"color": "#1f4e9c", "marker": "o"},
}
#: One marker per source within a phase, so sources differ without colour too.
_MARKERS = {"solid": ["^", "v", "<", ">", "P"], "liquid": ["o", "s", "D", "p", "h"]}
_NICE_T = [
    100,
    150,
    200,
    250,
    300,
    400,
    500,
    600,
    700,
    800,
    1000,
    1200,
    1500,
    2000,
    2500,
    3000,
    4000,
    5000,
    7000,
    10000,
]


def _matplotlib():
    try:
        import matplotlib

        matplotlib.use("Agg")  # non-interactive: files only
        import matplotlib.pyplot as plt
    except ImportError:  # pragma: no cover - matplotlib is in the plot and test extras
        raise VpauditError("plotting needs matplotlib: pip install 'vpaudit[plot]'") from None
    return plt


def plot_substance(table: Table, substance: str, path: str | Path, unit: str = "Pa") -> dict:
    """Draw ``substance`` and write the picture to ``path`` (``.png`` or ``.svg``).

    Parameters
    ----------
    table : Table
    substance : str
    path : str or Path
        Output file; its ending picks the format.
    unit : str
        Pressure unit of the right-hand axis.

    Returns
    -------
    dict
        What was drawn: ``crossings`` (list of {"records", "T_K", "lnP"}), ``records`` and
        ``residual_panel`` (bool), for tests and captions.
    """
    path = Path(path)
    if path.suffix.lower() not in (".png", ".svg"):
        raise VpauditError(f"{path}: the picture must be a .png or .svg file")
    factor = pressure_factor(unit)
    substance_records(table, substance)  # an unknown name lists near matches
    sub_table = _only(table, substance)
    ctx = AuditContext(sub_table, load_policy(table.policy_path))
    plt = _matplotlib()
    phases = ctx.liquid
    several = any(np.sum(phases == ph) > 1 for ph in (True, False))
    fig = plt.figure(figsize=(7.5, 7.0 if several else 5.6), dpi=150)
    grid = fig.add_gridspec(
        2 if several else 1, 1, height_ratios=[3, 1.3] if several else [1], hspace=0.08
    )
    ax = fig.add_subplot(grid[0])
    plt.rcParams.update({"font.size": 11})
    lo = float(np.nanmin(ctx.curves.t_min))
    hi = float(np.nanmax(ctx.curves.t_max))
    t_all = 1.0 / np.linspace(1.0 / (hi * 1.08), 1.0 / (lo / 1.08), 400)
    drawn = []
    seen = {"solid": 0, "liquid": 0}
    markers = {}
    for i in range(ctx.n):
        if not ctx.evaluable[i]:
            continue
        phase = ctx.phase_of(i)
        markers[i] = _MARKERS[phase][seen[phase] % len(_MARKERS[phase])]
        seen[phase] += 1
        style = {"color": _STYLE[phase]["color"], "marker": markers[i]}
        c = ctx.curves.take([i])
        y = evaluate(c, t_all[None, :], 0)[0][0]
        inside = (t_all >= c.t_min[0]) & (t_all <= c.t_max[0])
        x = 1000.0 / t_all
        ax.plot(x, np.where(inside, np.nan, y), ls="--", lw=1.0, color=style["color"], alpha=0.7)
        ax.plot(
            x,
            np.where(inside, y, np.nan),
            ls="-",
            lw=2.0,
            color=style["color"],
            marker=style["marker"],
            markevery=40,
            ms=5,
            label=f"{ctx.id(i)} ({phase}, {c.t_min[0]:.4g}-{c.t_max[0]:.4g} K)",
        )
        drawn.append(ctx.id(i))
    ctx.markers = markers
    pr = ctx.pairs
    crossings = []
    for k in range(len(pr["s"])):
        t = pr["T"][k]
        if not math.isfinite(t):
            continue
        ax.plot([1000.0 / t], [pr["y"][k]], marker="X", ms=11, color="black", zorder=5)
        label = (
            f"crossing {t:.5g} K"
            if len(pr["s"]) == 1
            else f"{ctx.id(pr['s'][k])} x {ctx.id(pr['l'][k])}: {t:.5g} K"
        )
        ax.annotate(
            label, (1000.0 / t, pr["y"][k]), xytext=(8, 8), textcoords="offset points", fontsize=9.5
        )
        crossings.append(
            {
                "records": (ctx.id(pr["s"][k]), ctx.id(pr["l"][k])),
                "T_K": t,
                "lnP": float(pr["y"][k]),
            }
        )
    _references(ax, ctx)
    _points(ax, sub_table)
    ax.set_ylabel("ln(P / Pa)")
    ax.grid(True, color="#dddddd", lw=0.6)
    ax.set_title(
        f"{substance}: vapour pressure (solid lines: validity range; dashed: extrapolated)",
        fontsize=11,
        pad=30,
    )
    ax.legend(fontsize=8.5, loc="lower left", frameon=True)
    top = ax.secondary_xaxis(
        "top",
        functions=(
            lambda x: 1000.0 / np.where(x == 0, np.nan, x),
            lambda t: 1000.0 / np.where(t == 0, np.nan, t),
        ),
    )
    top.set_xlabel("T / K")
    x0, x1 = sorted(ax.get_xlim())
    ticks, last = [], None
    for t in _NICE_T:  # temperatures spaced at least 7 % of the axis apart
        x = 1000.0 / t
        if x0 <= x <= x1 and (last is None or abs(last - x) > 0.07 * (x1 - x0)):
            ticks.append(t)
            last = x
    top.set_xticks(ticks)
    ln_f = math.log(factor)
    right = ax.secondary_yaxis(
        "right", functions=(lambda y: (y - ln_f) / math.log(10), lambda v: v * math.log(10) + ln_f)
    )
    right.set_ylabel(f"log10(P / {unit})")
    if several:
        ax.tick_params(labelbottom=False)
        _residuals(fig.add_subplot(grid[1], sharex=ax), ctx, t_all)
    else:
        ax.set_xlabel("1000 K / T")
    fig.savefig(path, bbox_inches="tight")
    plt.close(fig)
    return {"crossings": crossings, "records": drawn, "residual_panel": several}


def _only(table: Table, substance: str) -> Table:
    from .auditing import restrict

    return restrict(table, {substance})


def _references(ax, ctx: AuditContext) -> None:
    tm = ctx.melting_reference()[0] if ctx.n else np.nan
    if math.isfinite(tm):
        ax.axvline(1000.0 / tm, color="#555555", ls=":", lw=1.2)
        ax.annotate(
            f"reference melting point {tm:.5g} K",
            (1000.0 / tm, ax.get_ylim()[1]),
            xytext=(3, -12),
            textcoords="offset points",
            fontsize=9,
            rotation=0,
        )
    tb = ctx.reference("normal_boiling_point")[0] if ctx.n else np.nan
    if math.isfinite(tb):
        ax.plot(
            [1000.0 / tb],
            [math.log(101325.0)],
            marker="s",
            ms=8,
            mfc="white",
            mec="black",
            ls="none",
            label=f"reference normal boiling point {tb:.5g} K",
        )
    ttp = ctx.reference("triple_point_temperature")[0] if ctx.n else np.nan
    ptp = ctx.reference("triple_point_pressure")[0] if ctx.n else np.nan
    if math.isfinite(ttp) and math.isfinite(ptp):
        ax.plot(
            [1000.0 / ttp],
            [math.log(ptp)],
            marker="D",
            ms=8,
            mfc="white",
            mec="black",
            ls="none",
            label=f"reference triple point {ttp:.5g} K, {ptp:.4g} Pa",
        )


def _points(ax, table: Table) -> None:
    pts = table.points
    if not len(pts):
        return
    for phase, style in _STYLE.items():
        m = (pts["phase"].astype(str) == phase).to_numpy()
        if m.any():
            ax.plot(
                1000.0 / pts["T_K"].to_numpy()[m],
                np.log(pts["P_Pa"].to_numpy()[m]),
                ls="none",
                marker="x",
                ms=7,
                mew=1.5,
                color=style["color"],
                label=f"measured points ({phase})",
            )


def _residuals(ax, ctx: AuditContext, t_all: np.ndarray) -> None:
    """Ln P of each record minus the median of the records of its phase (its consensus)."""
    x = 1000.0 / t_all
    for phase in ("solid", "liquid"):
        rows = [i for i in range(ctx.n) if ctx.evaluable[i] and ctx.phase_of(i) == phase]
        if len(rows) < 2:
            continue
        c = ctx.curves.take(rows)
        y = evaluate(c, np.broadcast_to(t_all, (len(rows), t_all.size)), 0)[0]
        inside = (t_all[None, :] >= c.t_min[:, None]) & (t_all[None, :] <= c.t_max[:, None])
        ym = np.where(inside, y, np.nan)
        counts = np.isfinite(ym).sum(axis=0)
        with np.errstate(all="ignore"):
            consensus = np.full(t_all.size, np.nan)
            cols = counts > 0
            consensus[cols] = np.nanmedian(ym[:, cols], axis=0)
        for j, i in enumerate(rows):
            ax.plot(
                x,
                ym[j] - consensus,
                lw=1.6,
                color=_STYLE[phase]["color"],
                marker=ctx.markers.get(i, _STYLE[phase]["marker"]),
                markevery=40,
                ms=4,
                label=ctx.id(i),
            )
    ax.axhline(0.0, color="black", lw=0.8)
    ax.set_ylabel("ln P - consensus")
    ax.set_xlabel("1000 K / T")
    ax.grid(True, color="#dddddd", lw=0.6)
    ax.legend(fontsize=8, loc="best")
