"""The command line: exit codes, the JSON contracts and the lines a user reads."""

import json

from click.testing import CliRunner

from vpaudit.cli import main


def run(*args):
    return CliRunner().invoke(main, [str(a) for a in args], catch_exceptions=False)


def test_eval_prints_a_readable_answer(sample_db):
    r = run("eval", sample_db, "ardenite", "--at", "1200K")
    assert r.exit_code == 0
    assert "ardenite at 1200 K (926.85 degC)" in r.output
    assert "Stable phase: liquid" in r.output
    assert "Hertz-Knudsen-Langmuir" in r.output
    assert "Caution:" not in r.output  # once per report and in --help, not after every answer
    assert "Caution: vpaudit screens" in run("--help").output


def test_eval_says_when_the_stable_phase_rests_on_extrapolation(sample_db):
    # kestrium's solid range ends at 1837.2 K (the invented demo): at 2000 K the solid's
    # vapour pressure is an extrapolation, and the verdict says so; at 1500 K it is not
    above = run("eval", sample_db, "kestrium", "--at", "2000K").output
    assert "no solid record's range reaches here, so this rests on extrapolation" in above
    within = run("eval", sample_db, "kestrium", "--at", "1500K").output
    assert "Stable phase: solid (lower vapour pressure)." in within


def test_eval_says_when_the_stable_phase_contradicts_the_reference_melting_point(sample_db):
    # kestrium's sources disagree (the invented demo): the median of its two liquids lies
    # above its extrapolated solid at 2000 K, 163 K above its reference melting point
    # (1837.2 K), where the liquid is the stable phase; the answer says the curves
    # contradict the reference instead of leaving a solid 'stable' there unremarked
    above = run("eval", sample_db, "kestrium", "--at", "2000K").output
    assert "This contradicts the reference melting point, 1837.2 K: at 2000 K the liquid" in above
    answer = run("eval", sample_db, "kestrium", "--at", "2000K", "--format", "json").output
    data = json.loads(answer)
    assert data["melting_point_K"] == 1837.2 and data["stable_phase_contradicts_melting_point"]
    # below the melting point the solid is the stable phase: nothing to say
    for at in ("1500K", "1830K"):
        assert "contradicts" not in run("eval", sample_db, "kestrium", "--at", at).output
    # at a pressure: the solid reaches 3 Pa (extrapolated) above the melting point
    press = run("eval", sample_db, "kestrium", "--pressure", "3Pa", "--extrapolate").output
    assert "where the solid reaches this pressure, the liquid is the stable phase" in press
    # ardenite's curves agree with its reference melting point: liquid at 1200 K, unremarked
    assert "contradicts" not in run("eval", sample_db, "ardenite", "--at", "1200K").output


def test_eval_takes_the_temperature_after_the_substance_too(sample_db):
    """'vpaudit eval TABLE ardenite 1200K' answers as --at 1200K does; both at once is a
    usage error, as a temperature with --pressure is."""
    positional = run("eval", sample_db, "ardenite", "1200K")
    assert positional.exit_code == 0
    assert positional.output == run("eval", sample_db, "ardenite", "--at", "1200K").output
    assert run("eval", sample_db, "ardenite", "1200K", "--at", "1300K").exit_code == 2
    assert run("eval", sample_db, "ardenite", "1200K", "--pressure", "1Pa").exit_code == 2


def test_eval_reads_a_negative_temperature_after_the_substance(sample_db):
    """'vpaudit eval TABLE rostane -10degC' is that temperature, not an unknown option '-1'
    (it needed '--' before it); --at -10degC and the options after it read as before."""
    at = run("eval", sample_db, "rostane", "--at", "-10degC", "--format", "json")
    assert at.exit_code == 0, at.output
    for args in (
        ("rostane", "-10degC"),
        ("rostane", "-10degC", "--format", "json"),
        ("--format", "json", "rostane", "-10degC"),
        ("--format", "json", "rostane", "--", "-10degC"),
    ):
        r = run("eval", sample_db, *args)
        assert r.exit_code == 0, (args, r.output)
        if "json" in args:
            assert r.output == at.output
    assert run("eval", sample_db, "rostane", "-10degC", "--at", "1K").exit_code == 2


