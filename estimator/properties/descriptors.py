"""Composition descriptors: the quantities every fuel-property correlation is built on.

All functions are vectorised over samples. A composition ``wt_pct`` is a float
array of shape ``(n_samples, n_species)``: mass % on FAME basis, columns in
:func:`estimator.tables.species_keys` order. Most descriptors are linear in
composition, ``wt_pct @ factor``, so the factor vectors are exposed too; the
least-cost mix (a linear programme) uses them as constraint rows.

Iodine value: the default column ``iodine_value_gI2_100g`` is the exact
stoichiometric value on the FAME basis (one I2 per C=C). It reproduces the AOCS
Cd 1c-85 factors exactly when evaluated on the triglyceride or free-acid basis
(see :func:`iodine_value_factors`) and covers every species, whereas the AOCS
table lists only six monoene/polyene acids. ``iodine_value_oil_gI2_100g`` is the
same quantity for the parent oil (triglyceride basis), the number an oil
certificate or the Codex CXS 210 ranges quote.
"""

from __future__ import annotations

from functools import cache

import numpy as np

from estimator.tables import species_column, species_keys, species_table

__all__ = [
    "DESCRIPTOR_UNITS",
    "basis_molar_mass",
    "descriptors",
    "iodine_value",
    "convert_basis",
    "iodine_value_factors",
    "lcsf_factors",
    "linear_factors",
    "mean_molar_mass",
    "saponification_value",
]

#: Molar mass of I2 [g/mol], 2 x 126.904 (IUPAC 2021 conventional atomic weight).
MOLAR_MASS_I2 = 2 * 126.904
#: Molar mass of KOH [g/mol], 39.098 + 15.999 + 1.008 (IUPAC 2021).
MOLAR_MASS_KOH = 39.098 + 15.999 + 1.008
#: Glycerol C3H8O3 and water H2O [g/mol] (IUPAC 2021 conventional atomic weights).
MOLAR_MASS_GLYCEROL = 3 * 12.011 + 8 * 1.008 + 3 * 15.999
MOLAR_MASS_WATER = 2 * 1.008 + 15.999
MOLAR_MASS_METHANOL = 12.011 + 4 * 1.008 + 15.999
ATOMIC_WEIGHT = {"C": 12.011, "H": 1.008, "O": 15.999}

#: Ramos et al. 2009 long-chain saturated factor weights (MEMORY, correlations.md 6.1).
LCSF_WEIGHTS = {"C16:0": 0.1, "C18:0": 0.5, "C20:0": 1.0, "C22:0": 1.5, "C24:0": 2.0}

DESCRIPTOR_UNITS = {
    "mean_molar_mass_g_mol": "g/mol",
    "saponification_value_mgKOH_g": "mg KOH/g",
    "iodine_value_gI2_100g": "g I2/100 g",
    "iodine_value_oil_gI2_100g": "g I2/100 g",
    "du_ramos_wt_pct": "wt %",
    "du_bonds_wt_pct": "wt %",
    "lcsf_wt_pct": "wt %",
    "ape_wt_pct": "wt %",
    "bape_wt_pct": "wt %",
    "oxidizability": "1",
    "sfa_wt_pct": "wt %",
    "mufa_wt_pct": "wt %",
    "pufa_wt_pct": "wt %",
    "linolenic_wt_pct": "wt %",
    "pufa4_wt_pct": "wt %",
    "mean_chain_length_carbons": "carbon atoms",
    "carbon_wt_pct": "wt %",
    "hydrogen_wt_pct": "wt %",
    "oxygen_wt_pct": "wt %",
}

BASES = ("fame", "fatty-acid", "oil")


@cache
def _species_arrays() -> dict[str, np.ndarray]:
    table = species_table()
    arrays = {
        "M_fame": species_column("fame_molar_mass_g_mol"),
        "M_acid": species_column("acid_molar_mass_g_mol"),
        "D": species_column("double_bonds"),
        "C": species_column("carbons"),
        "allylic": species_column("allylic_positions"),
        "bis_allylic": species_column("bis_allylic_positions"),
    }
    # Acyl residue of a simple triglyceride: one third of (glycerol + 3 acids - 3 water).
    arrays["M_oil"] = arrays["M_acid"] - MOLAR_MASS_WATER + MOLAR_MASS_GLYCEROL / 3.0
    elements = {el: np.zeros(len(table)) for el in ATOMIC_WEIGHT}
    for i, formula in enumerate(table["fame_formula"]):
        for el, n in _parse_formula(formula).items():
            elements[el][i] = n
    for el, counts in elements.items():
        arrays[f"mass_frac_{el}"] = counts * ATOMIC_WEIGHT[el] / arrays["M_fame"]
    for arr in arrays.values():
        arr.setflags(write=False)
    return arrays


