"""Cold-flow properties of FAME: cold filter plugging point, cloud point, pour point.

Two kinds of method live here: empirical fits on composition descriptors
(Ramos 2009, Sarin 2009) and the thermodynamic route, ideal solubility of each
saturated ester (Schroeder-van Laar). The thermodynamic functions take *mole
fractions of the saturated esters in the whole liquid*, so a blend with diesel
can reuse them by diluting those mole fractions.
"""

from __future__ import annotations

from functools import cache

import numpy as np

from estimator.tables import species_column

__all__ = [
    "GAS_CONSTANT_J_MOL_K",
    "Imahara2006Steps",
    "cfpp_from_cloud_point",
    "cfpp_from_cloud_point_offset",
    "ideal_solubility_temperature_C",
    "imahara2006",
    "mole_fractions",
    "ramos2009",
    "sarin2009_cloud_point",
    "sarin2009_pour_point",
    "sarin2009_pour_point_from_cloud_point",
    "saturated_ester_data",
    "saturated_mole_fractions",
]

#: Molar gas constant [J/(mol K)] (CODATA 2018, exact).
GAS_CONSTANT_J_MOL_K = 8.314462618
ZERO_CELSIUS_K = 273.15

# Ramos et al. 2009, CFPP against the long-chain saturated factor (MEMORY).
RAMOS2009_SLOPE = 3.1417  # [degC per wt %]
RAMOS2009_INTERCEPT = -16.477  # [degC]

# CFPP from cloud point, the two equations quoted in [S21] (VERIFIED).
S21_SLOPE = 1.0191  # first equation [1]
S21_INTERCEPT = -2.9  # first equation [degC]
S21_OFFSET = -4.5  # second equation, CFPP = CP - 4.5 [degC]

# Sarin et al. 2009, palm-jatropha-pongamia blends (MEMORY, low confidence).
SARIN2009_CP_SLOPE = 0.526  # cloud point [degC per wt% C16:0]
SARIN2009_CP_INTERCEPT = -4.992  # [degC]
SARIN2009_PP_SLOPE = 0.571  # pour point [degC per wt% C16:0]
SARIN2009_PP_INTERCEPT = -12.240  # [degC]


def ramos2009(lcsf_wt_pct):
    r"""Cold filter plugging point from the long-chain saturated factor (Ramos 2009).

    .. math::

        CFPP = 3.1417\,LCSF - 16.477

    Parameters
    ----------
    lcsf_wt_pct : array_like
        Long-chain saturated factor, 0.1 C16:0 + 0.5 C18:0 + C20:0 + 1.5
        C22:0 + 2 C24:0 (mass %). [wt %]

    Returns
    -------
    cfpp_C : ndarray
        Cold filter plugging point. [degC]

    Notes
    -----
    Fitted on methyl esters of about ten C16-C18 vegetable oils; the largest
    LCSF among such oils is palm (about 6.7), so tallow-like or long-chain
    profiles are extrapolations. Published error: R^2 and range not recorded.
    LCSF weights and coefficients: **MEMORY** (no page of the paper was
    reached).

    References
    ----------
    .. [1] Ramos M.J., Fernandez C.M., Casas A., Rodriguez L., Perez A.,
       "Influence of fatty acid composition of raw materials on biodiesel
       properties", Bioresour. Technol. 100 (2009) 261-268,
       doi:10.1016/j.biortech.2008.06.039 (from memory).

    Examples
    --------
    Palm methyl ester, LCSF = 0.1 x 44.0 + 0.5 x 4.5 = 6.65 (our arithmetic):

    >>> round(float(ramos2009(6.65)), 2)
    4.42
    """
    return RAMOS2009_SLOPE * np.asarray(lcsf_wt_pct, dtype=float) + RAMOS2009_INTERCEPT


def cfpp_from_cloud_point(cloud_point_C):
    r"""Cold filter plugging point from the cloud point (first equation of [S21]).

    .. math::

        CFPP = 1.0191\,CP - 2.9

    Parameters
    ----------
    cloud_point_C : array_like
        Cloud point. [degC]

    Returns
    -------
    cfpp_C : ndarray
        Cold filter plugging point. [degC]

    Notes
    -----
    Quoted, with :func:`cfpp_from_cloud_point_offset`, in an abstract on
    thermodynamic cloud points and CFPP of vegetable-oil and microalgae FAME;
    the abstract says this first equation matched literature CFPPs of 22
    microalgae FAME data sets, so it is the one used as a method. **VERIFIED
    [S21]** (equation); authors, journal and error were not displayed.

    References
    ----------
    .. [1] Abstract on estimated cloud points and CFPP of vegetable-oil and
       microalgae FAME, correlations.md source [S21] (authors and journal
       not shown).

    Examples
    --------
    >>> round(float(cfpp_from_cloud_point(10.0)), 3)
    7.291
    """
    return S21_SLOPE * np.asarray(cloud_point_C, dtype=float) + S21_INTERCEPT


