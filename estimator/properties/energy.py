"""Heating values of FAME: higher (gross) and lower (net) heating value, MJ/kg.

Composition arguments are ``wt_pct`` arrays of shape ``(n_samples, n_species)``
in :func:`estimator.tables.species_keys` order.
"""

from __future__ import annotations

import numpy as np

from estimator.properties.per_ester import mass_weighted, tabulated_or_fallback
from estimator.tables import species_column

__all__ = [
    "WATER_LATENT_HEAT_25C_MJ_KG",
    "WATER_PER_HYDROGEN",
    "adriaanse1965",
    "adriaanse1965_molar",
    "demirbas1998",
    "kay1936",
    "lhv_from_hhv",
    "pure_ester_hhv",
    "ramirezverduzco2012",
    "ramirezverduzco2012_ester",
]

# Demirbas 1998, HHV of vegetable oils from SV and IV (VERIFIED [S36]).
DEMIRBAS1998_INTERCEPT = 49.43  # [MJ/kg]
DEMIRBAS1998_SV_COEF = -0.041  # [MJ/kg per mg KOH/g]
DEMIRBAS1998_IV_COEF = -0.015  # [MJ/kg per g I2/100 g]

# Adriaanse, Dekker & Coops 1965, -dHc(liq, 25 C) of saturated methyl esters (VERIFIED [S37]).
ADRIAANSE1965_CH2 = 653.8  # [kJ/mol per carbon of the acid chain]
ADRIAANSE1965_CONST = 292.6  # [kJ/mol]

# Ramirez-Verduzco et al. 2012, per-ester HHV (MEMORY).
RV2012_HHV_INTERCEPT = 46.19  # [MJ/kg]
RV2012_HHV_MW_COEF = -1794.0  # [MJ g/(kg mol)]
RV2012_HHV_DB_COEF = -0.21  # [MJ/kg per double bond]

#: Latent heat of vaporisation of water at 25 degC [MJ/kg]: 44.01 kJ/mol / 18.015 g/mol
#: (the 25 degC basis of thermochemical gross/net heating values).
WATER_LATENT_HEAT_25C_MJ_KG = 2.442
#: Mass of water formed per mass of hydrogen burnt, M(H2O)/(2 M(H)) = 18.015/2.016 [kg/kg].
WATER_PER_HYDROGEN = 8.937


def demirbas1998(saponification_value_mgKOH_g, iodine_value_gI2_100g):
    r"""Higher heating value from saponification and iodine value (Demirbas 1998).

    .. math::

        HHV = 49.43 - 0.041\,SV - 0.015\,IV

    Parameters
    ----------
    saponification_value_mgKOH_g : array_like
        Saponification value. [mg KOH/g]
    iodine_value_gI2_100g : array_like
        Iodine value. [g I2/100 g]

    Returns
    -------
    hhv_MJ_kg : ndarray
        Higher heating value. [MJ/kg]

    Notes
    -----
    Fitted on Turkish **vegetable oils** with the oil's SV and IV
    (correlation coefficient 0.9999, mean difference 0.0067 %; VERIFIED
    [S36]). Applied to FAME it is an extrapolation (C3): FAME and the parent
    oil have nearly the same SV and IV per mass (the ester chain is 1.3
    g/mol heavier than a third of the triglyceride), so it returns roughly
    the oil's HHV, which is below the ester's. The registry marks every FAME
    estimate from it as outside the domain.

    References
    ----------
    .. [1] Demirbas A., "Fuel properties and calculation of higher heating
       values of vegetable oils", Fuel 77 (1998) 1117-1120 (from memory).

    Examples
    --------
    SV 191, IV 130 (a soybean-like ester; our arithmetic):

    >>> round(float(demirbas1998(191.0, 130.0)), 3)
    39.649
    """
    sv = np.asarray(saponification_value_mgKOH_g, dtype=float)
    iv = np.asarray(iodine_value_gI2_100g, dtype=float)
    return DEMIRBAS1998_INTERCEPT + DEMIRBAS1998_SV_COEF * sv + DEMIRBAS1998_IV_COEF * iv


def adriaanse1965_molar(carbons):
    r"""Heat of combustion of a saturated methyl ester, per mole (Adriaanse 1965).

    .. math::

        -\Delta H_c(\text{liq}, 25\,^\circ C) = 653.8\,c + 292.6

    Parameters
    ----------
    carbons : array_like
        Carbon number c of the fatty acid (c > 5). [1]

    Returns
    -------
    heat_of_combustion_kJ_mol : ndarray
        Gross heat of combustion of the liquid at 25 degC. [kJ/mol]

    Notes
    -----
    Measured on normal saturated methyl esters; accurate to 0.02 %; based on
    1951 atomic weights (**VERIFIED [S37]**). Outside its domain for c <= 5
    and for unsaturated or hydroxy esters.

    References
    ----------
    .. [1] Adriaanse N., Dekker H., Coops J., "Heats of combustion of normal
       saturated fatty acids and their methyl esters", Recl. Trav. Chim.
       Pays-Bas 84 (1965) 393-407 (from memory).

    Examples
    --------
    Methyl palmitate (correlations.md 9.2: 10753.4):

    >>> round(float(adriaanse1965_molar(16)), 1)
    10753.4
    """
    return ADRIAANSE1965_CH2 * np.asarray(carbons, dtype=float) + ADRIAANSE1965_CONST


