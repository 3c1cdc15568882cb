"""Bulk CSV/TSV text (estimator/bulk_text.py): the same bytes as formatting cell by cell."""

from __future__ import annotations

import csv
import io
from fractions import Fraction

import numpy as np
import pandas as pd
import pytest

from estimator.bulk_text import (
    _DIV1000,
    _decimal_exponents,
    body_bytes,
    factorize_texts,
    number_fields,
)
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


# ------------------------------------------------------------------ wide text columns
WIDE_TEXTS = [
    "cfpp_C: outside ramos2009 domain (C16:0-C18:3 main esters < 80 wt %, LCSF > 7 wt %)",
    "=HYPERLINK(\"http://example.invalid\", \"click\") and a long tail of words " * 3,
    "+" + "plain words without any separator at all " * 4,
    "-12.5 is a number only at the start of this long explanatory text",
    "naïve µ-text with non-ASCII letters: 20 °C, ±0.5 K, Ölsäure-Methylester",
    'say "hi" three times: "hi", "hi", "hi" (quotes double in CSV)',
    "a line\nbreak and a\r\ncarriage return inside one long cell of text",
    "\ttab first, then a long text that a spreadsheet must not run as a formula",
    "@SUM(A1:A9) is how a long cell could start, so it gets a prefix",
    "",
    None,
    "short",
]


def _wide_frame(n: int, seed: int) -> pd.DataFrame:
    rng = np.random.default_rng(seed)
    values = np.concatenate([_edge_values(), _random_values(n, seed)])[:n]
    pick = rng.integers(0, len(WIDE_TEXTS), n)
    return pd.DataFrame({
        "sample": [f"{HOSTILE[i % len(HOSTILE)]}{i}" for i in range(n)],
        "x": values,
        "flags": [WIDE_TEXTS[k] for k in pick.tolist()],  # wide text in the middle
        "y": rng.permutation(values),
        "ok": np.arange(n) % 3 == 0,
        "notes": [WIDE_TEXTS[k] for k in rng.permutation(pick).tolist()],  # wide text last
    })


@pytest.mark.parametrize("sep", [",", "\t"])
@pytest.mark.parametrize("columns", [
    ["sample", "x", "flags", "y", "ok", "notes"],  # wide texts in the middle and at the end
    ["flags", "x", "y"],  # a wide text starts the row
    ["notes"],  # only a wide text
    ["flags", "notes"],  # two wide texts side by side
    ["x", "notes", "y", "flags"],
])
def test_wide_text_columns_give_the_bytes_of_the_cell_by_cell_writer(sep, columns):
    # regression test: the wide-text layout against the plain Python formatting of every cell
    frame = _wide_frame(5000, seed=4)[columns]
    assert csv_text(frame, sep=sep) == csv_text(frame, sep=sep, fast=False)
    one = frame.iloc[:1]
    assert csv_text(one, sep=sep) == csv_text(one, sep=sep, fast=False)
    empty = frame.iloc[:0]
    assert csv_text(empty, sep=sep) == csv_text(empty, sep=sep, fast=False)


def test_wide_text_cells_read_back_through_the_csv_module():
    # reference: Python's csv module (RFC 4180 quoting) reads every cell back; formula-like
    # text comes back with the "'" prefix (OWASP CSV-injection guidance, common practice)
    frame = _wide_frame(500, seed=9)[["sample", "flags", "x", "notes"]]
    text = csv_text(frame).decode("utf-8")
    rows = list(csv.reader(io.StringIO(text, newline="")))
    assert rows[0] == ["sample", "flags", "x", "notes"]
    assert len(rows) == len(frame) + 1
    for row, (flags, notes) in zip(rows[1:], frame[["flags", "notes"]].itertuples(index=False),
                                   strict=True):
        for cell, value in ((row[1], flags), (row[3], notes)):
            if pd.isna(value):
                assert cell == ""
            elif value[:1] in ("=", "+", "@", "\t") or value.startswith("-12.5 is"):
                assert cell == "'" + value
            else:
                assert cell == value


def test_plain_wide_texts_stay_plain_and_get_no_quotes():
    # regression test: texts with no separator, quote or line break are written as they are
    texts = ["x" * 40 + str(i % 7) for i in range(300)]
    frame = pd.DataFrame({"a": np.arange(300) / 7.0, "long": texts, "b": np.ones(300)})
    body = csv_text(frame).decode().splitlines()[1:]
    assert [line.split(",")[1] for line in body] == texts
    assert csv_text(frame) == csv_text(frame, fast=False)


