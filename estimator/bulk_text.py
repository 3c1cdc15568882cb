"""CSV/TSV text of a whole table at once: cells laid out in byte matrices by NumPy.

A low-level helper of :mod:`estimator.files` (it imports nothing from ``estimator``).
Every cell becomes a fixed-width field of bytes, padded with NUL bytes; a row is its
fields side by side, each after a separator (the first excepted), then a newline; the
body is the matrix with the NUL bytes dropped. Numbers are formatted with array arithmetic,
not one Python call per cell, and give the same text as ``"%.6g" % value`` of the
value rounded to six significant digits, about 15 times faster than formatting cell by
cell (a whole ``predict`` table, text and layout included: about 4 times). Text
columns are formatted once per distinct value.

The few number cells that ``%g`` writes with an exponent (below 1e-4 or from 1e6 up,
and infinities) go through Python's own formatting.
"""

from __future__ import annotations

from collections.abc import Callable, Sequence
from functools import cache

import numpy as np

__all__ = [
    "SIGNIFICANT_DIGITS", "body_bytes", "number_fields", "plain_text_fields", "round_significant",
    "text_fields",
]

#: Significant digits of every number written (the layout of :func:`number_fields`
#: is made for six).
SIGNIFICANT_DIGITS = 6
#: Bytes of a number field: separator, sign and "0.000" (8), upper and lower digits (4 + 4).
NUMBER_WIDTH = 16
#: 10**k, exact in double precision for k <= 22.
_POW10 = 10.0 ** np.arange(23)


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


def _packed(texts: list[str], width: int) -> np.ndarray:
    """ASCII texts of at most ``width`` (4 or 8) bytes as NUL-padded native words."""
    raw = np.array([t.encode("ascii") for t in texts], dtype=f"S{width}")
    word = np.uint32 if width == 4 else np.uint64
    return raw.view(np.uint8).reshape(-1, width).copy().view(word).reshape(-1)


def _hi_text(d: int, lo_zero: bool, hi: int) -> str:
    """Text of the upper three digits ``hi`` of the mantissa, ``d`` decimals in all."""
    text = f"{hi:03d}"
    if d <= 3:
        return text  # all three are integer digits
    if d >= 6:
        return text.rstrip("0") if lo_zero else text  # all three are decimals
    cut = 6 - d  # integer digits in this group
    decimals = text[cut:].rstrip("0") if lo_zero else text[cut:]
    return text[:cut] + ("." + decimals if decimals else "")


def _lo_text(d: int, lo: int) -> str:
    """Text of the lower three digits ``lo`` of the mantissa, ``d`` decimals in all."""
    text = f"{lo:03d}"
    if d == 0:
        return text
    if d >= 3:
        decimals = text.rstrip("0")
        return decimals if d > 3 or not decimals else "." + decimals
    cut = 3 - d
    decimals = text[cut:].rstrip("0")
    return text[:cut] + ("." + decimals if decimals else "")


