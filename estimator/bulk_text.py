"""CSV/TSV text of a whole table at once: cells laid out in byte matrices by NumPy.

A low-level helper of :mod:`estimator.files` (it imports nothing from ``estimator``).
Every cell becomes a fixed-width field of bytes, padded with NUL bytes; a row is its
fields side by side, each after a separator (the first excepted), then a newline; the
body is the matrix with the NUL bytes dropped (``bytes.translate``). A text column
with wide cells (a ``flags`` column) is not padded into the matrix: a marker byte holds
its place and its cells are joined in between. Numbers are formatted with array
arithmetic and table look-ups, not one Python call per cell, and give the same text as
``"%.6g" % value`` of the value rounded to six significant digits, about 25 times
faster than formatting cell by cell (a whole ``predict`` table, text and layout
included: about 7 times). Text columns are formatted once per distinct value.

The few number cells that ``%g`` writes with an exponent (below 1e-4 or from 1e6 up,
and infinities) go through Python's own formatting.
"""

from __future__ import annotations

from collections.abc import Callable, Sequence
from functools import cache

import numpy as np

__all__ = [
    "SIGNIFICANT_DIGITS", "body_bytes", "factorize_texts", "number_fields", "plain_text_cells",
    "round_significant",
]

#: Significant digits of every number written (the layout of :func:`number_fields`
#: is made for six).
SIGNIFICANT_DIGITS = 6


def round_significant(values, digits: int = SIGNIFICANT_DIGITS) -> np.ndarray:
    """Round each value to ``digits`` significant digits (NaN and inf kept, no ``-0``).

    >>> round_significant([59.644137, -0.000123456789, 0.0, -0.0, 1234567.0]).tolist()
    [59.6441, -0.000123457, 0.0, 0.0, 1234570.0]
    >>> float(round_significant(2.0 / 3.0))
    0.666667
    """
    given = np.asarray(values, dtype=float)
    a = given.reshape(-1)
    out = a + 0.0  # also turns -0.0 into 0.0
    nz = np.isfinite(a) & (a != 0)
    x = a[nz] if not nz.all() else a
    if not len(x):
        return out.reshape(given.shape)
    with np.errstate(over="ignore", invalid="ignore", divide="ignore"):
        d = (digits - 1) - np.floor(np.log10(np.abs(x)))
        # scale by an exact power of ten (up to 1e22), so that m / 10**d is the
        # double nearest the decimal m * 10**-d
        p = np.power(10.0, np.minimum(np.abs(d), 308.0))
        up = d >= 0
        r = np.empty_like(x)
        np.multiply(x, p, out=r, where=up)
        np.divide(x, p, out=r, where=~up)
        np.rint(r, out=r)
        np.divide(r, p, out=r, where=up)
        np.multiply(r, p, out=r, where=~up)
    bad = ~np.isfinite(r)
    if bad.any():
        r[bad] = x[bad]
    out[nz] = r + 0.0
    return out.reshape(given.shape)


#: Bytes of a number field: separator, sign and "0.000" (8), upper and lower digits (4 + 4).
NUMBER_WIDTH = 16
#: Codes of the cells that are not ``m`` with a point (in place of the decimals ``d``).
_ZERO, _EMPTY = 10, 11
#: floor(m / 1000) == (m * _DIV1000) >> 30 for 0 <= m <= 10**6 (checked in the tests).
_DIV1000 = 1073742


def _packed(texts: list[str], width: int) -> np.ndarray:
    """ASCII texts of at most ``width`` (4 or 8) bytes as NUL-padded native words."""
    word = np.uint32 if width == 4 else np.uint64
    return np.array(texts, dtype=f"S{width}").view(word)


