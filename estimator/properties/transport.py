"""Density and kinematic viscosity of FAME, at the reference temperature and at any other.

Densities are in kg/m3 and kinematic viscosities in mm2/s. Functions that take
``temperature_C`` accept a scalar or one temperature per sample (shape
``(n_samples,)``). Composition arguments are ``wt_pct`` arrays of shape
``(n_samples, n_species)`` in :func:`estimator.tables.species_keys` order.
"""

from __future__ import annotations

import numpy as np

from estimator.properties.per_ester import tabulated_or_fallback
from estimator.tables import species_column

__all__ = [
    "EN14214_DENSITY_SLOPE_KG_M3_K",
    "RV2022_GROUPS",
    "allen1999",
    "ideal_mixing_density",
    "krisnangkura2006",
    "krisnangkura2006_ester",
    "log_mixing_viscosity",
    "pure_ester_kin_viscosity_40C",
    "ramirezverduzco2012_density",
    "ramirezverduzco2012_density_ester",
    "ramirezverduzco2012_viscosity",
    "ramirezverduzco2012_viscosity_ester",
    "ramirezverduzco2022",
    "ramirezverduzco2022_ester_density",
    "ramirezverduzco2022_molar_volume",
    "viscosity_temperature_slope_K",
]

ZERO_CELSIUS_K = 273.15
T40_K = 313.15

#: Ramirez-Verduzco 2022 group contributions to the molar volume,
#: V = sum n_k (a_k + b_k T + c_k T^2) [cm3/mol, T in K] (Appendices A-B; VERIFIED [S20]).
#: Each entry is (a [cm3/mol], b [cm3/(mol K)], c [cm3/(mol K2)]).
RV2022_GROUPS = {
    "CH3": (15.74, 1.62e-3, 10.01e-5),
    "CH2": (14.42, 5.1e-3, 0.76e-5),
    "=CH": (11.98, 1.19e-3, 0.89e-5),
    "COO": (30.77, 1.31e-3, 1.08e-5),
}

# Ramirez-Verduzco et al. 2012 per-ester density at 20 degC, g/cm3 (MEMORY).
RV2012_RHO_INTERCEPT = 0.8463  # [g/cm3]
RV2012_RHO_MW_COEF = 4.9  # [g2/(cm3 mol)]
RV2012_RHO_DB_COEF = 0.0118  # [g/cm3 per double bond]
#: EN 14214 Annex B correction of a measured density to 15 degC,
#: rho15 = rho_t + 0.723 (t - 15) [kg/m3, t in degC] (MEMORY).
EN14214_DENSITY_SLOPE_KG_M3_K = 0.723

# Ramirez-Verduzco et al. 2012 per-ester viscosity at 40 degC, mm2/s (MEMORY).
RV2012_NU_INTERCEPT = -12.503
RV2012_NU_LNMW_COEF = 2.496
RV2012_NU_DB_COEF = -0.178

# Krisnangkura, Yimsuwan & Pairintra 2006 (MEMORY): saturated C12:0-C18:0,
# ln nu = A0 + A1 z + (B0 + B1 z)/T, nu in mm2/s, T in K, z = acid carbon number.
K2006_SAT_A0 = -2.177
K2006_SAT_A1 = -0.202
K2006_SAT_B0 = 403.66  # [K]
K2006_SAT_B1 = 109.77  # [K]
#: Krisnangkura 2006 C18 unsaturated esters, ln nu = A + B/T: double bonds -> (A, B [K]) (MEMORY).
K2006_C18_UNSATURATED = {1: (-5.03, 2051.5), 2: (-4.51, 1822.5), 3: (-4.18, 1685.5)}


def _kelvin(temperature_C):
    return np.asarray(temperature_C, dtype=float) + ZERO_CELSIUS_K


def _per_sample(temperature_C):
    """Temperature as a scalar or as a column (n, 1) broadcasting over species."""
    t = np.asarray(temperature_C, dtype=float)
    return t if t.ndim == 0 else t[:, None]