def test_eval_at_a_pressure_answers_in_the_unit_it_was_asked_in(sample_db):
    # asked at 0.01 Torr, it said "at 1.33322 Pa"; --unit still chooses
    assert run("eval", sample_db, "ardenite", "--pressure", "0.01Torr").output.startswith(
        "ardenite at 0.01 Torr\n"
    )
    assert run("eval", sample_db, "ardenite", "--pressure", "1").output.startswith(
        "ardenite at 1 Pa\n"
    )
    r = run("eval", sample_db, "ardenite", "--pressure", "0.01Torr", "--unit", "Pa")
    assert r.output.startswith("ardenite at 1.33322 Pa\n")


def test_eval_far_outside_a_range_prints_no_numpy_warning(tmp_path):
    """An invented Antoine liquid whose pole lies 3 K below 298.15 K: its pressure there
    (ln P about 1607) is beyond a float. eval must answer (no value, marked extrapolated)
    without numpy's overflow warning reaching the terminal (warnings are errors here)."""
    import warnings

    (tmp_path / "records").mkdir()
    (tmp_path / "records" / "r.csv").write_text(
        "id,substance,phase,form,log_base,pressure_unit,temperature_unit,A,B,C,t_min,t_max,"
        "source\nz,z,liquid,antoine,e,Pa,K,20,-5000,-295,400,450,invented (not real)\n"
    )
    with warnings.catch_warnings():
        warnings.simplefilter("error")
        r = run("eval", tmp_path, "z", "--at", "298.15", "--format", "json")
    assert r.exit_code == 0
    (rec,) = json.loads(r.output)["records"]
    assert rec["pressure_Pa"] is None and rec["in_range"] is False
    # below its pole the curve falls as T rises, which eval names
    assert rec["enthalpy_J_per_mol"] < 0 and rec["ideal_gas_because"] == "curve-falls"


def test_eval_json_contract(sample_db):
    r = run("eval", sample_db, "ardenite", "--at", "926.85degC", "--format", "json")
    data = json.loads(r.output)
    assert set(data) >= {"substance", "temperature_K", "pressure_Pa", "stable_phase", "records"}
    assert abs(data["temperature_K"] - 1200.0) < 1e-9 and data["pressure_Pa"] is None
    rec = data["records"][0]
    assert set(rec) >= {
        "id",
        "phase",
        "pressure_Pa",
        "temperature_K",
        "enthalpy_J_per_mol",
        "ideal_gas_enthalpy_J_per_mol",
        "compressibility_change",
        "vapour",
        "heat_capacity_change_J_per_mol_K",
        "in_range",
    }
    # at 0.76 Pa, with no Tc or Pc and an estimate that would change nothing: an ideal gas
    assert rec["vapour"] == "ideal-gas" and rec["compressibility_change"] is None
    assert rec["enthalpy_J_per_mol"] == rec["ideal_gas_enthalpy_J_per_mol"]
    r = run("eval", sample_db, "ardenite", "--pressure", "0.01Torr", "--format", "json")
    data = json.loads(r.output)
    assert abs(data["pressure_Pa"] - 1.3332236842105263) < 1e-12
    assert all(x["temperature_K"] is None or x["temperature_K"] > 500 for x in data["records"])


def test_unknown_substance_and_bad_quantity_exit_2(sample_db):
    r = run("eval", sample_db, "ardenit", "--at", "1200K")
    assert r.exit_code == 2 and "did you mean ardenite" in r.output
    r = run("eval", sample_db, "ardenite", "--at", "1200 kelvin")
    assert r.exit_code == 2 and "unknown unit 'kelvin' (did you mean K?)" in r.output


def test_audit_exit_codes_and_json_contract(sample_db, tmp_path):
    r = run("audit", sample_db, "--format", "json")
    assert r.exit_code == 1
    data = json.loads(r.output)
    assert set(data["summary"]) == {
        "records",
        "substances",
        "pairs",
        "error",
        "warning",
        "note",
        "not_checked",
    }
    f = data["findings"][0]
    assert {
        "check",
        "severity",
        "substance",
        "records",
        "message",
        "evidence",
        "suggestion",
    } <= set(f)
    assert run("audit", sample_db, "--fail-on", "never").exit_code == 0
    clean = run("audit", sample_db, "--substance", "ardenite", "--fail-on", "warning")
    assert clean.exit_code == 0, clean.output
    assert run("audit", sample_db, "--only", "no-such-check").exit_code == 2