def adriaanse1965(carbons, fame_molar_mass_g_mol):
    r"""Higher heating value of a saturated methyl ester, per mass (Adriaanse 1965).

    .. math::

        HHV = \frac{653.8\,c + 292.6}{M}

    Parameters
    ----------
    carbons : array_like
        Carbon number c of the fatty acid (c > 5). [1]
    fame_molar_mass_g_mol : array_like
        Molar mass of the methyl ester. [g/mol]

    Returns
    -------
    hhv_MJ_kg : ndarray
        Higher heating value. [MJ/kg]

    Notes
    -----
    See :func:`adriaanse1965_molar` (**VERIFIED [S37]**, 0.02 %); per-mass
    values DERIVED with the IUPAC 2021 molar masses of ``species.csv``.

    References
    ----------
    .. [1] Adriaanse N., Dekker H., Coops J., Recl. Trav. Chim. Pays-Bas 84
       (1965) 393-407 (from memory).

    Examples
    --------
    Methyl stearate (correlations.md 9.2: 40.40):

    >>> round(float(adriaanse1965(18, 298.511)), 2)
    40.4
    """
    return adriaanse1965_molar(carbons) / np.asarray(fame_molar_mass_g_mol, dtype=float)


def ramirezverduzco2012_ester(fame_molar_mass_g_mol, double_bonds):
    r"""Higher heating value of one methyl ester (Ramirez-Verduzco 2012).

    .. math::

        HHV_i = 46.19 - \frac{1794}{M_i} - 0.21\,N_i

    Parameters
    ----------
    fame_molar_mass_g_mol : array_like
        Molar mass of the methyl ester. [g/mol]
    double_bonds : array_like
        Number of C=C double bonds. [1]

    Returns
    -------
    hhv_MJ_kg : ndarray
        Higher heating value. [MJ/kg]

    Notes
    -----
    **MEMORY, consistency-checked** (C16:0 39.56, C18:1 39.93 against 39.76
    from Adriaanse 1965 and 40.09 from the CRC formation enthalpy). No term
    for extra oxygen: outside its domain for the hydroxy ester C18:1OH.
    Published AAD of the mixture model 0.21 % (VERIFIED [S11]).

    References
    ----------
    .. [1] Ramirez-Verduzco L.F., Rodriguez-Rodriguez J.E., Jaramillo-Jacob
       A.R., Fuel 91 (2012) 102-111 (from memory).

    Examples
    --------
    >>> round(float(ramirezverduzco2012_ester(270.457, 0)), 2)
    39.56
    """
    mw = np.asarray(fame_molar_mass_g_mol, dtype=float)
    n = np.asarray(double_bonds, dtype=float)
    return RV2012_HHV_INTERCEPT + RV2012_HHV_MW_COEF / mw + RV2012_HHV_DB_COEF * n


def ramirezverduzco2012(wt_pct):
    r"""Higher heating value of FAME by mass-weighted per-ester forms (Ramirez-Verduzco 2012).

    .. math::

        HHV = \sum_i w_i \left(46.19 - \frac{1794}{M_i} - 0.21\,N_i\right)

    Parameters
    ----------
    wt_pct : array_like
        Composition, shape ``(n_samples, n_species)``. [wt %]

    Returns
    -------
    hhv_MJ_kg : ndarray
        Higher heating value. [MJ/kg]

    Notes
    -----
    Per-ester form and mass-weighted mixing: **MEMORY**. Published AAD
    0.21 % (VERIFIED [S11]).

    References
    ----------
    .. [1] Ramirez-Verduzco L.F., Rodriguez-Rodriguez J.E., Jaramillo-Jacob
       A.R., Fuel 91 (2012) 102-111 (from memory).

    Examples
    --------
    >>> from estimator.tables import species_keys
    >>> w = np.zeros(len(species_keys())); w[species_keys().index("C18:1")] = 100.0
    >>> round(float(ramirezverduzco2012(w)), 2)
    39.93
    """
    hhv_i = ramirezverduzco2012_ester(
        species_column("fame_molar_mass_g_mol"), species_column("double_bonds")
    )
    return mass_weighted(wt_pct, hhv_i)