def ramirezverduzco2022_molar_volume(carbons, double_bonds, temperature_C):
    r"""Liquid molar volume of a methyl ester by group contribution (Ramirez-Verduzco 2022).

    .. math::

        V = \sum_k n_k \left(a_k + b_k T + c_k T^2\right),\quad
        n_{CH_3} = 2,\ n_{=CH} = 2D,\ n_{COO} = 1,\ n_{CH_2} = z - 2 - 2D

    Parameters
    ----------
    carbons : array_like
        Carbon number z of the fatty acid. [1]
    double_bonds : array_like
        Number of C=C double bonds D. [1]
    temperature_C : array_like
        Temperature. [degC]

    Returns
    -------
    molar_volume_cm3_mol : ndarray
        Molar volume of the liquid at 0.1 MPa. [cm3/mol]

    Notes
    -----
    Data base: 1231 densities of 58 alkyl esters; biodiesel densities by
    Kay's rule with AAD 0.29 % (16 biodiesels, 8 blends, 696 points).
    Group parameters **VERIFIED [S20]**; our reading reproduces the paper's
    worked example. The temperature range of the data base was not
    recorded. Below the melting point the value is that of the sub-cooled
    liquid (C10). The group set has no -OH group: for methyl ricinoleate the
    CH(OH) is counted as CH2 and the registry flags such profiles.

    References
    ----------
    .. [1] Ramirez-Verduzco L.F., "A group contribution method for
       predicting the alkyl ester and biodiesel densities at various
       temperatures", Sustainability 14 (2022) 6804,
       doi:10.3390/su14116804.

    Examples
    --------
    Methyl hexadecanoate at 303.15 K (the paper's worked example: 316.3233):

    >>> round(float(ramirezverduzco2022_molar_volume(16, 0, 30.0)), 4)
    316.3233
    """
    z = np.asarray(carbons, dtype=float)
    d = np.asarray(double_bonds, dtype=float)
    t = _kelvin(temperature_C)
    counts = {"CH3": 2.0, "=CH": 2.0 * d, "COO": 1.0, "CH2": z - 2.0 - 2.0 * d}
    volume = 0.0
    for group, n in counts.items():
        a, b, c = RV2022_GROUPS[group]
        volume = volume + n * (a + b * t + c * t * t)
    return volume


def ramirezverduzco2022_ester_density(carbons, double_bonds, fame_molar_mass_g_mol, temperature_C):
    r"""Liquid density of a methyl ester from its group-contribution molar volume.

    .. math::

        \rho_i = 1000\,\frac{M_i}{V_i(T)}

    Parameters
    ----------
    carbons : array_like
        Carbon number of the fatty acid. [1]
    double_bonds : array_like
        Number of C=C double bonds. [1]
    fame_molar_mass_g_mol : array_like
        Molar mass of the methyl ester. [g/mol]
    temperature_C : array_like
        Temperature. [degC]

    Returns
    -------
    density_kg_m3 : ndarray
        Liquid (or sub-cooled liquid) density. [kg/m3]

    Notes
    -----
    See :func:`ramirezverduzco2022_molar_volume` (**VERIFIED [S20]**). Against
    the Huber 2009 equations of state the group values agree within 0.25 %
    for the unsaturated C18 esters and about 0.6 % for sub-cooled C16:0 and
    C18:0 (correlations.md 7.1, DERIVED).

    References
    ----------
    .. [1] Ramirez-Verduzco L.F., Sustainability 14 (2022) 6804,
       doi:10.3390/su14116804.

    Examples
    --------
    Methyl oleate at 15 degC (correlations.md 7.1 gives 875.9):

    >>> round(float(ramirezverduzco2022_ester_density(18, 1, 296.495, 15.0)), 1)
    875.9
    """
    volume = ramirezverduzco2022_molar_volume(carbons, double_bonds, temperature_C)
    return 1000.0 * np.asarray(fame_molar_mass_g_mol, dtype=float) / volume