def test_audit_of_unreadable_input_exits_2(tmp_path):
    d = tmp_path / "t" / "records"
    d.mkdir(parents=True)
    (d / "r.csv").write_text(
        "id,substance,phase,form,log_base,pressure_unit,A,B,t_min,t_max,"
        "source\nx,s,solid,two-term,e,Pa,\u22121,-1e4,300,600,src\n"
    )
    r = run("audit", tmp_path / "t")
    assert r.exit_code == 2
    assert "r.csv:2 [A]: unexpected U+2212 MINUS SIGN" in r.output


def test_text_report_and_other_formats(sample_db, tmp_path):
    r = run("audit", sample_db)
    assert "Summary:" in r.output and "Caution:" in r.output
    assert "ERROR   melting-point-mismatch" in r.output
    for fmt, probe in (("markdown", "## vpaudit:"), ("csv", "severity,check,substance")):
        out = tmp_path / f"r.{fmt}"
        run("audit", sample_db, "--format", fmt, "--output", out)
        assert out.read_text().startswith(probe)


def test_checks_listing_and_show(sample_db):
    r = run("checks")
    assert r.exit_code == 0 and "melting-point-mismatch" in r.output
    r = run("show", sample_db, "elmsite")
    assert "Solid/liquid pairs" in r.output and "crossing-orientation" in r.output


def test_import_and_export(clean_sample, tmp_path):
    db = tmp_path / "x.duckdb"
    r = run("import", clean_sample, "--db", db)
    assert r.exit_code == 0 and "imported 62 records" in r.output
    r = run("export", "--db", db, "--to", tmp_path / "out")
    assert r.exit_code == 0 and (tmp_path / "out" / "records" / "records.csv").exists()
    r = run("audit", db, "--fail-on", "never")
    assert r.exit_code == 0 and "62 records" in r.output


def test_quiet_and_jobs_options_keep_the_output_clean(sample_db, tmp_path):
    r = run("audit", sample_db, "--format", "json", "--quiet", "--jobs", "1")
    assert r.exit_code == 1
    json.loads(r.output)  # nothing but the JSON document on stdout


def test_markdown_shows_a_suggestion_when_there_is_one():
    from dataclasses import replace

    from vpaudit.auditing import AuditResult
    from vpaudit.checks import Finding, Severity
    from vpaudit.report import RENDERERS

    f = Finding("melting-point-mismatch", Severity.error, "x", ("x-s", "x-l"), "off by 2.3")
    g = replace(f, suggestion={"kind": "log-base", "explanation": "entered as log10"})
    result = AuditResult(
        [f, g], {"records": 2, "substances": 1, "pairs": 1, "error": 2, "warning": 0, "note": 0}, {}
    )
    md = RENDERERS["markdown"](result)
    assert md.count("**Suggestion:** entered as log10") == 1


def test_markdown_explains_a_fix_once_and_names_it_at_its_other_findings(sample_db):
    """The demo's selmane: one temperature-unit fix clears its seven findings. The
    pull-request comment explains it at the first and says "the same fix" at the others, as
    the text report does (it repeated the whole explanation on every row)."""
    md = run("audit", sample_db, "--format", "markdown", "--fail-on", "never").output
    rows = [line for line in md.splitlines() if line.startswith("|") and "| selmane |" in line]
    assert len(rows) == 7
    assert sum("Almost certainly the Antoine constants" in r for r in rows) == 1
    assert sum("**Suggestion:** the same fix \\(temperature-unit, above\\)" in r for r in rows) == 6