def cfpp_from_cloud_point_offset(cloud_point_C):
    r"""Cold filter plugging point as cloud point minus 4.5 K (second equation of [S21]).

    .. math::

        CFPP = CP - 4.5

    Parameters
    ----------
    cloud_point_C : array_like
        Cloud point. [degC]

    Returns
    -------
    cfpp_C : ndarray
        Cold filter plugging point. [degC]

    Notes
    -----
    **VERIFIED [S21]** (equation only; origin and error not stated there).
    Kept available beside :func:`cfpp_from_cloud_point`, which [S21] reports
    as validated.

    References
    ----------
    .. [1] Abstract on estimated cloud points and CFPP of vegetable-oil and
       microalgae FAME, correlations.md source [S21].

    Examples
    --------
    >>> float(cfpp_from_cloud_point_offset(10.0))
    5.5
    """
    return np.asarray(cloud_point_C, dtype=float) + S21_OFFSET


def sarin2009_cloud_point(palmitate_wt_pct):
    r"""Cloud point from the methyl palmitate content (Sarin 2009).

    .. math::

        CP = 0.526\,PAME - 4.992

    Parameters
    ----------
    palmitate_wt_pct : array_like
        Methyl palmitate (C16:0) content. [wt %]

    Returns
    -------
    cloud_point_C : ndarray
        Cloud point. [degC]

    Notes
    -----
    Fitted on blends of palm, jatropha and pongamia biodiesel, i.e. roughly
    9-45 wt % C16:0. Published error: not recorded. Coefficients: **MEMORY,
    low confidence**.

    References
    ----------
    .. [1] Sarin A. et al., "Effect of blends of palm-jatropha-pongamia biodiesels on cloud
       point and pour point", Energy 34 (2009) 2016-2021 (from memory).

    Examples
    --------
    Palm methyl ester with 44 wt % C16:0 (our arithmetic):

    >>> round(float(sarin2009_cloud_point(44.0)), 3)
    18.152
    """
    pame = np.asarray(palmitate_wt_pct, dtype=float)
    return SARIN2009_CP_SLOPE * pame + SARIN2009_CP_INTERCEPT


def sarin2009_pour_point(palmitate_wt_pct):
    r"""Pour point from the methyl palmitate content (Sarin 2009).

    .. math::

        PP = 0.571\,PAME - 12.240

    Parameters
    ----------
    palmitate_wt_pct : array_like
        Methyl palmitate (C16:0) content. [wt %]

    Returns
    -------
    pour_point_C : ndarray
        Pour point. [degC]

    Notes
    -----
    Same data set and domain as :func:`sarin2009_cloud_point` (about 9-45
    wt % C16:0). Published error: not recorded. Coefficients: **MEMORY, low
    confidence**.

    References
    ----------
    .. [1] Sarin A. et al., Energy 34 (2009) 2016-2021 (from memory).

    Examples
    --------
    >>> round(float(sarin2009_pour_point(44.0)), 3)
    12.884
    """
    pame = np.asarray(palmitate_wt_pct, dtype=float)
    return SARIN2009_PP_SLOPE * pame + SARIN2009_PP_INTERCEPT


