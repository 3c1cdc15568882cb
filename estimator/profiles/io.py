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
decimal commas, as European lab software writes them. Empty cells and ``ND``,
``n.d.``, ``-`` or ``<x`` in species columns mean "not detected" and count as 0.

Every problem is reported as one line naming the file, the row (as a spreadsheet
shows it, header = row 1) and the column.
"""

from __future__ import annotations

import json
import re
from pathlib import Path

import numpy as np
import pandas as pd

from estimator.errors import InputFileError, ProfileError
from estimator.profiles.names import OTHER, canonical_species, is_species_like
from estimator.profiles.profile import DEFAULT_SUM_TOLERANCE, Profile

__all__ = ["read_profile", "read_profile_chunks", "read_table"]

SAMPLE_COLUMNS = ("sample", "sample_id", "sample id", "id", "lot", "lot_id", "lot id", "name")
LONG_SPECIES = ("species", "component", "compound", "fatty_acid", "fatty acid", "fame", "peak")
LONG_VALUE = ("wt_pct", "wt%", "mass_pct", "mass%", "area_pct", "area%", "value", "percent", "%")
NOT_DETECTED = re.compile(r"^\s*(nd|n\.d\.?|n/d|-+|—|–|tr|trace|<\s*[\d.,]+)\s*$", re.IGNORECASE)
TEXT_SUFFIXES = {".csv", ".txt", ".tsv", ".tab"}
EXCEL_SUFFIXES = {".xlsx", ".xlsm"}


def read_profile(
    path: str | Path,
    *,
    basis: str = "fame",
    sum_tolerance: float = DEFAULT_SUM_TOLERANCE,
    extra_columns: tuple[str, ...] = (),
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
    """
    path = Path(path)
    label = path.name
    table, first_row = read_table(path)
    table.columns = [str(c).strip() for c in table.columns]
    _check_unique_headers(table, label)
    lowered = {c.lower(): c for c in table.columns}
    species_col = next((lowered[c] for c in LONG_SPECIES if c in lowered), None)
    value_col = next((lowered[c] for c in LONG_VALUE if c in lowered), None)
    if species_col is not None and value_col is not None:
        table, rows = _long_to_wide(table, species_col, value_col, label, first_row)
    else:
        rows = np.arange(first_row, first_row + len(table))
    return _wide_to_profile(table, rows, label, basis, sum_tolerance, extra_columns)


def read_table(path: Path) -> tuple[pd.DataFrame, int]:
    """Read a file into a frame of raw cells; also return the file row of the first record."""
    label = path.name
    if not path.exists():
        raise InputFileError(f"{label}: no such file")
    if path.is_dir():
        raise InputFileError(f"{label}: is a folder, not a profile file")
    if path.stat().st_size == 0:
        raise InputFileError(f"{label}: the file is empty")
    suffix = path.suffix.lower()
    if suffix in TEXT_SUFFIXES:
        return _read_text(path), 2
    if suffix in EXCEL_SUFFIXES:
        try:
            frame = pd.read_excel(path, sheet_name=0, dtype=object, engine="openpyxl")
        except Exception as exc:  # openpyxl raises many types for broken files
            raise InputFileError(f"{label}: cannot read as an Excel workbook ({exc})") from None
        frame = frame.dropna(how="all")
        if frame.empty:
            raise InputFileError(f"{label}: the first sheet has no data rows")
        return frame, 2
    if suffix == ".json":
        return _read_json(path), 1
    raise InputFileError(
        f"{label}: unknown file type {suffix or '(none)'!r}; use .csv, .tsv, .txt, .xlsx or .json"
    )


def _read_text(path: Path) -> pd.DataFrame:
    label = path.name
    try:
        with path.open("r", encoding="utf-8-sig", newline="") as fh:
            head = fh.readline()
    except UnicodeDecodeError:
        raise InputFileError(f"{label}: not a UTF-8 text file") from None
    if not head.strip():
        raise InputFileError(f"{label}: the first line (header) is empty")
    counts = {sep: head.count(sep) for sep in (";", "\t", ",")}
    sep = max(counts, key=lambda s: counts[s])
    if counts[sep] == 0:
        sep = ","
    decimal = "," if sep in (";", "\t") and _uses_decimal_comma(path, sep) else "."
    try:
        frame = pd.read_csv(
            path, sep=sep, decimal=decimal, encoding="utf-8-sig", keep_default_na=False,
            na_values=[""], skipinitialspace=True,
        )
    except pd.errors.EmptyDataError:
        raise InputFileError(f"{label}: the file is empty") from None
    except pd.errors.ParserError as exc:
        msg = str(exc).strip().splitlines()[-1]
        raise InputFileError(f"{label}: cannot parse the table ({msg})") from None
    if frame.empty:
        raise InputFileError(f"{label}: the file has a header but no data rows")
    return frame


