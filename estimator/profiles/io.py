"""Read fatty-acid profiles from CSV, TSV, XLSX and JSON files, wide or long.

Layouts
-------
*wide*: one row per sample; a sample-id column (``sample``, ``sample_id``, ``id``,
``lot`` or ``name``, else the first text column), one column per species in any
notation the parser knows, and any other columns as metadata carried through
untouched.

*long*: one row per sample and species, with columns for the sample, the species
(``species``, ``component``, ``compound``, ``fatty_acid``, ``fame`` or ``peak``) and
the amount (``wt_pct``, ``mass_pct``, ``area_pct``, ``value``, ``percent``).

Text files may be comma, semicolon or tab separated; semicolon files may use
decimal commas, as European lab software writes them. Text is UTF-8 (with or
without a byte-order mark) or UTF-16 with a byte-order mark. Title lines or notes
above the header (instrument, date, operator) are skipped: the header is the first
row with species columns, and a note names it. Empty cells and ``ND``, ``n.d.``,
``-`` or ``<x`` in species columns mean "not detected" and count as 0; ``10.5%``
reads as 10.5.

One reading of a cell in every format: a number is a number; text that is not a
number (``TRUE``, ``#N/A``, ``NULL``, ``NaN``), a JSON ``true``/``false``/``NaN``
and an infinite value are refused where a number is needed; only an empty cell
(JSON ``null``) is missing. A sample named ``NA`` is a name.

Every problem is reported as one line naming the file, the row (as a spreadsheet
shows it, header = row 1) and the column. Files above a size limit
(:data:`MAX_INPUT_MB`, or the ``FAME_ESTIMATOR_MAX_INPUT_MB`` environment variable)
are refused before they are read.
"""

from __future__ import annotations

import csv
import json
import math
import os
import re
import warnings
from dataclasses import replace
from pathlib import Path
from typing import NamedTuple

import numpy as np
import pandas as pd

from estimator.errors import InputFileError, ProfileError, UsageError
from estimator.profiles.names import OTHER, canonical_species, is_species_like
from estimator.profiles.profile import DEFAULT_SUM_TOLERANCE, Profile

__all__ = ["MAX_INPUT_MB", "RawTable", "input_size_limit_mb", "parse_numbers", "read_profile",
           "read_profile_chunks", "read_raw_table", "read_table"]

SAMPLE_COLUMNS = ("sample", "sample_id", "sample id", "id", "lot", "lot_id", "lot id", "name")
LONG_SPECIES = ("species", "component", "compound", "fatty_acid", "fatty acid", "fame", "peak")
LONG_VALUE = ("wt_pct", "wt%", "mass_pct", "mass%", "area_pct", "area%", "value", "percent", "%")
NOT_DETECTED = re.compile(r"^\s*(nd|n\.d\.?|n/d|-+|—|–|tr|trace|<\s*[\d.,]+)\s*$", re.IGNORECASE)
TEXT_SUFFIXES = {".csv", ".txt", ".tsv", ".tab"}
EXCEL_SUFFIXES = {".xlsx", ".xlsm"}

#: Largest input file read, per kind of file [MB]. The in-memory table takes several
#: times the file's size (an XLSX, being compressed, many times); beyond these the
#: reader refuses with one line instead of exhausting memory. The environment
#: variable ``FAME_ESTIMATOR_MAX_INPUT_MB`` overrides all three (e.g. where the
#: input is read in chunks, or on a machine with more memory).
MAX_INPUT_MB = {"text": 200.0, "json": 100.0, "excel": 40.0}
MAX_INPUT_ENV = "FAME_ESTIMATOR_MAX_INPUT_MB"
#: Rows searched for the header row (title lines and notes above it are skipped).
HEADER_SEARCH_ROWS = 40
#: Bytes decoded to find the header, separator and decimal mark.
_HEAD_BYTES = 256 * 1024

_NUMBER = re.compile(r"[+-]?(\d+\.?\d*|\.\d+)([eE][+-]?\d+)?")
_INFINITE = re.compile(r"[+-]?(inf|infinity)", re.IGNORECASE)
_EMPTY, _BAD, _NOT_FINITE = "empty", "bad", "not finite"


