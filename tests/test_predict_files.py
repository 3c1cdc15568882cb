"""predict from files to a file in pieces (estimator/predict_files.py): the same table as
estimating the whole input at once."""

from __future__ import annotations

import numpy as np
import pandas as pd
import pytest

from estimator.errors import ProfileError
from estimator.files import write_table
from estimator.predict_files import predict_to_file
from estimator.profiles.io import read_profile
from estimator.workflows import predict

SPECIES = ["C12:0", "C14:0", "C16:0", "C16:1", "C18:0", "C18:1", "C18:2", "C18:3", "C20:0",
           "C20:1", "C22:0", "C22:1", "C24:0"]


def _random_lots(path, n: int, seed: int, *, sep: str = ",") -> None:
    rng = np.random.default_rng(seed)
    k = rng.integers(2, len(SPECIES) + 1)
    cols = rng.choice(len(SPECIES), size=k, replace=False)
    w = np.zeros((n, len(SPECIES)))
    w[:, cols] = rng.dirichlet(np.full(k, 0.5), size=n) * 100
    frame = pd.DataFrame(np.round(w, 3), columns=SPECIES)
    frame.insert(0, "sample", [f"lot-{seed}-{i}" for i in range(n)])
    frame.insert(1, "supplier", rng.choice(["=Acme", "Brand B", "-x"], size=n))
    frame.to_csv(path, index=False, sep=sep)


@pytest.mark.parametrize("seed", [1, 2, 3, 4])
@pytest.mark.parametrize("suffix", [".csv", ".json", ".xlsx"])
def test_pieces_give_the_same_file_as_the_whole_table(tmp_path, seed, suffix):
    # regression test: the fast path must not change results
    lots = tmp_path / "lots.csv"
    _random_lots(lots, 53, seed)
    plain = write_table(predict(read_profile(lots)).wide, tmp_path / f"plain{suffix}")
    fast = tmp_path / f"fast{suffix}"
    rows = predict_to_file([lots], fast, chunk_rows=7, min_bytes=0)
    assert rows == 53
    if suffix == ".xlsx":
        pd.testing.assert_frame_equal(pd.read_excel(fast), pd.read_excel(plain))
    else:
        assert fast.read_bytes() == plain.read_bytes()


def test_pieces_match_pandas_own_writer_to_printed_precision(tmp_path):
    lots = tmp_path / "lots.tsv"
    _random_lots(lots, 40, 9, sep="\t")
    fast = tmp_path / "fast.csv"
    predict_to_file([lots], fast, chunk_rows=6, min_bytes=0)
    table = predict(read_profile(lots)).wide
    ref = tmp_path / "ref.csv"
    table.to_csv(ref, index=False, float_format="%.6g")  # the plain pandas path
    a, b = pd.read_csv(fast), pd.read_csv(ref)
    assert list(a.columns) == list(b.columns)
    num = [c for c in a.columns if b[c].dtype.kind == "f"]
    np.testing.assert_allclose(a[num].to_numpy(float), b[num].to_numpy(float), rtol=1e-12,
                               equal_nan=True)


def test_a_sample_id_repeated_in_a_later_piece_names_both_rows(tmp_path):
    lots = tmp_path / "lots.csv"
    _random_lots(lots, 20, 5)
    text = lots.read_text().replace("lot-5-17,", "lot-5-2,")
    lots.write_text(text)
    out = tmp_path / "out.csv"
    with pytest.raises(ProfileError, match=r"lots\.csv: row 19, column 'sample': duplicate "
                                           r"sample id \(also in row 4\)"):
        predict_to_file([lots], out, chunk_rows=5, min_bytes=0)
    assert not out.exists() and list(tmp_path.iterdir()) == [lots]


@pytest.mark.parametrize("suffix", [".csv", ".tsv", ".json", ".xlsx"])
def test_pieces_estimated_in_workers_give_the_same_file(tmp_path, monkeypatch, suffix):
    # regression test: forked workers lay out the same bytes as this process
    from estimator import parallel

    lots = tmp_path / "lots.csv"
    _random_lots(lots, 61, 12)
    here, there = tmp_path / f"here{suffix}", tmp_path / f"there{suffix}"
    monkeypatch.setenv(parallel.ENV_WORKERS, "1")
    assert predict_to_file([lots], here, chunk_rows=8, min_bytes=0, oils=["palm"]) == 62
    monkeypatch.setenv(parallel.ENV_WORKERS, "2")
    assert predict_to_file([lots], there, chunk_rows=8, min_bytes=0, oils=["palm"]) == 62
    if suffix == ".xlsx":
        pd.testing.assert_frame_equal(pd.read_excel(there), pd.read_excel(here))
    else:
        assert there.read_bytes() == here.read_bytes()


@pytest.mark.parametrize("workers", ["1", "2"])
def test_a_bad_row_in_a_later_piece_leaves_no_file(tmp_path, monkeypatch, workers):
    from estimator import parallel
    from estimator.errors import InputFileError

    monkeypatch.setenv(parallel.ENV_WORKERS, workers)
    lots = tmp_path / "lots.csv"
    _random_lots(lots, 40, 13)
    lines = lots.read_text().splitlines()
    cells = lines[33].split(",")
    cells[2] = "abc"
    lines[33] = ",".join(cells)
    lots.write_text("\n".join(lines) + "\n")
    out = tmp_path / "out.csv"
    with pytest.raises((InputFileError, ProfileError), match=r"lots\.csv: row 34"):
        predict_to_file([lots], out, chunk_rows=5, min_bytes=0)
    assert sorted(p.name for p in tmp_path.iterdir()) == ["lots.csv"]


@pytest.mark.parametrize("how", ["SIGTERM", "SIGINT"])
def test_a_stopped_predict_leaves_no_worker_and_no_file(tmp_path, how):
    # workers must not outlive the command: they hold its stderr open, so a caller
    # waiting for the command's output would wait for ever
    import os
    import signal
    import subprocess
    import sys
    import time

    lots = tmp_path / "lots.csv"
    _random_lots(lots, 60_000, 21)
    out_dir = tmp_path / "out"
    env = {**os.environ, "FAME_ESTIMATOR_WORKERS": "2"}
    proc = subprocess.Popen([sys.executable, "-m", "estimator", "predict", str(lots), "-o",
                             str(out_dir / "estimates.csv")], env=env,
                            stdout=subprocess.PIPE, stderr=subprocess.PIPE)
    deadline = time.monotonic() + 60
    # the first piece is written once the workers are running
    while time.monotonic() < deadline and proc.poll() is None:
        temps = list(out_dir.glob(".estimates.csv.*.tmp")) if out_dir.exists() else []
        if temps and temps[0].stat().st_size > 0:
            break
        time.sleep(0.02)
    else:
        pytest.fail("the command ended before the workers were running; give it more rows")
    proc.send_signal(getattr(signal, how))
    try:
        _, err = proc.communicate(timeout=30)  # times out if a worker keeps stderr open
    finally:
        proc.kill()
    assert proc.returncode != 0
    assert b"Traceback" not in err
    time.sleep(0.5)
    assert list(out_dir.iterdir()) == []


def test_a_note_about_a_file_read_is_passed_on_once(tmp_path):
    # the guessed sample-id column must be said with -o too, not only on the terminal path
    path = tmp_path / "offers.csv"
    path.write_text("code,C16:0,C18:1\nA,20,80\nB,30,70\n")
    said = []
    rows = predict_to_file([path], tmp_path / "out.csv", notes=said.append)
    assert rows == 2
    assert len(said) == 1 and "the sample ids are taken from column 'code'" in said[0]