def _hi_texts(d: int, lo_zero: bool, digits: list[str]) -> list[str]:
    """Texts of the upper three digits of the mantissa (each of 000 to 999), ``d`` decimals."""
    if d == _ZERO:
        return ["0"] * 1000
    if d > _ZERO:
        return [""] * 1000
    if d <= 3:
        return digits  # all three are integer digits
    if d >= 6:
        return [t.rstrip("0") for t in digits] if lo_zero else digits  # all are decimals
    cut = 6 - d  # integer digits in this group
    out = []
    for text in digits:
        decimals = text[cut:].rstrip("0") if lo_zero else text[cut:]
        out.append(text[:cut] + ("." + decimals if decimals else ""))
    return out


def _lo_texts(d: int, digits: list[str]) -> list[str]:
    """Texts of the lower three digits of the mantissa (each of 000 to 999), ``d`` decimals."""
    if d >= _ZERO:
        return [""] * 1000
    if d == 0:
        return digits
    if d >= 3:
        decimals = [t.rstrip("0") for t in digits]
        return decimals if d > 3 else ["." + t if t else "" for t in decimals]
    cut = 3 - d
    out = []
    for text in digits:
        decimals = text[cut:].rstrip("0")
        out.append(text[:cut] + ("." + decimals if decimals else ""))
    return out


def _lead_text(sep: str, negative: bool, d: int) -> str:
    """Separator, sign and the "0." and zeros before the digits of a value below 0.1."""
    if d >= _ZERO:
        return sep  # zero ("0" is the upper digits) and the empty cells: no sign
    return sep + "-" * negative + ("0." + "0" * (d - 6) if d >= 6 else "")


def _decimal_exponents(binary_exponents: np.ndarray) -> np.ndarray:
    """The integers q with 10**q <= 2**k < 10**(q + 1) for the exponents k of doubles.

    ``floor(k log10(2))``: exact for -1074 <= k <= 1023 (checked in the tests).

    >>> _decimal_exponents(np.array([-4, -1, 0, 3, 4, 10])).tolist()
    [-2, -1, 0, 0, 1, 3]
    """
    return np.floor(np.asarray(binary_exponents) * np.log10(2.0)).astype(np.intp)


@cache
def _exponent_tables() -> tuple[np.ndarray, np.ndarray, np.ndarray, np.ndarray]:
    """Tables of a value's class, looked up by its sign and binary exponent.

    ``e`` is the top 12 bits of the double (sign, exponent), ``threshold[e]`` the power
    of ten that splits the values of that exponent in two decades, and
    ``j = 2 e + (|v| >= threshold[e])`` the class: its decimals ``d`` (0 to 9: fixed
    notation with six digits), or zero, or NaN, or an exponent form and infinity (left
    to Python). By ``j``: ``scale[j]`` (``10**d``; 0 for zero and NaN, inf for the
    forms left to Python, so that their scaled value is not below 10**6), ``d1000[j]``
    (``1000 d``; ``1000 _ZERO`` for zero, ``1000 _EMPTY`` otherwise), and
    ``lead_code[j]`` (sign * 12 + d, the index of the lead word).
    """
    biased = np.arange(2048)
    q = _decimal_exponents(biased - 1023)
    normal = (biased > 0) & (biased < 2047)
    threshold = np.full(2048, np.inf)
    for b in np.flatnonzero(normal & (q >= -6) & (q <= 6)).tolist():
        threshold[b] = float(f"1e{q[b] + 1}")  # the nearest double to the power of ten
    threshold[0] = 5e-324  # zero is below it, the subnormal numbers are not
    x = q[:, None] + np.array([0, 1])  # floor(log10(|v|)) below and above the threshold
    fixed = normal[:, None] & (x >= -4) & (x <= 5)
    d = np.where(fixed, 5 - x, _EMPTY).reshape(-1)
    scale = np.where(fixed, 10.0 ** np.clip(5 - x, 0, 9), np.inf).reshape(-1)  # exact powers
    d[0], scale[0] = _ZERO, 0.0  # zero
    scale[2 * 2047] = 0.0  # NaN (not above inf); infinity is above
    negative = np.repeat([0, 1], 4096)
    d = np.tile(d, 2)
    return (np.tile(threshold, 2), np.tile(scale, 2), 1000 * d,
            negative * (_EMPTY + 1) + d)


