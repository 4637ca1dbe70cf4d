"""Pictures of one substance: ln P against 1/T with both phases, ranges, the crossings, the
reference values and measured points, and a panel of each record's deviation from a straight
reference line, where disagreements of a few per cent show.

The design is plain and print-friendly: white ground, black text, a light grid. Curves are
lines, never markers: thick within the record's validity range, thin and dashed where
extrapolated; solids and liquids differ by colour, each record is named at the end of its
line, and a second source of a phase has its own line pattern. Markers are kept for data:
measured points (open circles), crossings (a black cross), reference values (open diamonds).
Text from the table is drawn as plain text, never as mathematical markup.
"""

from __future__ import annotations

import math
from pathlib import Path

import numpy as np

from ._atomic import atomic_path
from .checks._context import AuditContext
from .equations.engine import evaluate
from .errors import VpauditError
from .policy import load_policy
from .readers.table import Table
from .substance import substance_records
from .units import pressure_factor

__all__ = ["plot_substance"]

_STYLE = {
    "solid": {"color": "#b34700"},
    "liquid": {"color": "#1f4e9c"},
}
#: One line pattern per source within a phase, so sources differ without colour too.
_PATTERNS = ["-", (0, (7, 2, 1.5, 2)), (0, (3, 1.5)), (0, (1, 1.2))]
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


