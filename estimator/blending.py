"""FAME blended into diesel at B0 to B100: blend curves and the highest level meeting a target.

A blend level ``BXX`` is ``XX`` % FAME by volume (ASTM terminology, VERIFIED
standards.md 5 [S48]; EN 590 states FAME content as % V/V too [S20]). The neat
FAME's properties come from :func:`estimator.properties.predict.estimate` with the
default methods; the diesel's from a small description (a JSON object or a
one-row CSV whose keys are the tool's property names) or one of the built-in
typical diesels of ``estimator/tables/diesels.csv``.

Mixing rules (``BLEND_METHODS``; the first of each property is the default):

- density: ideal mixing by volume, Kay's rule on volume fractions, as Benjumea
  et al. 2008 used for palm biodiesel-diesel blends (VERIFIED correlations.md
  7.3 [S27]; conflict C9: volume, not mass, fractions for blends).
- kinematic viscosity: Arrhenius (logarithmic) rule as Benjumea 2008 used
  (VERIFIED [S27]); on *mass* fractions by default, because they follow exactly
  from the two densities, whereas mole fractions need the diesel's mean molar
  mass, which is only a typical value (about 200 g/mol, MEMORY / common
  practice). The mole-fraction form is kept as ``arrhenius-mole``.
- cetane number: linear by volume; approximate (cetane blending is not linear
  in general: common practice).
- heating values per kg: mass-weighted; per litre (``lhv_MJ_L``): volume-weighted
  rho*LHV, the rule of standards.md 5 (DERIVED, standard mixing). Exact for
  energy, given the component values.
- cloud point (``liquidus-or-linear``, the default): the higher of the
  ``ideal-solubility`` cloud point below and the linear rule by volume
  (``kay-volume``). Ideal solubility alone lets the FAME dilute the diesel's wax
  and puts, e.g., a rapeseed FAME blend below the cloud points of both its
  components, which would credit blending with a cold-flow improvement that real
  blends do not show (at B1-B2 the blend clouds like the diesel: Moser 2014,
  Fuel 115:500, from memory); the floor keeps winter planning on the safe side.
- cloud point (``ideal-solubility``): the higher of two liquidus temperatures:
  each saturated methyl ester at its mole fraction in the *blend* (Schroeder-van
  Laar, :func:`estimator.properties.cold_flow.imahara2006`, the diesel treated as
  a solvent of the diesel's mean molar mass), and the diesel's own wax, which
  clouds at the diesel's cloud point when neat and is diluted by the FAME
  (same ideal-solubility form, an effective enthalpy of fusion of n-paraffin
  wax of 60 kJ/mol: MEMORY, approximate). The ester liquidus is anchored to the
  neat FAME's cloud point from the default method by a constant offset in 1/T,
  so B100 reproduces the neat estimate exactly. ``kay-volume`` is the linear
  rule Benjumea 2008 found adequate for palm biodiesel blends ([S27]).
- CFPP (``linear-volume``): no published FAME-diesel CFPP relation is in the
  shared reference (the [S21] CP-CFPP equations are for neat FAME), so the
  empirical rule of common practice: linear by volume between the two CFPPs, with a
  wide stated error (:data:`RULE_ERRORS`). It never puts a blend beyond its
  components, which keeps winter planning on the safe side. ``cloud-gap`` (ours)
  keeps the blend below its default cloud point by the volume-weighted CP - CFPP
  gap of the components; the gap is not additive in practice and can put a blend
  below both components, so it is not the default.

The ideal-solubility cloud point is a lower bound in tendency: methyl esters are
polar and less soluble in paraffinic diesel than ideal, so real blends cloud at or
above it (MEMORY; Benjumea 2008 found the linear rule adequate, [S27]). Its stated
error is correspondingly wide, and :func:`estimator.blend_targets.highest_levels`
also reports the level with the stated error taken against the blend.

Errors: the component errors (FAME: from the estimate; diesel: optional
``<property>_error`` keys, else 0) are propagated through each rule and added in
quadrature to a mixing-rule error that is zero at B0 and B100 and largest at B50,
``4 phi (1 - phi) * RULE_ERRORS[property]``.
"""