def ideal_mixing_density(wt_pct, density_kg_m3):
    r"""Density of an ideal liquid mixture from mass % and pure densities (Amagat).

    .. math::

        \frac{1}{\rho} = \sum_i \frac{w_i}{\rho_i}

    Parameters
    ----------
    wt_pct : array_like
        Composition, shape ``(n_samples, n_species)``. [wt %]
    density_kg_m3 : array_like
        Pure-component densities, shape ``(n_species,)`` or
        ``(n_samples, n_species)``. [kg/m3]

    Returns
    -------
    density_kg_m3 : ndarray
        Mixture density. [kg/m3]

    Notes
    -----
    Additive volumes (VERIFIED [S29], chemicals ``Amgat`` docs). Kay's linear
    mass-fraction rule, used by Ramirez-Verduzco 2022, differs by second
    order only for FAME-FAME mixtures (C9). Exact for ideal solutions; no
    fitted domain.

    References
    ----------
    .. [1] Poling B.E., Prausnitz J.M., O'Connell J.P., The Properties of
       Gases and Liquids, 5th ed., McGraw-Hill (2001), ch. 5 (from memory).

    Examples
    --------
    >>> round(float(ideal_mixing_density([50.0, 50.0], [860.0, 900.0])), 2)
    879.55
    """
    w = np.asarray(wt_pct, dtype=float) / 100.0
    rho = np.asarray(density_kg_m3, dtype=float)
    if rho.ndim == 1:
        return 1.0 / (w @ (1.0 / rho))
    return 1.0 / (w / rho).sum(axis=-1)


def ramirezverduzco2022(wt_pct, temperature_C=15.0):
    r"""Density of FAME by group contribution and ideal mixing.

    .. math::

        \frac{1}{\rho(T)} = \sum_i \frac{w_i\,V_i(T)}{1000\,M_i}

    Parameters
    ----------
    wt_pct : array_like
        Composition, shape ``(n_samples, n_species)``. [wt %]
    temperature_C : array_like, optional
        Temperature, scalar or one per sample. [degC]

    Returns
    -------
    density_kg_m3 : ndarray
        Liquid density at 0.1 MPa. [kg/m3]

    Notes
    -----
    Pure-ester densities from :func:`ramirezverduzco2022_ester_density`
    (group parameters **VERIFIED [S20]**), mixed ideally (1/rho = sum
    w_i/rho_i) rather than by Kay's rule as in the paper (C9). Published AAD
    for biodiesel densities: 0.29 % (VERIFIED [S20]).

    References
    ----------
    .. [1] Ramirez-Verduzco L.F., Sustainability 14 (2022) 6804,
       doi:10.3390/su14116804.

    Examples
    --------
    The soybean-like mixture of reference_libs.md 4.2 (thermo 0.6.1 gives
    884.66 with the Huber EOS fits; our number):

    >>> from estimator.tables import species_keys
    >>> w = np.zeros(len(species_keys()))
    >>> for k, v in {"C16:0": 11, "C18:0": 4, "C18:1": 24, "C18:2": 53, "C18:3": 8}.items():
    ...     w[species_keys().index(k)] = v
    >>> round(float(ramirezverduzco2022(w, 15.0)), 1)
    882.7
    """
    rho_i = ramirezverduzco2022_ester_density(
        species_column("carbons"),
        species_column("double_bonds"),
        species_column("fame_molar_mass_g_mol"),
        _per_sample(temperature_C),
    )
    return ideal_mixing_density(wt_pct, rho_i)