@cache
def _tables(sep: str) -> tuple[np.ndarray, np.ndarray, np.ndarray, int]:
    """Words of a number's parts: lead (separator, sign, "0.000"), upper and lower digits."""
    lead = _packed([(sep if with_sep else "") + "-" * neg + ("0." + "0" * (d - 6) if d >= 6
                                                            else "")
                    for with_sep in (0, 1) for neg in (0, 1) for d in range(10)], 8)
    hi = _packed([_hi_text(d, bool(lo_zero), h) for d in range(10) for lo_zero in (0, 1)
                  for h in range(1000)], 4)
    lo = _packed([_lo_text(d, g) for d in range(10) for g in range(1000)], 4)
    return lead, hi, lo, int(_packed(["0"], 4)[0])


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
    Rounding scales ``|v|`` by the exact power of ten ``10**d`` that leaves six digits
    before the point and takes the nearest integer ``m`` (the operations of
    :func:`round_significant`). In fixed notation (``%g`` between 1e-4 and 1e6, where
    ``d`` is 0 to 9) the text is ``m`` with the point ``d`` digits from the right,
    trailing decimal zeros dropped, after "0." and zeros for ``d`` > 5: three words
    looked up by ``d`` and the upper and lower three digits of ``m``. Other values
    (``%g`` writes an exponent there) are formatted by Python.

    Examples
    --------
    >>> f = number_fields(np.array([[-0.0001234567, 59.644137, 1234567.0, np.nan, -0.0, 100.0,
    ...                              12.0, 0.1]]), ",", first=True)
    >>> bytes(f[0]).replace(b"\\0", b"").decode()
    '-0.000123457,59.6441,1.23457e+06,,0,100,12,0.1'
    """
    values = np.asarray(values, dtype=float)
    n, c = values.shape
    flat = values.reshape(-1)
    words = np.empty((n * c, 2), dtype=np.uint64)  # lead (8 bytes), upper and lower digits
    with_sep = np.ones((1, c), dtype=np.intp)
    if first:
        with_sep[0, 0] = 0
    with_sep = np.broadcast_to(with_sep * 20, (n, c)).reshape(-1)
    for start in range(0, n * c, _SLICE):
        part = slice(start, start + _SLICE)
        _number_words(flat[part], with_sep[part], words[part], sep)
    out = words.view(np.uint8).reshape(n * c, NUMBER_WIDTH)
    return out.reshape(n, c * NUMBER_WIDTH)


def _number_words(v: np.ndarray, lead_base: np.ndarray, words: np.ndarray, sep: str) -> None:
    """Fill ``words`` (uint64, shape (k, 2)) with the fields of the values ``v``."""
    lead, hi_words, lo_words, zero_word = _tables(sep)
    a = np.abs(v)
    with np.errstate(divide="ignore", invalid="ignore"):
        x = np.floor(np.log10(a))
    candidate = (x >= -4) & (x <= 5)  # False for NaN, inf and 0
    d = np.where(candidate, 5.0 - x, 0.0).astype(np.intp)
    m = np.rint(np.where(candidate, a, 1e5) * _POW10[d])
    carry = m >= 1e6  # 99.99997 rounds to 100.000: one decimal less
    if carry.any():
        m[carry] = 1e5
        d -= carry
    fixed = candidate & (d >= 0)  # 999999.7 rounds to 1e+06
    d *= fixed
    hi = np.floor(m * 1e-3)  # m < 1e6: exact after the floor
    lo = (m - hi * 1e3).astype(np.intp)
    hi = hi.astype(np.intp)
    d1000 = d * 1000
    lead_index = lead_base + (v < 0) * 10 + d
    words[:, 0] = lead[lead_index]
    w32 = words.view(np.uint32)  # (k, 4): lead, lead, upper digits, lower digits
    w32[:, 2] = hi_words[2 * d1000 + (lo == 0) * 1000 + hi]
    w32[:, 3] = lo_words[d1000 + lo]
    plain = np.flatnonzero(~fixed)  # zero, NaN and the exponent forms: few, by index
    if len(plain):
        pv = v[plain]
        words[plain, 0] = lead[lead_base[plain]]  # the separator alone
        w32[plain, 2] = np.where(pv == 0, zero_word, 0)
        w32[plain, 3] = 0
        other = plain[(pv != 0) & ~np.isnan(pv)]
        if len(other):
            texts = [(sep if b else "") + f"{x:.6g}"
                     for x, b in zip(round_significant(v[other]).tolist(),
                                     lead_base[other].tolist(), strict=True)]
            raw = np.array([t.encode("ascii") for t in texts], dtype=f"S{NUMBER_WIDTH}")
            words.view(np.uint8).reshape(-1, NUMBER_WIDTH)[other] = (
                raw.view(np.uint8).reshape(-1, NUMBER_WIDTH))


def text_fields(cells: Sequence[bytes], codes: np.ndarray) -> np.ndarray:
    """Fields of encoded text cells: ``cells[codes[i]]`` NUL-padded, shape ``(n, width)``.

    ``codes`` equal to -1 give an empty field.
    """
    table = np.array([*cells, b""], dtype=bytes)
    width = max(table.dtype.itemsize, 1)
    table = table.astype(f"S{width}")
    picked = table[np.where(codes < 0, len(cells), codes)]
    return picked.view(np.uint8).reshape(-1, width)


def plain_text_fields(texts: Sequence[str], codes: np.ndarray, sep: str,
                      formula_safe: Callable[[str], str]) -> np.ndarray | None:
    """Fields of text cells without Python work per cell, or None when that cannot be done.

    Done when every text is ASCII with no separator, quote, line break or NUL (none
    needs quoting): the texts become a character matrix in one step; only the texts
    that start like a formula go through ``formula_safe``. ``codes`` index ``texts``
    per row (-1: empty cell).
    """
    texts = list(texts)
    joined = "\n".join(texts)
    if (not joined.isascii() or joined.count("\n") != max(len(texts) - 1, 0)
            or any(ch in joined for ch in (sep, '"', "\r", "\0"))):
        return None
    chars = np.array([*texts, ""], dtype=str)
    width = chars.dtype.itemsize // 4
    first = chars.view(np.uint32).reshape(-1, width)[:, 0]
    risky = np.flatnonzero(np.isin(first, [ord(c) for c in "=+-@\t"]))
    if len(risky):
        for i in risky.tolist():
            texts[i] = formula_safe(texts[i])
        chars = np.array([*texts, ""], dtype=str)
        width = chars.dtype.itemsize // 4
    matrix = chars.view(np.uint32).reshape(-1, width).astype(np.uint8)
    return matrix[np.where(codes < 0, len(texts), codes)]


def body_bytes(columns: Sequence[tuple[str, object]], n: int, sep: str) -> bytes | None:
    """The CSV/TSV body of ``n`` rows from prepared columns; None when it cannot be done here.

    ``columns`` holds ``(kind, data)`` pairs in table order:

    * ``("float", values)``: float array (rounded and formatted here);
    * ``("text", (cells, codes))``: the distinct cells, already formatted and encoded,
      and an int code per row (-1: empty cell);
    * ``("fields", matrix)``: the cells as NUL-padded bytes, one row per row.

    Returns None when a text cell holds a NUL byte (the layout drops NUL bytes) or the
    separator is not one ASCII character.
    """
    if len(sep.encode("utf-8")) != 1 or sep in "\0\n":
        return None
    if not columns:
        return b"\n" * n
    # pieces of a row, in order: ("numbers", values, first) or ("bytes", matrix)
    pieces: list[tuple] = []
    # a separator before every cell but the first; consecutive number columns are
    # formatted as one block
    i = 0
    while i < len(columns):
        kind, data = columns[i]
        j = i + 1
        if kind == "float":
            while j < len(columns) and columns[j][0] == "float":
                j += 1
            block = [np.asarray(columns[k][1], dtype=float) for k in range(i, j)]
            values = np.column_stack(block) if len(block) > 1 else block[0][:, None]
            pieces.append(("numbers", values, i == 0))
        else:
            if kind == "text":
                cells, codes = data
                if any(b"\0" in c for c in cells):
                    return None
                data = text_fields(cells, np.asarray(codes))
            if i:
                pieces.append(("bytes", np.full((n, 1), ord(sep), np.uint8)))
            pieces.append(("bytes", data))
        i = j
    pieces.append(("bytes", np.full((n, 1), ord("\n"), np.uint8)))
    out = []
    for start in range(0, n, _ROWS):  # a few thousand rows at a time: cache-sized matrices
        rows = slice(start, start + _ROWS)
        parts = [number_fields(p[1][rows], sep, first=p[2]) if p[0] == "numbers" else p[1][rows]
                 for p in pieces]
        flat = np.concatenate(parts, axis=1).reshape(-1)
        out.append(flat[flat != 0].tobytes())
    return b"".join(out)


#: Rows laid out at a time by :func:`body_bytes`.
_ROWS = 2048
