"""Column helpers: text columns stay Arrow-backed, and every per-row string operation on
the bulk path goes through pyarrow or dictionary codes, never a Python object per cell.
"""

from __future__ import annotations

from collections.abc import Iterable, Mapping

import numpy as np
import pandas as pd
import pyarrow as pa

__all__ = ["TEXT", "text_series", "eq", "isin", "codes", "text_codes", "lookup", "empty"]

#: The dtype of every text column of a table frame (Arrow strings, nulls for empty cells).
TEXT = pd.ArrowDtype(pa.string())


def text_series(values) -> pd.Series:
    """A text column from a pyarrow string array (zero copy) or any sequence of str/None."""
    if isinstance(values, pa.ChunkedArray | pa.Array):
        return pd.Series(pd.arrays.ArrowExtensionArray(values))
    return pd.Series(values, dtype=TEXT)


def eq(series: pd.Series, value: str) -> np.ndarray:
    """Boolean array: cell == value (False where empty)."""
    return np.asarray((series == value).fillna(False), dtype=bool)


def isin(series: pd.Series, values: Iterable[str]) -> np.ndarray:
    """Boolean array: cell in values (False where empty)."""
    return np.asarray(series.isin(list(values)).fillna(False), dtype=bool)


def empty(series: pd.Series) -> np.ndarray:
    """Boolean array: the cell is empty (null, or only spaces)."""
    if isinstance(series.dtype, pd.CategoricalDtype):  # decided once per distinct value
        cats = series.cat.categories
        blank = np.asarray(pd.Series(cats, dtype=object).str.strip() == "", dtype=bool)
        c = series.cat.codes.to_numpy()
        return (c < 0) | np.append(blank, True)[np.where(c >= 0, c, len(cats))]
    return np.asarray(
        series.isna() | (series.astype(TEXT).str.strip() == "").fillna(True), dtype=bool
    )


def codes(series: pd.Series) -> tuple[np.ndarray, np.ndarray]:
    """Dictionary codes of a column (-1 where empty) and the distinct values (objects)."""
    c, uniques = pd.factorize(series, use_na_sentinel=True)
    if isinstance(uniques, pd.Index):
        uniques = uniques.array
    values = np.asarray(pd.array(uniques).to_numpy(dtype=object, na_value=None))
    return np.asarray(c, dtype=np.int64), values


def text_codes(series: pd.Series) -> tuple[np.ndarray, pa.Array]:
    """:func:`codes` of a text column with the distinct values kept as an Arrow array (no
    Python object per distinct value: a million substance names stay one buffer).
    """
    c, uniques = pd.factorize(series.astype(TEXT), use_na_sentinel=True)
    values = pa.array(uniques, type=pa.string())
    if isinstance(values, pa.ChunkedArray):
        values = values.combine_chunks()
    return np.asarray(c, dtype=np.int64), values


def lookup(series: pd.Series, mapping: Mapping, default=np.nan) -> np.ndarray:
    """Map each cell through ``mapping`` (values are numbers); ``default`` where absent."""
    c, uniques = codes(series)
    table = np.array([mapping.get(u, default) for u in uniques] + [default], dtype=float)
    return table[np.where(c >= 0, c, len(uniques))]