def ramirezverduzco2012_density_ester(fame_molar_mass_g_mol, double_bonds):
    r"""Density of one methyl ester at 20 degC (Ramirez-Verduzco 2012).

    .. math::

        \rho_{i,20} = 1000\left(0.8463 + \frac{4.9}{M_i} + 0.0118\,N_i\right)

    Parameters
    ----------
    fame_molar_mass_g_mol : array_like
        Molar mass of the methyl ester. [g/mol]
    double_bonds : array_like
        Number of C=C double bonds. [1]

    Returns
    -------
    density_20C_kg_m3 : ndarray
        Density at 20 degC. [kg/m3]

    Notes
    -----
    **MEMORY, consistency-checked**: C18:1 874.6, C18:2 886.5 against 873.8 and
    885.4 kg/m3 from the Huber 2009 EOS (DERIVED). Published AAD of the
    mixture model 0.11 % (VERIFIED [S11]). Fitted on esters with at most
    three double bonds.

    References
    ----------
    .. [1] Ramirez-Verduzco L.F., Rodriguez-Rodriguez J.E., Jaramillo-Jacob
       A.R., Fuel 91 (2012) 102-111 (from memory).

    Examples
    --------
    >>> round(float(ramirezverduzco2012_density_ester(296.495, 1)), 1)
    874.6
    """
    mw = np.asarray(fame_molar_mass_g_mol, dtype=float)
    n = np.asarray(double_bonds, dtype=float)
    return 1000.0 * (RV2012_RHO_INTERCEPT + RV2012_RHO_MW_COEF / mw + RV2012_RHO_DB_COEF * n)


def ramirezverduzco2012_density(wt_pct, temperature_C=15.0):
    r"""Density of FAME by mass-weighted per-ester densities, moved along the EN 14214 slope.

    .. math::

        \rho(T) = \sum_i w_i\,\rho_{i,20} - 0.723\,(T - 20)

    Parameters
    ----------
    wt_pct : array_like
        Composition, shape ``(n_samples, n_species)``. [wt %]
    temperature_C : array_like, optional
        Temperature, scalar or one per sample. [degC]

    Returns
    -------
    density_kg_m3 : ndarray
        Liquid density. [kg/m3]

    Notes
    -----
    The paper's equation gives 20 degC; other temperatures use the EN 14214
    Annex B correction slope 0.723 kg/m3/K (**MEMORY**), consistent with the
    -0.73 to -0.77 kg/m3/K of the Huber 2009 EOS for C16-C18 esters between
    15 and 40 degC (DERIVED). Mixing rule (mass-weighted): **MEMORY**.
    Published AAD 0.11 % (VERIFIED [S11]).

    References
    ----------
    .. [1] Ramirez-Verduzco L.F., Rodriguez-Rodriguez J.E., Jaramillo-Jacob
       A.R., Fuel 91 (2012) 102-111 (from memory).
    .. [2] EN 14214:2012+A2:2019, Annex B (density correction; from memory).

    Examples
    --------
    Methyl oleate at 15 degC, 874.6 + 5 x 0.723 (our arithmetic):

    >>> from estimator.tables import species_keys
    >>> w = np.zeros(len(species_keys())); w[species_keys().index("C18:1")] = 100.0
    >>> round(float(ramirezverduzco2012_density(w, 15.0)), 1)
    878.2
    """
    rho_i = ramirezverduzco2012_density_ester(
        species_column("fame_molar_mass_g_mol"), species_column("double_bonds")
    )
    rho20 = np.asarray(wt_pct, dtype=float) @ rho_i / 100.0
    t = np.asarray(temperature_C, dtype=float)
    return rho20 - EN14214_DENSITY_SLOPE_KG_M3_K * (t - 20.0)


