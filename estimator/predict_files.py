"""``predict`` from files to a file in pieces: memory stays flat however many rows.

Reads each input in pieces (:func:`estimator.profiles.io.read_profile_chunks`),
estimates each piece with :func:`estimator.workflows.predict` and appends it to the
output (:class:`estimator.files.TableWriter`, atomic). With several pieces and cores,
pieces are estimated and laid out as text in forked workers
(:func:`estimator.parallel.map_in_order`) while this process reads the next ones and
writes the text in order. The table is the one
``predict(...).wide`` gives for the whole input at once; a test compares the two.
"""

from __future__ import annotations

import contextlib
from collections.abc import Callable, Sequence
from pathlib import Path

import numpy as np
import pandas as pd

from estimator.errors import ProfileError
from estimator.files import TableWriter
from estimator.parallel import map_in_order
from estimator.profiles.io import read_profile_chunks
from estimator.profiles.profile import DEFAULT_SUM_TOLERANCE, Profile
from estimator.workflows import predict

__all__ = ["CHUNK_ROWS", "predict_to_file"]

#: Samples estimated and written per piece.
CHUNK_ROWS = 10_000


def predict_to_file(
    inputs: Sequence[str | Path],
    output: str | Path,
    *,
    oils: Sequence[str] = (),
    basis: str = "fame",
    sum_tolerance: float = DEFAULT_SUM_TOLERANCE,
    temperatures_C: Sequence[float] = (),
    models: Sequence[str] = (),
    chunk_rows: int = CHUNK_ROWS,
    progress: Callable[[int], None] | None = None,
    notes: Callable[[str], None] | None = None,
    **chunk_options,
) -> int:
    """Estimate every sample of ``inputs`` (and built-in ``oils``) into ``output``.

    Parameters
    ----------
    inputs : sequence of str or Path
        Profile files, read as :func:`~estimator.profiles.io.read_profile` reads them.
    output : str or Path
        ``.csv``, ``.tsv``, ``.json`` or ``.xlsx``; written atomically.
    oils : sequence of str
        Built-in typical profiles, after the files.
    basis, sum_tolerance, temperatures_C, models
        As for :func:`~estimator.workflows.predict`.
    chunk_rows : int
        Samples per piece.
    progress : callable, optional
        Called with the number of samples of each piece once it is written.
    notes : callable, optional
        Called once with each note about a file read (e.g. which column gave the
        sample ids), before its rows are estimated.

    Returns
    -------
    int
        Rows written.
    """
    ids = _SampleIds()
    options = {"temperatures_C": temperatures_C, "models": models}

    said: set[str] = set()

    def pieces():
        for path in inputs:
            for part in read_profile_chunks(path, basis=basis, sum_tolerance=sum_tolerance,
                                            chunk_rows=chunk_rows, **chunk_options):
                ids.add(part, Path(path).name)
                for note in part.file_notes:  # each piece repeats its file's notes
                    if notes is not None and note not in said:
                        said.add(note)
                        notes(note)
                yield part
        if oils:
            part = Profile.from_oils(oils)
            ids.add(part, "--oil")
            yield part

    with TableWriter(output) as out:
        def estimated(part: Profile):
            # in a worker process when there are several pieces: only bytes come back
            return out.encode(predict(part, **options).wide)

        with contextlib.closing(map_in_order(estimated, pieces())) as results:
            for part, encoded in results:
                if not out.write_encoded(encoded):  # columns out of order: let write() fix
                    out.write(predict(part, **options).wide)
                if progress is not None:
                    progress(len(part))
        ids.check()  # before the file is put in place
        return out.rows


class _SampleIds:
    """Finds a sample id used twice across pieces and inputs (64-bit hashes, 8 bytes each)."""

    def __init__(self) -> None:
        self.hashes: list[np.ndarray] = []
        self.where: list[tuple[str, np.ndarray]] = []

    def add(self, profile: Profile, label: str) -> None:
        samples = np.asarray(profile.samples, dtype=object)
        self.hashes.append(pd.util.hash_array(samples, categorize=False).view(np.int64))
        self.where.append((label, np.asarray(profile.rows, dtype=np.int64)))

    def check(self) -> None:
        if len(self.hashes) < 2:
            return  # one piece: Profile already refused duplicates
        every = np.concatenate(self.hashes)
        order = np.argsort(every, kind="stable")
        same = np.flatnonzero(every[order][1:] == every[order][:-1])
        if not len(same):
            return
        first, second = (self._locate(int(order[same[0]])), self._locate(int(order[same[0] + 1])))
        if first[0] != second[0]:
            raise ProfileError(
                f"{second[0]}: row {second[1]}, column 'sample': a sample id of "
                f"{first[0]} (row {first[1]}) appears again; rename one of them"
            )
        raise ProfileError(
            f"{first[0]}: row {second[1]}, column 'sample': duplicate sample id "
            f"(also in row {first[1]})"
        )

    def _locate(self, index: int) -> tuple[str, int]:
        for label, rows in self.where:
            if index < len(rows):
                return label, int(rows[index])
            index -= len(rows)
        raise IndexError(index)  # pragma: no cover