class RawTable(NamedTuple):
    """A file's cells before interpretation: the frame, each record's file row, a note."""

    frame: pd.DataFrame
    rows: np.ndarray
    note: str = ""


def read_profile(
    path: str | Path,
    *,
    basis: str = "fame",
    sum_tolerance: float = DEFAULT_SUM_TOLERANCE,
    extra_columns: tuple[str, ...] = (),
    fractions: bool = False,
) -> Profile:
    """Read a profile file (CSV, TSV, XLSX or JSON; wide or long) into a :class:`Profile`.

    Parameters
    ----------
    path : str or Path
        The file. It is only read, never written.
    basis : {'fame', 'fatty-acid', 'oil'}
        What the numbers are mass % of; converted exactly to FAME basis.
    sum_tolerance : float
        Sums within this many points of 100 are renormalised with a note. [percentage points]
    extra_columns : tuple of str
        Metadata columns that must be present (e.g. measured properties for a refit).
    fractions : bool
        The species cells are mass fractions (summing to 1), not mass %: multiplied by 100.

    Returns
    -------
    Profile
        The validated samples; ``file_notes`` says which row held the header when
        title lines stood above it.
    """
    path = Path(path)
    label = path.name
    table, rows, note = read_raw_table(path)
    table.columns = [str(c).strip() for c in table.columns]
    _check_unique_headers(table, label)
    lowered = {c.lower(): c for c in table.columns}
    species_col = next((lowered[c] for c in LONG_SPECIES if c in lowered), None)
    value_col = next((lowered[c] for c in LONG_VALUE if c in lowered), None)
    if species_col is not None and value_col is not None:
        table, rows = _long_to_wide(table, species_col, value_col, label, rows)
    profile = _wide_to_profile(table, rows, label, basis, sum_tolerance, extra_columns, fractions)
    return replace(profile, file_notes=(note, *profile.file_notes)) if note else profile


def input_size_limit_mb(kind: str) -> float:
    """The size limit for a kind of input file ('text', 'json' or 'excel') [MB]."""
    env = os.environ.get(MAX_INPUT_ENV, "").strip()
    if env:
        try:
            value = float(env)
        except ValueError:
            value = math.nan
        if not (math.isfinite(value) and value > 0):
            raise UsageError(f"{MAX_INPUT_ENV}={env!r}: give a positive number of megabytes")
        return value
    return MAX_INPUT_MB[kind]


def read_table(path: Path) -> tuple[pd.DataFrame, int]:
    """Read a file into a frame of raw cells (header on the first row); also return the file
    row of the first record. Other tables than profiles (e.g. GC peak tables) use this."""
    raw = read_raw_table(path, find_header=False)
    return raw.frame, int(raw.rows[0]) if len(raw.rows) else 2


def read_raw_table(path: Path, *, find_header: bool = True) -> RawTable:
    """Read a file into a frame of raw cells, the file row of each record, and a note.

    With ``find_header`` the header is the first row with species columns (title lines
    and notes above it are skipped, and the note says so); else the first row.
    """
    path = Path(path)
    label = path.name
    if not path.exists():
        raise InputFileError(f"{label}: no such file")
    if path.is_dir():
        raise InputFileError(f"{label}: is a folder, not a profile file")
    size = path.stat().st_size
    if size == 0:
        raise InputFileError(f"{label}: the file is empty")
    suffix = path.suffix.lower()
    if suffix in TEXT_SUFFIXES:
        kind = "text"
    elif suffix in EXCEL_SUFFIXES:
        kind = "excel"
    elif suffix == ".json":
        kind = "json"
    else:
        raise InputFileError(
            f"{label}: unknown file type {suffix or '(none)'!r}; use .csv, .tsv, .txt, .xlsx "
            "or .json"
        )
    limit = input_size_limit_mb(kind)
    if size > limit * 1e6:
        raise InputFileError(
            f"{label}: {size / 1e6:,.0f} MB is more than the {limit:g} MB this reader takes "
            f"for a {kind} file; split the file, or raise the limit with {MAX_INPUT_ENV}"
        )
    if kind == "text":
        return _read_text(path, find_header)
    if kind == "excel":
        return _read_excel(path, find_header)
    frame = _read_json(path)
    return RawTable(frame, np.arange(1, len(frame) + 1))