def log_mixing_viscosity(wt_pct, kin_viscosity_mm2_s):
    r"""Kinematic viscosity of a mixture by logarithmic mixing (Grunberg-Nissan, G_ij = 0).

    .. math::

        \ln \nu = \sum_i w_i \ln \nu_i

    Parameters
    ----------
    wt_pct : array_like
        Composition, shape ``(n_samples, n_species)``. [wt %]
    kin_viscosity_mm2_s : array_like
        Pure-component kinematic viscosities, shape ``(n_species,)`` or
        ``(n_samples, n_species)``. [mm2/s]

    Returns
    -------
    kin_viscosity_mm2_s : ndarray
        Mixture kinematic viscosity. [mm2/s]

    Notes
    -----
    The Arrhenius/logarithmic rule without interaction terms (VERIFIED as
    used in [S27][S33][S34]); mass fractions are used, which for C16-C18
    esters nearly coincide with mole fractions.

    References
    ----------
    .. [1] Grunberg L., Nissan A.H., "Mixture law for viscosity", Nature 164
       (1949) 799-800 (from memory).

    Examples
    --------
    >>> round(float(log_mixing_viscosity([50.0, 50.0], [4.0, 9.0])), 6)
    6.0
    """
    w = np.asarray(wt_pct, dtype=float) / 100.0
    ln_nu = np.log(np.asarray(kin_viscosity_mm2_s, dtype=float))
    if ln_nu.ndim == 1:
        return np.exp(w @ ln_nu)
    return np.exp((w * ln_nu).sum(axis=-1))


def viscosity_temperature_slope_K(carbons, double_bonds):
    r"""Slope B of ln(nu) against 1/T for a methyl ester, from Krisnangkura 2006.

    .. math::

        B = \begin{cases}
        403.66 + 109.77\,z & D = 0 \\
        B_{C18:D} + 109.77\,(z - 18) & D \ge 1,\ B_{C18:1,2,3} = 2051.5,\ 1822.5,\ 1685.5
        \end{cases}

    Parameters
    ----------
    carbons : array_like
        Carbon number z of the fatty acid. [1]
    double_bonds : array_like
        Number of C=C double bonds D; four or more use the C18:3 slope. [1]

    Returns
    -------
    slope_K : ndarray
        B in ln nu = A + B/T. [K]

    Notes
    -----
    Saturated esters: Krisnangkura 2006's C12:0-C18:0 equation (**MEMORY,
    consistency-checked**), used outside C12-C18 as an extrapolation.
    Unsaturated esters: the paper's C18:1/C18:2/C18:3 slopes (**MEMORY**);
    other chain lengths are shifted by the saturated CH2 increment
    109.77 K, and four or more double bonds take the C18:3 slope
    (both DERIVED here, not from the paper). The hydroxy ester C18:1OH is
    treated as C18:1, which understates its temperature sensitivity.

    References
    ----------
    .. [1] Krisnangkura K., Yimsuwan T., Pairintra R., "An empirical approach
       in predicting biodiesel viscosity at various temperatures", Fuel 85
       (2006) 107-113 (from memory).

    Examples
    --------
    >>> viscosity_temperature_slope_K([16, 18, 20], [0, 1, 4]).round(2)
    array([2159.98, 2051.5 , 1905.04])
    """
    z = np.asarray(carbons, dtype=float)
    d = np.asarray(double_bonds, dtype=float)
    sat = K2006_SAT_B0 + K2006_SAT_B1 * z
    c18 = np.select(
        [d == 1, d == 2],
        [K2006_C18_UNSATURATED[1][1], K2006_C18_UNSATURATED[2][1]],
        K2006_C18_UNSATURATED[3][1],
    )
    unsat = c18 + K2006_SAT_B1 * (z - 18.0)
    return np.where(d == 0, sat, unsat)


