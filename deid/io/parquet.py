"""Parquet input and output (``parquet.v1``), one record batch at a time.

The reader walks ``ParquetFile.iter_batches`` so only one batch of rows is in
memory. The writer keeps the input schema: same field names, same order, and
every extra column keeps its input type. The four canonical columns are
written as strings, because ids may be pseudonymised and dates shifted, so
their input type (an integer ``note_id`` in OMOP, a ``date32`` date) cannot be
promised for the output.
"""

from __future__ import annotations

from collections.abc import Iterator
from pathlib import Path
from typing import Any

import pyarrow as pa
import pyarrow.parquet as pq

from deid.errors import InputError, NoteRejected
from deid.io.base import ColumnMap
from deid.io.open import Layout, default_names, output_name, require_columns, row_from_note, row_to_note
from deid.model import Note
from deid.registry import readers, writers

#: Rows per record batch read; small enough that a batch of long notes fits in memory.
BATCH_ROWS = 256


@readers.register("parquet.v1")
class ParquetReader:
    """Streams notes from a Parquet file.

    Args:
        path: The ``.parquet`` file.
        columns: Which field names hold the canonical fields.
        manifest: Must be None (only a txt folder takes a manifest).
        batch_rows: Rows per batch read from the file.

    Raises:
        InputError: The file cannot be opened or is not Parquet, or lacks the
            note id or text column.
    """

    format = "parquet.v1"

    def __init__(
        self,
        path: Path,
        columns: ColumnMap | None = None,
        manifest: Path | None = None,
        batch_rows: int = BATCH_ROWS,
    ) -> None:
        self.path = Path(path)
        self.columns = columns or ColumnMap()
        self.batch_rows = batch_rows
        if not self.path.exists():
            raise InputError(f"input not found: {self.path}")
        try:
            self._file = pq.ParquetFile(self.path)
        except PermissionError:
            raise InputError(f"cannot read {self.path}: permission denied") from None
        except (OSError, pa.ArrowException) as exc:
            raise InputError(f"cannot read {self.path} as Parquet ({type(exc).__name__})") from None
        schema = self._file.schema_arrow
        require_columns(schema.names, self.columns, str(self.path))
        self.layout = Layout(columns=tuple(schema.names), file_name=self.path.name, schema=schema)

    def __iter__(self) -> Iterator[Note | NoteRejected]:
        rowno = 0
        for batch in self._file.iter_batches(batch_size=self.batch_rows):
            for row in batch.to_pylist():
                rowno += 1
                yield row_to_note(row, self.columns, f"row {rowno}", f"{self.path.name} row {rowno}")
        self.close()  # a finished pass needs the file no longer

    def close(self) -> None:
        """Close the file."""
        self._file.close()

    def __enter__(self) -> ParquetReader:
        return self

    def __exit__(self, *exc: object) -> None:
        self.close()


def output_schema(columns: ColumnMap, layout: Layout | None, notes: list[Note]) -> Any:
    """The schema to write: the input schema with canonical fields as strings.

    Without an input schema the fields are the canonical names then the first
    note's extras, with types inferred from the first batch (null -> string).
    """
    canonical = set(columns.as_dict().values())
    if layout is not None and layout.schema is not None:
        fields = [
            pa.field(f.name, pa.string()) if f.name in canonical else f for f in layout.schema
        ]
        return pa.schema(fields)  # NOTE: drops pandas metadata, which would describe the old types
    names = layout.columns if layout is not None else default_names(columns, notes)
    rows = [row_from_note(n, columns, names) for n in notes]
    fields = []
    for name in names:
        if name in canonical:
            fields.append(pa.field(name, pa.string()))
            continue
        kind = pa.array([r.get(name) for r in rows]).type if rows else pa.null()
        fields.append(pa.field(name, pa.string() if pa.types.is_null(kind) else kind))
    return pa.schema(fields)


@writers.register("parquet.v1")
class ParquetWriter:
    """Writes notes to one Parquet file, one row group per batch.

    Args:
        out_dir: Output folder, created when missing.
        columns: The column map the reader used.
        layout: The reader's layout (schema and file name).
    """

    format = "parquet.v1"

    def __init__(self, out_dir: Path, columns: ColumnMap | None = None, layout: Layout | None = None) -> None:
        self.columns = columns or ColumnMap()
        self.layout = layout
        out_dir.mkdir(parents=True, exist_ok=True)
        self.path = out_dir / output_name(layout, (".parquet",))
        self._writer: Any = None
        if layout is not None and layout.schema is not None:
            self._open(output_schema(self.columns, layout, []))

    def _open(self, schema: Any) -> None:
        self.schema = schema
        self._writer = pq.ParquetWriter(self.path, schema)

    def write(self, notes: list[Note]) -> None:
        """Write one batch of notes as a row group."""
        if self._writer is None:
            self._open(output_schema(self.columns, self.layout, notes))
        if not notes:
            return
        rows = [row_from_note(n, self.columns, self.schema.names) for n in notes]
        self._writer.write_table(pa.Table.from_pylist(rows, schema=self.schema))

    def close(self) -> None:
        """Finish the file (an empty one with the schema when no note was written)."""
        if self._writer is None:
            self._open(output_schema(self.columns, self.layout, []))
        self._writer.close()

    def __enter__(self) -> ParquetWriter:
        return self

    def __exit__(self, *exc: object) -> None:
        self.close()