def sarin2009_pour_point_from_cloud_point(cloud_point_C):
    r"""Pour point from the cloud point, by eliminating C16:0 between Sarin's two fits.

    .. math::

        PP = \frac{0.571}{0.526}\,(CP + 4.992) - 12.240 \approx 1.0856\,CP - 6.821

    Parameters
    ----------
    cloud_point_C : array_like
        Cloud point, e.g. the ideal-solubility cloud point of :func:`imahara2006`,
        which sees every crystallising ester. [degC]

    Returns
    -------
    pour_point_C : ndarray
        Pour point. [degC]

    Notes
    -----
    Sarin et al. fitted both the cloud point and the pour point of the same
    palm-jatropha-pongamia blends as straight lines in methyl palmitate
    (:func:`sarin2009_cloud_point`, :func:`sarin2009_pour_point`); eliminating
    the palmitate content gives the pour point as a straight line in the
    cloud point (DERIVED). Fed with the ideal-solubility cloud point, the
    pour point then responds to every saturated ester (stearate, arachidate
    ...) and to methyl elaidate, not to palmitate alone, so a tallow with
    20 wt % stearate is seen. Span of Sarin's data in cloud point: about -0.3
    to 18.7 degC (C16:0 9-45 wt %; DERIVED). Published error: not recorded;
    coefficients **MEMORY, low confidence** (both lines).

    References
    ----------
    .. [1] Sarin A. et al., "Effect of blends of palm-jatropha-pongamia
       biodiesels on cloud point and pour point", Energy 34 (2009) 2016-2021
       (from memory).

    Examples
    --------
    At the cloud point Sarin's line gives for 44 wt % C16:0 (18.152 degC), the
    pour point equals Sarin's own pour-point line at 44 wt % (12.884 degC):

    >>> round(float(sarin2009_pour_point_from_cloud_point(18.152)), 3)
    12.884
    """
    cp = np.asarray(cloud_point_C, dtype=float)
    return SARIN2009_PP_SLOPE / SARIN2009_CP_SLOPE * (cp - SARIN2009_CP_INTERCEPT) + \
        SARIN2009_PP_INTERCEPT


def mole_fractions(wt_pct):
    r"""Mole fractions of the esters from FAME mass %.

    .. math::

        x_i = \frac{A_i / M_i}{\sum_j A_j / M_j}

    Parameters
    ----------
    wt_pct : array_like
        Composition, shape ``(n_samples, n_species)``. [wt %]

    Returns
    -------
    mole_fraction : ndarray
        Same shape as ``wt_pct``, rows summing to one. [mol/mol]

    Notes
    -----
    Molar masses from ``species.csv`` (IUPAC conventional atomic weights).
    Exact conversion (DERIVED); no fitted domain.

    References
    ----------
    .. [1] IUPAC CIAAW, Prohaska T. et al., "Standard atomic weights of the
       elements 2021", Pure Appl. Chem. 94 (2022) 573-600 (pages from memory).

    Examples
    --------
    >>> from estimator.tables import species_keys
    >>> w = np.zeros(len(species_keys()))
    >>> w[[species_keys().index("C16:0"), species_keys().index("C18:0")]] = 50.0
    >>> x = mole_fractions(w)
    >>> round(float(x[species_keys().index("C16:0")]), 4)
    0.5247
    """
    moles = np.asarray(wt_pct, dtype=float) / species_column("fame_molar_mass_g_mol")
    return moles / moles.sum(axis=-1, keepdims=True)


def saturated_ester_data():
    r"""Species, melting points and enthalpies of fusion used by the solubility model.

    .. math::

        \mathcal{S} = \{ i : T_{m,i} \text{ and } \Delta H_{fus,i} \text{ tabulated} \}

    Returns
    -------
    index : ndarray of int
        Column indices (into :func:`estimator.tables.species_keys`) of the
        esters that carry both values: the saturated esters C12:0-C24:0 and
        methyl elaidate (C18:1t, melting at 10.3 degC). [1]
    melting_point_C : ndarray
        Melting points of those esters. [degC]
    enthalpy_fusion_kJ_mol : ndarray
        Enthalpies of fusion of those esters. [kJ/mol]

    Notes
    -----
    Melting points: CRC Handbook via chemicals 1.5.2 (VERIFIED [S29]), C24:0
    from CAS Common Chemistry in the same library. Enthalpies of fusion: C16:0 55.0 and
    C18:0 64.0 kJ/mol **MEMORY**; the others DERIVED by a 4.5 kJ/mol CH2
    increment (``fusion_source`` in ``species.csv``). Methyl elaidate: CRC
    melting point (VERIFIED [S29]) and an enthalpy of fusion DERIVED from
    methyl stearate's entropy of fusion. C6:0-C10:0 melt below -12 degC and
    the cis unsaturated esters far below any cloud point; they carry no
    enthalpy of fusion and only act as solvent. Petroselinate and
    eleostearate have no recorded melting data: the registry flags profiles
    that contain them.

    References
    ----------
    .. [1] Haynes W.M. (ed.), CRC Handbook of Chemistry and Physics, "Physical
       Constants of Organic Compounds" (as shipped in chemicals 1.5.2).

    Examples
    --------
    >>> from estimator.tables import species_keys
    >>> idx, tm, dh = saturated_ester_data()
    >>> [species_keys()[i] for i in idx][:3], float(tm[2]), float(dh[2])
    (['C12:0', 'C14:0', 'C15:0'], 19.0, 50.5)
    """
    idx, tm, dh = _saturated_ester_data()
    return idx.copy(), tm.copy(), dh.copy()