# ---------------------------------------------------------------- text files
def _encoding(path: Path, head: bytes) -> str:
    label = path.name
    if head.startswith((b"\xff\xfe", b"\xfe\xff")):
        return "utf-16"
    if b"\x00" in head:
        sample = head[:4096]
        odd, even = sample[1::2].count(0), sample[0::2].count(0)
        if max(odd, even) > len(sample) // 4:
            raise InputFileError(
                f"{label}: looks like UTF-16 text without a byte-order mark; save it as UTF-8 "
                "(e.g. 'CSV UTF-8') or as UTF-16 with a byte-order mark"
            )
        raise InputFileError(f"{label}: contains NUL bytes: not a text table")
    return "utf-8-sig"


def _decode_error(path: Path, encoding: str) -> InputFileError:
    """Name the row of the first byte that is not valid in ``encoding``."""
    data = path.read_bytes()
    try:
        data.decode(encoding)
    except UnicodeDecodeError as exc:
        row = data.count(b"\n", 0, exc.start) + 1
        byte = data[exc.start]
        return InputFileError(
            f"{path.name}: row {row}: byte 0x{byte:02x} is not {_shown_encoding(encoding)} "
            "text; save the file as UTF-8 (e.g. 'CSV UTF-8')"
        )
    return InputFileError(f"{path.name}: not readable as {_shown_encoding(encoding)} text")


def _split(line: str, sep: str) -> list[str]:
    try:
        return next(csv.reader([line], delimiter=sep), [])
    except csv.Error:
        return line.split(sep)


def _header_score(cells: list) -> int:
    """How much a row looks like a profile header: species-like cells (or a long layout)."""
    texts = [str(c).strip() for c in cells if c is not None and str(c).strip()]
    lowered = {t.lower() for t in texts}
    if lowered & set(LONG_SPECIES) and lowered & set(LONG_VALUE):
        return 2
    return sum(is_species_like(t) for t in texts)


def _find_header(scores: list[int]) -> int:
    """Index of the first row with two or more species-like cells (else 0)."""
    return next((i for i, score in enumerate(scores) if score >= 2), 0)


def _header_note(label: str, header_index: int) -> str:
    if header_index == 0:
        return ""
    above = "row 1" if header_index == 1 else f"rows 1-{header_index}"
    return (f"{label}: header (species columns) found on row {header_index + 1}; "
            f"{above} above it read as titles or notes and skipped")