@cache
def _word_tables(sep: str) -> tuple[np.ndarray, np.ndarray, np.ndarray, np.ndarray]:
    """Words of a number's parts and the offsets of the upper-digit words.

    ``lead[sign * 12 + d]`` (separator, sign, "0.000"), ``hi[2000 d + 1000 (lo == 0) + hi]``,
    ``lo[1000 d + lo]`` and ``hi_base[1000 d + lo] = 2000 d + 1000 (lo == 0)``, for the
    decimals ``d`` and the codes :data:`_ZERO` and :data:`_EMPTY`.
    """
    codes = range(_EMPTY + 1)
    digits = [f"{h:03d}" for h in range(1000)]
    lead = _packed([_lead_text(sep, bool(neg), d) for neg in (0, 1) for d in codes], 8)
    hi = _packed([t for d in codes for lo_zero in (False, True)
                  for t in _hi_texts(d, lo_zero, digits)], 4)
    lo = _packed([t for d in codes for t in _lo_texts(d, digits)], 4)
    hi_base = (2000 * np.arange(_EMPTY + 1)[:, None] + 1000 * (np.arange(1000) == 0)).reshape(-1)
    return lead, hi, lo, hi_base


@cache
def _tables(sep: str) -> tuple[np.ndarray, ...]:
    """:func:`_exponent_tables`, the lead word of each class, and :func:`_word_tables`."""
    threshold, scale, d1000, lead_code = _exponent_tables()
    lead, hi, lo, hi_base = _word_tables(sep)
    return threshold, scale, d1000, lead[lead_code], lead, hi, lo, hi_base


#: Values formatted per slice, so that the temporaries stay in the processor's cache.
_SLICE = 16384


def number_fields(values: np.ndarray, sep: str, *, first: bool = False) -> np.ndarray:
    """Text of every value rounded to six significant digits, each after a separator.

    The text is ``"%.6g" % v`` of the value ``v`` rounded as :func:`round_significant`
    rounds it ("" for NaN).

    Parameters
    ----------
    values : ndarray of float, shape (n, c)
        The values.
    sep : str
        One ASCII character written before each value.
    first : bool
        No separator before the values of the first column (they start the row).

    Returns
    -------
    ndarray of uint8, shape ``(n, c * NUMBER_WIDTH)``
        The bytes of the separator and each value's text, with NUL bytes in between
        (dropped when the body is assembled).

    Notes
    -----
    The decimal exponent ``x = floor(log10(|v|))`` comes from the binary exponent (the
    top bits of the double) and one comparison with a power of ten, looked up in
    tables (no logarithm). Rounding scales ``|v|`` by the exact power of ten ``10**d``,
    ``d = 5 - x``, that leaves six digits before the point and takes the nearest
    integer ``m`` (the operations of :func:`round_significant`). In fixed notation
    (``%g`` between 1e-4 and 1e6, where ``d`` is 0 to 9) the text is ``m`` with the
    point ``d`` digits from the right, trailing decimal zeros dropped, after "0." and
    zeros for ``d`` > 5: three words looked up by ``d`` and the upper and lower three
    digits of ``m``. Other values (``%g`` writes an exponent there) are formatted by
    Python.

    Examples
    --------
    >>> f = number_fields(np.array([[-0.0001234567, 59.644137, 1234567.0, np.nan, -0.0, 100.0,
    ...                              12.0, 0.1]]), ",", first=True)
    >>> bytes(f[0]).replace(b"\\0", b"").decode()
    '-0.000123457,59.6441,1.23457e+06,,0,100,12,0.1'
    """
    values = np.ascontiguousarray(values, dtype=float)
    n, c = values.shape
    words = np.empty((n, c, 2), dtype=np.uint64)  # lead (8 bytes), upper and lower digits
    _number_rows(values, words, sep)
    out = words.view(np.uint8).reshape(n, c * NUMBER_WIDTH)
    if first and c:
        out[:, 0] = 0  # the separator before the first column
    return out


