"""Writing files: atomically, fast, without overwriting inputs and without live formulas.

The lowest layer of the package: it imports nothing from ``estimator`` except the
errors, so the CLI, ``report/`` and ``refit/`` all write through it.

* :func:`atomic_write` writes through a hidden temporary file beside the target and
  renames it into place; an error or SIGTERM leaves no half-written file and no
  stray ``.tmp`` file, and an OS error names the target, not the temporary file.
* :func:`check_outputs` refuses, before anything is written, an output path that is
  one of the command's inputs (same file after resolving links); :func:`guard_inputs`
  and :func:`protect_inputs` record a command's inputs so that every
  :func:`atomic_write` checks them too.
* :func:`write_table` and :class:`TableWriter` write CSV, TSV, JSON and XLSX. Numbers
  are written with :data:`SIGNIFICANT_DIGITS` significant digits, NaN as an empty
  cell (``null`` in JSON); CSV/TSV text is laid out in bulk by NumPy
  (:mod:`estimator.bulk_text`), the same bytes as formatting cell by cell.
* Text cells that a spreadsheet would take for a formula (starting with ``=``, ``+``,
  ``-``, ``@``, tab or carriage return, and not a plain number) are written as text in
  XLSX and prefixed with ``'`` in CSV/TSV; numbers stay numbers.
"""

from __future__ import annotations

import contextlib
import contextvars
import errno
import json
import math
import os
import re
import signal
import tempfile
import threading
from collections.abc import Callable, Iterable, Iterator, Sequence
from pathlib import Path

import numpy as np
import pandas as pd

from estimator.bulk_text import (
    SIGNIFICANT_DIGITS,
    body_bytes,
    factorize_texts,
    number_fields,
    plain_text_cells,
    round_significant,
)
from estimator.errors import InputFileError, UsageError

__all__ = [
    "SIGNIFICANT_DIGITS", "TABLE_SUFFIXES", "XLSX_MAX_ROWS", "TableWriter", "atomic_write",
    "check_outputs", "csv_text", "guard_inputs", "protect_inputs", "protected_inputs",
    "read_json_object", "round_significant", "write_table",
]

#: Output suffixes :func:`write_table` understands.
TABLE_SUFFIXES = (".csv", ".tsv", ".xlsx", ".json")
#: Rows of one XLSX sheet, header included (the file format's limit; also
#: ``estimator.xlsx.MAX_ROWS``).
XLSX_MAX_ROWS = 1_048_576
#: First characters that make a spreadsheet read a text cell as a formula (common guidance
#: for CSV injection: OWASP "CSV Injection").
FORMULA_START = ("=", "+", "-", "@", "\t", "\r")
_NUMBER = re.compile(r"^[+-]?(\d+\.?\d*|\.\d+)([eE][+-]?\d+)?$")


# ------------------------------------------------------------------ inputs are never written
_PROTECTED: contextvars.ContextVar[tuple[Path, ...]] = contextvars.ContextVar(
    "fame_estimator_protected_inputs", default=()
)


def protect_inputs(paths: Iterable[str | Path | None]) -> None:
    """Record ``paths`` as inputs of the running command: no write may replace them.

    Paths that are not existing files (built-in names, folders) are ignored.
    """
    new = tuple(Path(p) for p in paths if p and Path(p).is_file())
    if new:
        _PROTECTED.set(_PROTECTED.get() + new)


def protected_inputs() -> tuple[Path, ...]:
    """The inputs recorded for the running command."""
    return _PROTECTED.get()


@contextlib.contextmanager
def guard_inputs(paths: Iterable[str | Path | None] = ()) -> Iterator[None]:
    """Within the block, :func:`atomic_write` refuses to replace any of ``paths``.

    Nested blocks add to the outer block's inputs; leaving a block forgets what it added.
    """
    token = _PROTECTED.set(_PROTECTED.get())
    try:
        protect_inputs(paths)
        yield
    finally:
        _PROTECTED.reset(token)