def krisnangkura2006_ester(carbons, double_bonds, temperature_C):
    r"""Kinematic viscosity of one methyl ester at temperature (Krisnangkura 2006).

    .. math::

        \ln \nu = \begin{cases}
        -2.177 - 0.202\,z + \dfrac{403.66}{T} + \dfrac{109.77\,z}{T} & D = 0 \\
        A_{C18:D} + \dfrac{B_{C18:D}}{T} + (z - 18)\left(-0.202 + \dfrac{109.77}{T}\right)
        & D \ge 1
        \end{cases}

    Parameters
    ----------
    carbons : array_like
        Carbon number z of the fatty acid. [1]
    double_bonds : array_like
        Number of C=C double bonds D (four or more use the C18:3 form). [1]
    temperature_C : array_like
        Temperature. [degC]

    Returns
    -------
    kin_viscosity_mm2_s : ndarray
        Kinematic viscosity. [mm2/s]

    Notes
    -----
    Fitted on saturated C12:0-C18:0 esters and on methyl oleate, linoleate
    and linolenate (**MEMORY**; the saturated form consistency-checked:
    C16:0 4.43 against 4.38 mm2/s measured at 40 degC). Largest stated
    deviation: 0.354 mm2/s (5.60 %) for methyl stearate at 40 degC
    (VERIFIED [S32]). The chain-length shift of the unsaturated forms is
    DERIVED (see :func:`viscosity_temperature_slope_K`).

    References
    ----------
    .. [1] Krisnangkura K., Yimsuwan T., Pairintra R., Fuel 85 (2006)
       107-113 (from memory).

    Examples
    --------
    Methyl palmitate and methyl oleate at 40 degC (correlations.md 8.1: 4.43
    and 4.58):

    >>> krisnangkura2006_ester([16, 18], [0, 1], 40.0).round(2)
    array([4.43, 4.58])
    """
    z = np.asarray(carbons, dtype=float)
    d = np.asarray(double_bonds, dtype=float)
    t = _kelvin(temperature_C)
    ln_sat = K2006_SAT_A0 + K2006_SAT_A1 * z + (K2006_SAT_B0 + K2006_SAT_B1 * z) / t
    a18 = np.select(
        [d == 1, d == 2],
        [K2006_C18_UNSATURATED[1][0], K2006_C18_UNSATURATED[2][0]],
        K2006_C18_UNSATURATED[3][0],
    )
    b18 = np.select(
        [d == 1, d == 2],
        [K2006_C18_UNSATURATED[1][1], K2006_C18_UNSATURATED[2][1]],
        K2006_C18_UNSATURATED[3][1],
    )
    ln_unsat = a18 + b18 / t + (z - 18.0) * (K2006_SAT_A1 + K2006_SAT_B1 / t)
    return np.exp(np.where(d == 0, ln_sat, ln_unsat))


def krisnangkura2006(wt_pct, temperature_C=40.0):
    r"""Kinematic viscosity of FAME from Krisnangkura 2006 per-ester forms, log-mixed.

    .. math::

        \ln \nu(T) = \sum_i w_i \ln \nu_i(T)

    Parameters
    ----------
    wt_pct : array_like
        Composition, shape ``(n_samples, n_species)``. [wt %]
    temperature_C : array_like, optional
        Temperature, scalar or one per sample. [degC]

    Returns
    -------
    kin_viscosity_mm2_s : ndarray
        Kinematic viscosity. [mm2/s]

    Notes
    -----
    Per-ester forms from :func:`krisnangkura2006_ester`; mixing by mass
    fractions (the paper's exact mixing convention: **MEMORY**, uncertain).
    Stated accuracy for eight oil methyl esters at 40 degC: 1.08-8.56 %;
    coconut 5.53 % and palm 2.06 % at 40 degC (VERIFIED [S32]).

    References
    ----------
    .. [1] Krisnangkura K., Yimsuwan T., Pairintra R., Fuel 85 (2006)
       107-113 (from memory).

    Examples
    --------
    Pure methyl linoleate at 40 degC (correlations.md 8.1: 3.71):

    >>> from estimator.tables import species_keys
    >>> w = np.zeros(len(species_keys())); w[species_keys().index("C18:2")] = 100.0
    >>> round(float(krisnangkura2006(w, 40.0)), 2)
    3.71
    """
    nu_i = krisnangkura2006_ester(
        species_column("carbons"), species_column("double_bonds"), _per_sample(temperature_C)
    )
    return log_mixing_viscosity(wt_pct, nu_i)