from __future__ import annotations

from collections.abc import Mapping, Sequence
from dataclasses import dataclass, field

import numpy as np
import pandas as pd

from estimator.diesel import (
    DIESEL_MEAN_MOLAR_MASS_G_MOL,
    DIESEL_PROPERTIES,
    Diesel,
    diesel_names,
    load_diesel,
    needed_properties,
    read_diesel,
)
from estimator.errors import UnknownNameError, UsageError
from estimator.properties.cold_flow import (
    ZERO_CELSIUS_K,
    ideal_solubility_temperature_C,
    imahara2006,
    saturated_mole_fractions,
)
from estimator.properties.descriptors import mean_molar_mass

__all__ = [
    "BLEND_METHODS",
    "BLEND_PROPERTIES",
    "DIESEL_MEAN_MOLAR_MASS_G_MOL",
    "DIESEL_PROPERTIES",
    "Diesel",
    "FAME_STANDARDS",
    "FameComponent",
    "FameConformity",
    "blend_arrays",
    "blend_fractions",
    "blend_table",
    "blend_wide",
    "diesel_names",
    "fame_component",
    "load_diesel",
    "needed_properties",
    "parse_levels",
    "read_diesel",
]

#: Effective enthalpy of fusion of the diesel's n-paraffin wax [kJ/mol]. MEMORY,
#: approximate: n-alkanes C18-C24 lie roughly between 45 and 75 kJ/mol.
WAX_ENTHALPY_FUSION_KJ_MOL = 60.0
#: Enthalpy of fusion used to dilute the FAME's cloud point when no saturated ester
#: with data is present [kJ/mol]: methyl palmitate's value (MEMORY, species.csv).
FALLBACK_ENTHALPY_FUSION_KJ_MOL = 55.0

#: Blend output properties and their units, in table order.
BLEND_PROPERTIES = {
    "density_15C_kg_m3": "kg/m3",
    "kin_viscosity_40C_mm2_s": "mm2/s",
    "cetane_number": "1",
    "hhv_MJ_kg": "MJ/kg",
    "lhv_MJ_kg": "MJ/kg",
    "lhv_MJ_L": "MJ/L",
    "cloud_point_C": "°C",
    "cfpp_C": "°C",
}
#: Mixing rules per property; the first is the default.
BLEND_METHODS = {
    "density_15C_kg_m3": ("kay-volume",),
    "kin_viscosity_40C_mm2_s": ("arrhenius-mass", "arrhenius-mole"),
    "cetane_number": ("linear-volume",),
    "hhv_MJ_kg": ("mass-weighted",),
    "lhv_MJ_kg": ("mass-weighted",),
    "lhv_MJ_L": ("volume-weighted",),
    "cloud_point_C": ("liquidus-or-linear", "ideal-solubility", "kay-volume"),
    "cfpp_C": ("linear-volume", "cloud-gap"),
}
#: Mixing-rule error at B50 (zero at B0/B100), added in quadrature to the propagated
#: component errors. Stated by us, not published: density 0.1 % (small excess volumes,
#: MEMORY); viscosity 3 % (Allen 1999 found +-3 % for the log rule on natural biodiesels,
#: VERIFIED correlations.md 8.2 [S33]; Benjumea 2008 reported a low AAD, value not seen);
#: cetane 2 units (common practice: blending is not linear); heating values 0 (energy is
#: additive); cloud point 5 K (ideal solubility ignores FAME-paraffin non-ideality and
#: co-crystallisation, Costa et al. [S23]); CFPP 8 K (empirical rule, no source).
RULE_ERRORS = {
    "density_15C_kg_m3": ("relative", 0.001),
    "kin_viscosity_40C_mm2_s": ("relative", 0.03),
    "cetane_number": ("absolute", 2.0),
    "hhv_MJ_kg": ("absolute", 0.0),
    "lhv_MJ_kg": ("absolute", 0.0),
    "lhv_MJ_L": ("absolute", 0.0),
    "cloud_point_C": ("absolute", 5.0),
    "cfpp_C": ("absolute", 8.0),
}
_NOTES = {
    "linear-volume": "approximate: linear by volume (common practice)",
    "cloud-gap": "empirical rule of ours: CFPP below the blend cloud point by the "
                 "volume-weighted CP-CFPP gap",
    "ideal-solubility": "ideal solubility of the saturated esters in the blend and of the "
                        "diesel's wax; anchored to both neat cloud points",
    "liquidus-or-linear": "the higher of the ideal-solubility liquidus and the linear rule "
                          "by volume: dilution of the diesel's wax is not credited",
}


