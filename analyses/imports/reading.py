"""A CSV or XLSX export read into rows of text, exactly as written in the file.

Every cell is read as text (never as a float), so the plugins get the inputs as written and
decide in exact decimals. Excel formulas are never evaluated: the workbook is opened without
its cached results, and a cell holding a formula (text starting with "=", in CSV too, where
it is the usual spreadsheet-injection trick) is refused, naming its row and column. Rows are
numbered as a spreadsheet shows them: the heading is row 1, the first data row is row 2.
"""
from __future__ import annotations

import io
from collections.abc import Iterator, Sequence
from dataclasses import dataclass

FORMULA_PREFIX = "="
CSV_CHUNK_ROWS = 5000  # a large CSV is read this many rows at a time


class FileProblem(ValueError):
    """Why a file cannot be read; ``row`` and ``column`` when one cell is at fault."""

    def __init__(self, message: str, *, row: int | None = None, column: str | None = None):
        self.row, self.column, self.message = row, column, message
        where = ", ".join(part for part in (f"row {row}" if row else "", f"column {column}" if column else "") if part)
        super().__init__(f"{where}: {message}" if where else message)


@dataclass(frozen=True)
class Row:
    number: int  # as a spreadsheet shows it (heading = 1)
    cells: dict[str, str]  # column heading -> text as written ("" when empty)


def file_kind(file_name: str) -> str:
    lowered = file_name.lower()
    if lowered.endswith(".csv"):
        return "csv"
    if lowered.endswith(".xlsx"):
        return "xlsx"
    raise FileProblem("must be a .csv or .xlsx file")


def _frames(content: bytes, kind: str):
    import pandas as pd  # only when a file is read

    options = {"dtype": str, "keep_default_na": False, "na_filter": False}
    try:
        if kind == "csv":
            # blank lines kept, so row numbers are the file's own
            yield from pd.read_csv(io.BytesIO(content), chunksize=CSV_CHUNK_ROWS, encoding="utf-8-sig",
                                   skip_blank_lines=False, **options)
        else:
            # data_only=False: a formula comes back as its text, never as a value Excel (or we) worked out
            yield pd.read_excel(io.BytesIO(content), sheet_name=0, engine="openpyxl",
                                engine_kwargs={"data_only": False}, **options)
    except FileProblem:
        raise
    except UnicodeDecodeError:
        raise FileProblem("is not UTF-8 text; save the CSV as UTF-8") from None
    except Exception as exc:  # pandas and openpyxl raise many kinds for a file that is not what it says
        raise FileProblem(f"could not be read as {kind.upper()}: {type(exc).__name__}") from None


def _text(value) -> str:
    if value is None:
        return ""
    text = str(value).strip()
    return "" if text.lower() == "nan" else text


def read_rows(content: bytes, file_name: str, required_columns: Sequence[str]) -> Iterator[list[Row]]:
    """The file's data rows, a chunk at a time; ``FileProblem`` for a missing column, a
    formula, or a file that is not a table of the kind its name says."""
    kind = file_kind(file_name)
    number = 1
    checked_headings = False
    for frame in _frames(content, kind):
        if not checked_headings:
            headings = [str(column).strip() for column in frame.columns]
            missing = [column for column in required_columns if column not in headings]
            if missing:
                raise FileProblem(f"the file has no column {', '.join(repr(c) for c in missing)} "
                                  f"(its columns: {', '.join(repr(h) for h in headings)})")
            checked_headings = True
        frame.columns = [str(column).strip() for column in frame.columns]
        chunk = []
        for record in frame.to_dict("records"):
            number += 1
            cells = {column: _text(value) for column, value in record.items()}
            if not any(cells.values()):
                continue  # a blank line between runs
            for column, text in cells.items():
                if text.startswith(FORMULA_PREFIX):
                    raise FileProblem("holds a formula; the import takes values only (paste the cells as values)",
                                      row=number, column=column)
            chunk.append(Row(number, cells))
        yield chunk
    if not checked_headings:
        raise FileProblem("is empty")
