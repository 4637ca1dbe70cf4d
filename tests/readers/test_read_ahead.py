"""Reading ahead: ``vpaudit audit`` reads the table's files on a thread while it imports the
rest; what :func:`load_table` then gets must be what it would have read itself.
"""

import os
import shutil
import subprocess
import sys
from pathlib import Path

import pandas as pd
import pytest
from conftest import write

from vpaudit.errors import TableError, TableErrors
from vpaudit.readers import files, load_table
from vpaudit.runtime import DEFAULT, Runtime

SAMPLE = Path(__file__).resolve().parents[2] / "sample_db"
HEADER = "id,substance,phase,form,log_base,pressure_unit,A,B,C,t_min,t_max,source"
ROW = "r{i},zinc-demo,solid,three-term,e,Pa,{a},-15000,-1.2,300,600,demo source"


def _frames(table):
    return [table.records, table.references, table.points, table.problems]


def test_a_table_read_ahead_is_the_table_read_directly(tmp_path):
    root = tmp_path / "db"
    shutil.copytree(SAMPLE, root)
    direct = load_table(root)
    started = files.read_ahead(root)
    assert started.jobs, "the sample table's files should be being read"
    ahead = load_table(root, runtime=Runtime(ahead=started))
    assert not started.jobs  # every file taken
    for a, b in zip(_frames(direct), _frames(ahead), strict=True):
        pd.testing.assert_frame_equal(a, b)
    assert direct.files == ahead.files


def test_a_file_changed_after_its_read_began_is_read_again(tmp_path):
    path = write(tmp_path / "records" / "r.csv", f"{HEADER}\n{ROW.format(i=1, a='25.5')}\n")
    started = files.read_ahead(tmp_path)
    started.wait()
    write(path, f"{HEADER}\n{ROW.format(i=1, a='26.5')}\n{ROW.format(i=2, a='27.5')}\n")
    st = path.stat()
    os.utime(path, ns=(st.st_atime_ns, st.st_mtime_ns + 10**9))  # whatever the clock's step
    t = load_table(tmp_path, runtime=Runtime(ahead=started))
    assert list(t.records["A"]) == [26.5, 27.5]
    assert not started.jobs


def test_a_read_error_is_raised_where_the_file_is_read_with_the_same_message(tmp_path):
    # an unclosed quote: the reader refuses the file, naming it and the line
    write(tmp_path / "records" / "r.csv", 'id,substance\n"r1,zinc\n')

    def errors(runtime=DEFAULT) -> list[str]:
        with pytest.raises(TableError) as info:
            load_table(tmp_path, runtime=runtime)
        exc = info.value
        return [str(e) for e in exc.errors] if isinstance(exc, TableErrors) else [str(exc)]

    direct = errors()
    started = files.read_ahead(tmp_path)
    assert started is not None
    assert errors(Runtime(ahead=started)) == direct
    assert not started.jobs
    assert "r.csv" in direct[0]


@pytest.mark.parametrize("where", ["missing", "store.duckdb", "empty"])
def test_nothing_is_started_for_what_is_not_a_table(tmp_path, where):
    (tmp_path / "empty").mkdir()
    (tmp_path / "store.duckdb").write_bytes(b"")
    assert files.read_ahead(tmp_path / where) is None


def test_the_audit_command_reads_ahead_and_reports_the_same(tmp_path):
    from click.testing import CliRunner

    from vpaudit.cli import main

    root = tmp_path / "db"
    shutil.copytree(SAMPLE, root)
    out = {}
    for jobs in ("1", "2"):  # --jobs 1 reads on this thread only
        res = CliRunner().invoke(
            main, ["audit", str(root), "--format", "json", "--diagnose-limit", "0", "-j", jobs]
        )
        assert res.exit_code in (0, 1), res.output
        out[jobs] = res.output
    assert out["1"] == out["2"]


def test_importing_the_package_or_starting_the_command_imports_no_pandas():
    """What makes reading ahead worth it: the reading starts before the heavy imports."""
    code = (
        "import sys, vpaudit, vpaudit.cli, vpaudit.readers.files\n"
        "print('pandas' in sys.modules)\n"
        "print(callable(vpaudit.audit), vpaudit.Finding.__name__)\n"
    )
    out = subprocess.run([sys.executable, "-c", code], capture_output=True, text=True, check=True)
    assert out.stdout.split("\n")[:2] == ["False", "True Finding"]


def test_the_package_function_audit_survives_the_import_of_its_module():
    import vpaudit
    from vpaudit import auditing

    assert vpaudit.audit is auditing.audit
    assert vpaudit.open_table.__module__ == "vpaudit.api"
    with pytest.raises(AttributeError):
        vpaudit.no_such_name  # noqa: B018