@cache
def _saturated_ester_data():
    tm = species_column("melting_point_C")
    dh = species_column("enthalpy_fusion_kJ_mol")
    idx = np.flatnonzero(np.isfinite(tm) & np.isfinite(dh))
    out = idx, tm[idx], dh[idx]
    for arr in out:
        arr.setflags(write=False)
    return out


def ideal_solubility_temperature_C(mole_fraction, melting_point_C, enthalpy_fusion_kJ_mol):
    r"""Saturation temperature of an ester in an ideal liquid (Schroeder-van Laar).

    .. math::

        \ln x_i = \frac{\Delta H_{fus,i}}{R}\left(\frac{1}{T_{m,i}} - \frac{1}{T_i}\right)
        \;\Rightarrow\;
        T_i = \left(\frac{1}{T_{m,i}} - \frac{R \ln x_i}{\Delta H_{fus,i}}\right)^{-1}

    Parameters
    ----------
    mole_fraction : array_like
        Mole fraction of the ester in the whole liquid; broadcasts against
        the two per-ester arrays. [mol/mol]
    melting_point_C : array_like
        Melting point of the pure ester. [degC]
    enthalpy_fusion_kJ_mol : array_like
        Enthalpy of fusion of the pure ester. [kJ/mol]

    Returns
    -------
    temperature_C : ndarray
        Temperature at which the ester starts to crystallise; -273.15 for
        ``mole_fraction == 0`` (the limit of the equation: an absent ester
        never crystallises). [degC]

    Notes
    -----
    Ideal liquid, pure solid, heat-capacity terms neglected: standard
    solid-liquid equilibrium (form **MEMORY**, as applied to FAME by
    Imahara et al. 2006). Saturated FAME binaries are not simple eutectics
    (Costa et al., VERIFIED [S23]), so this is an approximation. No fitted
    domain; the error is that of the approximation and of the pure-ester
    data.

    References
    ----------
    .. [1] Prausnitz J.M., Lichtenthaler R.N., de Azevedo E.G., Molecular
       Thermodynamics of Fluid-Phase Equilibria, 3rd ed., Prentice Hall
       (1999), ch. 11 (from memory).

    Examples
    --------
    Methyl palmitate at x = 0.113 (about 10 wt % in soybean ester; our
    arithmetic):

    >>> round(float(ideal_solubility_temperature_C(0.113, 29.6, 55.0)), 2)
    2.13
    """
    x = np.asarray(mole_fraction, dtype=float)
    tm_k = np.asarray(melting_point_C, dtype=float) + ZERO_CELSIUS_K
    dh = np.asarray(enthalpy_fusion_kJ_mol, dtype=float) * 1000.0
    ln_x = np.log(x, out=np.full(x.shape, -np.inf), where=x > 0)
    inv_t = 1.0 / tm_k - GAS_CONSTANT_J_MOL_K * ln_x / dh
    return 1.0 / inv_t - ZERO_CELSIUS_K


