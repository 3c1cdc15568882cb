"""The file-writing layer (estimator/files.py): exact fast tables, atomic writes, no overwritten
inputs, no live formulas."""

from __future__ import annotations

import os
import signal
import subprocess
import sys
import time
from pathlib import Path

import numpy as np
import pandas as pd
import pytest

from estimator import files, xlsx
from estimator.errors import UsageError
from estimator.files import (
    TableWriter,
    atomic_write,
    check_outputs,
    csv_text,
    guard_inputs,
    round_significant,
    write_table,
)

HOSTILE = ["=cmd|' /C calc'!A0", "+1+1", "-2+3", "@SUM(A1)", "\tx", "\r=1", "plain", "a,b",
           'say "hi"', "line\nbreak"]

PATHS = [pytest.param(False, id="python")]
try:
    import pyarrow  # noqa: F401
    PATHS.append(pytest.param(True, id="pyarrow"))
except ImportError:
    pass


def _values(n: int = 4000, seed: int = 3) -> np.ndarray:
    rng = np.random.default_rng(seed)
    v = rng.standard_normal(n) * 10.0 ** rng.integers(-9, 10, n)
    v[::17] = np.nan
    v[5] = 0.0
    v[6] = -0.0
    v[7] = 999999.7  # rounds up to 1e+06
    return v


@pytest.mark.parametrize("fast", PATHS)
def test_csv_read_back_equals_the_values_to_six_significant_digits(tmp_path, fast):
    values = _values()
    frame = pd.DataFrame({"sample": [f"s{i}" for i in range(len(values))], "x": values})
    path = tmp_path / "t.csv"
    path.write_bytes(csv_text(frame, fast=fast))
    back = pd.read_csv(path)["x"].to_numpy()
    # reference: Python's own '%.6g' formatting of each value (the C library printf rules)
    expected = np.array([float(f"{v:.6g}") if v == v else np.nan for v in values])
    assert np.array_equal(np.isnan(back), np.isnan(values))  # NaN is an empty cell
    ok = ~np.isnan(values)
    np.testing.assert_allclose(back[ok], expected[ok], rtol=1e-12)
    np.testing.assert_allclose(back[ok], values[ok], rtol=5e-6)  # half a unit in the 6th digit
    text = path.read_text()
    assert ",-0\n" not in text and ",nan" not in text.lower()


def test_pyarrow_and_python_write_the_same_bytes():
    pytest.importorskip("pyarrow")
    values = _values(20000, seed=11)
    frame = pd.DataFrame({"sample": [HOSTILE[i % len(HOSTILE)] + str(i) for i in range(20000)],
                          "x": values, "n": np.arange(20000), "ok": np.arange(20000) % 2 == 0,
                          "note": ["", "outside domain", None, "x"] * 5000})
    assert csv_text(frame, fast=True) == csv_text(frame, fast=False)
    assert csv_text(frame, sep="\t", fast=True) == csv_text(frame, sep="\t", fast=False)


@pytest.mark.parametrize("suffix", [".csv", ".tsv", ".json", ".xlsx"])
def test_every_format_reads_back_the_rounded_numbers_and_empty_nan(tmp_path, suffix):
    values = _values(300)
    frame = pd.DataFrame({"sample": [f"s{i}" for i in range(300)], "x": values})
    path = write_table(frame, tmp_path / f"t{suffix}")
    if suffix == ".json":
        back = pd.read_json(path, orient="records")
    elif suffix == ".xlsx":
        back = pd.read_excel(path)
    else:
        back = pd.read_csv(path, sep="\t" if suffix == ".tsv" else ",")
    assert list(back["sample"]) == list(frame["sample"])
    got = back["x"].to_numpy(dtype=float)
    assert np.array_equal(np.isnan(got), np.isnan(values))
    ok = ~np.isnan(values)
    np.testing.assert_allclose(got[ok], round_significant(values)[ok], rtol=1e-12)


