"""A small streaming XLSX writer: numbers stay numbers, text is always text.

Writes the Office Open XML spreadsheet parts (ECMA-376 Part 1, SpreadsheetML) straight
into the zip file, a chunk of rows at a time, so memory stays flat and no per-cell
objects are made. Every text cell is an inline string (``t="inlineStr"``): a cell
that starts with ``=`` is shown as text and never evaluated as a formula. NaN and
infinite numbers are left empty. Used by :mod:`estimator.files`; imports nothing else
from ``estimator`` but the errors.
"""

from __future__ import annotations

import re
import zipfile
from collections.abc import Callable, Sequence
from xml.sax.saxutils import escape, quoteattr

import numpy as np
import pandas as pd

from estimator.errors import UsageError

__all__ = ["MAX_ROWS", "Workbook", "column_letter"]

#: Rows of one sheet, header included (the file format's limit).
MAX_ROWS = 1_048_576
#: Characters XML 1.0 does not allow in text.
_ILLEGAL = re.compile("[\x00-\x08\x0b\x0c\x0e-\x1f\ufffe\uffff]")
_MAIN = "http://schemas.openxmlformats.org/spreadsheetml/2006/main"
_REL = "http://schemas.openxmlformats.org/officeDocument/2006/relationships"
_PKG = "http://schemas.openxmlformats.org/package/2006/relationships"
_HEAD = '<?xml version="1.0" encoding="UTF-8" standalone="yes"?>\n'
_STYLES = (
    f'{_HEAD}<styleSheet xmlns="{_MAIN}"><fonts count="1"><font><sz val="11"/>'
    '<name val="Calibri"/></font></fonts><fills count="2"><fill><patternFill '
    'patternType="none"/></fill><fill><patternFill patternType="gray125"/></fill></fills>'
    '<borders count="1"><border><left/><right/><top/><bottom/><diagonal/></border></borders>'
    '<cellStyleXfs count="1"><xf numFmtId="0" fontId="0" fillId="0" borderId="0"/>'
    '</cellStyleXfs><cellXfs count="2"><xf numFmtId="0" fontId="0" fillId="0" borderId="0" '
    'xfId="0"/><xf numFmtId="49" fontId="0" fillId="0" borderId="0" xfId="0" '
    'applyNumberFormat="1"/></cellXfs><cellStyles count="1"><cellStyle name="Normal" '
    'xfId="0" builtinId="0"/></cellStyles></styleSheet>'
)


def column_letter(index: int) -> str:
    """Spreadsheet column name of a 0-based column index.

    >>> [column_letter(i) for i in (0, 25, 26, 701, 702)]
    ['A', 'Z', 'AA', 'ZZ', 'AAA']
    """
    name = ""
    index += 1
    while index:
        index, rest = divmod(index - 1, 26)
        name = chr(65 + rest) + name
    return name


def _inline(text: str) -> str:
    # s="1" is the text number format '@', so a spreadsheet keeps the cell as text on edit
    return (' s="1" t="inlineStr"><is><t xml:space="preserve">'
            + escape(_ILLEGAL.sub("", text)) + "</t></is>")


def _value_cell(value, number: Callable[[float], str]) -> str:
    """The part of a ``<c>`` element after its reference, or '' for an empty cell."""
    if value is None or value is pd.NA or value is pd.NaT:
        return ""
    if isinstance(value, (bool, np.bool_)):
        return f' t="b"><v>{int(value)}</v>'
    if isinstance(value, (int, np.integer)):
        return f"><v>{int(value)}</v>"
    if isinstance(value, (float, np.floating)):
        text = number(float(value))
        return f"><v>{text}</v>" if text else ""
    return _inline(str(value))