def _name_curves(ax, names, finite_in_range) -> None:
    """Write each record's name at the high-temperature end of its range; names that would
    fall on one another (two sources of nearly the same curve) are stacked upwards.
    """
    if not names:
        return
    xs = np.array([n[0] for n in names])
    ys = np.concatenate(finite_in_range) if finite_in_range else np.array([n[1] for n in names])
    dx = max(float(np.ptp(xs)), 1e-9) * 0.05 + 0.01
    dy = max(float(np.ptp(ys)), 1e-9) * 0.03
    placed: list[tuple[float, float]] = []
    for x, y, text, color in names:
        near = sum(abs(x - px) <= dx and abs(y - py) <= dy for px, py in placed)
        ax.annotate(
            text,
            (x, y),
            xytext=(4, 4 + 10 * near),
            textcoords="offset points",
            fontsize=8,
            color=color,
        )
        placed.append((x, y))


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
    if not ctx.evaluable.any():
        raise VpauditError(
            f"no record of {substance!r} can be drawn: none of its {ctx.n} record(s) has a "
            "curve over a valid range (an empty or reversed range, an Antoine pole in it: "
            "'vpaudit audit' says which)"
        )
    plt = _matplotlib()
    fig = plt.figure(figsize=(7.5, 7.2), dpi=150)
    grid = fig.add_gridspec(2, 1, height_ratios=[3, 1.4], hspace=0.08)
    ax = fig.add_subplot(grid[0])
    plt.rcParams.update({"font.size": 11})
    lo = float(np.nanmin(ctx.curves.t_min))
    hi = float(np.nanmax(ctx.curves.t_max))
    anchors = _anchor_points(ctx)
    if anchors:  # the curves are drawn on, dashed, down to the 298.15 K anchor
        lo = min(lo, 298.15 * 1.02)
    t_all = 1.0 / np.linspace(1.0 / (hi * 1.08), 1.0 / (lo / 1.08), 400)
    x = 1000.0 / t_all
    drawn, styles, finite_in_range = [], {}, []
    lim = ctx.thresholds("pressure-not-finite")["max_abs_lnP"]  # largest |ln(P/Pa)| drawn
    names: list[tuple[float, float, str, str]] = []  # where each record's name goes
    seen = {"solid": 0, "liquid": 0}
    for i in range(ctx.n):
        if not ctx.evaluable[i]:
            continue
        phase = ctx.phase_of(i)
        styles[i] = {
            "color": _STYLE[phase]["color"],
            "ls": _PATTERNS[seen[phase] % len(_PATTERNS)],
        }
        seen[phase] += 1
        c = ctx.curves.take([i])
        with np.errstate(all="ignore"):
            y = evaluate(c, t_all[None, :], 0)[0][0]
        # an Antoine pole gives no point, not an axis; nor does a pressure that cannot be
        # represented (pressure-not-finite's), which would flatten every other curve
        y = np.where(np.isfinite(y) & (np.abs(y) <= lim), y, np.nan)
        inside = (t_all >= c.t_min[0]) & (t_all <= c.t_max[0])
        off = "" if np.isfinite(y[inside]).any() else "; no pressure that can be drawn"
        ax.plot(
            x, np.where(inside, np.nan, y), ls="--", lw=0.9, color=styles[i]["color"], alpha=0.6
        )
        if c.t_min[0] < c.t_max[0]:
            ax.plot(
                x,
                np.where(inside, y, np.nan),
                lw=2.2,
                **styles[i],
                label=_plain(f"{ctx.id(i)} ({phase}, {c.t_min[0]:.5g}-{c.t_max[0]:.5g} K{off})"),
            )
        else:  # a range of one temperature: the one point drawn
            with np.errstate(all="ignore"):
                y0 = evaluate(c, c.t_min[:, None], 0)[0][0]
            if np.isfinite(y0[0]):
                ax.plot(
                    [1000.0 / c.t_min[0]],
                    y0,
                    marker="P",
                    ms=9,
                    ls="none",
                    color=styles[i]["color"],
                    label=_plain(f"{ctx.id(i)} ({phase}, at {c.t_min[0]:.5g} K only)"),
                )
                names.append((1000.0 / c.t_min[0], y0[0], _plain(ctx.id(i)), styles[i]["color"]))
                finite_in_range.append(y0)
        shown = np.flatnonzero(inside & np.isfinite(y))
        if shown.size:  # the record's name at the high-temperature end of its range
            k = shown[0]
            names.append((x[k], y[k], _plain(ctx.id(i)), styles[i]["color"]))
            finite_in_range.append(y[shown])
        drawn.append(ctx.id(i))
    _name_curves(ax, names, finite_in_range)
    pr = ctx.pairs
    crossings = []
    for k in range(len(pr.solid)):
        t = pr.t_cross[k]
        if not math.isfinite(t):
            continue
        ax.plot(
            [1000.0 / t], [pr.y_cross[k]], marker="X", ms=11, color="black", zorder=5, ls="none"
        )
        label = (
            f"crossing {t:.5g} K"
            if len(pr.solid) == 1
            else f"{ctx.id(pr.solid[k])} x {ctx.id(pr.liquid[k])}: {t:.5g} K"
        )
        ax.annotate(
            _plain(label),
            (1000.0 / t, pr.y_cross[k]),
            xytext=(8, -14),
            textcoords="offset points",
            fontsize=9,
        )
        crossings.append(
            {
                "records": (ctx.id(pr.solid[k]), ctx.id(pr.liquid[k])),
                "T_K": t,
                "lnP": float(pr.y_cross[k]),
            }
        )
    _references(ax, ctx)
    _points(ax, sub_table)
    for phase, (ln_p, half) in anchors.items():
        ax.errorbar(
            [1000.0 / 298.15],
            [ln_p],
            yerr=[half],
            marker="s",
            ms=7,
            mfc="white",
            color=_STYLE[phase]["color"],
            capsize=4,
            ls="none",
            label=f"standard data at 298.15 K ({phase}), with the allowance",
        )
    shown_refs = [
        line.get_ydata()
        for line in ax.get_lines()
        if line.get_marker() in ("D", "h", "o", "X", "s")
    ]
    bands = [np.array([v - half, v + half]) for v, half in anchors.values()]  # whole bars
    ys = np.concatenate(
        [
            np.empty(0),
            *finite_in_range,
            *(np.asarray(v, dtype=float) for v in shown_refs),
            *bands,
        ]
    )
    # limits from what is drawn in range and the data, never from a pole nor from a
    # pressure that cannot be represented
    ys = ys[np.isfinite(ys) & (np.abs(ys) <= lim)]
    if ys.size:
        pad = 0.08 * max(float(np.ptp(ys)), 1.0)
        ax.set_ylim(float(ys.min()) - pad, float(ys.max()) + pad)
    ax.set_ylabel("ln(P / Pa)")
    ax.grid(True, color="#dddddd", lw=0.6)
    ax.set_title(
        _plain(
            f"{substance}: vapour pressure (thick lines: within each record's range; "
            "thin dashed: extrapolated)"
        ),
        fontsize=10.5,
        pad=30,
    )
    skipped = [ctx.id(i) for i in range(ctx.n) if not ctx.evaluable[i]]
    ax.legend(
        fontsize=8,
        loc="lower left",
        frameon=True,
        title=_plain(f"not drawn (cannot be evaluated over its range): {', '.join(skipped)}")
        if skipped
        else None,
        title_fontsize=7.5,
    )
    top = ax.secondary_xaxis(
        "top",
        functions=(
            lambda v: 1000.0 / np.where(v == 0, np.nan, v),
            lambda t: 1000.0 / np.where(t == 0, np.nan, t),
        ),
    )
    top.set_xlabel("T / K")
    x0, x1 = sorted(ax.get_xlim())
    ticks, last = [], None
    for t in _NICE_T:  # temperatures spaced at least 7 % of the axis apart
        xt = 1000.0 / t
        if x0 <= xt <= x1 and (last is None or abs(last - xt) > 0.07 * (x1 - x0)):
            ticks.append(t)
            last = xt
    top.set_xticks(ticks)
    _pressure_axis(ax, factor, unit)
    ax.tick_params(labelbottom=False)
    _deviations(fig.add_subplot(grid[1], sharex=ax), ctx, t_all, styles)
    with atomic_path(path) as into:
        fig.savefig(into, format=path.suffix.lower().lstrip("."), bbox_inches="tight")
    plt.close(fig)
    return {
        "crossings": crossings,
        "records": drawn,
        "not_drawn": skipped,
        "anchors": sorted(anchors),
        "ln_p_limits": tuple(float(v) for v in ax.get_ylim()),
        "deviation_panel": True,
    }