def _read_text(path: Path, find_header: bool = True) -> RawTable:
    label = path.name
    with path.open("rb") as fh:
        head_bytes = fh.read(_HEAD_BYTES)
    encoding = _encoding(path, head_bytes)
    try:
        head = head_bytes.decode(encoding)
    except UnicodeDecodeError as exc:
        if exc.start < len(head_bytes) - 4:  # not just a character cut at the chunk's end
            raise _decode_error(path, encoding) from None
        head = head_bytes[:exc.start].decode(encoding)
    head = head.removeprefix("\ufeff")
    lines = head.replace("\r\n", "\n").replace("\r", "\n").split("\n")[:HEADER_SEARCH_ROWS]
    if not "".join(lines).strip():
        raise InputFileError(f"{label}: the first line (header) is empty")
    seps = (";", "\t", ",")
    best = []
    for line in lines:
        # a separator the line lacks leaves one cell, never a header (two species-like
        # cells); scoring the whole line as a name would only cost time
        scored = [(_header_score(_split(line, s)) if s in line else 0, line.count(s), s)
                  for s in seps]
        best.append(max(scored))
        if not find_header or best[-1][0] >= 2:
            break  # the header is the first row scoring 2: the rows below are not scored
    header_index = _find_header([score for score, _, _ in best]) if find_header else 0
    header = lines[header_index]
    if not header.strip():
        raise InputFileError(f"{label}: the first line (header) is empty")
    score, count, sep = best[header_index]
    if score == 0 or count == 0:
        counts = {s: header.count(s) for s in seps}
        sep = max(counts, key=lambda s: counts[s]) if max(counts.values()) else ","
    body = lines[header_index + 1:HEADER_SEARCH_ROWS]
    decimal = "," if sep in (";", "\t") and _uses_decimal_comma(body, sep) else "."
    try:
        frame = pd.read_csv(
            path, sep=sep, decimal=decimal, encoding=encoding, keep_default_na=False,
            na_values=[""], skipinitialspace=True, skiprows=header_index,
        )
    except pd.errors.EmptyDataError:
        raise InputFileError(f"{label}: the file is empty") from None
    except UnicodeDecodeError:
        raise _decode_error(path, encoding) from None
    except (pd.errors.ParserError, ValueError, OverflowError) as exc:
        raise _parse_error(label, exc, sep) from None
    if frame.empty:
        raise InputFileError(f"{label}: the file has a header but no data rows")
    first = header_index + 2
    return RawTable(frame, np.arange(first, first + len(frame)), _header_note(label, header_index))


def _uses_decimal_comma(lines: list[str], sep: str) -> bool:
    cells = [c.strip() for line in lines[:20] for c in line.split(sep)]
    return sum(bool(re.fullmatch(r"-?\d+,\d+%?", c)) for c in cells) > 0


# ---------------------------------------------------------------- workbooks
def _read_excel(path: Path, find_header: bool = True) -> RawTable:
    """The first sheet's cells as they are (numbers, text, booleans), with their rows."""
    label = path.name
    try:
        from openpyxl import load_workbook

        with warnings.catch_warnings():
            warnings.simplefilter("ignore")
            book = load_workbook(path, read_only=True, data_only=True)
            try:
                sheet = book.worksheets[0]
                cells = [list(r) for r in sheet.iter_rows(values_only=True)]
            finally:
                book.close()
    except Exception as exc:  # openpyxl and zipfile raise many types for broken files
        text = " ".join(str(exc).split())[:120] or type(exc).__name__
        raise InputFileError(f"{label}: cannot read as an Excel workbook ({text})") from None
    if not cells:
        raise InputFileError(f"{label}: the first sheet has no data rows")
    width = max(len(r) for r in cells)
    cells = [r + [None] * (width - len(r)) for r in cells]
    header_index = (_find_header([_header_score(r) for r in cells[:HEADER_SEARCH_ROWS]])
                    if find_header else 0)
    header = cells[header_index]
    names = []
    for j, h in enumerate(header):
        text = "" if h is None else str(h).strip()
        names.append(text or f"Unnamed: {j}")
    data = cells[header_index + 1:]
    rows = np.arange(header_index + 2, header_index + 2 + len(data))
    filled = [any(not _blank(v) for v in r) for r in data]
    data = [r for r, f in zip(data, filled) if f]
    rows = rows[np.asarray(filled, dtype=bool)] if len(filled) else rows
    if not data:
        raise InputFileError(f"{label}: the first sheet has no data rows")
    frame = pd.DataFrame(data, columns=names, dtype=object)
    # a column without a header and without a value (e.g. under a merged title) is no column
    empty = [n for j, n in enumerate(names)
             if n.startswith("Unnamed: ") and all(_blank(r[j]) for r in data)]
    frame = frame.drop(columns=empty)
    return RawTable(frame, rows, _header_note(label, header_index))


def _blank(value) -> bool:
    return value is None or (isinstance(value, str) and not value.strip())


# ---------------------------------------------------------------- JSON
def _json_int(text: str):
    # Huge integers become float (inf beyond range) and are refused where a number is
    # needed; Python's int() would raise on more than 4300 digits.
    return int(text) if len(text) <= 18 else float(text)