class Workbook:
    """Write sheets of a workbook to ``path`` (a zip file), rows appended in chunks.

    ``number_texts(values)`` formats a float array as the cell texts ('' = empty).
    """

    def __init__(self, path, number_texts: Callable[[np.ndarray], list[str]]) -> None:
        self._zip = zipfile.ZipFile(path, "w", zipfile.ZIP_DEFLATED, compresslevel=1)
        self._numbers = number_texts
        self._titles: list[str] = []
        self._stream = None
        self._letters: list[str] = []
        self.rows = 0

    # -------------------------------------------------------------- sheets
    def start_sheet(self, title: str, columns: Sequence) -> None:
        """Begin a new sheet named ``title`` with a header row of ``columns``."""
        self._end_sheet()
        self._titles.append(title)
        name = f"xl/worksheets/sheet{len(self._titles)}.xml"
        self._stream = self._zip.open(name, "w", force_zip64=True)
        self._stream.write(f'{_HEAD}<worksheet xmlns="{_MAIN}"><sheetData>'.encode())
        self._letters = [column_letter(i) for i in range(len(columns))]
        self.rows = 0
        cells = "".join(f'<c r="{c}1"{_inline(str(name))}</c>'
                        for c, name in zip(self._letters, columns, strict=True))
        self._stream.write(f'<row r="1">{cells}</row>'.encode())
        self.rows = 1

    def write(self, frame: pd.DataFrame) -> None:
        """Append the rows of ``frame`` (same columns as the header) to the open sheet."""
        if self.rows + len(frame) > MAX_ROWS:
            raise UsageError(
                f"{self.rows - 1 + len(frame):,} rows do not fit in one XLSX sheet "
                f"({self._titles[-1]!r}, at most {MAX_ROWS - 1:,} rows); write a .csv file "
                "instead"
            )
        for start in range(0, len(frame), 20_000):
            self._write(frame.iloc[start:start + 20_000])

    def _write(self, frame: pd.DataFrame) -> None:
        first = self.rows + 1
        rows = [str(r) for r in range(first, first + len(frame))]
        cols = []
        for letter, name in zip(self._letters, frame.columns, strict=True):
            cols.append(self._cells(frame[name], letter, rows))
        body = "".join(f'<row r="{r}">{"".join(cells)}</row>'
                       for r, cells in zip(rows, zip(*cols, strict=True), strict=True))
        self._stream.write(body.encode("utf-8"))
        self.rows += len(frame)

    def _cells(self, series: pd.Series, letter: str, rows: list[str]) -> list[str]:
        kind = series.dtype.kind
        if kind == "f":
            texts = self._numbers(series.to_numpy(dtype=float, na_value=np.nan))
            return [f'<c r="{letter}{r}"><v>{t}</v></c>' if t and t[-1] != "f" else ""
                    for r, t in zip(rows, texts, strict=True)]
        values = series.to_numpy(dtype=object)
        if pd.api.types.infer_dtype(values, skipna=True) in ("string", "empty"):
            codes, uniques = pd.factorize(values)
            parts = np.asarray([_inline(u) for u in uniques.tolist()] + [""], dtype=object)
            tails = parts[codes].tolist()
        else:
            tails = [_value_cell(v, self._number) for v in values.tolist()]
        return [f'<c r="{letter}{r}"{t}</c>' if t else "" for r, t in zip(rows, tails,
                                                                          strict=True)]

    def _number(self, value: float) -> str:
        text = self._numbers(np.array([value]))[0]
        return "" if text.endswith("f") else text  # inf, -inf: empty

    def _end_sheet(self) -> None:
        if self._stream is not None:
            self._stream.write(b"</sheetData></worksheet>")
            self._stream.close()
            self._stream = None

    # -------------------------------------------------------------- package
    def close(self) -> None:
        """Finish the last sheet and write the workbook parts."""
        self._end_sheet()
        n = len(self._titles)
        sheets = "".join(f'<sheet name={quoteattr(t)} sheetId="{i}" r:id="rId{i}"/>'
                         for i, t in enumerate(self._titles, start=1))
        self._zip.writestr("xl/workbook.xml", f'{_HEAD}<workbook xmlns="{_MAIN}" xmlns:r="{_REL}">'
                                              f"<sheets>{sheets}</sheets></workbook>")
        rels = "".join(
            f'<Relationship Id="rId{i}" Type="{_REL}/worksheet" Target="worksheets/sheet{i}.xml"/>'
            for i in range(1, n + 1))
        rels += f'<Relationship Id="rId{n + 1}" Type="{_REL}/styles" Target="styles.xml"/>'
        self._zip.writestr("xl/_rels/workbook.xml.rels",
                           f'{_HEAD}<Relationships xmlns="{_PKG}">{rels}</Relationships>')
        self._zip.writestr("xl/styles.xml", _STYLES)
        self._zip.writestr("_rels/.rels", (
            f'{_HEAD}<Relationships xmlns="{_PKG}"><Relationship Id="rId1" '
            f'Type="{_REL}/officeDocument" Target="xl/workbook.xml"/></Relationships>'))
        ct = "application/vnd.openxmlformats-officedocument.spreadsheetml"
        overrides = "".join(f'<Override PartName="/xl/worksheets/sheet{i}.xml" '
                            f'ContentType="{ct}.worksheet+xml"/>' for i in range(1, n + 1))
        self._zip.writestr("[Content_Types].xml", (
            f'{_HEAD}<Types xmlns="http://schemas.openxmlformats.org/package/2006/content-types">'
            '<Default Extension="rels" '
            'ContentType="application/vnd.openxmlformats-package.relationships+xml"/>'
            '<Default Extension="xml" ContentType="application/xml"/>'
            f'<Override PartName="/xl/workbook.xml" ContentType="{ct}.sheet.main+xml"/>'
            f'<Override PartName="/xl/styles.xml" ContentType="{ct}.styles+xml"/>'
            f"{overrides}</Types>"))
        self._zip.close()

    def abort(self) -> None:
        """Close the zip file without finishing it (the caller deletes it)."""
        try:
            if self._stream is not None:
                self._stream.close()
        finally:
            self._stream = None
            self._zip.close()