# ---------------------------------------------------------------- neat FAME
#: FAME standards the neat FAME is checked against: the blend specifications admit only
#: FAME that meets one of them (EN 590: EN 14214; ASTM D7467: ASTM D6751; see
#: :data:`estimator.blend_targets.BLEND_SPEC_FAME_STANDARD`).
FAME_STANDARDS = ("en14214", "astm-d6751")


@dataclass(frozen=True)
class FameConformity:
    """How one neat FAME stands against one FAME standard.

    ``limits``: ``(property, verdict)`` for every limited property whose verdict is
    not "meets" (the worst verdict of the property; verdicts of
    :data:`estimator.specs.VERDICTS`), in the standard's table order.
    """

    standard: str
    limits: tuple[tuple[str, str], ...] = ()

    def properties(self, *verdicts: str) -> list[str]:
        """The properties with one of ``verdicts``, in table order."""
        return [p for p, v in self.limits if v in verdicts]


@dataclass(frozen=True)
class FameComponent:
    """Neat-FAME inputs of the mixing rules, one entry per sample (arrays of shape (n,))."""

    samples: list[str]
    values: Mapping[str, np.ndarray]
    errors: Mapping[str, np.ndarray]
    methods: Mapping[str, np.ndarray]
    in_domain: Mapping[str, np.ndarray]
    mean_molar_mass_g_mol: np.ndarray
    saturated_mole_fraction: np.ndarray  # (n, n_esters), in the neat ester liquid
    melting_point_C: np.ndarray  # (n_esters,)
    enthalpy_fusion_kJ_mol: np.ndarray  # (n_esters,)
    #: FAME standard key (:data:`FAME_STANDARDS`) -> one :class:`FameConformity` per
    #: sample: how the neat FAME stands against that standard (empty: not checked).
    conformity: Mapping[str, tuple[FameConformity, ...]] = field(default_factory=dict)

    def __len__(self) -> int:
        return len(self.samples)


_FAME_PROPERTIES = tuple(p for p in DIESEL_PROPERTIES)