def _console(*args, cwd=None):
    """The ``vpaudit`` console command (cli.run) in its own process."""
    import os
    import subprocess
    import sys

    code = "import sys; from vpaudit.cli import run; sys.argv[0] = 'vpaudit'; run()"
    env = {k: v for k, v in os.environ.items() if k != "PYTHONUNBUFFERED"}  # buffered, as usual
    return subprocess.run(
        [sys.executable, "-c", code, *map(str, args)],
        capture_output=True,
        text=True,
        cwd=cwd,
        env=env,
    )


def test_console_command_writes_everything_before_its_quick_exit(sample_db, clean_sample, tmp_path):
    # The console command skips the interpreter's teardown after an audit without a store:
    # the report on stdout and in a file must be complete, and the exit code the same as
    # in-process.
    expected = run("audit", sample_db, "--format", "json")
    piped = _console("audit", sample_db, "--format", "json")
    assert piped.returncode == expected.exit_code == 1
    assert json.loads(piped.stdout) == json.loads(expected.output)
    out = tmp_path / "report.json"
    written = _console("audit", sample_db, "--format", "json", "--output", out)
    assert written.returncode == 1 and json.loads(out.read_text()) == json.loads(expected.output)
    text = _console("audit", sample_db)
    assert text.stdout == run("audit", sample_db).output  # to its last line
    # with a store, and on errors, the usual exit
    db = tmp_path / "run.duckdb"
    stored = _console("audit", clean_sample, "--format", "json", "--db", db)
    assert stored.returncode in (0, 1) and db.exists()
    assert run("query", db, "SELECT count(*) AS n FROM records").exit_code == 0
    missing = _console("audit", tmp_path / "nowhere")
    assert missing.returncode == 2 and "nowhere" in missing.stderr


def test_a_query_of_a_table_or_column_that_is_not_there_names_those_that_are(sample_db):
    """The user asks for a table the directory does not hold, or misspells a column: the
    error lists the tables, or passes on DuckDB's candidate columns (it kept only the first
    line of DuckDB's message, which names neither)."""
    r = run("query", sample_db, "SELECT * FROM findings")
    assert r.exit_code == 2
    assert "(the tables are points, problems, records, references)" in r.output
    r = run("query", sample_db, "SELECT substanse FROM records")
    assert r.exit_code == 2 and "Candidate bindings:" in r.output and 'substance"' in r.output


def test_a_report_without_matplotlib_says_its_pictures_are_left_out(
    sample_db, tmp_path, monkeypatch
):
    """Without the plot extra the HTML report is written without pictures (each says why in
    the page); the command's own line said nothing of it. matplotlib is hidden from the
    check the command makes, not uninstalled."""
    import importlib.util

    real = importlib.util.find_spec
    monkeypatch.setattr(
        importlib.util,
        "find_spec",
        lambda name, *a: None if name == "matplotlib" else real(name, *a),
    )
    out = tmp_path / "r.html"
    r = run("report", sample_db, "-o", out)
    assert r.exit_code == 0 and "(without pictures: they need matplotlib" in r.output
    r = run("report", sample_db, "-o", out, "--no-plots")
    assert "without pictures" not in r.output  # asked for: nothing to say


def test_every_report_says_what_it_could_not_test(sample_db):
    # metals.csv alone has no references and no points: 9 errors instead of 24, silently
    r = run("audit", sample_db / "records" / "metals.csv", "--fail-on", "never")
    assert "Not tested for want of data: the melting-point tests for 24 substance(s)" in r.output
    r = run("audit", sample_db / "records" / "metals.csv", "--format", "json", "--fail-on", "never")
    missing = json.loads(r.output)["summary"]["not_checked"]
    assert missing["no_melting_reference"] == 24 and missing["no_points"] == 24
    r = run("audit", sample_db, "--format", "markdown", "--fail-on", "never")
    # pennarol, the lone liquid, has no partner phase and no normal boiling point; 12 metals
    # have no boiling point either (their liquid curves stay below 101325 Pa)
    assert (
        "Not tested for want of data: the triple point and Hess's law for 1 substance(s) (no "
        "partner phase); the boiling-point test for 13 substance(s)" in r.output
    )
    assert "the 298.15 K anchor for 16 substance(s)" in r.output


