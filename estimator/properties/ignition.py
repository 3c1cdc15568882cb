"""Cetane number of FAME from its fatty-acid profile.

Every function is a published correlation named after its source. Composition
arguments are ``wt_pct`` arrays of shape ``(n_samples, n_species)`` (or one
profile of shape ``(n_species,)``) in :func:`estimator.tables.species_keys`
order, mass % on FAME basis summing to 100.
"""

from __future__ import annotations

import numpy as np

from estimator.properties.per_ester import mass_weighted, tabulated_or_fallback
from estimator.tables import species_column, species_keys

__all__ = [
    "BAMGBOYE2008_COEFFICIENTS",
    "BAMGBOYE2008_INTERCEPT",
    "bamgboye2008",
    "bamgboye2008_coefficients",
    "knothe2005",
    "krisnangkura1986",
    "pure_ester_cetane_numbers",
    "ramirezverduzco2012",
    "ramirezverduzco2012_ester",
]

# Krisnangkura 1986, the single equation of the paper (MEMORY).
KRISNANGKURA1986_INTERCEPT = 46.3
KRISNANGKURA1986_SN_COEF = 5458.0  # [mg KOH/g]
KRISNANGKURA1986_IV_COEF = -0.225  # [per g I2/100 g]

# Bamgboye & Hansen 2008, the composition-linear regression (MEMORY);
# x2..x8 of the paper, coefficient per mass % of the methyl ester.
BAMGBOYE2008_INTERCEPT = 61.1
BAMGBOYE2008_COEFFICIENTS = {
    "C14:0": 0.088,  # x2
    "C16:0": 0.133,  # x3
    "C18:0": 0.152,  # x4
    "C16:1": -0.101,  # x5
    "C18:1": -0.039,  # x6
    "C18:2": -0.243,  # x7
    "C18:3": -0.395,  # x8
}

# Ramirez-Verduzco et al. 2012, per-ester cetane number (MEMORY).
RV2012_CN_INTERCEPT = -7.8
RV2012_CN_MW_COEF = 0.302  # [mol/g]
RV2012_CN_DB_COEF = -20.0  # per C=C double bond


def krisnangkura1986(saponification_value_mgKOH_g, iodine_value_gI2_100g):
    r"""Cetane number from saponification and iodine value (Krisnangkura 1986).

    .. math::

        CN = 46.3 + \frac{5458}{SN} - 0.225\,IV

    Parameters
    ----------
    saponification_value_mgKOH_g : array_like
        Saponification value of the ester mixture. [mg KOH/g]
    iodine_value_gI2_100g : array_like
        Iodine value of the ester mixture. [g I2/100 g]

    Returns
    -------
    cetane_number : ndarray
        Estimated cetane number. [1]

    Notes
    -----
    Developed as a "cetane index" of vegetable-oil methyl esters (C16-C18
    oils). Fitted domain and published error: not recorded. Coefficients:
    **MEMORY** (widely reproduced, e.g. by Azam et al. 2005 and Ramos et al.
    2009; the equation text was not seen). The SN constant used to build the
    descriptor (561.05 here vs 560 in the literature form, conflict C2)
    changes the result by about 0.05 CN units.

    References
    ----------
    .. [1] Krisnangkura K., "A simple method for estimation of cetane index
       of vegetable oil methyl esters", J. Am. Oil Chem. Soc. 63 (1986)
       552-553 (from memory).

    Examples
    --------
    A soybean-like ester (SN 191, IV 130); our arithmetic, no worked case of
    the paper is recorded:

    >>> round(float(krisnangkura1986(191.0, 130.0)), 2)
    45.63
    """
    sn = np.asarray(saponification_value_mgKOH_g, dtype=float)
    iv = np.asarray(iodine_value_gI2_100g, dtype=float)
    return (
        KRISNANGKURA1986_INTERCEPT
        + KRISNANGKURA1986_SN_COEF / sn
        + KRISNANGKURA1986_IV_COEF * iv
    )


