"""Format tables for the terminal; writing lives in :mod:`estimator.files`.

``atomic_write``, ``write_table`` and ``TABLE_SUFFIXES`` are re-exported here so
older imports keep working; new code imports them from :mod:`estimator.files`.
"""

from __future__ import annotations

import math

import numpy as np
import pandas as pd

from estimator.files import TABLE_SUFFIXES, atomic_write, write_table

__all__ = ["TABLE_SUFFIXES", "atomic_write", "format_table", "plus_minus", "write_table"]


def _fmt(value: object, digits: int = 4) -> str:
    if isinstance(value, (float, np.floating)):
        if math.isnan(value):
            return "-"
        if value == 0:
            return "0"
        mag = abs(value)
        if mag >= 1000:
            return f"{value:.0f}"
        return f"{value:.{max(0, digits - 1 - int(math.floor(math.log10(mag))))}f}" if mag >= 1e-3 \
            else f"{value:.2e}"
    if isinstance(value, (bool, np.bool_)):
        return "yes" if value else "no"
    return "" if value is None else str(value)


def format_table(frame: pd.DataFrame, *, transpose: bool | None = None, digits: int = 4) -> str:
    """A plain fixed-width text rendering of a table for the terminal.

    With ``transpose`` (default: when there are more columns than rows and more than
    eight columns) samples become columns and quantities rows, which keeps a wide
    property table readable in 80-100 columns.
    """
    if frame.empty:
        return "(no rows)"
    if transpose is None:
        transpose = frame.shape[1] > 8 and frame.shape[1] > frame.shape[0]
    cells = frame.map(lambda v: _fmt(v, digits))
    if transpose:
        first = cells.columns[0]
        body = cells.set_index(first).T
        body.index.name = first
        body = body.reset_index()
        cells = body
        cells.columns = [str(c) for c in cells.columns]
    cols = [str(c) for c in cells.columns]
    widths = [max(len(c), *(len(v) for v in cells[col])) for c, col in zip(cols, cells.columns)]
    numeric = [all(_looks_numeric(v) for v in cells[col]) for col in cells.columns]
    lines = ["  ".join(c.ljust(w) for c, w in zip(cols, widths)).rstrip()]
    lines.append("  ".join("-" * w for w in widths))
    for _, row in cells.iterrows():
        parts = [v.rjust(w) if num else v.ljust(w) for v, w, num in zip(row, widths, numeric)]
        lines.append("  ".join(parts).rstrip())
    return "\n".join(lines)


def _looks_numeric(text: str) -> bool:
    t = text.replace("±", "").replace(" ", "")
    try:
        float(t.split("±")[0]) if t not in ("-", "") else 0.0
    except ValueError:
        return False
    return True


def plus_minus(values: pd.Series, errors: pd.Series, digits: int = 3) -> pd.Series:
    """Cells 'value ± error' with the value rounded to the error's first significant digit."""
    out = []
    for v, e in zip(values.to_numpy(dtype=float), errors.to_numpy(dtype=float), strict=True):
        if math.isnan(v):
            out.append("-")
        elif math.isnan(e) or e <= 0:
            out.append(_fmt(v, digits + 1))
        else:
            decimals = max(0, 1 - int(math.floor(math.log10(e))))
            out.append(f"{v:.{decimals}f} ± {e:.{decimals}f}")
    return pd.Series(out, index=values.index, dtype=object)
