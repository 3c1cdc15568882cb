"""Reference tables shipped with the package, loaded once on first use.

Each CSV has one canonical unit per column (stated in the header) and a
``source`` column per row; ``README.md`` beside the files describes them.
"""

from __future__ import annotations

from collections.abc import Mapping
from functools import cache
from importlib.resources import files

import numpy as np
import pandas as pd

__all__ = ["composition_row", "load_table", "species_column", "species_keys", "species_table"]


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


def composition_row(mass: Mapping[str, float]) -> np.ndarray:
    """One composition from species key -> mass, renormalised to 100 wt %.

    Parameters
    ----------
    mass : mapping of str to float
        Species keys of :func:`species_keys` and their masses (any positive scale).

    Returns
    -------
    ndarray, shape (1, n_species)
        FAME mass % in species order. [wt %]

    Examples
    --------
    >>> w = composition_row({"C16:0": 1.0, "C18:1": 3.0})
    >>> float(w[0, species_keys().index("C18:1")])
    75.0
    """
    keys = species_keys()
    w = np.zeros((1, len(keys)))
    for key, value in mass.items():
        w[0, keys.index(key)] += float(value)
    total = w.sum()
    if not total > 0:
        raise ValueError("a composition needs a positive total mass")
    return w * (100.0 / total)


def species_column(column: str) -> np.ndarray:
    """One numeric column of the species table as a float array in canonical order."""
    return _species_column(column).copy()


@cache
def _species_column(column: str) -> np.ndarray:
    values = species_table()[column].to_numpy(dtype=float).copy()
    values.setflags(write=False)
    return values
