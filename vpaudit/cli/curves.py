"""The commands about one substance's curves: ``eval``, ``show``, ``plot``, ``fit`` and
``convert``.
"""

from __future__ import annotations

import json

import click

from ._app import main, say
from ._options import ENTHALPY, FORMS, PRESSURE, TEMPERATURE, UnitName

# --- eval ----------------------------------------------------------------------------------


class _NegativeTemperature(click.Command):
    """``eval``'s command: a temperature after SUBSTANCE that starts with a minus sign
    (``-10degC``) is read as that temperature, not as an unknown option. It moves to the end
    of the arguments after ``--``, where click reads only positional arguments; the value of
    an option (``--at -10degC``) stays where it is.
    """

    def parse_args(self, ctx, args):  # noqa: D102
        if "--" not in args:
            valued = {
                name
                for p in self.params
                if isinstance(p, click.Option) and not p.is_flag
                for name in p.opts
            }
            for k, arg in enumerate(args):
                negative = len(arg) > 1 and arg[0] == "-" and (arg[1].isdigit() or arg[1] == ".")
                if negative and not (k and args[k - 1] in valued):
                    args = [*args[:k], *args[k + 1 :], "--", arg]
                    break
        return super().parse_args(ctx, args)


@main.command("eval", cls=_NegativeTemperature)
@click.argument("table", type=click.Path(exists=True))
@click.argument("substance")
@click.argument("temperature", required=False, type=TEMPERATURE)
@click.option(
    "--at", "at", type=TEMPERATURE, help="Temperature, e.g. 1200K, 926.85degC (bare number: K)."
)
@click.option("--pressure", type=PRESSURE, help="Pressure, e.g. 1Pa, 0.01Torr (bare number: Pa).")
@click.option(
    "--unit",
    type=UnitName(),
    default=None,
    help="Pressure unit of the output [default: the unit --pressure is given in, else Pa].",
)
@click.option("--extrapolate", is_flag=True, help="With --pressure, search beyond the ranges.")
@click.option(
    "--format", "fmt", type=click.Choice(["text", "json"]), default="text", show_default=True
)
def eval_cmd(table, substance, temperature, at, pressure, unit, extrapolate, fmt):
    """Vapour pressure of SUBSTANCE at a temperature, or the temperature at a pressure.

    The temperature may follow SUBSTANCE (vpaudit eval TABLE water 50degC, or -10degC)
    or be given with --at. Each record's enthalpy of the phase change there comes with it,
    its vapour taken as a real gas where the table gives a Tc and a Pc.
    """
    from ..api import open_table
    from ..report.answers import render_eval
    from ..substance import eval_substance

    if temperature is not None:
        if at is not None:
            raise click.UsageError("give the temperature once: after SUBSTANCE or with --at")
        at = temperature

    answer = eval_substance(open_table(table), substance, at, pressure, extrapolate)
    if fmt == "json":
        click.echo(json.dumps(answer, indent=2))
    else:
        if unit is None:
            unit = click.get_current_context().meta.get("pressure_unit", "Pa")
        say(render_eval(answer, unit), nl=False)


# --- show ----------------------------------------------------------------------------------


@main.command("show")
@click.argument("table", type=click.Path(exists=True))
@click.argument("substance")
@click.option("--policy", help="A preset or a policy TOML file.")
def show_cmd(table, substance, policy):
    """Everything about one substance: records, crossings, references, findings and the
    suggested fixes, each with the command that applies it.
    """
    from ..api import open_table
    from ..auditing import audit_table
    from ..policy import load_policy
    from ..report.answers import render_show

    t = open_table(table)
    from ..substance import substance_records

    substance_records(t, substance)
    pol = load_policy(t.policy_path, policy)
    result = audit_table(t, pol, substances=[substance], table_path=str(table))
    from ..diagnose.shared import tried_on_source

    say(render_show(t, substance, result, tried_on_source(t, pol, result.findings)), nl=False)


# --- plot ----------------------------------------------------------------------------------


@main.command("plot")
@click.argument("table", type=click.Path(exists=True))
@click.argument("substance")
@click.option(
    "--output",
    "-o",
    required=True,
    type=click.Path(dir_okay=False),
    help="The picture: FILE.png or FILE.svg.",
)
@click.option("--unit", default="Pa", show_default=True, help="Pressure unit of the right axis.")
def plot_cmd(table, substance, output, unit):
    """Draw ln P against 1/T for SUBSTANCE: both phases, ranges, crossing, references."""
    from ..api import open_table
    from ..plot import plot_substance

    drawn = plot_substance(open_table(table), substance, output, unit)
    cross = ", ".join(f"{c['T_K']:.5g} K" for c in drawn["crossings"]) or "none"
    say(f"wrote {output}: {len(drawn['records'])} record(s), crossing(s): {cross}")


# --- fit / convert ---------------------------------------------------------------------------


