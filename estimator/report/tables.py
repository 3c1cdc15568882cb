"""Format tables for the terminal; writing lives in :mod:`estimator.files`.

``atomic_write``, ``write_table`` and ``TABLE_SUFFIXES`` are re-exported here so
older imports keep working; new code imports them from :mod:`estimator.files`.
"""

from __future__ import annotations

import math
import re

import numpy as np
import pandas as pd

from estimator.files import TABLE_SUFFIXES, atomic_write, write_table

__all__ = ["TABLE_SUFFIXES", "atomic_write", "format_columns", "format_table", "plus_minus",
           "write_table"]


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
    t = text.split("±")[0].strip()
    try:
        float(t) if t not in ("-", "–", "") else 0.0
    except ValueError:
        return False
    return True


def plus_minus(values: pd.Series, errors: pd.Series, digits: int = 4) -> pd.Series:
    """Cells 'value ± error' (see :func:`estimator.report.labels.plus_minus`)."""
    from estimator.report.labels import plus_minus as pm

    out = [pm(v, e, missing="-", digits=digits) for v, e in
           zip(values.to_numpy(dtype=float), errors.to_numpy(dtype=float), strict=True)]
    return pd.Series(out, index=values.index, dtype=object)


def format_columns(frame: pd.DataFrame, *, width: int = 100, digits: int = 4,
                   last_runs_on: bool = False) -> str:
    """One row per record, columns side by side, wrapped into blocks to fit ``width``.

    Long headers wrap onto several lines at word boundaries; when the columns do not
    fit the width, they continue in further blocks below, each repeating the first
    (identifying) column. Numbers are right-aligned. With ``last_runs_on`` the last
    column (a long text such as a method's name) always ends the first block's lines,
    which may then run past ``width``, so that a record is never split from it.
    """
    import textwrap

    if frame.empty:
        return "(no rows)"
    cells = frame.map(lambda v: _fmt(v, digits))
    cols = list(cells.columns)
    widths, heads = [], []
    for col in cols:
        values = cells[col].tolist()
        longest_word = max((len(w) for w in str(col).split()), default=1)
        w = max([len(v) for v in values] + [longest_word, min(len(str(col)), 12)])
        widths.append(w)
        # a unit in brackets stays on one line
        glued = re.sub(r"\[[^\]]*\]", lambda m: m.group(0).replace(" ", "\u00a0"), str(col))
        w = max(w, *(len(x) for x in glued.split(" ")))
        widths[-1] = w
        heads.append([h.replace("\u00a0", " ") for h in textwrap.wrap(glued, w)] or [""])
    numeric = [all(_looks_numeric(v) for v in cells[c]) for c in cols]
    first, rest = 0, list(range(1, len(cols)))
    tail = [rest.pop()] if last_runs_on and len(rest) > 1 else []
    for i in tail:  # its rule only as long as its header: its cells run on unpadded
        widths[i] = max(len(h) for h in heads[i])
    blocks: list[list[int]] = []
    while rest:
        used, block = widths[first], []
        while rest and (not block or used + 2 + widths[rest[0]] <= width):
            used += 2 + widths[rest[0]]
            block.append(rest.pop(0))
        blocks.append(block)
    if not blocks:
        blocks = [[]]
    blocks[0] += tail
    out = []
    for block in blocks:
        idx = [first, *block]
        depth = max(len(heads[i]) for i in idx)
        for line in range(depth):
            parts = []
            for i in idx:
                pad = depth - len(heads[i])  # headers sit on the rule
                text = heads[i][line - pad] if line >= pad else ""
                parts.append(text.rjust(widths[i]) if numeric[i] else text.ljust(widths[i]))
            out.append("  ".join(parts).rstrip())
        out.append("  ".join("-" * widths[i] for i in idx))
        for r in range(len(cells)):
            parts = [cells.iat[r, i].rjust(widths[i]) if numeric[i] else
                     cells.iat[r, i].ljust(widths[i]) for i in idx]
            out.append("  ".join(parts).rstrip())
        out.append("")
    return "\n".join(out).rstrip()
