"""The columns of the findings table kept as blocks (vpaudit.checks.blocks.ValueColumn):
whatever is done to them -- joined, reordered, sliced, rows set one at a time or many at
once -- they read as the list of the same values would, whether a value was given as it
is or is made when read."""

import numpy as np
from hypothesis import given
from hypothesis import strategies as st

from vpaudit.checks.blocks import ValueColumn

values = st.one_of(
    st.none(), st.integers(-5, 5), st.text(max_size=3), st.tuples(st.text(max_size=2))
)


@st.composite
def columns(draw) -> tuple[ValueColumn, list]:
    """A column built of blocks made when read, lists and single values, with the list it
    should read as."""
    column, expected = ValueColumn(), []
    for _ in range(draw(st.integers(0, 4))):
        part = draw(st.lists(values, max_size=5))
        how = draw(st.sampled_from(["made", "list", "own"]))
        if how == "made":
            made = ValueColumn.made_by(
                lambda p, part=part: [part[i] for i in p.tolist()], len(part)
            )
            column.extend(made)
        elif how == "list":
            column.extend(ValueColumn.of_list(list(part)))
        else:
            for v in part:
                column.append(v)
        expected += part
    return column, expected


@given(columns(), st.data())
def test_a_column_reads_as_the_list_of_its_values(made, data):
    column, expected = made
    assert len(column) == len(expected) and column == expected and column.tolist() == expected
    assert [column[k] for k in range(len(column))] == expected
    order = data.draw(st.permutations(range(len(expected))))
    column, expected = column.take(order), [expected[k] for k in order]
    assert column.tolist() == expected
    a, b = data.draw(st.integers(0, 6)), data.draw(st.integers(0, 6))
    assert column[a:b] == expected[a:b]
    rows = data.draw(st.lists(st.integers(0, 5), max_size=4))
    rows = [k for k in rows if k < len(expected)]
    assert column.values(np.array(rows, dtype=np.int64)) == [expected[k] for k in rows]
    if expected:  # one row set, then several at once from another column
        k = data.draw(st.integers(0, len(expected) - 1))
        column[k] = expected[k] = "set"
        other, values_ = data.draw(columns())
        at = data.draw(st.lists(st.integers(0, len(expected) - 1), unique=True))
        at = at[: len(values_)]
        column.put(at, other.take(range(len(at))))
        for i, v in zip(at, values_, strict=False):
            expected[i] = v
    assert column.tolist() == expected and list(column) == expected