def pure_ester_hhv():
    r"""Pure-ester higher heating values: tabulated where known, else Ramirez-Verduzco 2012.

    .. math::

        HHV_i = HHV_i^{table} \text{ if tabulated, else } 46.19 - 1794/M_i - 0.21\,N_i

    Returns
    -------
    hhv_MJ_kg : ndarray
        One value per species in :func:`estimator.tables.species_keys`
        order. [MJ/kg]
    tabulated : ndarray of bool
        True where the value comes from the ``hhv_MJ_kg`` column of
        ``species.csv`` (source in ``hhv_source``). [1]

    Notes
    -----
    Saturated esters: Adriaanse 1965 (VERIFIED [S37], 0.02 %). C18:1, C18:2,
    C18:3: from measured liquid formation enthalpies (CRC/WebBook via
    chemicals 1.5.2), preferred to Freedman & Bagby 1989 as recalled
    (**MEMORY**, 0.3-0.8 % lower, C4). Other unsaturated esters: the
    :func:`ramirezverduzco2012_ester` form (**MEMORY**).

    References
    ----------
    .. [1] Adriaanse N., Dekker H., Coops J., Recl. Trav. Chim. Pays-Bas 84
       (1965) 393-407 (from memory).

    Examples
    --------
    >>> from estimator.tables import species_keys
    >>> hhv, tab = pure_ester_hhv()
    >>> float(hhv[species_keys().index("C16:0")]), bool(tab[species_keys().index("C20:1")])
    (39.76, False)
    """
    return tabulated_or_fallback("hhv_MJ_kg", ramirezverduzco2012_ester)


def kay1936(wt_pct):
    r"""Higher heating value of FAME as the mass-weighted mean of pure-ester values.

    .. math::

        HHV = \sum_i w_i\,HHV_i

    Parameters
    ----------
    wt_pct : array_like
        Composition, shape ``(n_samples, n_species)``. [wt %]

    Returns
    -------
    hhv_MJ_kg : ndarray
        Higher heating value. [MJ/kg]

    Notes
    -----
    Kay's linear mixing rule; for heats of combustion it is exact when the
    heat of mixing is negligible, as for FAME-FAME mixtures. Pure-ester
    values from :func:`pure_ester_hhv`. No published error for the mixture;
    the pure values are good to 0.02 % (saturated) and about 0.5 %
    (unsaturated).

    References
    ----------
    .. [1] Kay W.B., "Density of hydrocarbon gases and vapors at high
       temperature and pressure", Ind. Eng. Chem. 28 (1936) 1014-1019 (from
       memory).
    .. [2] Adriaanse N., Dekker H., Coops J., Recl. Trav. Chim. Pays-Bas 84
       (1965) 393-407.

    Examples
    --------
    The soybean-like mixture of reference_libs.md 4.2 (39.885 there, with
    the same pure values; our number):

    >>> from estimator.tables import species_keys
    >>> w = np.zeros(len(species_keys()))
    >>> for k, v in {"C16:0": 11, "C18:0": 4, "C18:1": 24, "C18:2": 53, "C18:3": 8}.items():
    ...     w[species_keys().index(k)] = v
    >>> round(float(kay1936(w)), 3)
    39.885
    """
    hhv_i, _ = pure_ester_hhv()
    return mass_weighted(wt_pct, hhv_i)


def lhv_from_hhv(hhv_MJ_kg, hydrogen_wt_pct):
    r"""Lower heating value from the higher heating value and the hydrogen content.

    .. math::

        LHV = HHV - 2.442 \times 8.937 \times \frac{H}{100}

    Parameters
    ----------
    hhv_MJ_kg : array_like
        Higher heating value. [MJ/kg]
    hydrogen_wt_pct : array_like
        Hydrogen content of the fuel. [wt %]

    Returns
    -------
    lhv_MJ_kg : ndarray
        Lower heating value. [MJ/kg]

    Notes
    -----
    Subtracts the latent heat of the water formed: 8.937 kg of water per kg
    of hydrogen (M(H2O)/2M(H)), evaporated at 25 degC with 2.442 MJ/kg
    (44.01 kJ/mol), the reference state of the heats of combustion used
    here. The fuel is assumed dry. Exact (DERIVED); no fitted domain.

    References
    ----------
    .. [1] Wagner W., Pruss A., "The IAPWS formulation 1995 for the
       thermodynamic properties of ordinary water substance", J. Phys. Chem.
       Ref. Data 31 (2002) 387-535 (latent heat at
       25 degC; from memory).

    Examples
    --------
    Methyl oleate, HHV 40.091 MJ/kg, H 12.239 wt % (thermo 0.6.1 gives LHV
    37.419):

    >>> round(float(lhv_from_hhv(40.091, 12.239)), 3)
    37.42
    """
    hhv = np.asarray(hhv_MJ_kg, dtype=float)
    h = np.asarray(hydrogen_wt_pct, dtype=float) / 100.0
    return hhv - WATER_LATENT_HEAT_25C_MJ_KG * WATER_PER_HYDROGEN * h