def _anchor_points(ctx: AuditContext) -> dict[str, tuple[float, float]]:
    """For each phase with standard data at 298.15 K: the ln P they imply there (third law,
    ln P = ln P0 + dS0/R - dH/(R T), for an ideal vapour: a real one lies higher by -B P / (R
    T), 0.3 at most where the anchor corrects it, well inside the band) and the half-width of
    the anchor's entropy allowance in ln P. The standard data are those the anchor checks hold
    the phase's first record to (with several sources' values, the ones its curve meets best).
    """
    from .checks.anchor import anchor_values
    from .constants import R

    a = anchor_values(ctx)
    out = {}
    if a is None:
        return out
    both = np.isfinite(a.h_ref) & np.isfinite(a.s_ref)
    for phase in ("liquid", "solid"):
        k = np.flatnonzero(both & (ctx.liquid[a.rows] == (phase == "liquid")))
        if k.size:
            h, s = a.h_ref[k[0]], a.s_ref[k[0]]
            ln_p = math.log(1e5) + s / R - h / (R * 298.15)
            out[phase] = (ln_p, ctx.thresholds("anchor-entropy")["tolerance"] / R)
    return out


def _plain(text: str) -> str:
    """Table text drawn as it is: a ``$`` would otherwise start mathematical markup."""
    return str(text).replace("$", r"\$")


def _pressure_axis(ax, factor: float, unit: str) -> None:
    """A right-hand axis in pressure itself, ticks at powers of ten of ``unit``."""
    from matplotlib.ticker import FixedLocator, FuncFormatter

    ln_f, ln10 = math.log(factor), math.log(10.0)
    right = ax.secondary_yaxis(
        "right", functions=(lambda y: (y - ln_f) / ln10, lambda v: v * ln10 + ln_f)
    )
    lo, hi = ((v - ln_f) / ln10 for v in ax.get_ylim())
    span = max(hi - lo, 1e-9)
    # at most 8 ticks, in decades of decades for a curve at absurd heights
    step = next((s for s in (1, 2, 3, 5, 10, 20, 50, 100) if span / s <= 8), None)
    if step is None:
        step = 10.0 ** math.ceil(math.log10(span / 8.0)) if math.isfinite(span) else None
    right.set_ylabel(f"P / {_plain(unit)}")
    if step is None or not math.isfinite(step):
        return
    first = math.ceil(lo / step) * step
    right.yaxis.set_major_locator(FixedLocator(np.arange(first, hi + 1e-9, step)))

    def label(v, _pos):
        k = int(round(v))
        return "1" if k == 0 else ("10" if k == 1 else f"$10^{{{k}}}$")

    right.yaxis.set_major_formatter(FuncFormatter(label))