def test_show_prints_the_coefficients_and_marks_a_cut_source(sample_db):
    r = run("show", sample_db, "bellorium")
    assert r.exit_code == 0
    assert "Coefficients (as written in the table):" in r.output
    assert "-14736.5418" in r.output and "-0.659908723" in r.output
    assert "(invented …" in r.output  # cut with an ellipsis, then given in full
    # the list gives only the cut ones, and says so (a source shown whole is not repeated)
    assert "Sources cut short above, in full:" in r.output
    assert (
        "bellorium-s1: Fictional Compendium of Coating Vapours, 2nd ed. (invented demo source)"
        in r.output
    )


def test_a_pair_finding_points_at_the_suspect_and_a_reference_names_the_culprit(sample_db):
    # kestrium-l2 is the planted second source that disagrees (sample_db/PLANTED.csv); the
    # pair finding once landed on the clean solid's line, and sources-disagree said that
    # neither record could be blamed although the boiling point reference sides with l1
    r = run("audit", sample_db, "--format", "json", "--fail-on", "never")
    lines = {
        ln.split(",")[0]: k
        for k, ln in enumerate((sample_db / "records" / "metals.csv").read_text().splitlines(), 1)
    }
    found = {
        f["check"]: f for f in json.loads(r.output)["findings"] if f["substance"] == "kestrium"
    }
    assert found["melting-point-mismatch"]["location"]["line"] == lines["kestrium-l2"]
    disagree = found["sources-disagree"]
    assert disagree["location"]["line"] == lines["kestrium-l2"]
    assert "sides with kestrium-l1: kestrium-l2 is off by" in disagree["message"]


def test_the_checks_page_renders_as_markdown_tables_and_prose():
    # unescaped | broke table rows, and 64 indented docstring lines rendered as code blocks
    import re

    text = run("checks", "--format", "markdown").output
    for line in text.splitlines():
        if line.startswith("|"):
            assert len(re.split(r"(?<!\\)\|", line)) == 7, line  # 5 cells
        assert not line.startswith("    "), line


def test_every_report_format_is_offered_by_the_command_line():
    # cli._options.FORMATS is spelled out so that starting the command imports no reporter; this
    # keeps it equal to the reporters that exist (report.RENDERERS)
    from vpaudit.cli._options import FORMATS
    from vpaudit.report import RENDERERS

    assert set(FORMATS) == set(RENDERERS)


def test_every_equation_form_is_offered_by_the_command_line():
    # cli._options.FORMS is spelled out so that starting the command imports no numpy; this keeps
    # it equal to the form registry, in its order
    from vpaudit.cli._options import FORMS
    from vpaudit.equations.forms import FORMS as REGISTRY

    assert FORMS == tuple(REGISTRY)


def test_a_reader_that_closes_the_output_early_ends_it_quietly(sample_db, tmp_path):
    # `vpaudit audit ... | head`: the demo copied 40 times (its JSON about 1.3 MB) outgrows
    # a pipe's buffer; once the reader is gone vpaudit says nothing more and exits as a
    # program ended by SIGPIPE (128 + 13), not 2 with "cannot read or write a file: Broken
    # pipe"
    import csv
    import io
    import subprocess
    import sys

    for part in ("records", "references"):
        (tmp_path / part).mkdir()
        for path in (sample_db / part).glob("*.csv"):
            hdr, *rows = list(csv.reader(io.StringIO(path.read_text())))
            out = io.StringIO()
            w = csv.writer(out, lineterminator="\n")
            w.writerow(hdr)
            for k in range(40):
                for row in rows:
                    row = list(row)
                    for col in ("id", "substance"):
                        if col in hdr:
                            row[hdr.index(col)] += f"-{k}"
                    w.writerow(row)
            (tmp_path / part / path.name).write_text(out.getvalue())
    code = "import sys; from vpaudit.cli import run; sys.argv[0] = 'vpaudit'; run()"
    proc = subprocess.Popen(
        [sys.executable, "-c", code, "audit", str(tmp_path), "--format", "json"],
        stdout=subprocess.PIPE,
        stderr=subprocess.PIPE,
    )
    assert proc.stdout.read(10) == b'{"summary"'
    proc.stdout.close()
    assert proc.wait(timeout=120) == 141
    with proc.stderr:
        assert proc.stderr.read() == b""