def test_the_marker_byte_in_a_narrow_cell_keeps_wide_cells_in_the_matrix():
    # regression test: 0xFF never occurs in UTF-8 text; other bytes from a caller are
    # laid out without the marker
    wide = [b"w" * 40]
    for narrow in (("text", ([b"a\xffb"], np.zeros(3, dtype=np.intp))),
                   ("fields", np.frombuffer(b"a\xffb" * 3, dtype=np.uint8).reshape(3, 3))):
        columns = [narrow, ("text", (wide, np.zeros(3, dtype=np.intp)))]
        assert body_bytes(columns, 3, ",") == (b"a\xffb," + wide[0] + b"\n") * 3


def test_factorize_texts_gives_the_codes_of_pandas_factorize():
    # reference: pandas.factorize (first-appearance order, -1 for missing values)
    values = np.array(["b", None, "a", "b", float("nan"), pd.NA, "", "a", ""], dtype=object)
    codes, texts = factorize_texts(values)
    expected_codes, expected = pd.factorize(values)
    assert codes.tolist() == expected_codes.tolist()
    assert texts == expected.tolist()
    codes, texts = factorize_texts(np.array([], dtype=object))
    assert codes.tolist() == [] and texts == []


# ------------------------------------------------------------------ the number layout
def test_division_by_1000_through_a_multiply_and_shift_is_exact():
    # regression test: every six-digit mantissa (and the carry 10**6) splits as m // 1000 does
    m = np.arange(10**6 + 1, dtype=np.int64)
    assert np.array_equal((m * _DIV1000) >> 30, m // 1000)


def test_decimal_exponents_of_powers_of_two_are_exact():
    # reference: exact rational arithmetic, 10**q <= 2**k < 10**(q + 1) for every double's k
    k = np.arange(-1074, 1024)
    for kk, q in zip(k.tolist(), _decimal_exponents(k).tolist(), strict=True):
        assert Fraction(10) ** q <= Fraction(2) ** kk < Fraction(10) ** (q + 1)


def test_numbers_next_to_every_power_of_ten_read_as_printf_writes_them():
    # reference: Python's '%.6g' of each rounded value, on both sides of each decade edge
    powers = 10.0 ** np.arange(-8, 9)
    near = [np.nextafter(p, 0.0) for p in powers] + [np.nextafter(p, np.inf) for p in powers]
    near += [p * (1 - 5e-7) for p in powers] + [p * (1 + 5e-7) for p in powers]
    values = np.array(list(powers) + near)
    values = np.concatenate([values, -values, [5e-324, -5e-324, 2.2250738585072014e-308]])
    fields = number_fields(values[:, None], ",", first=True)
    texts = [bytes(row).replace(b"\0", b"").decode() for row in fields]
    expected = ["" if v != v else f"{v:.6g}" for v in round_significant(values).tolist()]
    assert texts == expected


def test_the_first_column_has_no_separator_and_the_others_have_one():
    f = number_fields(np.array([[1.5, np.nan, -2.0], [np.nan, 0.0, 1e-9]]), ";", first=True)
    assert [bytes(r).replace(b"\0", b"").decode() for r in f] == ["1.5;;-2", ";0;1e-09"]


@pytest.mark.parametrize("n", [1, 2, 2047, 2048, 2049, 4097])
def test_tables_of_every_column_mix_and_block_edge_give_the_cell_by_cell_bytes(n):
    # regression test: random column orders and kinds, row counts on both sides of the
    # block size, against the plain Python formatting of every cell
    rng = np.random.default_rng(n)
    values = np.concatenate([_edge_values(), _random_values(max(n, 10), n)])
    makers = {
        "float": lambda: rng.choice(values, n),
        "int": lambda: rng.integers(-1000, 1000, n),
        "bool": lambda: rng.integers(0, 2, n).astype(bool),
        "short": lambda: [HOSTILE[k] for k in rng.integers(0, len(HOSTILE), n).tolist()],
        "wide": lambda: [WIDE_TEXTS[k] for k in rng.integers(0, len(WIDE_TEXTS), n).tolist()],
        "plain": lambda: [f"lot-{k}" for k in rng.integers(0, 50, n).tolist()],
    }
    for trial in range(4):
        kinds = rng.choice(list(makers), size=int(rng.integers(1, 9)))
        frame = pd.DataFrame({f"{kind}{i}": makers[kind]() for i, kind in enumerate(kinds)})
        for sep in (",", "\t"):
            assert csv_text(frame, sep=sep) == csv_text(frame, sep=sep, fast=False), (
                trial, list(kinds), sep)