def imahara2006(saturated_mole_fraction, melting_point_C, enthalpy_fusion_kJ_mol):
    r"""Cloud point as the highest ideal-solubility temperature of the saturated esters.

    .. math::

        CP = \max_i T_i,\qquad
        \ln x_i = \frac{\Delta H_{fus,i}}{R}\left(\frac{1}{T_{m,i}} - \frac{1}{T_i}\right)

    Parameters
    ----------
    saturated_mole_fraction : array_like
        Mole fractions of the saturated esters in the whole liquid, shape
        ``(n_samples, n_esters)``. For FAME-diesel blends pass the esters'
        mole fractions in the blend (diluted by the diesel). [mol/mol]
    melting_point_C : array_like
        Melting points of the esters, shape ``(n_esters,)``. [degC]
    enthalpy_fusion_kJ_mol : array_like
        Enthalpies of fusion of the esters, shape ``(n_esters,)``. [kJ/mol]

    Returns
    -------
    cloud_point_C : ndarray
        Estimated cloud point, shape ``(n_samples,)``; NaN where every
        mole fraction is zero (the maximum over no crystallising ester is
        undefined: the model then has nothing to say). [degC]

    Notes
    -----
    Form **MEMORY** (Imahara, Minami & Saka 2006); the enthalpies of fusion
    are partly **MEMORY** and partly DERIVED (see :func:`saturated_ester_data`).
    No published error recorded. Use :func:`saturated_ester_data` and
    :func:`mole_fractions` to build the inputs from a FAME profile.

    *The cloud point is where the first solid appears*, and the first solid
    is the ester whose own liquidus :math:`T_i` is highest, evaluated at its
    own (possibly small) mole fraction. Why the maximum and no lower
    content threshold: each ester can always crystallise as its own pure
    solid, so no solid phase can appear above the highest :math:`T_i`
    (eutectic reasoning, immiscible solids); if the saturated esters formed
    an ideal solid solution instead, the onset condition
    :math:`\sum_i x_i/x_i^{sat}(T) = 1` would put it at or *above* that
    maximum, never below (saturated FAME binaries show partial solid
    solubility, Costa et al., VERIFIED [S23]). No minimum content below
    which an ester may be ignored is published, so none is applied. The
    result is continuous in composition; a trace matters only once its own
    liquidus overtakes that of the main saturated ester: in a soybean
    ester 0.5 wt % of arachidate and behenate leaves the cloud point
    unchanged, 0.5 wt % of behenate alone raises it by 0.7 K and 1.5 wt %
    of arachidate plus behenate by about 4 K. That
    sensitivity is of the size the long-chain weights of Ramos et al. 2009
    give for CFPP (C20:0 x 1, C22:0 x 1.5 against C16:0 x 0.1 in the LCSF:
    +5.9 K for the same addition), so it is kept as physics, not treated
    as noise; it rests on the DERIVED enthalpies of fusion of C20:0-C24:0.
    Known biases: the ideal liquid and pure solids ignore the non-ideal
    solid phases, and a visual cloud point (ASTM D2500) appears after some
    supercooling, so the liquidus sits above a measured cloud point for
    palm- and tallow-type esters (about 19 degC against a trade range of
    13-16 and 13-17 degC, common practice).

    References
    ----------
    .. [1] Imahara H., Minami E., Saka S., "Thermodynamic study on cloud
       point of biodiesel with its fatty acid composition", Fuel 85 (2006)
       1666-1670 (from memory).

    Examples
    --------
    Soybean-like ester, x(C16:0) = 0.113 and x(C18:0) = 0.039 (our
    arithmetic; the stearate controls):

    >>> cp = imahara2006([[0.113, 0.039]], [29.6, 38.7], [55.0, 64.0])
    >>> round(float(cp[0]), 2)
    2.47
    """
    x = np.atleast_2d(np.asarray(saturated_mole_fraction, dtype=float))
    t_i = ideal_solubility_temperature_C(x, melting_point_C, enthalpy_fusion_kJ_mol)
    any_present = (x > 0).any(axis=-1)
    return np.where(any_present, t_i.max(axis=-1, initial=-ZERO_CELSIUS_K), np.nan)


def saturated_mole_fractions(wt_pct):
    r"""Inputs of :func:`imahara2006` for a neat FAME profile.

    .. math::

        x_i = \frac{A_i / M_i}{\sum_j A_j / M_j},\quad i \in \mathcal{S}

    Parameters
    ----------
    wt_pct : array_like
        Composition, shape ``(n_samples, n_species)``. [wt %]

    Returns
    -------
    saturated_mole_fraction : ndarray
        Mole fractions of the esters of :func:`saturated_ester_data` in the
        whole ester liquid, shape ``(n_samples, n_esters)``. [mol/mol]
    melting_point_C : ndarray
        Their melting points. [degC]
    enthalpy_fusion_kJ_mol : ndarray
        Their enthalpies of fusion. [kJ/mol]

    Notes
    -----
    Exact conversion (DERIVED). A blending layer multiplies the mole
    fractions by the ester share of the blend's moles before calling
    :func:`imahara2006`.

    References
    ----------
    .. [1] Imahara H., Minami E., Saka S., Fuel 85 (2006) 1666-1670 (from
       memory).

    Examples
    --------
    >>> from estimator.tables import species_keys
    >>> w = np.zeros(len(species_keys())); w[species_keys().index("C16:0")] = 100.0
    >>> x, tm, dh = saturated_mole_fractions(w)
    >>> float(imahara2006(x, tm, dh)[0])  # a pure ester clouds at its melting point
    29.6
    """
    idx, tm, dh = _saturated_ester_data()
    w = np.atleast_2d(np.asarray(wt_pct, dtype=float))
    inv_m = 1.0 / species_column("fame_molar_mass_g_mol")
    # only the saturated columns: the total moles are one matrix-vector product
    x = w[:, idx] * inv_m[idx] / (w @ inv_m)[:, None]
    return x, tm.copy(), dh.copy()