def bamgboye2008_coefficients():
    r"""Intercept and per-species coefficient vector of Bamgboye & Hansen 2008.

    .. math::

        CN = a_0 + \sum_i a_i A_i

    Returns
    -------
    intercept : float
        The constant term :math:`a_0`. [1]
    coefficients : ndarray
        :math:`a_i` in :func:`estimator.tables.species_keys` order; zero for
        species outside the model, so ``intercept + wt_pct @ coefficients``
        is the correlation and the vector can be used directly as a row of a
        linear programme. [per wt %]

    Notes
    -----
    See :func:`bamgboye2008` for domain, error and provenance (**MEMORY**).

    References
    ----------
    .. [1] Bamgboye A.I., Hansen A.C., "Prediction of cetane number of
       biodiesel fuel from the fatty acid methyl ester (FAME) composition",
       Int. Agrophysics 22 (2008) 21-29 (from memory).

    Examples
    --------
    >>> a0, a = bamgboye2008_coefficients()
    >>> a0, float(a.sum())
    (61.1, -0.405)
    """
    keys = species_keys()
    vec = np.zeros(len(keys))
    for key, coef in BAMGBOYE2008_COEFFICIENTS.items():
        vec[keys.index(key)] = coef
    return BAMGBOYE2008_INTERCEPT, vec


def bamgboye2008(wt_pct):
    r"""Cetane number linear in the FAME composition (Bamgboye & Hansen 2008).

    .. math::

        CN = 61.1 + 0.088 x_2 + 0.133 x_3 + 0.152 x_4 - 0.101 x_5
             - 0.039 x_6 - 0.243 x_7 - 0.395 x_8

    with :math:`x_2 \ldots x_8` the mass % of C14:0, C16:0, C18:0, C16:1,
    C18:1, C18:2 and C18:3.

    Parameters
    ----------
    wt_pct : array_like
        Composition, shape ``(n_samples, n_species)``. [wt %]

    Returns
    -------
    cetane_number : ndarray
        Estimated cetane number, shape ``(n_samples,)``. [1]

    Notes
    -----
    Fitted on methyl esters of common C14-C18 oils; C12:0 was dropped as not
    significant, and every species outside x2..x8 acts only through the
    intercept, so lauric oils and long-chain or highly polyunsaturated
    profiles are outside the domain. Published error: R^2 about 0.88
    (**MEMORY**). Coefficients and variable assignment: **MEMORY**. A
    secondary text cites Bamgboye & Hansen 2008 for CN ranges of soybean and
    rapeseed esters (VERIFIED [S10]).

    References
    ----------
    .. [1] Bamgboye A.I., Hansen A.C., "Prediction of cetane number of
       biodiesel fuel from the fatty acid methyl ester (FAME) composition",
       Int. Agrophysics 22 (2008) 21-29 (from memory).

    Examples
    --------
    Pure methyl oleate (our arithmetic: 61.1 - 0.039 x 100):

    >>> from estimator.tables import species_keys
    >>> w = np.zeros(len(species_keys())); w[species_keys().index("C18:1")] = 100.0
    >>> round(float(bamgboye2008(w)), 2)
    57.2
    """
    intercept, vec = bamgboye2008_coefficients()
    return intercept + np.asarray(wt_pct, dtype=float) @ vec


