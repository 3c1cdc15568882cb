"""Per-ester data shared by the property families: tabulated values and mass-weighted means."""

from __future__ import annotations

from collections.abc import Callable

import numpy as np

from estimator.tables import species_column

__all__ = ["mass_weighted", "tabulated_or_fallback"]


def tabulated_or_fallback(
    column: str, fallback: Callable[[np.ndarray, np.ndarray], np.ndarray]
) -> tuple[np.ndarray, np.ndarray]:
    """A species-table column where tabulated, else ``fallback(molar mass, double bonds)``.

    Parameters
    ----------
    column : str
        Column of ``species.csv``; a blank cell means "not tabulated".
    fallback : callable
        Per-ester correlation of the FAME molar mass [g/mol] and the number of C=C.

    Returns
    -------
    values : ndarray
        One value per species in :func:`estimator.tables.species_keys` order, in the
        column's unit. [1]
    tabulated : ndarray of bool
        True where the value comes from the table. [1]
    """
    table = species_column(column)
    tabulated = np.isfinite(table)
    estimate = fallback(
        species_column("fame_molar_mass_g_mol"), species_column("double_bonds")
    )
    return np.where(tabulated, table, estimate), tabulated


def mass_weighted(wt_pct, per_ester: np.ndarray) -> np.ndarray:
    """Mass-weighted mean of per-ester values over compositions: sum_i w_i x_i / 100.

    Examples
    --------
    >>> import numpy as np
    >>> mass_weighted(np.array([[50.0, 50.0]]), np.array([10.0, 20.0]))
    array([15.])
    """
    return np.asarray(wt_pct, dtype=float) @ per_ester / 100.0