def _only(table: Table, substance: str) -> Table:
    from .auditing import restrict

    return restrict(table, {substance})


def _references(ax, ctx: AuditContext) -> None:
    # the melting point the pair checks hold the first pair to (of several sources' values,
    # the one nearest its crossing), else the substance's first
    with np.errstate(all="ignore"):
        pairs = ctx.pairs if ctx.n else None
    if pairs is not None and len(pairs) and math.isfinite(pairs.tm[0]):
        tm = float(pairs.tm[0])
    else:
        tm = ctx.melting_reference()[0] if ctx.n else np.nan
    if math.isfinite(tm):
        ax.axvline(1000.0 / tm, color="#555555", ls=":", lw=1.2)
        ax.annotate(
            f"reference melting point {tm:.5g} K",
            (1000.0 / tm, 1.0),
            xycoords=("data", "axes fraction"),
            xytext=(3, -12),
            textcoords="offset points",
            fontsize=9,
            rotation=0,
        )
    # every value of the normal boiling point (a table may keep several sources' values)
    tbs = ctx.references_of("normal_boiling_point")
    several = tbs.rows.size > 1
    for r, tb in zip(tbs.rows.tolist(), tbs.value.tolist(), strict=True):
        if not math.isfinite(tb):
            continue
        source = f" ({ctx.reference_row_at(r)[0]})" if several else ""
        ax.plot(
            [1000.0 / tb],
            [math.log(101325.0)],
            marker="D",
            ms=7,
            mfc="white",
            mec="black",
            ls="none",
            label=f"reference normal boiling point {tb:.5g} K{source}",
        )
    ttp = ctx.reference("triple_point_temperature")[0] if ctx.n else np.nan
    ptp = ctx.reference("triple_point_pressure")[0] if ctx.n else np.nan
    if math.isfinite(ttp) and math.isfinite(ptp):
        ax.plot(
            [1000.0 / ttp],
            [math.log(ptp)],
            marker="h",
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
                marker="o",
                ms=5.5,
                mfc="white",
                mew=1.4,
                color=style["color"],
                label=f"measured points ({phase})",
            )


def _deviations(ax, ctx: AuditContext, t_all: np.ndarray, styles: dict) -> None:
    """Each record's ln P minus a straight reference line in ln P against 1/T (a
    least-squares line through every record's curve within its range): offsets and
    disagreements of a few per cent, invisible on the main panel, show here.
    """
    x = 1000.0 / t_all
    rows = list(styles)
    if rows:
        c = ctx.curves.take(rows)
        with np.errstate(all="ignore"):
            y = evaluate(c, np.broadcast_to(t_all, (len(rows), t_all.size)), 0)[0]
        inside = (t_all[None, :] >= c.t_min[:, None]) & (t_all[None, :] <= c.t_max[:, None])
        # a pressure that cannot be represented (pressure-not-finite's) is not drawn here:
        # the line fitted through it would bury every other curve's deviations
        lim = ctx.thresholds("pressure-not-finite")["max_abs_lnP"]
        ym = np.where(inside & (np.abs(y) <= lim), y, np.nan)
        xs, ys = np.broadcast_to(x, ym.shape)[np.isfinite(ym)], ym[np.isfinite(ym)]
        if xs.size >= 2 and np.ptp(xs) > 0:
            slope, icept = np.polyfit(xs, ys, 1)
            for j, i in enumerate(rows):
                ax.plot(
                    x, ym[j] - (icept + slope * x), lw=1.8, label=_plain(ctx.id(i)), **styles[i]
                )
    ax.axhline(0.0, color="black", lw=0.8)
    lo, hi = ax.get_ylim()
    if hi - lo < 0.1:  # rounding noise of a straight curve is not blown up into a signal
        ax.set_ylim(min(lo, -0.05), max(hi, 0.05))
    ax.set_title(
        "each curve minus one straight line fitted to all the curves within their ranges",
        fontsize=8.5,
    )
    ax.set_ylabel("ln P - fitted line")
    ax.set_xlabel("1000 K / T")
    ax.grid(True, color="#dddddd", lw=0.6)
    if ax.get_legend_handles_labels()[0]:
        ax.legend(fontsize=7.5, loc="best")