def fame_component(
    wt_pct: np.ndarray, samples: Sequence[str], *, long: pd.DataFrame | None = None,
    climate_class: str | None = None,
) -> FameComponent:
    """Estimate the neat-FAME properties a blend needs and check the FAME against the
    FAME standards of :data:`FAME_STANDARDS`.

    Parameters
    ----------
    wt_pct : ndarray, shape (n, n_species)
        FAME mass %, species-table order. [wt %]
    samples : sequence of str
        Sample ids.
    long : DataFrame, optional
        Long estimates for these samples (default: the default methods of
        ``predict``, :func:`estimator.comparison.long_estimates`); a property with a
        fitted model (``fit:`` method, from ``--model``) is taken from the model.
    climate_class : str, optional
        Also check the neat FAME's CFPP against this class of EN 14214.
    """
    from estimator import specs
    from estimator.comparison import decision_rows, long_estimates

    w = np.atleast_2d(np.asarray(wt_pct, dtype=float))
    samples = [str(s) for s in samples]
    if long is None:
        long = long_estimates(w, samples)
    long = decision_rows(long)
    conformity = _conformity(specs.check(long, FAME_STANDARDS, climate_class), samples)
    prop_col = long["property"].astype(str).to_numpy()
    row_of = {s: i for i, s in enumerate(samples)}
    sample_col = long["sample"].astype(str).to_numpy()
    value_col = long["value"].to_numpy(dtype=float)
    error_col = long["error"].to_numpy(dtype=float)
    method_col = long["method"].astype(str).to_numpy()
    domain_col = long["in_domain"].fillna(False).to_numpy(dtype=bool)
    values, errors, methods, domain = {}, {}, {}, {}
    for prop in _FAME_PROPERTIES:
        pick = np.flatnonzero(prop_col == prop)
        if not len(pick):
            raise UnknownNameError(f"the property model gives no {prop!r}; cannot blend")
        at = np.array([row_of.get(s, -1) for s in sample_col[pick]])
        keep = at >= 0
        pick, at = pick[keep], at[keep]
        values[prop] = np.full(len(samples), np.nan)
        values[prop][at] = value_col[pick]
        errors[prop] = np.zeros(len(samples))
        errors[prop][at] = np.nan_to_num(error_col[pick])
        methods[prop] = np.full(len(samples), "", dtype=object)
        methods[prop][at] = method_col[pick]
        methods[prop] = methods[prop].astype(str)
        domain[prop] = np.zeros(len(samples), dtype=bool)
        domain[prop][at] = domain_col[pick]
    x_sat, tm, dh = saturated_mole_fractions(w)
    return FameComponent(
        samples=samples, values=values, errors=errors, methods=methods, in_domain=domain,
        mean_molar_mass_g_mol=mean_molar_mass(w), saturated_mole_fraction=x_sat,
        melting_point_C=tm, enthalpy_fusion_kJ_mol=dh,
        conformity=conformity,
    )


def _conformity(verdicts: pd.DataFrame, samples: list[str]) -> dict[
        str, tuple[FameConformity, ...]]:
    """Per FAME standard, one :class:`FameConformity` per sample from a verdict table."""
    severity = {"meets": 0, "not estimated": 1, "outside method range": 2,
                "too close to call": 3, "fails": 4}
    bad = verdicts[verdicts["verdict"].astype(str) != "meets"]
    worst: dict[tuple[str, str], dict[str, str]] = {}
    for sample, spec, prop, verdict in zip(bad["sample"].astype(str), bad["spec"].astype(str),
                                           bad["property"].astype(str),
                                           bad["verdict"].astype(str)):
        by_prop = worst.setdefault((spec, sample), {})
        old = by_prop.get(prop)
        by_prop[prop] = verdict if old is None else max(old, verdict, key=severity.get)
    return {spec: tuple(FameConformity(spec, tuple(worst.get((spec, s), {}).items()))
                        for s in samples) for spec in FAME_STANDARDS}


# ---------------------------------------------------------------- mixing
def parse_levels(text: str | Sequence[float]) -> np.ndarray:
    """Blend levels in % v/v from '0,2,5,7' (or a sequence); each in 0-100, sorted, unique.

    Examples
    --------
    >>> parse_levels("20, 0,7,7")
    array([ 0.,  7., 20.])
    """
    items = text.split(",") if isinstance(text, str) else list(text)
    out = []
    for item in items:
        s = str(item).strip().upper().removeprefix("B")
        if not s:
            continue
        try:
            v = float(s)
        except ValueError:
            raise UsageError(f"--levels: {str(item).strip()!r} is not a number (% v/v)") from None
        if not 0.0 <= v <= 100.0:
            raise UsageError(f"--levels: {v:g} is outside 0-100 % v/v")
        out.append(v)
    if not out:
        raise UsageError("--levels: give at least one blend level, e.g. 0,2,5,7,10,20")
    return np.unique(np.asarray(out, dtype=float))