def _parse_formula(formula: str) -> dict[str, int]:
    import re

    return {el: int(n) for el, n in re.findall(r"([CHO])(\d+)", formula)}


def basis_molar_mass(basis: str = "fame") -> np.ndarray:
    """Molar mass per acyl chain of each species on a composition basis [g/mol].

    ``fame``: the methyl ester; ``fatty-acid``: the free acid; ``oil``: one third of
    the simple triglyceride (acid - water + glycerol/3), i.e. the mass of oil that
    carries one mole of that acyl chain.

    Parameters
    ----------
    basis : {'fame', 'fatty-acid', 'oil'}
        Composition basis: methyl ester, free acid or triglyceride.

    Returns
    -------
    ndarray, shape (n_species,)
        Molar mass per acyl chain, in :func:`estimator.tables.species_keys`
        order. [g/mol]

    Examples
    --------
    >>> from estimator.tables import species_keys
    >>> i = species_keys().index("C18:1")
    >>> round(float(basis_molar_mass("oil")[i]), 2)  # triolein 885.43 / 3
    295.15
    """
    arrays = _species_arrays()
    try:
        return arrays[{"fame": "M_fame", "fatty-acid": "M_acid", "oil": "M_oil"}[basis]]
    except KeyError:
        raise ValueError(f"unknown basis {basis!r}; use one of {', '.join(BASES)}") from None


def iodine_value_factors(basis: str = "fame") -> np.ndarray:
    """Iodine value per mass % of each species on a basis [g I2/100 g per wt %].

    .. math:: f_i = \\frac{2 \\cdot 126.904 \\cdot D_i}{M_i}

    On the ``oil`` and ``fatty-acid`` bases these are the AOCS Cd 1c-85 factors
    (0.860 for C18:1 in triglycerides, 0.8986 as free acid); on the FAME basis they
    are the exact stoichiometric factors (0.8560 for methyl oleate).

    Parameters
    ----------
    basis : {'fame', 'fatty-acid', 'oil'}
        Composition basis: methyl ester, free acid or triglyceride.

    Returns
    -------
    ndarray, shape (n_species,)
        Iodine value contributed by one mass % of each species on ``basis``,
        in :func:`estimator.tables.species_keys` order. [g I2/100 g per wt %]

    References
    ----------
    AOCS Recommended Practice Cd 1c-85, Calculated Iodine Value (reapproved 2009).

    Examples
    --------
    >>> from estimator.tables import species_keys
    >>> i = species_keys().index("C18:2")
    >>> round(float(iodine_value_factors("oil")[i]), 3)  # AOCS Cd 1c-85: 1.732
    1.732
    """
    return MOLAR_MASS_I2 * _species_arrays()["D"] / basis_molar_mass(basis)


def iodine_value(wt_pct: np.ndarray, basis: str = "fame") -> np.ndarray:
    """Calculated iodine value of compositions on a stated basis [g I2/100 g].

    .. math:: IV = \\sum_i f_i A_i

    Parameters
    ----------
    wt_pct : ndarray, shape (n, n_species)
        Mass % on ``basis``. [wt %]
    basis : {'fame', 'fatty-acid', 'oil'}
        Composition basis: methyl ester, free acid or triglyceride.

    Returns
    -------
    ndarray, shape (n,)
        Iodine value. [g I2/100 g]

    Examples
    --------
    >>> import numpy as np
    >>> from estimator.tables import species_keys
    >>> w = np.zeros((1, len(species_keys()))); w[0, species_keys().index("C18:1")] = 100
    >>> round(float(iodine_value(w)[0]), 2)  # methyl oleate: 253.81 / 296.49 * 100
    85.6
    """
    return np.asarray(wt_pct, dtype=float) @ iodine_value_factors(basis)


