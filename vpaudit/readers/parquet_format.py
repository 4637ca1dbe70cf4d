"""Parquet files: text and float64 columns, read by pyarrow."""

from __future__ import annotations

from ..errors import TableError
from .raw import (
    MAX_COLUMNS,
    MAX_FILE_BYTES,
    MAX_ROWS,
    RawFrame,
    check_header,
    error_at,
)


def read_parquet(path: str, data: bytes | None = None) -> RawFrame:
    """Read a Parquet file; column types are checked, never coerced.

    Text columns are read as text; float64 columns as the shortest text that round-trips
    (``repr``); int64 columns exactly. float32 and float16 coefficients lose digits and are
    an error, as are booleans, dates and nested types.
    """
    import pyarrow as pa
    import pyarrow.parquet as pq

    try:
        parquet = pq.ParquetFile(path)
        meta = parquet.metadata
    except Exception as exc:  # pyarrow raises several types for broken files
        raise error_at(path, f"cannot read the Parquet file: {exc}") from None
    # the limits are checked on the file's own metadata before anything is decoded, and on
    # the decoded size batch by batch: a small file can hold columns that decode to gigabytes
    if meta.num_columns > MAX_COLUMNS:
        raise error_at(
            path, f"{meta.num_columns} columns; the table format has at most {MAX_COLUMNS}"
        )
    if meta.num_rows > MAX_ROWS:
        raise error_at(path, f"{meta.num_rows} rows; the limit is {MAX_ROWS} per file")
    batches, decoded = [], 0
    try:
        for batch in parquet.iter_batches(batch_size=1 << 16):
            decoded += batch.nbytes
            if decoded > MAX_FILE_BYTES:
                raise error_at(
                    path,
                    f"the data decode to more than {MAX_FILE_BYTES} bytes; the limit is "
                    f"{MAX_FILE_BYTES} bytes",
                )
            batches.append(batch)
        table = pa.Table.from_batches(batches, schema=parquet.schema_arrow)
    except TableError:
        raise
    except Exception as exc:  # pyarrow raises several types for broken files
        raise error_at(path, f"cannot read the Parquet file: {exc}") from None
    cells: dict[str, object] = {}
    columns = check_header(path, list(table.column_names), 1)
    for name, col in zip(columns, table.columns, strict=True):
        t = col.type
        values = col.to_pylist()
        if pa.types.is_string(t) or pa.types.is_large_string(t):
            cells[name] = [v if v != "" else None for v in values]
        elif pa.types.is_float64(t):
            cells[name] = [None if v is None else repr(v) for v in values]
        elif pa.types.is_int64(t) or pa.types.is_int32(t):
            for v in values:
                if v is not None and abs(v) > 2**53:
                    raise error_at(
                        path, f"integer {v} is too large to be exact as a double", None, name
                    )
            cells[name] = [None if v is None else str(v) for v in values]
        elif pa.types.is_floating(t):
            raise error_at(
                path,
                f"column is {t}: it cannot hold the digits of a coefficient; store float64 or text",
                None,
                name,
            )
        elif pa.types.is_null(t):
            cells[name] = [None] * len(values)
        else:
            raise error_at(path, f"column type {t} is not read; store text or float64", None, name)
    return RawFrame(path, columns, cells, list(range(1, table.num_rows + 1)))