def blend_fractions(
    level_pct_v, density_fame_kg_m3, density_diesel_kg_m3, molar_mass_fame_g_mol,
    molar_mass_diesel_g_mol,
):
    r"""Volume, mass and mole fractions of FAME in a blend.

    .. math::

        \phi = \frac{B}{100},\quad
        w = \frac{\phi\rho_F}{\phi\rho_F + (1-\phi)\rho_D},\quad
        x = \frac{w/M_F}{w/M_F + (1-w)/M_D}

    Parameters
    ----------
    level_pct_v : array_like
        Blend level B (FAME % by volume). [% v/v]
    density_fame_kg_m3, density_diesel_kg_m3 : array_like
        Densities of the neat components at 15 degC. [kg/m3]
    molar_mass_fame_g_mol, molar_mass_diesel_g_mol : array_like
        Mean molar masses. [g/mol]

    Returns
    -------
    phi, w, x : ndarray
        Volume, mass and mole fraction of FAME (broadcast shape). [1]

    Notes
    -----
    Ideal mixing (no excess volume), so volume fractions are those of the neat
    liquids at 15 degC (standards.md 5, blend rule; DERIVED).

    References
    ----------
    .. [1] ASTM D6751 terminology, BXX as volume percentage of biodiesel
       (standards.md 5 [S48], VERIFIED).

    Examples
    --------
    B20 of the GREET B100 (887.9 kg/m3) in GREET diesel (836.6 kg/m3), our
    arithmetic w = 177.58 / (177.58 + 669.28):

    >>> phi, w, x = blend_fractions(20.0, 887.9, 836.6, 290.0, 200.0)
    >>> round(float(w), 4)
    0.2097
    """
    phi = np.asarray(level_pct_v, dtype=float) / 100.0
    mf = phi * np.asarray(density_fame_kg_m3, dtype=float)
    md = (1.0 - phi) * np.asarray(density_diesel_kg_m3, dtype=float)
    w = mf / (mf + md)
    nf = w / np.asarray(molar_mass_fame_g_mol, dtype=float)
    nd = (1.0 - w) / np.asarray(molar_mass_diesel_g_mol, dtype=float)
    x = nf / (nf + nd)
    return phi, w, x


def _rss(*terms):
    return np.sqrt(sum(np.square(t) for t in terms))


def _kelvin(t_c):
    return np.asarray(t_c, dtype=float) + ZERO_CELSIUS_K