def saponification_value(wt_pct: np.ndarray) -> np.ndarray:
    """Saponification value of FAME compositions [mg KOH/g].

    .. math:: SN = \\sum_i \\frac{1000 \\cdot M_{KOH} A_i}{100 \\, M_i}

    One mole of KOH per ester group (stoichiometry; correlations.md 3, DERIVED).

    Parameters
    ----------
    wt_pct : ndarray, shape (n, n_species)
        FAME mass %, columns in species-table order. [wt %]

    Returns
    -------
    ndarray, shape (n,)
        Saponification value. [mg KOH/g]

    Examples
    --------
    >>> import numpy as np
    >>> from estimator.tables import species_keys
    >>> w = np.zeros((1, len(species_keys()))); w[0, species_keys().index("C16:0")] = 100
    >>> round(float(saponification_value(w)[0]), 1)  # 56105 / 270.46
    207.4
    """
    return np.asarray(wt_pct, dtype=float) @ (10.0 * MOLAR_MASS_KOH / _species_arrays()["M_fame"])


def mean_molar_mass(wt_pct: np.ndarray, basis: str = "fame") -> np.ndarray:
    """Number-average molar mass per acyl chain [g/mol]: 100 / sum(A_i / M_i).

    Parameters
    ----------
    wt_pct : ndarray, shape (n, n_species)
        Mass % on ``basis``, columns in species-table order. [wt %]
    basis : {'fame', 'fatty-acid', 'oil'}
        Composition basis: methyl ester, free acid or triglyceride.

    Returns
    -------
    ndarray, shape (n,)
        Mean molar mass per acyl chain on ``basis``. [g/mol]
    """
    w = np.asarray(wt_pct, dtype=float)
    return w.sum(axis=1) / (w @ (1.0 / basis_molar_mass(basis)))


def lcsf_factors() -> np.ndarray:
    """Ramos et al. 2009 long-chain saturated factor weights per species [1].

    LCSF = 0.1 C16:0 + 0.5 C18:0 + 1 C20:0 + 1.5 C22:0 + 2 C24:0 (mass %).
    MEMORY (correlations.md 6.1): Ramos M.J., Fernandez C.M., Casas A., Rodriguez L.,
    Perez A., Bioresour. Technol. 100 (2009) 261-268, doi:10.1016/j.biortech.2008.06.039.

    Returns
    -------
    ndarray, shape (n_species,)
        Weight of each species in LCSF (zero except C16:0, C18:0, ..., C24:0), in
        :func:`estimator.tables.species_keys` order. [1]
    """
    keys = species_keys()
    out = np.zeros(len(keys))
    for key, weight in LCSF_WEIGHTS.items():
        out[keys.index(key)] = weight
    return out


@cache
def _linear_factors() -> dict[str, np.ndarray]:
    a = _species_arrays()
    D = a["D"]
    sat = (D == 0).astype(float)
    mono = (D == 1).astype(float)
    poly = (D >= 2).astype(float)
    keys = species_keys()
    onehot = {k: np.eye(len(keys))[keys.index(k)] for k in ("C18:1", "C18:2", "C18:3")}
    factors = {
        "saponification_value_mgKOH_g": 10.0 * MOLAR_MASS_KOH / a["M_fame"],
        "iodine_value_gI2_100g": iodine_value_factors("fame"),
        "du_ramos_wt_pct": mono + 2.0 * poly,
        "du_bonds_wt_pct": D,
        "lcsf_wt_pct": lcsf_factors(),
        # Knothe 2002: allylic / bis-allylic position equivalents (formula MEMORY).
        "ape_wt_pct": a["allylic"],
        "bape_wt_pct": a["bis_allylic"],
        # McCormick et al. 2007 after Neff 1992: OX = (0.02 C18:1 + C18:2 + 2 C18:3)/100.
        "oxidizability": (0.02 * onehot["C18:1"] + onehot["C18:2"] + 2.0 * onehot["C18:3"]) / 100,
        "sfa_wt_pct": sat,
        "mufa_wt_pct": mono,
        "pufa_wt_pct": poly,
        "linolenic_wt_pct": onehot["C18:3"],
        "pufa4_wt_pct": (D >= 4).astype(float),
        "carbon_wt_pct": a["mass_frac_C"],
        "hydrogen_wt_pct": a["mass_frac_H"],
        "oxygen_wt_pct": a["mass_frac_O"],
    }
    for arr in factors.values():
        arr.setflags(write=False)
    return factors


