"""Reference tables shipped with the package, loaded once on first use.

Each CSV has one canonical unit per column (stated in the header) and a
``source`` column per row; ``README.md`` beside the files describes them.
"""

from __future__ import annotations

from functools import cache
from importlib.resources import files

import numpy as np
import pandas as pd

__all__ = ["load_table", "species_column", "species_keys", "species_table"]


@cache
def load_table(name: str) -> pd.DataFrame:
    """Read ``estimator/tables/<name>.csv`` once; later calls return the same frame.

    Callers must not modify the returned frame (take a ``.copy()`` first).
    """
    path = files("estimator.tables").joinpath(f"{name}.csv")
    with path.open("r", encoding="utf-8") as fh:
        return pd.read_csv(fh, comment=None, keep_default_na=False, na_values=[""])


@cache
def species_table() -> pd.DataFrame:
    """The species table indexed by species key, in canonical order."""
    table = load_table("species").set_index("key", drop=False)
    table.index.name = None
    return table


@cache
def species_keys() -> tuple[str, ...]:
    """Species keys in canonical order (carbon number, then double bonds)."""
    return tuple(species_table().index)


def species_column(column: str) -> np.ndarray:
    """One numeric column of the species table as a float array in canonical order."""
    return _species_column(column).copy()


@cache
def _species_column(column: str) -> np.ndarray:
    values = species_table()[column].to_numpy(dtype=float).copy()
    values.setflags(write=False)
    return values