def _same_file(a: Path, b: Path) -> bool:
    try:
        if a.resolve() == b.resolve():
            return True
        return a.exists() and b.exists() and os.path.samefile(a, b)
    except OSError:
        return False


def check_outputs(
    outputs: Iterable[str | Path | None], inputs: Iterable[str | Path | None] | None = None,
    *, folders: Iterable[str | Path | None] = (),
) -> None:
    """Refuse (UsageError, exit 2) if any output path is one of the inputs.

    ``inputs`` defaults to the inputs recorded by :func:`guard_inputs` and
    :func:`protect_inputs`. Symbolic links and hard links count as the same file.
    ``folders`` are folders the command fills with files of its own (plots, a fit
    report): no input may lie inside them. Call it with every path a command will
    write before writing the first one.
    """
    ins = [Path(p) for p in (protected_inputs() if inputs is None else inputs) if p]
    ins = [p for p in ins if p.is_file()]
    if not ins:
        return
    for folder in folders:
        if not folder:
            continue
        root = Path(folder).resolve()
        for inp in ins:
            if root in inp.resolve().parents:
                raise UsageError(
                    f"writing into {folder} would overwrite the input {inp}: nothing written; "
                    "choose another output folder"
                )
    for out in outputs:
        if not out:
            continue
        out = Path(out)
        for inp in ins:
            if _same_file(out, inp):
                raise UsageError(
                    f"writing {out} would overwrite the input {inp}: nothing written; "
                    "choose another output name or folder"
                )


# ------------------------------------------------------------------ atomic writes
_LIVE_TEMPS: set[Path] = set()
_TERM_LOCK = threading.Lock()
_term_installed = False


def _on_sigterm(signum, frame) -> None:  # pragma: no cover - exercised in a subprocess test
    for tmp in list(_LIVE_TEMPS):
        with contextlib.suppress(OSError):
            tmp.unlink()
    signal.signal(signum, signal.SIG_DFL)
    os.kill(os.getpid(), signum)


def _install_sigterm_cleanup() -> None:
    """On SIGTERM, delete the temporary files being written, then die as usual."""
    global _term_installed
    with _TERM_LOCK:
        if _term_installed or threading.current_thread() is not threading.main_thread():
            return
        try:
            if signal.getsignal(signal.SIGTERM) is signal.SIG_DFL:
                signal.signal(signal.SIGTERM, _on_sigterm)
        except (ValueError, OSError):
            return
        _term_installed = True


def _umask() -> int:
    mask = os.umask(0)
    os.umask(mask)
    return mask


def _renamed(exc: OSError, target: Path) -> OSError:
    """The same OS error, naming the target instead of a hidden temporary file."""
    code = exc.errno if exc.errno is not None else errno.EIO
    return type(exc)(code, exc.strerror or str(exc), str(target))


def atomic_write(path: str | Path, writer: Callable[[Path], None]) -> Path:
    """Call ``writer(tmp)`` on a temporary file beside ``path``, then rename it into place.

    A reader never sees a half-written file; a failure (or SIGTERM) leaves any old file
    intact and removes the temporary file. The target is checked against the running
    command's inputs first (:func:`check_outputs`). OS errors name ``path``.
    """
    path = Path(path)
    check_outputs([path])
    _install_sigterm_cleanup()
    try:
        path.parent.mkdir(parents=True, exist_ok=True)
        fd, tmp_name = tempfile.mkstemp(prefix=f".{path.name}.", suffix=".tmp", dir=path.parent)
    except OSError as exc:
        raise _renamed(exc, path) from None
    os.close(fd)
    tmp = Path(tmp_name)
    _LIVE_TEMPS.add(tmp)
    try:
        writer(tmp)
        os.chmod(tmp, 0o666 & ~_umask())  # mkstemp makes 0600; give the usual file mode
        os.replace(tmp, path)
    except OSError as exc:
        if exc.filename and str(exc.filename) != str(path):
            raise _renamed(exc, path) from None
        raise
    finally:
        _LIVE_TEMPS.discard(tmp)
        with contextlib.suppress(OSError):
            if tmp.exists():
                tmp.unlink()
    return path