def test_formula_like_text_is_prefixed_in_csv_and_numbers_stay_numbers(tmp_path):
    # OWASP "CSV Injection": prefix cells starting with = + - @ tab CR with a single quote
    frame = pd.DataFrame({"sample": HOSTILE, "value": [-5.0] * len(HOSTILE),
                          "text_number": ["-5", "+3.5", "1e-3", "-", "--1", "=1", "@", "", "x",
                                          "-1e5"]})
    path = write_table(frame, tmp_path / "t.csv")
    back = pd.read_csv(path, keep_default_na=False)
    for original, written in zip(HOSTILE, back["sample"], strict=True):
        if original[0] in "=+-@\t\r":
            assert written == "'" + original
        else:
            assert written == original
    assert back["value"].dtype.kind in "if" and (back["value"] == -5.0).all()  # a number
    assert list(back["text_number"]) == ["-5", "+3.5", "1e-3", "'-", "'--1", "'=1", "'@", "",
                                         "x", "-1e5"]


def test_xlsx_holds_no_formula_cell_and_keeps_numbers_numeric(tmp_path):
    from openpyxl import load_workbook

    frame = pd.DataFrame({"sample": HOSTILE, "value": np.linspace(-5, 5, len(HOSTILE))})
    extra = pd.DataFrame({"=supplier": ["=HYPERLINK(\"http://x\")"], "n": [-1.0]})
    path = write_table(frame, tmp_path / "t.xlsx", sheets={"=extra": extra})
    book = load_workbook(path)
    cells = [c for ws in book.worksheets for row in ws.iter_rows() for c in row]
    assert cells and not [c.coordinate for c in cells if c.data_type == "f"]
    sheet = book.worksheets[0]
    assert sheet["A2"].value == HOSTILE[0] and sheet["A2"].data_type == "s"
    assert sheet["B2"].value == -5 and sheet["B2"].data_type == "n"
    assert book.worksheets[1]["A1"].value == "=supplier"


def test_xlsx_beyond_the_sheet_row_limit_is_one_line_suggesting_csv(tmp_path, monkeypatch):
    monkeypatch.setattr(files, "XLSX_MAX_ROWS", 10)
    monkeypatch.setattr(xlsx, "MAX_ROWS", 10)
    frame = pd.DataFrame({"x": np.arange(10.0)})  # 10 rows + header = 11 > 10
    with pytest.raises(UsageError, match=r"do not fit in one XLSX sheet .*write a \.csv file"):
        write_table(frame, tmp_path / "t.xlsx")
    with pytest.raises(UsageError, match=r"write a \.csv file instead"):
        with TableWriter(tmp_path / "s.xlsx") as out:
            out.write(frame.iloc[:5])
            out.write(frame.iloc[5:])
    assert list(tmp_path.iterdir()) == []  # nothing written, no temporary file left


def test_table_writer_appends_pieces_into_one_file(tmp_path):
    frame = pd.DataFrame({"sample": ["a", "b", "c"], "x": [1.0, np.nan, 3.25]})
    for suffix in (".csv", ".json", ".xlsx", ".tsv"):
        path = tmp_path / f"t{suffix}"
        with TableWriter(path) as out:
            out.write(frame.iloc[:1])
            out.write(frame.iloc[1:])
        whole = tmp_path / f"w{suffix}"
        write_table(frame, whole)
        if suffix == ".xlsx":
            pd.testing.assert_frame_equal(pd.read_excel(path), pd.read_excel(whole))
        else:
            assert path.read_bytes() == whole.read_bytes()


def test_an_os_error_names_the_target_not_the_hidden_temporary_file(tmp_path):
    target = tmp_path / "out.csv"

    def fail(tmp: Path) -> None:
        raise OSError(28, "No space left on device", str(tmp))

    with pytest.raises(OSError) as info:
        atomic_write(target, fail)
    assert info.value.filename == str(target) and info.value.strerror == "No space left on device"
    assert list(tmp_path.iterdir()) == []


def test_sigterm_during_a_write_leaves_no_temporary_file(tmp_path):
    target = tmp_path / "out.csv"
    code = (
        "import time, sys\n"
        "from estimator.files import atomic_write\n"
        "def slow(tmp):\n"
        "    tmp.write_text('half')\n"
        "    print('writing', flush=True)\n"
        "    time.sleep(60)\n"
        f"atomic_write({str(target)!r}, slow)\n"
    )
    with subprocess.Popen([sys.executable, "-c", code], stdout=subprocess.PIPE,
                          text=True) as proc:
        assert proc.stdout.readline().strip() == "writing"
        assert [p.name for p in tmp_path.iterdir() if p.name.endswith(".tmp")]
        proc.send_signal(signal.SIGTERM)
        assert proc.wait(timeout=30) == -signal.SIGTERM
    deadline = time.monotonic() + 5
    while list(tmp_path.iterdir()) and time.monotonic() < deadline:
        time.sleep(0.05)
    assert list(tmp_path.iterdir()) == []