def _read_json(path: Path) -> pd.DataFrame:
    label = path.name
    try:
        data = json.loads(path.read_bytes().decode("utf-8-sig"), parse_int=_json_int,
                          parse_constant=lambda name: name)  # NaN, Infinity stay text
    except UnicodeDecodeError:
        raise _decode_error(path, "utf-8") from None
    except json.JSONDecodeError as exc:
        raise InputFileError(f"{label}: not valid JSON ({exc})") from None
    except RecursionError:
        raise InputFileError(f"{label}: JSON nested too deeply to be a profile") from None
    if isinstance(data, dict) and "samples" in data:
        data = data["samples"]
    if not isinstance(data, list) or not data or not all(isinstance(r, dict) for r in data):
        raise InputFileError(
            f"{label}: expected a list of records (or {{'samples': [...]}}), one per sample"
        )
    records = []
    for i, rec in enumerate(data, start=1):
        rec = dict(rec)
        comp = rec.pop("composition", None)
        if comp is not None:
            if not isinstance(comp, dict):
                raise InputFileError(
                    f"{label}: record {i}: 'composition' must be an object of species: wt%")
            rec.update(comp)
        records.append(rec)
    return pd.DataFrame.from_records(records)


# ---------------------------------------------------------------- cells
def _check_unique_headers(table: pd.DataFrame, label: str) -> None:
    cols = list(table.columns)
    seen: set[str] = set()
    for col in cols:
        if col in seen:
            raise ProfileError(f"{label}: column {col!r} appears twice")
        seen.add(col)
        m = re.fullmatch(r"(.+)\.(\d+)", col)  # pandas renames a repeated header X to X.1
        if m and m.group(1) in cols:
            raise ProfileError(f"{label}: column {m.group(1)!r} appears twice")


def _long_to_wide(table, species_col, value_col, label, file_rows):
    lowered = {c.lower(): c for c in table.columns}
    sample_col = next((lowered[c] for c in SAMPLE_COLUMNS if c in lowered), None)
    if sample_col is None:
        raise InputFileError(
            f"{label}: long layout needs a sample column ({', '.join(SAMPLE_COLUMNS[:5])})"
        )
    keys = []
    for i, name in enumerate(table[species_col].astype(str)):
        try:
            keys.append(canonical_species(name))
        except KeyError as exc:
            raise type(exc)(f"{label}: row {file_rows[i]}, column {species_col!r}: {exc}") from None
    values = _numbers(table[value_col], label, value_col, file_rows)
    long = pd.DataFrame({"sample": table[sample_col].astype(str).str.strip(), "key": keys,
                         "value": values, "row": file_rows})
    dup = long.duplicated(["sample", "key"], keep=False)
    if dup.any():
        d = long[dup]
        first = d.iloc[0]
        others = d[(d["sample"] == first["sample"]) & (d["key"] == first["key"])]["row"].tolist()
        raise ProfileError(
            f"{label}: sample {first['sample']!r} lists {first['key']} more than once "
            f"(rows {', '.join(map(str, others))})"
        )
    order = list(dict.fromkeys(long["sample"]))
    wide = long.pivot(index="sample", columns="key", values="value").reindex(order).fillna(0.0)
    rows = long.groupby("sample")["row"].min().reindex(order).to_numpy()
    meta_cols = [c for c in table.columns if c not in (species_col, value_col, sample_col)]
    meta = table.groupby(table[sample_col].astype(str).str.strip())[meta_cols].first()
    wide = wide.join(meta.reindex(order)) if meta_cols else wide
    wide.insert(0, "sample", wide.index)
    return wide.reset_index(drop=True), rows