# ------------------------------------------------------------------ numbers and text cells
def _formula_like(text: str) -> bool:
    return bool(text) and text[0] in FORMULA_START and not _NUMBER.match(text.strip())


def _text_cell(value, sep: str) -> str:
    """A CSV/TSV cell for a text value: formula-like text prefixed with ``'``, quoted if needed."""
    text = str(value)
    if _formula_like(text):
        text = "'" + text
    if sep in text or '"' in text or "\n" in text or "\r" in text:
        text = '"' + text.replace('"', '""') + '"'
    return text


def _float_cells(values: np.ndarray) -> list[str]:
    fmt = f"%.{SIGNIFICANT_DIGITS}g"
    return ["" if v != v else fmt % v for v in round_significant(values).tolist()]


def _object_cell(value, sep: str) -> str:
    if value is None or value is pd.NA or value is pd.NaT:
        return ""
    if isinstance(value, float):
        if value != value:
            return ""
        return f"%.{SIGNIFICANT_DIGITS}g" % round_significant(value).item()
    if isinstance(value, (bool, int)):
        return str(value)
    return _text_cell(value, sep)


def _object_cells(values: np.ndarray, sep: str) -> list[str]:
    if pd.api.types.infer_dtype(values, skipna=True) in ("string", "empty"):
        # text columns repeat (flags, notes): format each distinct value once
        codes, uniques = pd.factorize(values)
        cells = np.asarray([_text_cell(u, sep) for u in uniques.tolist()] + [""], dtype=object)
        return cells[codes].tolist()
    return [_object_cell(v, sep) for v in values.tolist()]


def _column_kind(series: pd.Series) -> str:
    return _dtype_kind(series.dtype)


def _dtype_kind(dtype) -> str:
    kind = dtype.kind
    if kind == "f":
        return "float"
    if kind in "iu":
        return "int"
    if kind == "b":
        return "bool"
    return "object"


def _header(columns: Sequence, sep: str) -> str:
    return sep.join(_text_cell(c, sep) for c in columns) + "\n"


def _body_python(frame: pd.DataFrame, sep: str) -> str:
    """The body cell by cell (the plain reference the bulk path is tested against)."""
    cols = []
    for name in frame.columns:
        s = frame[name]
        kind = _column_kind(s)
        if kind == "float":
            cols.append(_float_cells(s.to_numpy(dtype=float, na_value=np.nan)))
        elif kind in ("int", "bool"):
            cols.append([str(v) for v in s.tolist()])
        else:
            cols.append(_object_cells(s.to_numpy(dtype=object), sep))
    if not cols:
        return "\n" * len(frame)
    return "".join(sep.join(row) + "\n" for row in zip(*cols, strict=True))


def _factorize_texts(values: np.ndarray) -> tuple[np.ndarray, list[str]]:
    """Codes and distinct texts of a text column (-1: missing), the faster way for its texts.

    Long texts (a ``flags`` column) through a dict, which hashes a text object once and
    keeps its hash; short ones through ``pandas.factorize``, faster on many distinct texts.
    """
    probe = [t for t in values[:64].tolist() if isinstance(t, str)]
    if probe and sum(map(len, probe)) > 32 * len(probe):
        return factorize_texts(values)
    codes, uniques = pd.factorize(values)
    return codes, uniques.tolist()