def ramirezverduzco2012_ester(fame_molar_mass_g_mol, double_bonds):
    r"""Cetane number of one methyl ester from molar mass and unsaturation.

    .. math::

        CN_i = -7.8 + 0.302\,M_i - 20\,N_i

    Parameters
    ----------
    fame_molar_mass_g_mol : array_like
        Molar mass of the methyl ester. [g/mol]
    double_bonds : array_like
        Number of C=C double bonds. [1]

    Returns
    -------
    cetane_number : ndarray
        Cetane number of the pure ester. [1]

    Notes
    -----
    Fitted on pure methyl esters with at most three double bonds (C8-C24).
    For four or more double bonds it falls far below measured values (C20:4:
    8.4 against 29.6, C22:6: -24 against 24.4, Knothe 2012); the registry
    flags such profiles. Equation: **MEMORY, consistency-checked** (it gives
    C16:0 73.9, C18:1 61.7, C18:3 20.5 against 74.5, 59.3, 22.7 in Knothe's
    compilation). Published AAD of the mixture model: 5.95 % (VERIFIED
    [S11]).

    References
    ----------
    .. [1] Ramirez-Verduzco L.F., Rodriguez-Rodriguez J.E., Jaramillo-Jacob
       A.R., "Predicting cetane number, kinematic viscosity, density and
       higher heating value of biodiesel from its fatty acid methyl ester
       composition", Fuel 91 (2012) 102-111 (title from memory).

    Examples
    --------
    Methyl palmitate (correlations.md 4.3 gives 73.9):

    >>> round(float(ramirezverduzco2012_ester(270.457, 0)), 1)
    73.9
    """
    mw = np.asarray(fame_molar_mass_g_mol, dtype=float)
    n = np.asarray(double_bonds, dtype=float)
    return RV2012_CN_INTERCEPT + RV2012_CN_MW_COEF * mw + RV2012_CN_DB_COEF * n


def ramirezverduzco2012(wt_pct):
    r"""Cetane number of a FAME mixture by mass-weighted per-ester forms.

    .. math::

        CN = \sum_i w_i \left(-7.8 + 0.302\,M_i - 20\,N_i\right)

    Parameters
    ----------
    wt_pct : array_like
        Composition, shape ``(n_samples, n_species)``. [wt %]

    Returns
    -------
    cetane_number : ndarray
        Estimated cetane number. [1]

    Notes
    -----
    Per-ester form: see :func:`ramirezverduzco2012_ester` (**MEMORY,
    consistency-checked**). Mixing rule: mass-fraction weighting
    (**MEMORY**). Published AAD 5.95 % for biodiesels (VERIFIED [S11]).
    Outside the domain for esters with four or more double bonds.

    References
    ----------
    .. [1] Ramirez-Verduzco L.F., Rodriguez-Rodriguez J.E., Jaramillo-Jacob
       A.R., Fuel 91 (2012) 102-111 (from memory).

    Examples
    --------
    Pure methyl oleate (correlations.md 4.3 gives 61.7):

    >>> from estimator.tables import species_keys
    >>> w = np.zeros(len(species_keys())); w[species_keys().index("C18:1")] = 100.0
    >>> round(float(ramirezverduzco2012(w)), 1)
    61.7
    """
    cn_i = ramirezverduzco2012_ester(
        species_column("fame_molar_mass_g_mol"), species_column("double_bonds")
    )
    return mass_weighted(wt_pct, cn_i)