def ramirezverduzco2012_viscosity_ester(fame_molar_mass_g_mol, double_bonds):
    r"""Kinematic viscosity of one methyl ester at 40 degC (Ramirez-Verduzco 2012).

    .. math::

        \ln \nu_{i,40} = -12.503 + 2.496 \ln M_i - 0.178\,N_i

    Parameters
    ----------
    fame_molar_mass_g_mol : array_like
        Molar mass of the methyl ester. [g/mol]
    double_bonds : array_like
        Number of C=C double bonds. [1]

    Returns
    -------
    kin_viscosity_40C_mm2_s : ndarray
        Kinematic viscosity at 40 degC. [mm2/s]

    Notes
    -----
    **MEMORY, consistency-checked** (C16:0 4.37, C18:1 4.60, C18:3 3.11
    against 4.38, 4.51, 3.14 measured by Knothe & Steidley 2005). For esters
    solid at 40 degC (C20:0 and longer) the value is a sub-cooled
    extrapolation. Published AAD of the mixture model 2.57 % (VERIFIED
    [S11]).

    References
    ----------
    .. [1] Ramirez-Verduzco L.F., Rodriguez-Rodriguez J.E., Jaramillo-Jacob
       A.R., Fuel 91 (2012) 102-111 (from memory).

    Examples
    --------
    >>> round(float(ramirezverduzco2012_viscosity_ester(270.457, 0)), 2)
    4.37
    """
    mw = np.asarray(fame_molar_mass_g_mol, dtype=float)
    n = np.asarray(double_bonds, dtype=float)
    return np.exp(RV2012_NU_INTERCEPT + RV2012_NU_LNMW_COEF * np.log(mw) + RV2012_NU_DB_COEF * n)


def _shift_to_temperature(nu40_i, temperature_C):
    """Move per-ester viscosities from 40 degC along their Krisnangkura slopes."""
    slope = viscosity_temperature_slope_K(species_column("carbons"), species_column("double_bonds"))
    t = _kelvin(_per_sample(temperature_C))
    return nu40_i * np.exp(slope * (1.0 / t - 1.0 / T40_K))


def ramirezverduzco2012_viscosity(wt_pct, temperature_C=40.0):
    r"""Kinematic viscosity of FAME from Ramirez-Verduzco 2012 per-ester forms, log-mixed.

    .. math::

        \ln \nu(T) = \sum_i w_i \left[\ln \nu_{i,40}
                     + B_i\left(\frac{1}{T} - \frac{1}{313.15}\right)\right]

    Parameters
    ----------
    wt_pct : array_like
        Composition, shape ``(n_samples, n_species)``. [wt %]
    temperature_C : array_like, optional
        Temperature, scalar or one per sample. [degC]

    Returns
    -------
    kin_viscosity_mm2_s : ndarray
        Kinematic viscosity. [mm2/s]

    Notes
    -----
    At 40 degC this is the paper's model (per-ester form and log mixing by
    mass fraction, both **MEMORY**; published AAD 2.57 %, VERIFIED [S11]).
    Other temperatures move each ester along its slope B_i from
    :func:`viscosity_temperature_slope_K` (DERIVED, not part of the paper).

    References
    ----------
    .. [1] Ramirez-Verduzco L.F., Rodriguez-Rodriguez J.E., Jaramillo-Jacob
       A.R., Fuel 91 (2012) 102-111 (from memory).

    Examples
    --------
    Pure methyl oleate at 40 degC (correlations.md 8.1: 4.60):

    >>> from estimator.tables import species_keys
    >>> w = np.zeros(len(species_keys())); w[species_keys().index("C18:1")] = 100.0
    >>> round(float(ramirezverduzco2012_viscosity(w, 40.0)), 2)
    4.6
    """
    nu40_i = ramirezverduzco2012_viscosity_ester(
        species_column("fame_molar_mass_g_mol"), species_column("double_bonds")
    )
    return log_mixing_viscosity(wt_pct, _shift_to_temperature(nu40_i, temperature_C))