def linear_factors() -> dict[str, np.ndarray]:
    """Factor vectors of the descriptors that are linear in FAME mass %: d = wt_pct @ f.

    Returns
    -------
    dict of str to ndarray, shape (n_species,)
        One factor vector per linear descriptor, keyed like
        :data:`DESCRIPTOR_UNITS`; each factor is that descriptor's unit per wt %.
    """
    return dict(_linear_factors())


def descriptors(wt_pct: np.ndarray) -> dict[str, np.ndarray]:
    """All composition descriptors of FAME compositions, one array per descriptor.

    Parameters
    ----------
    wt_pct : ndarray, shape (n, n_species)
        FAME mass %, columns in species-table order, rows summing to 100. [wt %]

    Returns
    -------
    dict of str to ndarray, shape (n,)
        Keys and units as in :data:`DESCRIPTOR_UNITS`.

    Examples
    --------
    >>> import numpy as np
    >>> from estimator.tables import species_keys
    >>> w = np.zeros((1, len(species_keys())))
    >>> for k, v in {"C16:0": 50, "C18:2": 50}.items():
    ...     w[0, species_keys().index(k)] = v
    >>> d = descriptors(w)
    >>> float(d["du_ramos_wt_pct"][0]), float(d["bape_wt_pct"][0])
    (100.0, 50.0)
    """
    w = np.asarray(wt_pct, dtype=float)
    if w.ndim != 2 or w.shape[1] != len(species_keys()):
        raise ValueError(f"wt_pct must have shape (n, {len(species_keys())}), got {w.shape}")
    factors = _linear_factors()
    names = list(factors)
    stacked = w @ np.column_stack([factors[n] for n in names])
    out = {n: stacked[:, j] for j, n in enumerate(names)}
    a = _species_arrays()
    moles = w / a["M_fame"]
    total_moles = moles.sum(axis=1)
    out["mean_molar_mass_g_mol"] = w.sum(axis=1) / total_moles
    out["mean_chain_length_carbons"] = (moles @ a["C"]) / total_moles
    # IV of the parent oil without forming the oil-basis matrix: the iodine per chain is the
    # same, only the mass carrying it changes (M_oil instead of M_fame per chain).
    out["iodine_value_oil_gI2_100g"] = out["iodine_value_gI2_100g"] * w.sum(axis=1) / (
        w @ (a["M_oil"] / a["M_fame"])
    )
    return {k: out[k] for k in DESCRIPTOR_UNITS}


def convert_basis(wt_pct: np.ndarray, source: str, target: str) -> np.ndarray:
    """Convert mass % between the FAME, fatty-acid and oil (triglyceride) bases.

    Exact mass conversion: moles of acyl chain ``A_i / M_i(source)`` are carried
    over and weighed with ``M_i(target)``, then renormalised to 100.

    Parameters
    ----------
    wt_pct : ndarray, shape (n, n_species)
        Mass % on ``source``, columns in species-table order. [wt %]
    source, target : {'fame', 'fatty-acid', 'oil'}
        Bases of the input and of the output.

    Returns
    -------
    ndarray, shape (n, n_species)
        Mass % on ``target``, rows summing to 100. [wt %]

    Examples
    --------
    >>> import numpy as np
    >>> from estimator.tables import species_keys
    >>> w = np.zeros((1, len(species_keys())))
    >>> w[0, species_keys().index("C12:0")] = w[0, species_keys().index("C18:1")] = 50
    >>> fame = convert_basis(w, "oil", "fame")
    >>> round(float(fame[0, species_keys().index("C12:0")]), 2)  # by hand: 50.04
    50.04
    """
    w = np.asarray(wt_pct, dtype=float)
    if source == target:
        return w.copy()
    moles = w / basis_molar_mass(source)
    mass = moles * basis_molar_mass(target)
    return 100.0 * mass / mass.sum(axis=1, keepdims=True)


def to_oil_basis(wt_pct_fame: np.ndarray) -> np.ndarray:
    """FAME mass % to the mass % of the parent triglyceride oil."""
    return convert_basis(wt_pct_fame, "fame", "oil")