@main.command("fit")
@click.argument("table", type=click.Path(exists=True))
@click.option("--substance", required=True, help="The substance whose points are fitted.")
@click.option(
    "--form",
    default="three-term",
    show_default=True,
    type=click.Choice(FORMS),
)
@click.option("--phase", type=click.Choice(["solid", "liquid"]), help="Fit this phase's points.")
@click.option("--robust", is_flag=True, help="Soft-L1 loss; points beyond 3 sigma are rejected.")
@click.option(
    "--pair", is_flag=True, help="Fit solid and liquid together, meeting at the triple point."
)
@click.option(
    "--triple-point", type=TEMPERATURE, help="Impose the triple point, e.g. 1234.5K (pair fits)."
)
@click.option(
    "--triple-pressure", type=PRESSURE, help="Also impose its pressure, e.g. 3.2Pa (pair fits)."
)
@click.option(
    "--fusion-enthalpy",
    type=ENTHALPY,
    help="Also impose dH_fus there, e.g. 12.47kJ/mol (bare number: J/mol; pair fits).",
)
@click.option(
    "--no-references", is_flag=True, help="Pair fits: ignore the table's triple point and dH_fus."
)
@click.option(
    "--t-crit",
    type=TEMPERATURE,
    help="Wagner forms: critical temperature (default: the table's reference).",
)
@click.option(
    "--p-crit",
    type=PRESSURE,
    help="Wagner forms: critical pressure (default: the table's reference).",
)
@click.option("--id", "record_id", help="Id of the new record.")
@click.option(
    "--write",
    "write_to",
    type=click.Path(dir_okay=False),
    help="Append the new record(s) to this records CSV file.",
)
@click.option("--force", is_flag=True, help="With --write: write even a record that draws errors.")
def fit_cmd(
    table,
    substance,
    form,
    phase,
    robust,
    pair,
    triple_point,
    triple_pressure,
    fusion_enthalpy,
    no_references,
    t_crit,
    p_crit,
    record_id,
    write_to,
    force,
):
    """Fit an equation to the measured points of TABLE and audit the new record.

    The record carries the points' sources as provenance; --write appends it to a records
    file without touching the file's other lines.
    """
    from ..api import open_table
    from ..auditing import audit_new_records
    from ..fit import fit_table, fit_table_pair
    from ..report.fit_summary import render_fit, render_pair

    t = open_table(table)
    if pair:
        res, recs = fit_table_pair(
            t,
            substance,
            form,
            triple_temperature=triple_point,
            triple_pressure=triple_pressure,
            fusion_enthalpy=fusion_enthalpy,
            use_references=not no_references,
        )
        findings = audit_new_records(t, recs, substance)
        text = render_pair(res, recs, findings)
    else:
        res, rec = fit_table(
            t,
            substance,
            form,
            phase,
            robust=robust,
            t_crit=t_crit,
            p_crit=p_crit,
            record_id=record_id,
        )
        recs = [rec]
        findings = audit_new_records(t, recs, substance)
        text = render_fit(res, rec, findings)
    click.echo(text, nl=False)
    if write_to:
        from ..revisions import add_records

        line = add_records(write_to, t, recs, findings, force=force)
        say(f"appended {len(recs)} record(s) to {write_to} at line {line}")


@main.command("convert")
@click.argument("table", type=click.Path(exists=True))
@click.argument("record")
@click.option("--form", help="Target equation form (a refit unless it is the same form).")
@click.option("--log-base", type=click.Choice(["e", "10"]))
@click.option("--pressure-unit", type=UnitName(), help="Target pressure unit, e.g. Torr.")
@click.option("--temperature-unit", type=click.Choice(["K", "degC", "degF"]))
@click.option(
    "--max-deviation",
    type=click.FloatRange(min=0, min_open=True, max=10),
    default=1e-3,
    show_default=True,
    help="Largest ln P deviation a refit may have over the range.",
)
@click.option("--t-crit", type=TEMPERATURE, help="Wagner targets: critical temperature.")
@click.option("--p-crit", type=PRESSURE, help="Wagner targets: critical pressure.")
@click.option(
    "--format", "fmt", type=click.Choice(["csv", "json"]), default="csv", show_default=True
)
def convert_cmd(
    table,
    record,
    form,
    log_base,
    pressure_unit,
    temperature_unit,
    max_deviation,
    t_crit,
    p_crit,
    fmt,
):
    """Write RECORD in another form, log base or unit: exactly where possible, else refitted."""
    from ..api import open_table
    from ..fit import convert_or_refit
    from ..report.fit_summary import render_conversion
    from ..substance import record_dict

    if not any((form, log_base, pressure_unit, temperature_unit)):
        raise click.UsageError(
            "say what to convert to: --form, --log-base, --pressure-unit or --temperature-unit"
        )
    rec = record_dict(open_table(table), record)
    out, dev, exact = convert_or_refit(
        rec,
        form=form,
        log_base=log_base,
        pressure_unit=pressure_unit,
        temperature_unit=temperature_unit,
        max_deviation=max_deviation,
        t_crit=t_crit,
        p_crit=p_crit,
    )
    click.echo(render_conversion(record, out, dev, exact, fmt), nl=False)