def test_an_output_that_is_an_input_by_link_is_refused_naming_both(tmp_path):
    source = tmp_path / "lots.csv"
    source.write_text("sample,C18:1\na,100\n")
    link = tmp_path / "link.csv"
    link.symlink_to(source)
    hard = tmp_path / "hard.csv"
    os.link(source, hard)
    for out in (source, link, hard, tmp_path / "sub" / ".." / "lots.csv"):
        with pytest.raises(UsageError) as info:
            check_outputs([tmp_path / "fine.csv", out], [source])
        assert str(out) in str(info.value) and str(source) in str(info.value)
    check_outputs([tmp_path / "other.csv"], [source])  # no error
    with pytest.raises(UsageError, match="writing into"):
        check_outputs([], [source], folders=[tmp_path])


def test_guarded_inputs_are_never_replaced_by_an_atomic_write(tmp_path):
    source = tmp_path / "lots.csv"
    source.write_text("keep\n")
    with guard_inputs([source]), pytest.raises(UsageError, match="would overwrite the input"):
        atomic_write(source, lambda tmp: tmp.write_text("lost\n"))
    assert source.read_text() == "keep\n"
    atomic_write(source, lambda tmp: tmp.write_text("mine\n"))  # outside the guard: allowed
    assert source.read_text() == "mine\n"


def test_round_significant_matches_printf_rounding():
    # reference: '%.6g' of the C library via Python's % operator
    values = _values(2000, seed=5)
    got = round_significant(values)
    ok = ~np.isnan(values)
    expected = np.array([float(f"{v:.6g}") for v in values[ok]])
    np.testing.assert_allclose(got[ok], expected, rtol=1.1e-6)  # ties may round either way
    assert not np.signbit(round_significant([-0.0]))[0]


@pytest.mark.parametrize("suffix", [".csv", ".json", ".xlsx"])
def test_a_column_mixing_text_and_numbers_keeps_each_cell_kind(tmp_path, suffix):
    frame = pd.DataFrame({"m": ["a", 1.23456789, 5, True, None, float("nan"), "=2"]})
    path = write_table(frame, tmp_path / f"t{suffix}")
    if suffix == ".csv":
        assert path.read_text() == "m\na\n1.23457\n5\nTrue\n\n\n'=2\n"
    elif suffix == ".json":
        assert pd.read_json(path)["m"].tolist()[:5] == ["a", 1.23457, 5, True, None]
    else:
        from openpyxl import load_workbook

        cells = [c.value for c in load_workbook(path).active["A"]]
        assert cells == ["m", "a", 1.23457, 5, True, None, None, "=2"]


@pytest.mark.parametrize("suffix", [".csv", ".tsv", ".json", ".xlsx"])
def test_encoded_pieces_write_the_same_file_as_frames(tmp_path, suffix):
    # regression test: encode + write_encoded (the path of forked workers) = write
    a = pd.DataFrame({"sample": ["=A1", "b"], "x": [1.25, np.nan]})
    b = pd.DataFrame({"sample": ["c"], "x": [-3.0]})
    with TableWriter(tmp_path / f"plain{suffix}") as out:
        out.write(a)
        out.write(b.iloc[:0])
        out.write(b)
    with TableWriter(tmp_path / f"coded{suffix}") as out:
        for frame in (a, b.iloc[:0], b):
            assert out.write_encoded(out.encode(frame))
    if suffix == ".xlsx":
        pd.testing.assert_frame_equal(pd.read_excel(tmp_path / "coded.xlsx"),
                                      pd.read_excel(tmp_path / "plain.xlsx"))
    else:
        assert (tmp_path / f"coded{suffix}").read_bytes() == (
            tmp_path / f"plain{suffix}").read_bytes()


def test_an_encoded_piece_with_other_columns_is_refused_so_write_can_order_them(tmp_path):
    with TableWriter(tmp_path / "t.csv") as out:
        assert out.write_encoded(out.encode(pd.DataFrame({"a": [1.0], "b": [2.0]})))
        assert not out.write_encoded(out.encode(pd.DataFrame({"b": [4.0], "a": [3.0]})))
        out.write(pd.DataFrame({"b": [4.0], "a": [3.0]}))
    assert (tmp_path / "t.csv").read_text() == "a,b\n1,2\n3,4\n"