def _cell(value, allow_nd: bool):
    """A cell as a float, or one of the markers _EMPTY, _BAD, _NOT_FINITE."""
    if value is None:
        return _EMPTY
    if isinstance(value, (bool, np.bool_)):
        return _BAD
    if isinstance(value, (int, float, np.integer, np.floating)):
        try:
            number = float(value)
        except OverflowError:
            return _NOT_FINITE
        if math.isnan(number):
            return _EMPTY  # pandas' marker of an empty cell
        return number if math.isfinite(number) else _NOT_FINITE
    if not isinstance(value, str):
        return _BAD
    text = value.strip().replace("\u00a0", "")
    if not text:
        return _EMPTY
    if allow_nd and NOT_DETECTED.match(text):
        return 0.0
    text = text.removesuffix("%").rstrip().replace(",", ".")
    if _NUMBER.fullmatch(text):
        number = float(text)
        return number if math.isfinite(number) else _NOT_FINITE
    return _NOT_FINITE if _INFINITE.fullmatch(text) else _BAD


def parse_numbers(column: pd.Series, *, allow_nd: bool = False) -> tuple[np.ndarray, np.ndarray]:
    """Read a column of cells as numbers, one rule for every file format.

    Parameters
    ----------
    column : Series
        Raw cells (numbers, text, booleans, None).
    allow_nd : bool
        Read "not detected" marks (``ND``, ``-``, ``<0.1``) as 0.

    Returns
    -------
    values : ndarray
        The numbers; NaN for empty cells and for refused ones. [as in the file]
    problem : ndarray of object
        ``None`` where the cell is a number or empty, else ``'bad'`` (not a number:
        text, a boolean, ``#N/A``, ``NaN``) or ``'not finite'``.
    """
    n = len(column)
    if pd.api.types.is_bool_dtype(column):
        return np.full(n, np.nan), np.full(n, _BAD, dtype=object)
    if pd.api.types.is_numeric_dtype(column):
        values = column.to_numpy(dtype=float)
        problem = np.where(np.isinf(values), _NOT_FINITE, None).astype(object)
        return np.where(np.isinf(values), np.nan, values), problem
    cells = [_cell(v, allow_nd) for v in column.tolist()]
    values = np.array([c if isinstance(c, float) else np.nan for c in cells], dtype=float)
    problem = np.array([c if c in (_BAD, _NOT_FINITE) else None for c in cells], dtype=object)
    return values, problem


def _show(value) -> str:
    text = repr(value) if isinstance(value, str) else str(value)
    return text if len(text) <= 40 else text[:37] + "..."


def _numbers(column: pd.Series, label: str, name: str, rows: np.ndarray,
             allow_nd: bool = False) -> np.ndarray:
    """Parse a column of cells as numbers; the first bad cell is an error with its row."""
    values, problem = parse_numbers(column, allow_nd=allow_nd)
    refused = problem != None  # noqa: E711 (element-wise on an object array)
    if refused.any():
        i = int(np.argmax(refused))
        cell = column.iloc[i]
        if problem[i] == _NOT_FINITE:
            shown, what = f"'{str(cell).strip()[:37]}'", "is not a finite number"
        else:
            shown, what = _show(cell), "is not a number"
        raise ProfileError(f"{label}: row {rows[i]}, column {name!r}: {shown} {what}")
    return values


#: A header that looks like a lipid number or a GC peak label but did not parse, e.g.
#: 'C18:l' (letter l for digit 1), 'C18-1', '18.1': refused rather than read as metadata.
SPECIES_TYPO = re.compile(r"^\s*c?\s*\d{1,2}\s*[:\-._;,]\s*[\dloiz]", re.IGNORECASE)


