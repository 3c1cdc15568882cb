"""Seeded fuzzing of every command's reader: any bytes give a result or one line, never a crash.

Each example starts from a valid file for the reader (a profile, a lots file, a
diesel, a model file, a scenario) and applies edits drawn from a pool of hostile
tokens (booleans, NaN, huge numbers, math markup, formula starters, stray quotes,
NUL and Latin-1 bytes, deep brackets), or replaces the file with random bytes.
The command must exit 0, 1 or 2; on 1 or 2 print exactly one stderr line that is
not "internal error"; and leave the input's bytes unchanged.
"""

from __future__ import annotations

import hashlib
import json
from pathlib import Path

import pytest
from click.testing import CliRunner
from hypothesis import HealthCheck, given, seed, settings
from hypothesis import strategies as st

from estimator.cli import cli

ROOT = Path(__file__).resolve().parents[1]
DEMO = ROOT / "data" / "demo"

PROFILE = "sample,C16:0,C18:0,C18:1,C18:2,C18:3\nA,10,4,60,20,6\nB,5,2,63,20,10\n"
LOTS = ("lot,price_per_t,ffa_wt_pct,water_wt_pct,available_t,C16:0,C18:0,C18:1,C18:2,C18:3\n"
        "A,900,0.5,0.05,100,10,4,60,20,6\nB,950,1.0,0.05,200,5,2,63,20,10\n")
PROFILE_JSON = json.dumps([{"sample": "A", "composition": {"C16:0": 10, "C18:1": 70,
                                                           "C18:2": 20}}])
DIESEL = (DEMO / "diesel_winter.json").read_text(encoding="utf-8")
PEAKS = "".join((ROOT / "data" / "examples" / "peaks_runs.csv").read_text(
    encoding="utf-8").splitlines(keepends=True)[:12])
REFERENCE = str(ROOT / "data" / "examples" / "peaks_reference.csv")
SCENARIO = json.dumps({"title": "t", "lots": {"file": "lots.csv", "specs": ["en14214"]},
                       "mix": {"spec": "en14214", "max_cfpp_C": -5}})

TOKENS = ["", "true", "NaN", "null", "-1", "1e999", "1" * 60, "inf", "#N/A", "=cmd|' /C calc'!A0",
          "$\\frac{$", "%", "10.5%", ",", ";", "\t", "\n", "\r", '"', "{", "[[[[[[", "]", "}",
          ":", "0", "-", "NA", "\x00", "\ufeff", "é", "C18:1", "other", "sample", "1,5"]

# (command line before the file, file name, seed text, command line after the file)
READERS = {
    "predict profile csv": (["predict"], "p.csv", PROFILE, []),
    "predict profile json": (["predict"], "p.json", PROFILE_JSON, []),
    "compare lots": (["compare"], "lots.csv", LOTS, []),
    "mix lots": (["mix"], "lots.csv", LOTS, []),
    "blend diesel": (["blend", "--oil", "rapeseed", "--diesel"], "diesel.json", DIESEL, []),
    "report scenario": (["report"], "scenario.json", SCENARIO, ["-o", "OUT"]),
    "peaks runs": (["peaks", "--reference", REFERENCE], "runs.csv", PEAKS, []),
}


@st.composite
def hostile_bytes(draw, text: str) -> bytes:
    if draw(st.integers(0, 9)) == 0:
        return draw(st.binary(max_size=300))
    edits = draw(st.lists(st.tuples(st.integers(0, max(len(text) - 1, 0)),
                                    st.integers(0, 4), st.sampled_from(TOKENS)),
                          min_size=1, max_size=4))
    for pos, cut, token in edits:
        text = text[:pos] + token + text[pos + cut:]
    encoding = draw(st.sampled_from(["utf-8", "utf-8", "latin-1", "utf-16"]))
    return text.encode(encoding, errors="replace")


def check(tmp_path: Path, reader: str, data: bytes) -> None:
    before, name, _, after = READERS[reader]
    folder = tmp_path / hashlib.sha256(data).hexdigest()[:12]
    folder.mkdir(exist_ok=True)
    path = folder / name
    path.write_bytes(data)
    if reader == "report scenario":
        (folder / "lots.csv").write_text(LOTS, encoding="utf-8")
    args = [*before, str(path), *[str(folder / a) if a == "OUT" else a for a in after]]
    result = CliRunner().invoke(cli, args)
    assert result.exit_code in (0, 1, 2), (args, result.output, result.exception)
    if result.exit_code:
        lines = [line for line in result.stderr.splitlines() if line.strip()]
        assert len(lines) == 1, (data, result.stderr)
        assert "internal error" not in lines[0], (data, lines[0])
    assert path.read_bytes() == data


@pytest.mark.parametrize("reader", list(READERS))
def test_fuzzed_input_gives_a_result_or_one_line_and_leaves_the_file_unchanged(tmp_path,
                                                                                 reader):
    text = READERS[reader][2]

    @seed(20261202)
    @settings(max_examples=25, deadline=None, database=None,
              suppress_health_check=[HealthCheck.function_scoped_fixture,
                                     HealthCheck.too_slow])
    @given(data=hostile_bytes(text))
    def fuzz(data: bytes) -> None:
        check(tmp_path, reader, data)

    fuzz()