def _body_bulk(frame: pd.DataFrame, sep: str, head: bytes = b"") -> bytes | None:
    """``head`` and the bytes of :func:`_body_python`, laid out by :mod:`estimator.bulk_text`."""
    columns: list[tuple[str, object]] = []
    kinds = [_dtype_kind(dtype) for dtype in frame.dtypes]
    k = 0
    while k < len(kinds):
        kind = kinds[k]
        if kind == "float":  # a run of number columns: one array (not one per column)
            end = k + 1
            while end < len(kinds) and kinds[end] == "float":
                end += 1
            columns.append(("float", frame.iloc[:, k:end].to_numpy(dtype=float,
                                                                   na_value=np.nan)))
            k = end
            continue
        s = frame.iloc[:, k]
        k += 1
        if kind in ("int", "bool"):
            codes, uniques = pd.factorize(s.to_numpy())
            cells = [str(v).encode("utf-8") for v in uniques.tolist()]
        else:
            values = s.to_numpy(dtype=object)
            if pd.api.types.infer_dtype(values, skipna=True) in ("string", "empty"):
                codes, texts = _factorize_texts(values)
                cells = plain_text_cells(texts, sep, lambda t: _text_cell(t, sep))
                if cells is None:
                    cells = [_text_cell(u, sep).encode("utf-8") for u in texts]
            else:
                cells = [_object_cell(v, sep).encode("utf-8") for v in values.tolist()]
                codes = np.arange(len(cells))
        columns.append(("text", (cells, codes)))
    return body_bytes(columns, len(frame), sep, head)


def _arrow():
    try:
        import pyarrow as pa
        import pyarrow.compute as pc
    except ImportError:
        return None
    return pa, pc


def _body_arrow(frame: pd.DataFrame, sep: str, arrow) -> bytes:
    """The same text as :func:`_body_python`, with numbers formatted by pyarrow in bulk."""
    pa, pc = arrow
    cols = []
    for name in frame.columns:
        s = frame[name]
        kind = _column_kind(s)
        if kind == "float":
            cols.append(_arrow_numbers(s.to_numpy(dtype=float, na_value=np.nan), pa, pc))
        elif kind in ("int", "bool"):
            cols.append(pa.array([str(v) for v in s.tolist()], type=pa.string()))
        else:
            cols.append(_arrow_text(s.to_numpy(dtype=object), sep, pa, pc))
    if not cols:
        return b"\n" * len(frame)
    lines = pc.binary_join_element_wise(*cols, sep)
    lines = pc.binary_join_element_wise(lines, pa.scalar(""), "\n")
    chunks = lines.chunks if isinstance(lines, pa.ChunkedArray) else [lines]
    return b"".join(_string_bytes(chunk) for chunk in chunks if len(chunk))


def _arrow_numbers(values: np.ndarray, pa, pc):
    """Number cells as a pyarrow string array, the same texts as :func:`_float_cells`."""
    rounded = round_significant(values)
    arr = pc.cast(pa.array(rounded, from_pandas=True), pa.string())
    # pyarrow writes the shortest exact text ('1234570', '0.00001'); %g style for the
    # cells where %g uses an exponent ('1.23457e+06', '1e-05')
    size = np.abs(rounded)
    sci = ((size < 1e-4) & (size > 0)) | ((size >= 10.0 ** SIGNIFICANT_DIGITS) & (size < np.inf))
    if sci.any():
        texts = np.asarray(arr.to_pylist(), dtype=object)
        texts[sci] = [f"%.{SIGNIFICANT_DIGITS}g" % v for v in rounded[sci].tolist()]
        arr = pa.array(texts.tolist(), type=pa.string())
    return pc.fill_null(arr, "")


def _arrow_text(values: np.ndarray, sep: str, pa, pc):
    """Text cells by pyarrow: only the cells that need a prefix or quotes go through Python."""
    if pd.api.types.infer_dtype(values, skipna=True) not in ("string", "empty"):
        return pa.array(_object_cells(values, sep), type=pa.string())
    arr = pc.fill_null(pa.array(values, type=pa.string(), from_pandas=True), "")
    special = re.escape(sep) + '|"|\n|\r|^[=+\\-@\t]'
    hit = np.asarray(pc.match_substring_regex(arr, special), dtype=bool)
    if not hit.any():
        return arr
    texts = np.asarray(arr.to_pylist(), dtype=object)
    texts[hit] = [_text_cell(v, sep) for v in texts[hit].tolist()]
    return pa.array(texts.tolist(), type=pa.string())