def _number_rows(values: np.ndarray, words: np.ndarray, sep: str) -> None:
    """Fill ``words`` (uint64, shape (n, c, 2); rows may lie apart) from ``values`` (n, c)."""
    n, c = values.shape
    step = max(1, _SLICE // max(c, 1))
    for start in range(0, n, step):
        rows = slice(start, start + step)
        _number_words(values[rows].reshape(-1), words[rows], sep)


def _number_words(v: np.ndarray, words: np.ndarray, sep: str) -> None:
    """Fill ``words`` (uint64, shape (r, c, 2)) with the fields of the values ``v`` (r c)."""
    threshold, scale, d1000_of, lead_of, lead, hi_words, lo_words, hi_base = _tables(sep)
    shape = words.shape[:2]
    a = np.abs(v)
    e = v.view(np.int64) >> 52
    e &= 4095  # sign and binary exponent
    j = e << 1
    j += a >= threshold[e]  # the class of each value (see _exponent_tables)
    m = scale[j]
    m *= a
    np.rint(m, out=m)  # the six digits (zero for zero and NaN; not below 1e6 for the rest)
    d1000 = d1000_of[j]
    words[:, :, 0] = lead_of[j].reshape(shape)
    ok = m < 1e6
    plain = None if ok.all() else _rare(v, m, d1000, words, np.flatnonzero(~ok), lead)
    mi = m.astype(np.intp)
    hi = mi * _DIV1000
    hi >>= 30  # the upper three digits
    low = hi * -1000
    low += mi
    low += d1000  # index of the lower three digits' word
    w32 = words.view(np.uint32)  # (r, c, 4): lead, lead, upper digits, lower digits
    hi += hi_base[low]
    w32[:, :, 2] = hi_words[hi].reshape(shape)
    w32[:, :, 3] = lo_words[low].reshape(shape)
    if plain is not None and len(plain):
        texts = [sep + f"{x:.6g}" for x in round_significant(v[plain]).tolist()]
        raw = np.array([t.encode("ascii") for t in texts], dtype=f"S{NUMBER_WIDTH}")
        words.view(np.uint8)[np.unravel_index(plain, shape)] = (
            raw.view(np.uint8).reshape(-1, NUMBER_WIDTH))


def _rare(v: np.ndarray, m: np.ndarray, d1000: np.ndarray, words: np.ndarray,
          pos: np.ndarray, lead: np.ndarray) -> np.ndarray:
    """Fix the values whose scaled value is not below 1e6; return those left to Python.

    A carry (99.99997 rounds to 100.000) leaves one decimal less; NaN is an empty cell;
    999999.7 (which rounds to 1e+06), infinities and the exponent forms go to Python.
    """
    mp = m[pos]
    dp = d1000[pos]
    carry = np.isfinite(mp) & (dp > 0)
    if carry.any():
        pc = pos[carry]
        m[pc] = 1e5
        d1000[pc] -= 1000
        words[(*np.unravel_index(pc, words.shape[:2]), 0)] = (
            lead[(v[pc] < 0) * (_EMPTY + 1) + d1000[pc] // 1000])
    m[pos[np.isnan(mp)]] = 0.0  # NaN: the class's words are already empty
    plain = pos[~carry & ~np.isnan(mp)]
    m[plain] = 0.0
    d1000[plain] = 1000 * _EMPTY
    return plain


def factorize_texts(values: np.ndarray) -> tuple[np.ndarray, list[str]]:
    """Codes and distinct texts of an object array of texts (-1: a missing value).

    Like ``pandas.factorize`` (first appearance order), through a dict: a text that
    repeats as one object (a ``flags`` column) is hashed once, not once per row.

    >>> codes, texts = factorize_texts(np.array(["b", None, "a", "b", float("nan")], dtype=object))
    >>> codes.tolist(), texts
    ([0, -1, 1, 0, -1], ['b', 'a'])
    """
    index = dict.fromkeys(values.tolist())
    found = list(index)
    texts = [t for t in found if isinstance(t, str)]
    if len(texts) == len(found):
        index.update(zip(found, range(len(found)), strict=True))
    else:  # missing values (None, NaN, NA) among the texts
        numbers = iter(range(len(texts)))
        index.update((t, next(numbers) if isinstance(t, str) else -1) for t in found)
    codes = np.fromiter(map(index.__getitem__, values.tolist()), dtype=np.intp,
                        count=len(values))
    return codes, texts


def plain_text_cells(texts: Sequence[str], sep: str,
                     formula_safe: Callable[[str], str]) -> list[bytes] | None:
    """Encoded text cells without Python work per cell, or None when that cannot be done.

    Done when every text is ASCII with no separator, quote, line break or NUL (none
    needs quoting): the texts are encoded in one step; only the texts that start like
    a formula go through ``formula_safe``.
    """
    texts = list(texts)
    if not texts:
        return []
    joined = "\n".join(texts)
    if (not joined.isascii() or joined.count("\n") != len(texts) - 1
            or any(ch in joined for ch in (sep, '"', "\r", "\0"))):
        return None
    raw = joined.encode("ascii")
    cells = raw.split(b"\n")
    chars = np.frombuffer(raw + b"\n", dtype=np.uint8)
    starts = np.flatnonzero(chars == ord("\n"))[:-1] + 1
    first = np.concatenate((chars[:1], chars[starts]))  # "\n" for an empty text
    for i in np.flatnonzero(np.isin(first, _FORMULA_BYTES)).tolist():
        cells[i] = formula_safe(texts[i]).encode("utf-8")
    return cells


#: First bytes of the texts that may need a prefix (``formula_safe`` decides).
_FORMULA_BYTES = np.frombuffer(b"=+-@\t", dtype=np.uint8)
#: Text columns wider than this many bytes are not padded into the row matrix: a
#: marker byte holds their place and their cells are joined in between.
_WIDE = 24
#: The marker: a byte that UTF-8 text never holds.
_MARK = b"\xff"
#: Rows laid out at a time by :func:`body_bytes`.
_ROWS = 2048


def _text_table(every: bytes, sizes: np.ndarray) -> np.ndarray:
    """Cells (all their bytes, and their sizes) as NUL-padded rows, and an empty last row."""
    table = np.zeros((len(sizes) + 1, max(int(sizes.max(initial=0)), 1)), dtype=np.uint8)
    table[:-1][np.arange(table.shape[1]) < sizes[:, None]] = np.frombuffer(every, dtype=np.uint8)
    return table


def body_bytes(columns: Sequence[tuple[str, object]], n: int, sep: str,
               head: bytes = b"") -> bytes | None:
    """``head`` and the CSV/TSV body of ``n`` rows from prepared columns (None: not done here).

    ``columns`` holds ``(kind, data)`` pairs in table order:

    * ``("float", values)``: float array, one column or ``(n, c)`` for c columns (rounded
      and formatted here);
    * ``("text", (cells, codes))``: the distinct cells, already formatted and encoded,
      and an int code per row (-1: empty cell);
    * ``("fields", matrix)``: the cells as NUL-padded bytes, one row per row.

    Returns None when a text cell holds a NUL byte (the layout drops NUL bytes) or the
    separator is not one ASCII character.

    Notes
    -----
    The narrow cells of a row (numbers, short texts, separators, the line break) are
    fields side by side in a byte matrix, compacted by dropping its NUL bytes; the
    matrix of a few thousand rows is one buffer, filled in place block after block
    (number fields start 8-byte aligned). A text column wider than :data:`_WIDE` bytes
    is not padded into that matrix (its widest cell would set the width of every row):
    a marker byte takes its place, the compacted bytes are split at the markers and
    the column's cells joined in between.
    """
    if len(sep.encode("utf-8")) != 1 or sep in "\0\n":
        return None
    if not columns:
        return head + b"\n" * n
    texts: dict[int, tuple] = {}  # cells, picks, widest, their bytes, their sizes
    for i, (kind, data) in enumerate(columns):
        if kind == "text":
            cells, codes = data
            every = b"".join(cells)
            if b"\0" in every:
                return None
            cells = list(cells)
            picks = np.asarray(codes)
            picks = np.where(picks < 0, len(cells), picks)
            sizes = np.fromiter(map(len, cells), dtype=np.intp, count=len(cells))
            texts[i] = (cells, picks, int(sizes.max(initial=0)), every, sizes)
    fields = [data for kind, data in columns if kind == "fields"]
    wide = {i for i, t in texts.items() if t[2] > _WIDE}
    if wide and (any(_MARK in t[3] for i, t in texts.items() if i not in wide)
                 or any((np.asarray(f) == _MARK[0]).any() for f in fields)):
        wide = set()  # bytes that are not UTF-8 text: no marker
    # the row's pieces at their offsets: ("numbers", values, first), ("bytes", matrix)
    # or ("table", table, picks), and constant bytes (separators, line break, marker)
    layout: list[tuple[int, tuple]] = []
    constants: list[tuple[int, bytes]] = []
    by_row = []  # the cells of each wide column, one per row
    offset = 0
    i = 0
    while i < len(columns):
        kind, data = columns[i]
        j = i + 1
        if kind == "float":
            while j < len(columns) and columns[j][0] == "float":
                j += 1
            block = [np.asarray(columns[k][1], dtype=float) for k in range(i, j)]
            values = (block[0] if len(block) == 1 and block[0].ndim == 2
                      else np.column_stack(block))  # rows are copied in slices when formatted
            offset = -(-offset // 8) * 8  # aligned words (NUL bytes in between are dropped)
            layout.append((offset, ("numbers", values, i == 0)))
            offset += NUMBER_WIDTH * values.shape[1]
        else:
            if i:
                constants.append((offset, sep.encode()))
                offset += 1
            if i in wide:
                cells, picks = texts[i][:2]
                by_row.append(np.array([*cells, b""], dtype=object)[picks])
                constants.append((offset, _MARK))
                offset += 1
            else:
                if kind == "text":
                    table = _text_table(*texts[i][3:])
                    width = table.shape[1]
                    piece = ("table", table, texts[i][1])
                else:
                    piece = ("bytes", np.asarray(data, dtype=np.uint8))
                    width = piece[1].shape[1]
                layout.append((offset, piece))
                offset += width
        i = j
    constants.append((offset, b"\n"))
    width = -(-(offset + 1) // 8) * 8
    rows = min(n, _ROWS)
    buffer = bytearray(rows * width)  # NUL bytes, and reused: no fresh pages per block
    matrix = np.frombuffer(buffer, dtype=np.uint8).reshape(rows, width)
    for at, text in constants:
        matrix[:, at:at + len(text)] = np.frombuffer(text, dtype=np.uint8)
    cells_by_row = np.column_stack(by_row) if by_row else None
    out: list = [head]
    for start in range(0, n, _ROWS):  # a few thousand rows at a time: cache-sized matrices
        block = slice(start, start + _ROWS)
        k = min(_ROWS, n - start)
        for at, piece in layout:
            if piece[0] == "numbers":
                values = piece[1][block]
                c = values.shape[1]
                area = matrix[:k, at:at + NUMBER_WIDTH * c]
                _number_rows(values, area.view(np.uint64).reshape(k, c, 2), sep)
                if piece[2]:
                    area[:, 0] = 0  # no separator before the first column
            elif piece[0] == "table":
                table = piece[1]
                matrix[:k, at:at + table.shape[1]] = table[piece[2][block]]
            else:
                matrix[:k, at:at + piece[1].shape[1]] = piece[1][block]
        full = buffer if k == rows else buffer[:k * width]
        narrow = full.translate(None, b"\0")
        if cells_by_row is None:
            out.append(narrow)
            continue
        between = bytes(narrow).split(_MARK)  # bytes split faster than a bytearray
        cells = cells_by_row[block].reshape(-1).tolist()
        joined: list = [None] * (len(between) + len(cells))
        joined[0::2] = between
        joined[1::2] = cells
        out += joined
    return b"".join(out)