class Imahara2006Steps:
    r"""The :func:`imahara2006` cloud point of profiles after raising one species.

    For the linearised composition uncertainty: ``step(j, h)`` is the cloud point of
    each profile with ``h`` wt % more of species ``j`` (then renormalised, which
    leaves mole fractions unchanged), without recomputing every mole fraction:

    .. math::

        \ln x_i' = \ln x_i + \ln\frac{S}{S + h/M_j}\ (i \ne j),\qquad
        x_j' = \frac{(w_j + h)/M_j}{S + h/M_j},\qquad S = \sum_k w_k/M_k

    Parameters
    ----------
    wt_pct : array_like
        Composition, shape ``(n_samples, n_species)``. [wt %]

    Notes
    -----
    The same ideal-solubility equation as :func:`ideal_solubility_temperature_C`
    (form **MEMORY**); equal to :func:`imahara2006` of the stepped profile to
    floating-point rounding (a test compares them). The cloud point is the largest
    :math:`T_i`, i.e. the smallest :math:`1/T_i`.

    References
    ----------
    .. [1] Imahara H., Minami E., Saka S., Fuel 85 (2006) 1666-1670 (from
       memory).

    Examples
    --------
    >>> from estimator.tables import species_keys
    >>> keys = species_keys()
    >>> w = np.zeros((1, len(keys)))
    >>> w[0, keys.index("C16:0")] = 20.0; w[0, keys.index("C18:1")] = 80.0
    >>> steps = Imahara2006Steps(w)
    >>> moved = w.copy(); moved[0, keys.index("C16:0")] += 1.0
    >>> direct = imahara2006(*saturated_mole_fractions(moved))
    >>> bool(np.isclose(steps.step(keys.index("C16:0"), np.array([1.0]))[0], direct[0]))
    True
    """

    def __init__(self, wt_pct) -> None:
        idx = _saturated_ester_data()[0]
        w = np.atleast_2d(np.asarray(wt_pct, dtype=float))
        x, tm, dh = saturated_mole_fractions(w)
        self._inv_m = 1.0 / species_column("fame_molar_mass_g_mol")
        self._moles = w @ self._inv_m
        self._w_sat = w[:, idx]
        self._a = 1.0 / (tm + ZERO_CELSIUS_K)
        self._b = GAS_CONSTANT_J_MOL_K / (dh * 1000.0)
        # one row per ester (the minimum over esters is then over the first axis)
        inv_t = np.empty((x.shape[1], x.shape[0]))
        with np.errstate(divide="ignore"):
            np.log(x.T, out=inv_t)  # x >= 0: -inf where absent
        inv_t *= -self._b[:, None]
        inv_t += self._a[:, None]
        self._inv_t = inv_t  # inf: absent
        self._present = (x > 0).any(axis=1)
        self._column = {int(k): c for c, k in enumerate(idx)}
        # esters absent from every profile stay at 1/T = inf unless stepped themselves
        self._live = np.flatnonzero((x > 0).any(axis=0))

    def step(self, species: int, h: np.ndarray) -> np.ndarray:
        """Cloud point [degC] with ``h`` (per profile) [wt %] more of column ``species``."""
        h = np.asarray(h, dtype=float)
        with np.errstate(divide="ignore", invalid="ignore"):
            total = self._moles + h * self._inv_m[species]
            shift = np.log(self._moles / total)
            c = self._column.get(int(species))
            present = self._present
            lowest = np.full(len(total), np.inf)
            esters = self._live if c is None or c in self._live else [*self._live, c]
            for i in esters:
                b = self._b[i]
                if i == c:
                    xj = (self._w_sat[:, c] + h) * self._inv_m[species] / total
                    moved = np.where(xj > 0, self._a[c] - b * np.log(xj), np.inf)
                    present = present | (xj > 0)
                else:
                    moved = self._inv_t[i] - b * shift
                np.minimum(lowest, moved, out=lowest)
            cloud = 1.0 / lowest - ZERO_CELSIUS_K
        return np.where(present, cloud, np.nan)
