"""Pictures: the file is produced, and the plotted crossing is the audited one."""

import numpy as np
import pytest
from click.testing import CliRunner

from vpaudit.checks._context import AuditContext
from vpaudit.cli import main
from vpaudit.errors import VpauditError
from vpaudit.plot import plot_substance
from vpaudit.policy import Policy
from vpaudit.readers import load_table

pytest.importorskip("matplotlib")


def test_png_and_svg_are_written_and_the_crossing_is_the_audited_one(tmp_path, sample_db):
    table = load_table(sample_db)
    drawn = plot_substance(table, "kestrium", tmp_path / "k.png", unit="Torr")
    assert (tmp_path / "k.png").read_bytes()[:8] == b"\x89PNG\r\n\x1a\n"
    assert drawn["deviation_panel"] and len(drawn["records"]) == 3
    ctx = AuditContext(table, Policy())
    pr = ctx.pairs
    audited = {
        (ctx.id(s), ctx.id(lq)): t
        for s, lq, t in zip(pr.solid, pr.liquid, pr.t_cross, strict=True)
        if ctx.substance_of(s) == "kestrium" and np.isfinite(t)
    }
    plotted = {c["records"]: c["T_K"] for c in drawn["crossings"]}
    assert plotted.keys() == audited.keys()
    for key, t in plotted.items():
        assert t == pytest.approx(audited[key], rel=1e-12)
    svg = tmp_path / "e.svg"
    plot_substance(table, "elmsite", svg)
    text = svg.read_text()
    assert text.startswith("<?xml") and "crossing" in text


def test_plot_command_and_its_errors(tmp_path, sample_db):
    r = CliRunner().invoke(
        main, ["plot", str(sample_db), "ardenite", "-o", str(tmp_path / "a.png")]
    )
    assert r.exit_code == 0 and "crossing(s): 1179.4 K" in r.output
    with pytest.raises(VpauditError, match=r"\.png or \.svg"):
        plot_substance(load_table(sample_db), "ardenite", tmp_path / "a.pdf")
    r = CliRunner().invoke(main, ["plot", str(sample_db), "ardenit", "-o", str(tmp_path / "a.png")])
    assert r.exit_code == 2 and "did you mean ardenite" in r.output


def test_a_pole_at_the_range_end_and_markup_in_a_name_still_draw(tmp_path):
    # an Antoine pole at t_min once gave "Axis limits cannot be NaN or Inf", and a name
    # like $\foo{$ a mathtext parse error: names are plain text, poles draw no point
    path = tmp_path / "r.csv"
    path.write_text(
        "id,substance,phase,form,log_base,pressure_unit,temperature_unit,A,B,C,t_min,t_max,"
        "source\n"
        "p1,$\\foo{$,liquid,antoine,10,Pa,K,10,1500,-300,300,500,invented for this test\n"
        "p2,$\\foo{$,solid,three-term,e,Pa,K,30,-9000,-1,250,300,invented for this test\n"
    )
    table = load_table(path)
    drawn = plot_substance(table, "$\\foo{$", tmp_path / "p.png")
    assert (tmp_path / "p.png").stat().st_size > 10_000
    assert drawn["records"] == ["p2"] and drawn["not_drawn"] == ["p1"]  # said on the picture
    svg = tmp_path / "p.svg"
    plot_substance(table, "$\\foo{$", svg)
    assert "$\\foo{$" in svg.read_text() or "foo" in svg.read_text()


def test_an_equation_given_at_one_temperature_is_drawn_as_its_point(tmp_path, recwarn):
    # a range t_min = t_max once crashed the plot ("need at least one array to
    # concatenate"): the one point the source vouches for is drawn and named
    path = tmp_path / "r.csv"
    path.write_text(
        "id,substance,phase,form,log_base,pressure_unit,temperature_unit,A,B,C,t_min,t_max,"
        "source\n"
        "x1,xane,liquid,antoine,e,Pa,K,20.48,2755.4,-43.15,350.95,350.95,invented for this test\n"
    )
    drawn = plot_substance(load_table(path), "xane", tmp_path / "x.svg")
    assert drawn["records"] == ["x1"] and not drawn["not_drawn"]
    assert (tmp_path / "x.svg").read_text().startswith("<?xml")
    assert not [w for w in recwarn if "legend" in str(w.message)]


def _xane_svg(tmp_path, records_csv: str, reference_rows: str) -> str:
    """The SVG text of the invented substance xane drawn from a table of ``records_csv``
    and the reference rows ``reference_rows`` (substance,quantity,value,unit,source)."""
    (tmp_path / "records").mkdir()
    (tmp_path / "references").mkdir()
    (tmp_path / "records" / "r.csv").write_text(records_csv)
    (tmp_path / "references" / "ref.csv").write_text(
        "substance,quantity,value,unit,source\n" + reference_rows
    )
    svg = tmp_path / "x.svg"
    plot_substance(load_table(tmp_path), "xane", svg)
    return svg.read_text()


