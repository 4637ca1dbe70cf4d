"""The order of a table's rows never decides a verdict: the four compilations together
(tests/_support/compilations.py: Landolt odd-CAS rows, Poling's Antoine, McGarry's and
Poling's Wagner, Perry's, via chemicals), each substance with the normal boiling point, the
critical temperature and the melting point of every method chemicals carries, give the same
findings with their reference rows in table order and reversed."""

from compilations import _complete, every_boiling_point, together
from refdata import table_from_rows

from vpaudit.auditing import audit_table


def test_reversing_the_reference_rows_changes_no_verdict():
    records, refs = together(None)
    records = [r for r in records if _complete(r)]
    refs = every_boiling_point(every_boiling_point(refs), "critical_temperature")
    refs = every_boiling_point(refs, "melting_point")

    def found(rows):
        result = audit_table(table_from_rows(records, rows), diagnose=False)
        return sorted(
            # a tie between two sources' equal values names the first in table order
            (f.check, f.records, f.severity.value, f.message.split(" Of the substance's")[0])
            for f in result.findings
            # these two name a reference row, which the order moves
            if f.check not in ("reference-contradicted", "reference-not-used")
        )

    forward = found(refs)
    assert len(forward) > 1000
    assert {"sources-disagree", "enthalpy-implausible", "critical-pressure-mismatch"} <= {
        f[0] for f in forward
    }
    # before: enthalpy-implausible took the first Tb, sources-disagree blamed by it
    assert forward == found(refs[::-1])
