"""Write the small hostile workbooks of tests/data/hostile/ (run once; the files are kept).

* ``xlsx_cells.xlsx``: a sample named NA, an Excel error cell ``#N/A``, a TRUE cell and
  a ``NaN`` text cell, each in a species column of its own sheet row.
* ``xlsx_merged_title.xlsx``: a merged title cell and a notes row above the header.
"""

from __future__ import annotations

from pathlib import Path

from openpyxl import Workbook

HOSTILE = Path(__file__).resolve().parents[1] / "tests" / "data" / "hostile"
HEADER = ["sample", "C16:0", "C18:0", "C18:1", "C18:2"]


def workbook(rows: list[list], path: Path, merge: str | None = None) -> None:
    book = Workbook()
    sheet = book.active
    for row in rows:
        sheet.append(row)
    if merge:
        sheet.merge_cells(merge)
    book.save(path)


def main() -> None:
    workbook([HEADER, ["NA", 10, 4, 60, 26]], HOSTILE / "xlsx_sample_na.xlsx")
    workbook([HEADER, ["A", 10, 4, 60, 26], ["B", "#N/A", 4, 60, 26]],
             HOSTILE / "xlsx_error_cell.xlsx")
    workbook([HEADER, ["A", True, 4, 60, 26]], HOSTILE / "xlsx_true_cell.xlsx")
    workbook([HEADER, ["A", "NaN", 4, 60, 26]], HOSTILE / "xlsx_nan_text.xlsx")
    workbook([["GC-7 fatty acid report, lab 3", None, None, None, None],
              ["operator: R. Ames", "2026-11-30", None, None, None],
              [None, None, None, None, None],
              HEADER, ["A", 10.5, 4, 60, 25.5], ["B", 12, 4, 58, 26]],
             HOSTILE / "xlsx_merged_title.xlsx", merge="A1:E1")


if __name__ == "__main__":
    main()