def test_every_reference_boiling_point_is_marked_with_its_source(tmp_path):
    # a table may keep two sources' normal boiling points; the audit weighs both, so the
    # picture marks both (it showed only the first); invented values
    text = _xane_svg(
        tmp_path,
        "id,substance,phase,form,log_base,pressure_unit,temperature_unit,A,B,C,t_min,t_max,"
        "source\n"
        "x1,xane,liquid,antoine,10,mmHg,K,6.95464,1344.8,-53.67,280,410,invented for this test\n",
        "xane,normal_boiling_point,395.0,K,table one\n"
        "xane,normal_boiling_point,383.8,K,table two\n",
    )
    assert "reference normal boiling point 395 K (table one)" in text
    assert "reference normal boiling point 383.8 K (table two)" in text


def test_the_whole_allowance_bar_of_the_anchor_is_in_the_picture(tmp_path, sample_db):
    # the demo's lone liquid, pennarol, has kPa coefficients marked Pa: its curve lies a
    # factor 1000 below the standard data at 298.15 K, whose bar (the anchor-entropy
    # allowance, 15 J/(mol K), over R in ln P) must be drawn whole, not cut by the limits
    import math

    info = plot_substance(load_table(sample_db), "pennarol", tmp_path / "p.svg")
    assert info["anchors"] == ["liquid"]
    refs = load_table(sample_db).references
    mine = refs[refs["substance"].astype(str) == "pennarol"]
    value = dict(zip(mine["quantity"].astype(str), mine["value_si"], strict=True))
    r = 8.314462618  # J/(mol K), CODATA 2018
    ln_p = (
        math.log(1e5)
        + value["standard_entropy_of_vaporization"] / r
        - value["standard_enthalpy_of_vaporization"] / (r * 298.15)
    )
    lo, hi = info["ln_p_limits"]
    assert lo < ln_p - 15.0 / r and ln_p + 15.0 / r < hi


def test_the_melting_point_drawn_is_the_one_the_pair_is_held_to(tmp_path):
    # two sources' melting points, 1300 K listed first: the pair checks hold the invented
    # pair (crossing near 1220 K; tests/checks/cases/melting-point-mismatch.yaml) to 1200 K,
    # and the picture marks that one (it marked the first)
    text = _xane_svg(
        tmp_path,
        "id,substance,phase,form,log_base,pressure_unit,A,B,C,t_min,t_max,source\n"
        "s1,xane,solid,three-term,e,Pa,30.825875279351756,-38246.60890429179,"
        "-0.6013617752247136,600,1200,invented for this test\n"
        "l1,xane,liquid,three-term,e,Pa,34.50821469656897,-37524.97477402213,"
        "-1.2027235504494271,1200,2000,invented for this test\n",
        "xane,melting_point,1300,K,table one\nxane,melting_point,1200,K,table two\n",
    )
    assert "reference melting point 1200 K" in text
    assert "reference melting point 1300 K" not in text


def test_a_curve_whose_pressure_cannot_be_represented_is_left_off_the_scale(tmp_path):
    # an invented liquid whose A was typed 1e300 (ln P = 1e300: pressure-not-finite's)
    # beside a sound solid: the picture is drawn (the pressure axis asked numpy for 1e299
    # ticks, an internal error), on the solid's scale, and the legend says why the liquid is
    # not seen; invented values
    text = _xane_svg(
        tmp_path,
        "id,substance,phase,form,log_base,pressure_unit,A,B,C,t_min,t_max,source\n"
        "x1,xane,liquid,three-term,e,Pa,1e300,-5000,0,300,400,invented for this test\n"
        "x2,xane,solid,three-term,e,Pa,30,-6000,0,200,300,invented for this test\n",
        "",
    )
    assert "x1 (liquid, 300-400 K; no pressure that can be drawn)" in text
    info = plot_substance(load_table(tmp_path), "xane", tmp_path / "again.svg")
    lo, hi = info["ln_p_limits"]
    # the solid runs from ln P = 30 - 6000/200 = 0 to 30 - 6000/300 = 10
    assert -2.0 < lo < 0.0 and 10.0 < hi < 12.0


def test_a_substance_with_no_curve_to_draw_is_refused_in_one_line(tmp_path):
    # an invented liquid whose range was typed reversed (1752-1751 K): nothing can be
    # drawn, and the command says so (it drew empty axes whose T scale divided by zero,
    # an internal error); invented values
    (tmp_path / "records").mkdir()
    (tmp_path / "records" / "r.csv").write_text(
        "id,substance,phase,form,log_base,pressure_unit,A,B,C,t_min,t_max,source\n"
        "x1,xane,liquid,three-term,e,bar,25.0,-9000,0,1752,1751,invented for this test\n"
    )
    got = CliRunner().invoke(main, ["plot", str(tmp_path), "xane", "-o", str(tmp_path / "x.png")])
    assert got.exit_code == 2, got.output
    assert "no record of 'xane' can be drawn" in got.output
    assert not (tmp_path / "x.png").exists()