def _string_bytes(array) -> bytes:
    """The concatenated UTF-8 bytes of a pyarrow string array (no copies per value)."""
    _, offsets, data = array.buffers()
    bounds = np.frombuffer(offsets, dtype=np.int32)[array.offset:array.offset + len(array) + 1]
    return memoryview(data)[int(bounds[0]):int(bounds[-1])].tobytes()


def csv_text(frame: pd.DataFrame, *, sep: str = ",", header: bool = True,
             fast: bool | None = None) -> bytes:
    """The CSV (``sep=","``) or TSV (``sep="\\t"``) bytes of ``frame``, UTF-8.

    Numbers with :data:`SIGNIFICANT_DIGITS` significant digits in ``%g`` style, NaN as
    an empty cell, booleans as ``True``/``False``; text quoted where needed and
    prefixed with ``'`` when a spreadsheet would take it for a formula. ``fast``
    chooses the bulk NumPy layout (None, the default), pyarrow (True) or plain Python
    cell by cell (False); the bytes are the same.

    >>> csv_text(pd.DataFrame({"sample": ["=1+2", "a,b"], "x": [-1.0, float("nan")]}),
    ...          fast=False).decode()
    'sample,x\\n\\'=1+2,-1\\n"a,b",\\n'
    """
    head = _header(frame.columns, sep).encode("utf-8") if header else b""
    if fast is None and len(frame):
        text = _body_bulk(frame, sep, head)
        if text is not None:
            return text
    arrow = _arrow() if fast else None
    if fast and arrow is None:
        raise ImportError("pyarrow is not installed")
    if arrow is not None and len(frame):
        return head + _body_arrow(frame, sep, arrow)
    return head + _body_python(frame, sep).encode("utf-8")


def _json_value(value) -> str:
    if value is None or value is pd.NA or value is pd.NaT:
        return "null"
    if isinstance(value, (bool, np.bool_)):
        return "true" if value else "false"
    if isinstance(value, (int, np.integer)):
        return str(int(value))
    if isinstance(value, (float, np.floating)):
        return _json_number(float(value))
    return json.dumps(str(value), ensure_ascii=False)


def _json_number(value: float) -> str:
    if not math.isfinite(value):
        return "null"
    return f"%.{SIGNIFICANT_DIGITS}g" % round_significant(value).item()


def _json_records(frame: pd.DataFrame) -> str:
    """Records, one per line, comma-separated (no brackets); numbers rounded, NaN null."""
    if not len(frame):
        return ""
    cols = []
    for name in frame.columns:
        key = json.dumps(str(name), ensure_ascii=False) + ": "
        s = frame[name]
        if _column_kind(s) == "float":
            cells = [c or "null" for c in _float_cells(s.to_numpy(dtype=float, na_value=np.nan))]
            cells = [c if c not in ("inf", "-inf") else "null" for c in cells]
        else:
            cells = [_json_value(v) for v in s.to_numpy(dtype=object).tolist()]
        cols.append([key + c for c in cells])
    return ",\n".join("{" + ", ".join(row) + "}" for row in zip(*cols, strict=True))


# ------------------------------------------------------------------ XLSX
def _sheet_title(name: str, used: set[str]) -> str:
    title = re.sub(r"[\[\]:*?/\\]", "_", str(name)).strip("'") or "sheet"
    title = title[:31]
    base, n = title, 2
    while title.lower() in used:
        suffix = f"_{n}"
        title = base[: 31 - len(suffix)] + suffix
        n += 1
    used.add(title.lower())
    return title


def _number_texts(values: np.ndarray) -> list[str]:
    """Cell texts of numbers as in CSV ('' for NaN), laid out in bulk."""
    v = np.asarray(values, dtype=float).reshape(-1)
    if not len(v):
        return []
    flat = number_fields(v[:, None], "\n").reshape(-1)  # each text after a line break
    return flat[flat != 0].tobytes().decode("ascii").split("\n")[1:]


