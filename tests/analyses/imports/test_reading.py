"""Reading exports: cells as written, rows numbered as a spreadsheet shows them, formulas refused."""
from __future__ import annotations

import io

import pytest
from openpyxl import Workbook

from analyses.imports.reading import FileProblem, read_rows


def _xlsx(rows) -> bytes:
    book = Workbook()
    sheet = book.active
    for row in rows:
        sheet.append(row)
    buffer = io.BytesIO()
    book.save(buffer)
    return buffer.getvalue()


def _all(content, name, required=()):
    return [row for chunk in read_rows(content, name, required) for row in chunk]


def test_csv_cells_are_text_as_written_and_rows_count_from_the_heading():
    rows = _all(b"Sample,V (mL)\nL-1,1.30\n\nL-2,01.300\n", "run.csv", ["Sample"])
    # "01.300" stays as written: the plugin, not a float parser, reads the number
    assert [(row.number, row.cells) for row in rows] == [
        (2, {"Sample": "L-1", "V (mL)": "1.30"}),
        (4, {"Sample": "L-2", "V (mL)": "01.300"}),
    ]


def test_a_missing_column_is_named_with_the_columns_the_file_has():
    with pytest.raises(FileProblem, match="no column 'Blank'.*'Sample', 'V'"):
        _all(b"Sample,V\nL-1,1\n", "run.csv", ["Sample", "Blank"])


def test_a_formula_is_refused_by_row_and_column_in_csv_and_xlsx():
    with pytest.raises(FileProblem) as csv_problem:
        _all(b"Sample,V\nL-1,1.2\nL-2,=1+1\n", "run.csv")
    assert (csv_problem.value.row, csv_problem.value.column) == (3, "V")
    # an XLSX formula is read as its text and refused, never evaluated (openpyxl data_only=False)
    content = _xlsx([["Sample", "V"], ["L-1", 1.25], ["L-2", "=B2*2"]])
    with pytest.raises(FileProblem) as xlsx_problem:
        _all(content, "run.xlsx")
    assert (xlsx_problem.value.row, xlsx_problem.value.column) == (3, "V")
    assert "formula" in str(xlsx_problem.value)


def test_xlsx_numbers_and_text_come_back_as_text():
    rows = _all(_xlsx([["Sample", "V", "m"], ["L-1", 1.25, 20]]), "run.xlsx")
    assert rows[0].cells == {"Sample": "L-1", "V": "1.25", "m": "20"}


def test_a_file_that_is_not_what_its_name_says_is_refused_in_words():
    with pytest.raises(FileProblem, match="could not be read as XLSX"):
        _all(b"Sample,V\n", "run.xlsx")
    with pytest.raises(FileProblem, match=".csv or .xlsx"):
        _all(b"x", "run.txt")
    with pytest.raises(FileProblem, match="UTF-8"):
        _all("Probe,V\nÖl,1\n".encode("latin-1"), "run.csv")