def _uses_decimal_comma(path: Path, sep: str) -> bool:
    with path.open("r", encoding="utf-8-sig") as fh:
        sample = [next(fh, "") for _ in range(20)][1:]
    cells = [c.strip() for line in sample for c in line.split(sep)]
    return sum(bool(re.fullmatch(r"-?\d+,\d+", c)) for c in cells) > 0


def _read_json(path: Path) -> pd.DataFrame:
    label = path.name
    try:
        data = json.loads(path.read_text(encoding="utf-8"))
    except (UnicodeDecodeError, json.JSONDecodeError) as exc:
        raise InputFileError(f"{label}: not valid JSON ({exc})") from None
    if isinstance(data, dict) and "samples" in data:
        data = data["samples"]
    if not isinstance(data, list) or not data or not all(isinstance(r, dict) for r in data):
        raise InputFileError(
            f"{label}: expected a list of records (or {{'samples': [...]}}), one per sample"
        )
    records = []
    for rec in data:
        rec = dict(rec)
        comp = rec.pop("composition", None)
        if comp is not None:
            if not isinstance(comp, dict):
                raise InputFileError(f"{label}: 'composition' must be an object of species: wt%")
            rec.update(comp)
        records.append(rec)
    return pd.DataFrame.from_records(records)


def _check_unique_headers(table: pd.DataFrame, label: str) -> None:
    cols = list(table.columns)
    for col in cols:
        m = re.fullmatch(r"(.+)\.(\d+)", col)  # pandas renames a repeated header X to X.1
        if m and m.group(1) in cols:
            raise ProfileError(f"{label}: column {m.group(1)!r} appears twice")


def _long_to_wide(table, species_col, value_col, label, first_row):
    lowered = {c.lower(): c for c in table.columns}
    sample_col = next((lowered[c] for c in SAMPLE_COLUMNS if c in lowered), None)
    if sample_col is None:
        raise InputFileError(
            f"{label}: long layout needs a sample column ({', '.join(SAMPLE_COLUMNS[:5])})"
        )
    file_rows = np.arange(first_row, first_row + len(table))
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


def _numbers(column: pd.Series, label: str, name: str, rows: np.ndarray,
             allow_nd: bool = False) -> np.ndarray:
    """Parse a column of cells as numbers; the first bad cell is an error with its row."""
    if pd.api.types.is_numeric_dtype(column):
        values = column.to_numpy(dtype=float)
        _check_finite(values, column, label, name, rows)
        return values
    text = column.astype(object)
    cleaned = text.map(lambda v: v.strip().replace("\u00a0", "") if isinstance(v, str) else v)
    if allow_nd:
        cleaned = cleaned.map(
            lambda v: 0.0 if isinstance(v, str) and (v == "" or NOT_DETECTED.match(v)) else v
        )
    as_str = cleaned.map(lambda v: v.replace(",", ".") if isinstance(v, str) else v)
    parsed = pd.to_numeric(as_str, errors="coerce")
    bad = parsed.isna() & cleaned.map(lambda v: not (v is None or v == "" or
                                                     (isinstance(v, float) and np.isnan(v))))
    if bad.any():
        i = int(np.argmax(bad.to_numpy()))
        raise ProfileError(
            f"{label}: row {rows[i]}, column {name!r}: {text.iloc[i]!r} is not a number"
        )
    values = parsed.to_numpy(dtype=float)
    _check_finite(values, text, label, name, rows)
    return values


def _check_finite(values: np.ndarray, cells: pd.Series, label: str, name: str,
                  rows: np.ndarray) -> None:
    bad = np.isinf(values)
    if bad.any():
        i = int(np.argmax(bad))
        raise ProfileError(
            f"{label}: row {rows[i]}, column {name!r}: '{cells.iloc[i]}' is not a finite number"
        )


#: A header that looks like a lipid number or a GC peak label but did not parse, e.g.
#: 'C18:l' (letter l for digit 1), 'C18-1', '18.1': refused rather than read as metadata.
SPECIES_TYPO = re.compile(r"^\s*c?\s*\d{1,2}\s*[:\-._;,]\s*[\dloiz]", re.IGNORECASE)