def blend_arrays(
    fame: FameComponent, diesel: Diesel, levels_pct_v, *, methods: str = "default",
    only: str | None = None,
) -> dict[tuple[str, str], tuple[np.ndarray, np.ndarray]]:
    """Blend properties on a grid: ``{(property, method): (value, error)}``, arrays (n, L).

    ``methods='default'`` computes the first rule of each property in
    :data:`BLEND_METHODS`, ``'all'`` every rule; ``only`` restricts the work to one
    property (used by the level search). Vectorised over samples and levels;
    ``levels_pct_v`` is one grid for every sample (L,) or one row per sample (n, L).
    A property the diesel description leaves out is NaN at every level.
    """
    if methods not in ("default", "all"):
        raise UnknownNameError(f"unknown methods choice {methods!r}; use default or all")
    if only is not None and only not in BLEND_PROPERTIES:
        raise UnknownNameError(
            f"unknown blend property {only!r}; valid: {', '.join(BLEND_PROPERTIES)}")
    lv = np.atleast_1d(np.asarray(levels_pct_v, dtype=float))
    lv = lv[None, :] if lv.ndim == 1 else lv  # (n, L): a level row per sample
    col = {p: v[:, None] for p, v in fame.values.items()}
    err = {p: e[:, None] for p, e in fame.errors.items()}
    d = {p: diesel.value(p) for p in DIESEL_PROPERTIES}
    de = {p: diesel.error(p) for p in DIESEL_PROPERTIES}
    rho_f, rho_d = col["density_15C_kg_m3"], d["density_15C_kg_m3"]
    phi, w, x = blend_fractions(
        lv, rho_f, rho_d, fame.mean_molar_mass_g_mol[:, None], diesel.mean_molar_mass_g_mol
    )
    shape = np.broadcast_shapes(phi.shape, rho_f.shape)
    phi = np.broadcast_to(phi, shape)
    bell = 4.0 * phi * (1.0 - phi)  # mixing-rule error weight: 0 at the ends, 1 at B50

    def rule(prop, value):
        kind, size = RULE_ERRORS[prop]
        return bell * size * (np.abs(value) if kind == "relative" else 1.0)

    def want(*props):
        return only is None or only in props

    out: dict[tuple[str, str], tuple[np.ndarray, np.ndarray]] = {}
    every = methods == "all"

    def linear(prop, frac):
        with np.errstate(invalid="ignore"):
            value = frac * col[prop] + (1.0 - frac) * d[prop]
            error = _rss(frac * err[prop], (1.0 - frac) * de[prop], rule(prop, value))
        # B0 is the diesel even where the FAME value is missing (NaN).
        return np.where(frac <= 0, d[prop], value), np.where(frac <= 0, de[prop], error)

    if want("density_15C_kg_m3", "lhv_MJ_L"):
        out["density_15C_kg_m3", "kay-volume"] = linear("density_15C_kg_m3", phi)
    nu = "kin_viscosity_40C_mm2_s"
    if want(nu):
        for name, frac in (("arrhenius-mass", w), ("arrhenius-mole", x)):
            if name == "arrhenius-mole" and not every:
                continue
            value = np.exp(frac * np.log(col[nu]) + (1.0 - frac) * np.log(d[nu]))
            rel = _rss(frac * err[nu] / col[nu], (1.0 - frac) * de[nu] / d[nu])
            out[nu, name] = value, _rss(value * rel, rule(nu, value))
    if want("cetane_number"):
        out["cetane_number", "linear-volume"] = linear("cetane_number", phi)
    if want("hhv_MJ_kg"):
        out["hhv_MJ_kg", "mass-weighted"] = linear("hhv_MJ_kg", w)
    if want("lhv_MJ_kg", "lhv_MJ_L"):
        lhv, lhv_err = linear("lhv_MJ_kg", w)
        out["lhv_MJ_kg", "mass-weighted"] = lhv, lhv_err
    if want("lhv_MJ_L"):
        rho, rho_err = out["density_15C_kg_m3", "kay-volume"]
        lhv_l = rho * lhv / 1000.0
        out["lhv_MJ_L", "volume-weighted"] = lhv_l, lhv_l * _rss(rho_err / rho, lhv_err / lhv)
    if want("cloud_point_C") or (every and want("cfpp_C")):
        cp_ideal, cp_ideal_err = _cloud_ideal(fame, diesel, x, phi, rule)
        cp_kay, cp_kay_err = linear("cloud_point_C", phi)
        # A FAME without saturated esters has no cloud point estimate; its esters
        # crystallise far below a diesel's (methyl oleate melts near -20 °C, from
        # memory), so the blend is taken to cloud like the diesel, with no credit for
        # dilution, up to B100 (NaN: the neat estimate is missing).
        unknown = np.isnan(col["cloud_point_C"]) & (phi < 1.0)
        cp_kay = np.where(unknown, d["cloud_point_C"], cp_kay)
        cp_kay_err = np.where(unknown, de["cloud_point_C"], cp_kay_err)
        # Conservative default: ideal solubility lets the FAME dilute the diesel's wax and
        # put a blend below both neat cloud points; the linear rule floors it there.
        kay_controls = ~(cp_ideal >= cp_kay)
        cp = np.where(kay_controls, cp_kay, cp_ideal)
        cp_err = np.where(kay_controls, cp_kay_err, cp_ideal_err)
        out["cloud_point_C", "liquidus-or-linear"] = cp, cp_err
        if every:
            out["cloud_point_C", "ideal-solubility"] = cp_ideal, cp_ideal_err
            out["cloud_point_C", "kay-volume"] = cp_kay, cp_kay_err
    if want("cfpp_C"):
        out["cfpp_C", "linear-volume"] = linear("cfpp_C", phi)
        if every:
            gap = phi * (col["cloud_point_C"] - col["cfpp_C"]) + (1.0 - phi) * (
                d["cloud_point_C"] - d["cfpp_C"]
            )
            cf = np.where(phi <= 0, d["cfpp_C"], np.where(phi >= 1, col["cfpp_C"], cp - gap))
            out["cfpp_C", "cloud-gap"] = cf, np.where(phi <= 0, de["cfpp_C"], _rss(
                phi * err["cfpp_C"], (1 - phi) * de["cfpp_C"], rule("cfpp_C", cf)))
    if only is not None:
        out = {k: v for k, v in out.items() if k[0] == only}
    return out