def _wide_to_profile(table, rows, label, basis, sum_tolerance, extra_columns,
                     fractions=False) -> Profile:
    lowered = {c.lower(): c for c in table.columns}
    sample_col = next((lowered[c] for c in SAMPLE_COLUMNS if c in lowered), None)
    species_cols: dict[str, str] = {}
    other_cols: list[str] = []
    meta_cols: list[str] = []
    for col in table.columns:
        if col == sample_col:
            continue
        if is_species_like(col):
            try:
                key = canonical_species(col)
            except KeyError as exc:
                raise type(exc)(f"{label}: column {col!r}: {exc}") from None
            if key == OTHER:
                other_cols.append(col)
            elif key in species_cols:
                raise ProfileError(
                    f"{label}: columns {species_cols[key]!r} and {col!r} are both {key}; "
                    "keep one of them"
                )
            else:
                species_cols[key] = col
        elif SPECIES_TYPO.match(col):
            raise ProfileError(
                f"{label}: column {col!r} looks like a species but is not one the notation "
                "parser knows (e.g. C18:1, 18:1n-9, oleic); correct the header or rename it"
            )
        else:
            meta_cols.append(col)
    if not species_cols:
        raise InputFileError(
            f"{label}: no species columns found (expected headers such as C16:0, C18:1, oleic)"
        )
    guessed = ()
    if sample_col is None:
        text_cols = [c for c in meta_cols if not pd.api.types.is_numeric_dtype(table[c])]
        sample_col = text_cols[0] if text_cols else None
        if sample_col is not None:
            meta_cols.remove(sample_col)
            guessed = (f"{label}: no sample column ({', '.join(SAMPLE_COLUMNS[:5])} ...); "
                       f"the sample ids are taken from column {sample_col!r}",)
    if sample_col is not None:
        ids = _sample_ids(table[sample_col])
        blank = ids == ""
        if blank.any():
            i = int(np.argmax(blank.to_numpy()))
            raise ProfileError(f"{label}: row {rows[i]}, column {sample_col!r}: empty sample id")
    else:
        ids = pd.Series([f"row{r}" for r in rows])
    scale = 100.0 if fractions else 1.0
    comp = {}
    for key, col in species_cols.items():
        values = _numbers(table[col], label, col, rows, allow_nd=True)
        _check_nonnegative(values, label, col, rows)
        comp[key] = np.nan_to_num(values) * scale
    other = None
    if other_cols:
        parts = []
        for col in other_cols:
            values = np.nan_to_num(_numbers(table[col], label, col, rows, allow_nd=True))
            _check_nonnegative(values, label, col, rows)
            parts.append(values * scale)
        other = pd.Series(np.sum(parts, axis=0), index=ids)
    missing = [c for c in extra_columns if c not in meta_cols]
    if missing:
        raise InputFileError(f"{label}: missing column {missing[0]!r}")
    meta = table[meta_cols].copy()
    for col in meta_cols:
        meta[col] = _maybe_numeric(meta[col])
    composition = pd.DataFrame(comp, index=ids)
    meta.index = ids
    profile = Profile.from_frame(
        composition, basis=basis, sum_tolerance=sum_tolerance, other=other, metadata=meta,
        source=label, rows=rows,
    )
    return replace(profile, file_notes=guessed) if guessed else profile


_CELL_COUNT = re.compile(r"Expected (\d+) fields in line (\d+), saw (\d+)")


def _parse_error(label: str, exc: Exception, sep: str) -> InputFileError:
    """The parser's complaint in the reader's words: which row, how many cells, a likely cause."""
    text = str(exc).strip()
    counted = _CELL_COUNT.search(text)
    if counted:
        expected, line, saw = counted.groups()
        hint = ("; a decimal comma in a number or a comma inside unquoted text splits a cell "
                "in two: quote the text, or separate the cells with ';'") if sep == "," else ""
        return InputFileError(f"{label}: row {line} has {saw} cells where the header has "
                              f"{expected}{hint}")
    msg = text.splitlines()[-1] if text else type(exc).__name__
    return InputFileError(f"{label}: cannot parse the table ({msg})")


def _sample_ids(column: pd.Series) -> pd.Series:
    """:func:`_sample_id` of every cell; a column of text in one pass."""
    values = column.to_numpy(dtype=object)
    if pd.api.types.infer_dtype(values, skipna=False) == "string":
        return pd.Series([v.strip() for v in values.tolist()], index=column.index,
                         name=column.name)
    return column.map(_sample_id)


def _sample_id(value) -> str:
    if value is None or (isinstance(value, float) and math.isnan(value)):
        return ""
    if isinstance(value, float) and value.is_integer():
        return str(int(value))
    return str(value).strip()


def _check_nonnegative(values: np.ndarray, label: str, col: str, rows: np.ndarray) -> None:
    neg = values < 0
    if neg.any():
        i = int(np.argmax(neg))
        raise ProfileError(f"{label}: row {rows[i]}, column {col!r}: negative value {values[i]:g}")