def _wide_to_profile(table, rows, label, basis, sum_tolerance, extra_columns) -> Profile:
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
    if sample_col is None:
        text_cols = [c for c in meta_cols if not pd.api.types.is_numeric_dtype(table[c])]
        sample_col = text_cols[0] if text_cols else None
        if sample_col is not None:
            meta_cols.remove(sample_col)
    if sample_col is not None:
        ids = table[sample_col].astype(str).str.strip()
        blank = (ids == "") | table[sample_col].isna()
        if blank.any():
            i = int(np.argmax(blank.to_numpy()))
            raise ProfileError(f"{label}: row {rows[i]}, column {sample_col!r}: empty sample id")
    else:
        ids = pd.Series([f"row{r}" for r in rows])
    comp = {}
    for key, col in species_cols.items():
        values = _numbers(table[col], label, col, rows, allow_nd=True)
        _check_nonnegative(values, label, col, rows)
        comp[key] = np.nan_to_num(values)
    other = None
    if other_cols:
        parts = []
        for col in other_cols:
            values = np.nan_to_num(_numbers(table[col], label, col, rows, allow_nd=True))
            _check_nonnegative(values, label, col, rows)
            parts.append(values)
        other = pd.Series(np.sum(parts, axis=0), index=ids)
    missing = [c for c in extra_columns if c not in meta_cols]
    if missing:
        raise InputFileError(f"{label}: missing column {missing[0]!r}")
    meta = table[meta_cols].copy()
    for col in meta_cols:
        meta[col] = _maybe_numeric(meta[col])
    composition = pd.DataFrame(comp, index=ids)
    meta.index = ids
    return Profile.from_frame(
        composition, basis=basis, sum_tolerance=sum_tolerance, other=other, metadata=meta,
        source=label, rows=rows,
    )


def _check_nonnegative(values: np.ndarray, label: str, col: str, rows: np.ndarray) -> None:
    neg = values < 0
    if neg.any():
        i = int(np.argmax(neg))
        raise ProfileError(f"{label}: row {rows[i]}, column {col!r}: negative value {values[i]:g}")


def _maybe_numeric(column: pd.Series) -> pd.Series:
    if pd.api.types.is_numeric_dtype(column):
        return column
    cleaned = column.map(lambda v: v.strip().replace(",", ".") if isinstance(v, str) else v)
    parsed = pd.to_numeric(cleaned.replace("", np.nan), errors="coerce")
    filled = cleaned.map(
        lambda v: not (v is None or v == "" or (isinstance(v, float) and np.isnan(v)))
    )
    if (parsed.notna() == filled).all() and filled.any():
        return parsed
    return column


#: Text files smaller than this are read whole by :func:`read_profile_chunks`. [bytes]
CHUNKED_MIN_BYTES = 4_000_000


def read_profile_chunks(
    path: str | Path,
    *,
    basis: str = "fame",
    sum_tolerance: float = DEFAULT_SUM_TOLERANCE,
    chunk_rows: int = 50_000,
    min_bytes: int = CHUNKED_MIN_BYTES,
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
        yield read_profile(path, basis=basis, sum_tolerance=sum_tolerance)
        return
    first_row = 2
    try:
        reader = pd.read_csv(path, **options, chunksize=chunk_rows)
        for table in reader:
            table.columns = [str(c).strip() for c in table.columns]
            rows = np.arange(first_row, first_row + len(table))
            first_row += len(table)
            yield _wide_to_profile(table, rows, label, basis, sum_tolerance, ())
    except UnicodeDecodeError:
        raise InputFileError(f"{label}: not a UTF-8 text file (near row {first_row})") from None
    except pd.errors.ParserError as exc:
        msg = str(exc).strip().splitlines()[-1]
        raise InputFileError(f"{label}: cannot parse the table ({msg})") from None


def _chunk_options(path: Path) -> dict | None:
    """read_csv options for reading ``path`` in pieces, or None to read it whole."""
    try:
        with path.open("r", encoding="utf-8-sig", newline="") as fh:
            head = fh.readline()
    except UnicodeDecodeError:
        return None  # read_profile reports it
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
    decimal = "," if sep in (";", "\t") and _uses_decimal_comma(path, sep) else "."
    return {"sep": sep, "decimal": decimal, "encoding": "utf-8-sig", "keep_default_na": False,
            "na_values": [""], "skipinitialspace": True}