def _cloud_ideal(fame: FameComponent, diesel: Diesel, x, phi, rule):
    """Cloud point of the blend: max of the anchored ester liquidus and the diluted diesel wax."""
    cp_f = fame.values["cloud_point_C"][:, None]
    cp_d = diesel.value("cloud_point_C")
    x_sat = fame.saturated_mole_fraction  # (n, k)
    tm, dh = fame.melting_point_C, fame.enthalpy_fusion_kJ_mol
    thermo_neat = imahara2006(x_sat, tm, dh)[:, None]  # (n, 1), NaN without saturated esters
    # Ester liquidus in the blend: each saturated ester's mole fraction diluted by x.
    t_i = ideal_solubility_temperature_C(x[:, :, None] * x_sat[:, None, :], tm, dh)
    thermo_blend = t_i.max(axis=-1, initial=-ZERO_CELSIUS_K)
    offset = 1.0 / _kelvin(cp_f) - 1.0 / _kelvin(thermo_neat)  # anchor at the neat estimate
    with np.errstate(divide="ignore"):
        inv = 1.0 / _kelvin(thermo_blend) + np.where(np.isfinite(offset), offset, 0.0)
        t_fame = np.where(
            np.isfinite(thermo_neat),
            1.0 / inv - ZERO_CELSIUS_K,
            ideal_solubility_temperature_C(x, cp_f, FALLBACK_ENTHALPY_FUSION_KJ_MOL),
        )
    # No neat cloud point (no saturated ester crystallises): the esters add no liquidus;
    # the neat FAME itself stays NaN, as its estimate is.
    t_fame = np.where((x > 0) & np.isfinite(cp_f), t_fame, -ZERO_CELSIUS_K)
    t_wax = ideal_solubility_temperature_C(1.0 - x, cp_d, WAX_ENTHALPY_FUSION_KJ_MOL)
    fame_controls = t_fame >= t_wax
    cp = np.where(fame_controls, t_fame, t_wax)
    cp = np.where(np.isnan(cp_f) & (x >= 1.0), np.nan, cp)
    # Sensitivity of an ideal-solubility temperature to its anchor: dT/dT0 = (T/T0)^2.
    with np.errstate(invalid="ignore"):
        sens_f = np.nan_to_num(np.square(_kelvin(t_fame) / _kelvin(cp_f)))
    sens_d = np.square(_kelvin(t_wax) / _kelvin(cp_d))
    comp_err = np.where(
        fame_controls,
        sens_f * fame.errors["cloud_point_C"][:, None],
        sens_d * diesel.error("cloud_point_C"),
    )
    return cp, _rss(comp_err, rule("cloud_point_C", cp))