def pure_ester_cetane_numbers():
    r"""Pure-ester cetane numbers: measured where tabulated, else a per-ester estimate.

    .. math::

        CN_i = \begin{cases}
        CN_i^{table} & \text{tabulated} \\
        -7.8 + 0.302\,M_i - 20\,N_i & N_i \le 3 \\
        CN_j^{table},\ j = \text{measured polyene } (N_j \ge 3) \text{ nearest in chain length}
        & N_i \ge 4
        \end{cases}

    Returns
    -------
    cetane_number : ndarray
        One value per species in :func:`estimator.tables.species_keys`
        order. [1]
    tabulated : ndarray of bool
        True where the value comes from the ``cetane_number`` column of
        ``species.csv`` (its ``cetane_source`` names the source). [1]

    Notes
    -----
    Tabulated values are Knothe's compilation (**MEMORY**), CombustDB via
    chemicals 1.5.2 (VERIFIED [S30]) and Knothe 2012 for C20:4/C22:6
    (VERIFIED [S13]); the choice between conflicting compilations (C7) is
    recorded per row. The fallback for esters with at most three double
    bonds is the Ramirez-Verduzco 2012 per-ester form (**MEMORY,
    consistency-checked**). That form was fitted on esters with at most
    three double bonds and goes negative beyond (C22:6: -24 against 24.4
    measured); the measured series C18:3 22.7, C20:4 29.6, C22:6 24.4 shows
    no further fall with more double bonds, so an untabulated ester with
    four or more double bonds (C18:4, C20:5, C22:5) takes the value of the
    measured polyene nearest in chain length (ties: nearest in double
    bonds): DERIVED, physical (>= 0), and flagged by the registry above
    10 wt % of untabulated esters.

    References
    ----------
    .. [1] Knothe G., "Dependence of biodiesel fuel properties on the
       structure of fatty acid alkyl esters", Fuel Process. Technol. 86
       (2005) 1059-1070 (from memory).
    .. [2] Knothe G., "Fuel properties of highly polyunsaturated fatty acid
       methyl esters. Prediction of fuel properties of algal biodiesel",
       Energy Fuels 26 (2012) 5265-5273 (volume and pages from memory).

    Examples
    --------
    >>> cn, tab = pure_ester_cetane_numbers()
    >>> from estimator.tables import species_keys
    >>> k = species_keys()
    >>> float(cn[k.index("C18:1")]), bool(tab[k.index("C24:0")]), float(cn[k.index("C20:5")])
    (59.3, False, 29.6)
    """
    cn, tabulated = tabulated_or_fallback("cetane_number", ramirezverduzco2012_ester)
    carbons = species_column("carbons")
    bonds = species_column("double_bonds")
    measured = np.flatnonzero(tabulated & (bonds >= 3))
    for i in np.flatnonzero(~tabulated & (bonds >= 4)):  # a handful of table rows
        nearest = min(measured, key=lambda j: (abs(carbons[j] - carbons[i]),
                                               abs(bonds[j] - bonds[i])))
        cn[i] = cn[nearest]
    return cn, tabulated


def knothe2005(wt_pct):
    r"""Cetane number as the mass-weighted mean of measured pure-ester cetane numbers.

    .. math::

        CN = \sum_i w_i\,CN_i

    Parameters
    ----------
    wt_pct : array_like
        Composition, shape ``(n_samples, n_species)``. [wt %]

    Returns
    -------
    cetane_number : ndarray
        Estimated cetane number. [1]

    Notes
    -----
    Named after the source of its numbers: the pure-ester cetane numbers of
    Knothe's compilation (2005 review, **MEMORY**), completed by CombustDB
    (VERIFIED [S30]) and Knothe 2012 for C20:4 and C22:6 (VERIFIED [S13]);
    see :func:`pure_ester_cetane_numbers` for the choice per ester and the
    fallbacks. Linear weighting: Knothe & Razon 2017 state that properties
    little influenced by minor components can be calculated from the amounts
    of the individual esters (VERIFIED [S12]); the same rule was used for
    cetane numbers of ester mixtures by Klopfenstein 1985 (from memory).
    Exact form (mass fractions, no interaction term): **MEMORY**. No
    published error for the rule; the method inherits the 5-11 unit spread
    between CN compilations (C7). Domain: at most 10 wt % of esters without
    a measured value.

    References
    ----------
    .. [1] Knothe G., "Dependence of biodiesel fuel properties on the
       structure of fatty acid alkyl esters", Fuel Process. Technol. 86
       (2005) 1059-1070 (from memory).
    .. [2] Knothe G., Energy Fuels 26 (2012) 5265-5273 (from memory).
    .. [3] Knothe G., Razon L.F., "Biodiesel fuels", Prog. Energy Combust.
       Sci. 58 (2017) 36-59.
    .. [4] Klopfenstein W.E., "Effect of molecular weights of fatty acid
       esters on cetane numbers as diesel fuels", J. Am. Oil Chem. Soc. 62
       (1985) 1029-1031 (from memory).

    Examples
    --------
    A 50/50 mix of methyl palmitate (74.5) and oleate (59.3):

    >>> from estimator.tables import species_keys
    >>> w = np.zeros(len(species_keys()))
    >>> w[[species_keys().index("C16:0"), species_keys().index("C18:1")]] = 50.0
    >>> round(float(knothe2005(w)), 2)
    66.9
    """
    cn_i, _ = pure_ester_cetane_numbers()
    return mass_weighted(wt_pct, cn_i)