def _check_xlsx_rows(frames: dict[str, pd.DataFrame]) -> None:
    for name, frame in frames.items():
        if len(frame) + 1 > XLSX_MAX_ROWS:
            raise UsageError(
                f"{len(frame):,} rows do not fit in one XLSX sheet ({name!r}, at most "
                f"{XLSX_MAX_ROWS - 1:,} rows); write a .csv file instead"
            )


def _write_xlsx(tmp: Path, frames: dict[str, pd.DataFrame]) -> None:
    from estimator.xlsx import Workbook

    book = Workbook(tmp, _number_texts)
    try:
        used: set[str] = set()
        for name, frame in frames.items():
            book.start_sheet(_sheet_title(name, used), list(frame.columns))
            book.write(frame)
    except BaseException:
        book.abort()
        raise
    book.close()


# ------------------------------------------------------------------ whole tables
def _suffix(path: Path) -> str:
    suffix = path.suffix.lower()
    if suffix not in TABLE_SUFFIXES:
        raise UsageError(
            f"cannot write {path.name!r}: use an output file ending in {', '.join(TABLE_SUFFIXES)}"
        )
    return suffix


def write_table(
    frame: pd.DataFrame,
    path: str | Path,
    *,
    sheets: dict[str, pd.DataFrame] | None = None,
    sheet_name: str = "table",
) -> Path:
    """Write a table by the file extension: ``.csv``, ``.tsv``, ``.xlsx`` or ``.json`` (records).

    ``sheets`` adds further named sheets to an XLSX file (ignored for the others);
    ``sheet_name`` names the first one. Atomic; see the module notes for the cell formats.
    """
    path = Path(path)
    suffix = _suffix(path)
    if suffix == ".xlsx":
        frames = {sheet_name: frame, **(sheets or {})}
        _check_xlsx_rows(frames)
        return atomic_write(path, lambda tmp: _write_xlsx(tmp, frames))
    with TableWriter(path) as out:
        out.write(frame)
    return path