def blend_table(
    fame: FameComponent, diesel: Diesel, levels_pct_v, *, methods: str = "default"
) -> pd.DataFrame:
    """The long blend table, one row per sample, level, property and mixing rule.

    Columns ``sample, level_pct_v, fame_wt_pct, property, method, value, unit, error,
    in_domain, note``, like the long table of ``predict`` with the level added.
    ``methods='all'`` adds the alternative rules of :data:`BLEND_METHODS`.
    """
    levels = np.atleast_1d(np.asarray(levels_pct_v, dtype=float))
    arrays = blend_arrays(fame, diesel, levels, methods=methods)
    n, m = len(fame), len(levels)
    w = _mass_fraction(fame, diesel, levels)
    sample = np.repeat(np.asarray(fame.samples, dtype=object), m)
    level = np.tile(levels, n)
    frames = []
    for (prop, method), (value, error) in arrays.items():
        base = "lhv_MJ_kg" if prop == "lhv_MJ_L" else prop
        dom = np.repeat(fame.in_domain[base], m) | (level == 0.0)
        fame_method = pd.Series(np.repeat(fame.methods[base], m), dtype=object)
        extra = _NOTES.get(method, "")
        tail = f"; diesel {diesel.name}" + (f"; {extra}" if extra else "")
        frames.append(pd.DataFrame({
            "sample": sample, "level_pct_v": level, "fame_wt_pct": 100.0 * w.ravel(),
            "property": prop, "method": method, "value": value.ravel(),
            "unit": BLEND_PROPERTIES[prop], "error": error.ravel(), "in_domain": dom,
            "note": ("FAME by " + fame_method + tail).to_numpy(),
        }))
    long = pd.concat(frames, ignore_index=True)
    prop_rank = long["property"].map({p: i for i, p in enumerate(BLEND_PROPERTIES)})
    sample_rank = np.repeat(np.arange(n), m)
    sample_rank = np.tile(sample_rank, len(arrays))
    order = np.lexsort((prop_rank.to_numpy(), long["level_pct_v"].to_numpy(), sample_rank))
    return long.iloc[order].reset_index(drop=True)


def _mass_fraction(fame: FameComponent, diesel: Diesel, levels: np.ndarray) -> np.ndarray:
    _, w, _ = blend_fractions(
        levels[None, :], fame.values["density_15C_kg_m3"][:, None],
        diesel.value("density_15C_kg_m3"), fame.mean_molar_mass_g_mol[:, None],
        diesel.mean_molar_mass_g_mol,
    )
    return w


def blend_wide(
    fame: FameComponent, diesel: Diesel, levels_pct_v
) -> pd.DataFrame:
    """The wide blend table: one row per sample and level, default rule per property.

    Columns ``sample, level_pct_v, fame_wt_pct``, the properties of
    :data:`BLEND_PROPERTIES`, then ``<property>_error`` for each, then ``flags``
    (properties whose neat-FAME estimate is outside its method's fitted domain).
    """
    levels = np.atleast_1d(np.asarray(levels_pct_v, dtype=float))
    arrays = blend_arrays(fame, diesel, levels)
    n, m = len(fame), len(levels)
    w = _mass_fraction(fame, diesel, levels)
    table = {
        "sample": np.repeat(np.asarray(fame.samples, dtype=object), m),
        "level_pct_v": np.tile(levels, n),
        "fame_wt_pct": 100.0 * w.ravel(),
    }
    for prop in BLEND_PROPERTIES:
        table[prop] = arrays[prop, BLEND_METHODS[prop][0]][0].ravel()
    for prop in BLEND_PROPERTIES:
        table[f"{prop}_error"] = arrays[prop, BLEND_METHODS[prop][0]][1].ravel()
    out_of = [
        ", ".join(p for p in _FAME_PROPERTIES if not fame.in_domain[p][i]) for i in range(n)
    ]
    flags = np.repeat(np.asarray(
        [f"FAME outside fitted domain: {s}" if s else "" for s in out_of], dtype=object), m)
    flags[np.tile(levels, n) == 0.0] = ""
    table["flags"] = flags
    return pd.DataFrame(table)