def _maybe_numeric(column: pd.Series) -> pd.Series:
    """A metadata column of numbers (``0.5%``, decimal commas) as floats; else unchanged."""
    if pd.api.types.is_numeric_dtype(column) and not pd.api.types.is_bool_dtype(column):
        return column
    values, problem = parse_numbers(column)
    refused = problem != None  # noqa: E711
    if not refused.any() and not np.isnan(values).all():
        return pd.Series(values, index=column.index, name=column.name)
    return column


def _shown_encoding(encoding: str) -> str:
    return {"utf-8-sig": "UTF-8", "utf-8": "UTF-8", "utf-16": "UTF-16"}.get(encoding, encoding)


#: Text files smaller than this are read whole by :func:`read_profile_chunks`. [bytes]
CHUNKED_MIN_BYTES = 4_000_000


def read_profile_chunks(
    path: str | Path,
    *,
    basis: str = "fame",
    sum_tolerance: float = DEFAULT_SUM_TOLERANCE,
    chunk_rows: int = 50_000,
    min_bytes: int = CHUNKED_MIN_BYTES,
    fractions: bool = False,
):
    """Yield the profile of a file in pieces of at most ``chunk_rows`` samples.

    A large wide CSV/TSV file with a sample-id column (``sample``, ``lot`` ...) is read
    piece by piece, so memory stays flat however many rows it has; every other file
    (small, long layout, XLSX, JSON, no sample-id column) is read whole and yielded
    once (so are files under ``min_bytes``). Each piece is checked as :func:`read_profile`
    checks the whole file, with the file's own row numbers; sample ids repeated across
    pieces are the caller's to find.
    """
    path = Path(path)
    label = path.name
    whole = (
        path.suffix.lower() not in TEXT_SUFFIXES or not path.is_file()
        or path.stat().st_size < min_bytes
    )
    options = None if whole else _chunk_options(path)
    if options is None:
        yield read_profile(path, basis=basis, sum_tolerance=sum_tolerance, fractions=fractions)
        return
    first_row = 2
    try:
        # closed however the reading ends (a bad row, or the caller stopping early)
        with pd.read_csv(path, **options, chunksize=chunk_rows) as reader:
            for table in reader:
                table.columns = [str(c).strip() for c in table.columns]
                rows = np.arange(first_row, first_row + len(table))
                first_row += len(table)
                yield _wide_to_profile(table, rows, label, basis, sum_tolerance, (),
                                       fractions=fractions)
    except UnicodeDecodeError:
        raise InputFileError(f"{label}: not a UTF-8 text file (near row {first_row})") from None
    except pd.errors.ParserError as exc:
        raise _parse_error(label, exc, options["sep"]) from None


def _chunk_options(path: Path) -> dict | None:
    """read_csv options for reading ``path`` in pieces, or None to read it whole."""
    try:
        with path.open("r", encoding="utf-8-sig", newline="") as fh:
            lines = [line for _, line in zip(range(20), fh)]
    except UnicodeDecodeError:
        return None  # read_profile reports it
    if not lines:
        return None
    head = lines[0]
    counts = {sep: head.count(sep) for sep in (";", "\t", ",")}
    sep = max(counts, key=lambda s: counts[s])
    if counts[sep] == 0:
        return None
    columns = [c.strip().strip('"').strip() for c in head.rstrip("\r\n").split(sep)]
    lowered = {c.lower() for c in columns}
    if len(set(columns)) != len(columns) or not lowered & set(SAMPLE_COLUMNS):
        return None
    if lowered & set(LONG_SPECIES) and lowered & set(LONG_VALUE):
        return None  # long layout: a sample's rows may straddle pieces
    decimal = "," if sep in (";", "\t") and _uses_decimal_comma(lines, sep) else "."
    return {"sep": sep, "decimal": decimal, "encoding": "utf-8-sig", "keep_default_na": False,
            "na_values": [""], "skipinitialspace": True}