def pure_ester_kin_viscosity_40C():
    r"""Pure-ester kinematic viscosities at 40 degC: measured, else Ramirez-Verduzco 2012.

    .. math::

        \nu_{i,40} = \nu_i^{table} \text{ if tabulated, else }
        \exp(-12.503 + 2.496 \ln M_i - 0.178\,N_i)

    Returns
    -------
    kin_viscosity_40C_mm2_s : ndarray
        One value per species in :func:`estimator.tables.species_keys`
        order. [mm2/s]
    tabulated : ndarray of bool
        True where the value comes from ``species.csv`` (column
        ``kin_viscosity_40C_mm2_s``, source in ``viscosity_source``). [1]

    Notes
    -----
    Tabulated: Knothe & Steidley 2005, ASTM D445 (**MEMORY**), and Knothe
    2012 for C20:4 and C22:6 (VERIFIED [S13]). Fallback:
    :func:`ramirezverduzco2012_viscosity_ester` (**MEMORY**), also for the
    esters that are solid at 40 degC (sub-cooled extrapolation).

    References
    ----------
    .. [1] Knothe G., Steidley K.R., "Kinematic viscosity of biodiesel fuel
       components and related compounds. Influence of compound structure and
       comparison to petrodiesel fuel components", Fuel 84 (2005) 1059-1065
       (from memory).

    Examples
    --------
    >>> from estimator.tables import species_keys
    >>> nu, tab = pure_ester_kin_viscosity_40C()
    >>> float(nu[species_keys().index("C22:6")]), bool(tab[species_keys().index("C20:0")])
    (2.97, False)
    """
    return tabulated_or_fallback("kin_viscosity_40C_mm2_s", ramirezverduzco2012_viscosity_ester)


def allen1999(wt_pct, temperature_C=40.0):
    r"""Kinematic viscosity of FAME by log mixing of pure-ester viscosities (Allen 1999).

    .. math::

        \ln \nu(T) = \sum_i w_i \left[\ln \nu_{i,40}
                     + B_i\left(\frac{1}{T} - \frac{1}{313.15}\right)\right]

    Parameters
    ----------
    wt_pct : array_like
        Composition, shape ``(n_samples, n_species)``. [wt %]
    temperature_C : array_like, optional
        Temperature, scalar or one per sample. [degC]

    Returns
    -------
    kin_viscosity_mm2_s : ndarray
        Kinematic viscosity. [mm2/s]

    Notes
    -----
    Logarithmic mixing (Grunberg-Nissan without interaction). Allen et al.:
    within 2.1 % for simulated oils from FAME standards and 3 % on average
    for five natural biodiesels (VERIFIED [S33]); whether their fractions
    were mass or mole fractions: **MEMORY/uncertain** (mass fractions here).
    Pure-ester values at 40 degC from :func:`pure_ester_kin_viscosity_40C`;
    each ester is moved to other temperatures along its Krisnangkura 2006
    slope (:func:`viscosity_temperature_slope_K`, **MEMORY** and DERIVED).

    References
    ----------
    .. [1] Allen C.A.W., Watts K.C., Ackman R.G., Pegg M.J., "Predicting the
       viscosity of biodiesel fuels from their fatty acid ester composition",
       Fuel 78 (1999) 1319-1326 (from memory).

    Examples
    --------
    The soybean-like mixture of reference_libs.md 4.2 (thermo 0.6.1 gives
    4.01 with REFPROP fits; our number):

    >>> from estimator.tables import species_keys
    >>> w = np.zeros(len(species_keys()))
    >>> for k, v in {"C16:0": 11, "C18:0": 4, "C18:1": 24, "C18:2": 53, "C18:3": 8}.items():
    ...     w[species_keys().index(k)] = v
    >>> round(float(allen1999(w, 40.0)), 2)
    3.94
    """
    nu40_i, _ = pure_ester_kin_viscosity_40C()
    return log_mixing_viscosity(wt_pct, _shift_to_temperature(nu40_i, temperature_C))
