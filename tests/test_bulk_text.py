"""Bulk CSV/TSV text (estimator/bulk_text.py): the same bytes as formatting cell by cell."""

from __future__ import annotations

import numpy as np
import pandas as pd
import pytest

from estimator.bulk_text import number_fields
from estimator.files import csv_text, round_significant

HOSTILE = ["=cmd|' /C calc'!A0", "+1+1", "-2+3", "@SUM(A1)", "\tx", "\r=1", "plain", "a,b",
           'say "hi"', "line\nbreak", "naïve µ", "-5", "", None]


def _edge_values() -> np.ndarray:
    # the edges of %g's fixed notation and of six-digit rounding (carries to a new digit)
    edges = [0.0, -0.0, 1e-4, 9.99995e-5, 9.999949e-5, 0.000123456789, 0.1, 1.0, 99.99997,
             99.99994, 999999.4, 999999.5, 999999.7, 1e6, 123456.5, 123457.5, 0.5, 2.5,
             1e-5, 1e-300, 5e-324, 1.7976931348623157e308, np.inf, -np.inf, np.nan,
             12.0, 120.0, 0.00012, 100000.0, 1000.0, 10.0, 0.001, 0.01]
    edges += [-v for v in edges]
    powers = [s * 10.0 ** k for k in range(-7, 9) for s in (1.0, 0.9999995, 1.0000005, 9.999995)]
    return np.array(edges + powers + [-p for p in powers])


def _random_values(n: int, seed: int) -> np.ndarray:
    rng = np.random.default_rng(seed)
    v = rng.standard_normal(n) * 10.0 ** rng.integers(-9, 10, n)
    v[::13] = np.nan
    v[::29] = np.round(v[::29], 2)  # short decimals: trailing zeros to drop
    v[::31] = np.round(v[::31])  # whole numbers
    return v


@pytest.mark.parametrize("seed", [1, 2, 3])
@pytest.mark.parametrize("sep", [",", "\t"])
def test_bulk_writer_writes_the_bytes_of_the_cell_by_cell_writer(seed, sep):
    # regression test: the bulk layout against the plain Python formatting of every cell
    values = np.concatenate([_edge_values(), _random_values(5000, seed)])
    n = len(values)
    rng = np.random.default_rng(seed)
    frame = pd.DataFrame({
        "sample": [f"{HOSTILE[i % len(HOSTILE)]}{i}" for i in range(n)],
        "x": values,
        "y": rng.permutation(values),
        "n": np.arange(n) - 7,
        "ok": np.arange(n) % 3 == 0,
        "flags": [HOSTILE[i % len(HOSTILE)] for i in range(n)],
        "mixed": [[1.5, "=x", None, 3, True, float("nan")][i % 6] for i in range(n)],
        "z": rng.permutation(values),
    })
    assert csv_text(frame, sep=sep) == csv_text(frame, sep=sep, fast=False)
    last_text = frame[["z", "flags"]]  # a text column ends the row
    assert csv_text(last_text, sep=sep) == csv_text(last_text, sep=sep, fast=False)
    one = frame[["x"]]
    assert csv_text(one, sep=sep) == csv_text(one, sep=sep, fast=False)


def test_every_number_reads_back_as_printf_formats_its_rounded_value():
    # reference: Python's '%.6g' (the C library's printf rules) of each rounded value
    values = np.concatenate([_edge_values(), _random_values(20000, 7)])
    fields = number_fields(values[:, None], ",", first=True)
    texts = [bytes(row).replace(b"\0", b"").decode() for row in fields]
    expected = ["" if v != v else f"{v:.6g}" for v in round_significant(values).tolist()]
    assert texts == expected


def test_empty_and_text_only_tables():
    assert csv_text(pd.DataFrame({"a": []})) == csv_text(pd.DataFrame({"a": []}), fast=False)
    frame = pd.DataFrame({"a": ["x", None, "=y"]})
    assert csv_text(frame) == b"a\nx\n\n'=y\n"
    assert csv_text(pd.DataFrame(index=range(2))) == b"\n\n\n"


def test_a_nul_byte_in_text_falls_back_to_the_cell_by_cell_writer():
    frame = pd.DataFrame({"a": ["x\0y", "z"], "b": [1.5, np.nan]})
    assert csv_text(frame) == csv_text(frame, fast=False) == b"a,b\nx\0y,1.5\nz,\n"


def test_xlsx_number_texts_are_the_csv_cells():
    # regression test: the bulk texts that the XLSX writer stores against Python's '%.6g'
    from estimator.files import _float_cells, _number_texts

    values = np.concatenate([_edge_values(), _random_values(3000, 5)])
    assert _number_texts(values) == _float_cells(values)
    assert _number_texts(np.array([])) == []