class TableWriter:
    """Write one table to ``path`` chunk by chunk (CSV, TSV, JSON or XLSX), atomically.

    Use as a context manager and call :meth:`write` with frames of the same columns;
    the file appears at ``path`` only when the block ends without an error.

    >>> import tempfile, pathlib
    >>> folder = pathlib.Path(tempfile.mkdtemp())
    >>> with TableWriter(folder / "t.csv") as out:
    ...     out.write(pd.DataFrame({"a": [1.5]}))
    ...     out.write(pd.DataFrame({"a": [float("nan")]}))
    >>> (folder / "t.csv").read_text()
    'a\\n1.5\\n\\n'
    """

    def __init__(self, path: str | Path, *, sheet_name: str = "table") -> None:
        self.path = Path(path)
        self.suffix = _suffix(self.path)
        self.sheet_name = sheet_name
        self.rows = 0
        self._tmp: Path | None = None
        self._fh = None
        self._columns: list | None = None
        self._workbook = None

    def __enter__(self) -> TableWriter:
        check_outputs([self.path])
        _install_sigterm_cleanup()
        try:
            self.path.parent.mkdir(parents=True, exist_ok=True)
            fd, name = tempfile.mkstemp(prefix=f".{self.path.name}.", suffix=".tmp",
                                        dir=self.path.parent)
        except OSError as exc:
            raise _renamed(exc, self.path) from None
        self._tmp = Path(name)
        _LIVE_TEMPS.add(self._tmp)
        if self.suffix == ".xlsx":
            os.close(fd)
            from estimator.xlsx import Workbook

            self._workbook = Workbook(self._tmp, _number_texts)
        else:
            self._fh = os.fdopen(fd, "wb")
        return self

    def write(self, frame: pd.DataFrame) -> None:
        """Append the rows of ``frame`` (the first call fixes the columns)."""
        try:
            self._write(frame)
        except OSError as exc:
            raise _renamed(exc, self.path) from None

    def _write(self, frame: pd.DataFrame) -> None:
        if self._columns is not None and list(frame.columns) != self._columns:
            frame = frame.reindex(columns=self._columns)
        self._append(*self.encode(frame))

    def encode(self, frame: pd.DataFrame) -> tuple[list, int, object]:
        """``(columns, rows, data)`` that :meth:`write_encoded` appends as :meth:`write` would.

        ``data`` is the bytes of the rows (CSV/TSV without the header, JSON records) or,
        for XLSX, the frame itself. It reads nothing of this writer's state but the file
        type, so another process may do it (:func:`estimator.parallel.map_in_order`).
        """
        if self.suffix in (".csv", ".tsv"):
            data = csv_text(frame, sep="," if self.suffix == ".csv" else "\t", header=False)
        elif self.suffix == ".json":
            data = _json_records(frame).encode("utf-8")
        else:
            data = frame
        return list(frame.columns), len(frame), data

    def write_encoded(self, encoded: tuple[list, int, object]) -> bool:
        """Append rows from :meth:`encode`; False (nothing written) when their columns
        are not the file's (then :meth:`write` the frame: it puts the columns in order)."""
        if self._columns is not None and encoded[0] != self._columns:
            return False
        try:
            self._append(*encoded)
        except OSError as exc:
            raise _renamed(exc, self.path) from None
        return True

    def _append(self, columns: list, rows: int, data) -> None:
        first = self._columns is None
        if first:
            self._columns = columns
        if self.suffix in (".csv", ".tsv"):
            if first:
                sep = "," if self.suffix == ".csv" else "\t"
                self._fh.write(_header(columns, sep).encode("utf-8"))
            self._fh.write(data)
        elif self.suffix == ".json":
            if first:
                self._fh.write(b"[")
            if data:
                self._fh.write((b",\n" if self.rows else b"\n") + data)
        else:
            if first:
                self._workbook.start_sheet(_sheet_title(self.sheet_name, set()), columns)
            self._workbook.write(data)
        self.rows += rows

    def _finish(self) -> None:
        if self._columns is None:  # nothing written: an empty table
            self._write(pd.DataFrame())
        if self.suffix == ".json":
            self._fh.write(b"\n]\n" if self.rows else b"]\n")
        if self._fh is not None:
            self._fh.close()
            self._fh = None
        if self._workbook is not None:
            self._workbook.close()
            self._workbook = None
        os.chmod(self._tmp, 0o666 & ~_umask())
        os.replace(self._tmp, self.path)

    def __exit__(self, exc_type, exc, tb) -> None:
        try:
            if exc_type is None:
                try:
                    self._finish()
                except OSError as err:
                    raise _renamed(err, self.path) from None
        finally:
            if self._fh is not None:
                with contextlib.suppress(OSError):
                    self._fh.close()
            if self._workbook is not None:
                with contextlib.suppress(Exception):
                    self._workbook.abort()
            if self._tmp is not None:
                _LIVE_TEMPS.discard(self._tmp)
                with contextlib.suppress(OSError):
                    if self._tmp.exists():
                        self._tmp.unlink()


def read_json_object(path: Path, expected: str) -> dict:
    """The one JSON object in ``path``; anything else is one line naming the file.

    ``expected`` says what the object holds (e.g. ``"property: value"``) for the
    message when the file holds another JSON value. Deep nesting and integers too
    large to read are reported as invalid JSON, never as a traceback.
    """
    label = Path(path).name
    try:
        raw = json.loads(Path(path).read_text(encoding="utf-8"))
    except (UnicodeDecodeError, json.JSONDecodeError, RecursionError, ValueError) as exc:
        raise InputFileError(f"{label}: not valid JSON ({str(exc)[:80]})") from None
    if not isinstance(raw, dict):
        raise InputFileError(f"{label}: expected one JSON object of {expected}")
    return raw