def test_an_interrupted_command_says_so_and_exits_as_sigint_would(sample_db, monkeypatch):
    # Ctrl-C during an audit exited 1, the status of findings, after "Aborted!"
    import vpaudit.api

    def interrupted(*args, **kwargs):
        raise KeyboardInterrupt

    monkeypatch.setattr(vpaudit.api, "open_table", interrupted)
    got = CliRunner().invoke(main, ["audit", str(sample_db)])
    assert got.exit_code == 130
    assert "vpaudit: interrupted" in got.output


def test_a_report_cut_off_half_way_leaves_the_old_file_whole(tmp_path):
    # `--output` wrote the report in place, a part at a time: an audit interrupted while
    # writing left a truncated SARIF where a CI job would upload it
    from vpaudit.cli._options import emit

    out = tmp_path / "report.sarif"
    out.write_text("the previous report\n")

    def parts():
        yield '{"version": "2.1.0", '
        raise KeyboardInterrupt

    try:
        emit(parts(), str(out))
    except KeyboardInterrupt:
        pass
    assert out.read_text() == "the previous report\n"
    assert sorted(p.name for p in tmp_path.iterdir()) == ["report.sarif"]  # no temporary file
    emit(iter(["a whole ", "new report\n"]), str(out))
    assert out.read_text() == "a whole new report\n"


def test_a_dash_as_output_is_standard_output(sample_db, tmp_path, monkeypatch):
    # `report -o -` wrote a file named "-" into the working folder
    monkeypatch.chdir(tmp_path)
    got = CliRunner().invoke(main, ["report", str(sample_db), "-o", "-", "--no-plots"])
    assert got.exit_code == 0, got.output
    assert got.output.startswith("<!DOCTYPE html>") and got.output.rstrip().endswith("</html>")
    got = CliRunner().invoke(main, ["audit", str(sample_db), "-o", "-", "--format", "json"])
    assert json.loads(got.output)["summary"]["substances"] == 31
    assert list(tmp_path.iterdir()) == []


def test_show_gives_each_fix_and_a_command_that_applies_it(sample_db, tmp_path):
    # a table whose path holds a space: the command printed by show and by the audit's text
    # report, pasted into a shell as it is, applies the fix
    import shlex
    import shutil

    table = tmp_path / "my tables" / "demo"
    shutil.copytree(sample_db, table)
    r = run("show", table, "pennarol")
    assert r.exit_code == 0
    assert "suggestion: Almost certainly the coefficients give P in kPa" in r.output
    assert "suggestion: the same fix (pressure-unit, above)" in r.output  # explained once
    (command,) = [x for x in r.output.splitlines() if "to apply it:" in x]
    words = shlex.split(command.split("to apply it:", 1)[1])
    assert words[:3] == ["vpaudit", "apply", str(table)]
    text = run("audit", table, "--substance", "pennarol", "--fail-on", "never").output
    assert command.strip() in text  # the same command in both
    r = run(*words[1:])
    assert r.exit_code == 0 and "pressure_unit: 'Pa' -> 'kPa'" in r.output
    assert "Findings: 0" in run("show", table, "pennarol").output


def test_a_fix_found_in_a_store_names_the_files_to_apply_it_to(clean_sample, tmp_path):
    # apply writes to the table's files, never to a store: audited from its store, a table's
    # fix is given as a command on TABLE, with the import that rebuilds the store after it
    db = tmp_path / "demo.duckdb"
    assert run("import", clean_sample, "--db", db, "--quiet").exit_code == 0
    text = run("audit", db, "--fail-on", "never").output
    commands = [x for x in text.splitlines() if "to apply it:" in x]
    assert commands and all(f"vpaudit apply {db}" not in x for x in commands)
    assert all("(TABLE: the table the store" in x for x in commands)
    assert f"then vpaudit import TABLE --db {db}" in commands[0]
    # the refused command says why, as before
    spec = commands[0].split("vpaudit apply TABLE ", 1)[1].split(" (TABLE:", 1)[0]
    r = run("apply", db, spec)
    assert r.exit_code == 2 and "source of truth" in r.output
