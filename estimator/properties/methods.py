"""Registry of estimation methods: property -> published methods with their metadata.

Each :class:`Method` wraps one correlation of the family modules in a common
signature ``function(wt_pct, desc, temperature_C=None)`` (``desc`` is the dict
of :func:`estimator.properties.descriptors.descriptors`) and records what a
user needs to judge the number: unit, citation, stated error and its kind, the
fitted domain as data, the provenance mark of correlations.md and a one-line
note. One method per property is the ``default``; :data:`DEFAULT_REASONS` says
why.

>>> get_method("cfpp_C", "ramos2009").unit
'°C'
"""

from __future__ import annotations

from collections.abc import Callable, Mapping
from dataclasses import dataclass, field
from functools import cache
from types import MappingProxyType

import numpy as np
import pandas as pd

from estimator.errors import UnknownNameError
from estimator.properties import cold_flow, energy, ignition, stability, transport
from estimator.properties.descriptors import iodine_value_factors
from estimator.tables import species_column, species_keys

__all__ = [
    "DEFAULTS",
    "DEFAULT_REASONS",
    "PROPERTIES",
    "AOCS_CD1C85_FACTORS",
    "Bound",
    "Domain",
    "Method",
    "default_method",
    "park2008_derived_rmse_h",
    "get_method",
    "list_methods",
    "methods_for",
    "registry",
]

#: Properties in report order, with their units.
PROPERTIES = {
    "cetane_number": "1",
    "iodine_value_gI2_100g": "g I2/100 g",
    "cfpp_C": "°C",
    "cloud_point_C": "°C",
    "pour_point_C": "°C",
    "oxidation_stability_110C_h": "h",
    "oxidizability_indicator_wt_pct": "wt % linoleate-eq.",
    "density_15C_kg_m3": "kg/m3",
    "kin_viscosity_40C_mm2_s": "mm2/s",
    "hhv_MJ_kg": "MJ/kg",
    "lhv_MJ_kg": "MJ/kg",
}

#: Default method per property.
DEFAULTS = {
    "cetane_number": "knothe2005",
    "iodine_value_gI2_100g": "stoichiometric",
    "cfpp_C": "ramos2009",
    "cloud_point_C": "imahara2006",
    "pour_point_C": "sarin2009_from_cloud_point",
    "oxidation_stability_110C_h": "park2008_bape",
    "oxidizability_indicator_wt_pct": "knothe2002",
    "density_15C_kg_m3": "ramirezverduzco2022",
    "kin_viscosity_40C_mm2_s": "allen1999",
    "hhv_MJ_kg": "kay1936",
    "lhv_MJ_kg": "kay1936",
}

#: Why each default was chosen (quoted by the README).
DEFAULT_REASONS = {
    "cetane_number": (
        "measured pure-ester cetane numbers, mass-weighted: it stays physical for the "
        "polyunsaturated esters of fish and algae (Knothe 2012 measured 29.6 for methyl "
        "arachidonate and 24.4 for DHA methyl ester, where the per-ester form of "
        "Ramírez-Verduzco 2012 gives 8 and -24) and uses measured values for lauric esters; "
        "flagged above 10 wt % of esters without a measured value"
    ),
    "iodine_value_gI2_100g": (
        "exact stoichiometry on the FAME basis (one I2 per C=C), the basis of EN 16300; "
        "the AOCS triglyceride factors overstate a FAME's IV by about 0.5 % (C1)"
    ),
    "cfpp_C": (
        "fitted directly on CFPP of vegetable-oil methyl esters and linear in composition "
        "(usable in the least-cost programme); CFPP from the cloud point compounds the error "
        "of the ideal-solubility cloud point, which runs 3-5 °C above measured cloud points "
        "of common oils; both miss palm (+4.6 and +16.9 °C against the trade's +10 to +12)"
    ),
    "cloud_point_C": (
        "physically based (ideal solubility of every saturated ester), covers lauric and "
        "long-chain esters and extends to blends with diesel; Sarin 2009 sees palmitate only "
        "and its coefficients are low-confidence recall"
    ),
    "pour_point_C": (
        "Sarin 2009's pour point-cloud point relation on the ideal-solubility cloud point: "
        "it sees every saturated ester, where Sarin's palmitate line misses stearate "
        "(tallow)"
    ),
    "oxidation_stability_110C_h": (
        "induction period inverse to the oxidizability (bis-allylic positions), on Park "
        "2008's scale: it reaches the short induction periods of linseed and fish esters, "
        "which Park's asymptote of 2.59 h cannot, and counts every polyene"
    ),
    "oxidizability_indicator_wt_pct": (
        "counts every methylene-interrupted polyene, so it also ranks fish and algal "
        "profiles; McCormick's OX sees C18 esters only"
    ),
    "density_15C_kg_m3": (
        "group parameters verified against the paper's worked example, temperature-explicit, "
        "validated on 696 biodiesel points (AAD 0.29 %) and free of per-ester fallbacks; "
        "the 2012 form (AAD 0.11 %) is recalled, not verified"
    ),
    "kin_viscosity_40C_mm2_s": (
        "log mixing of measured pure-ester viscosities (within 3 % on natural biodiesels, "
        "verified); it uses measured values for C20:4, C22:6 and ricinoleate where the "
        "per-ester correlations fail"
    ),
    "hhv_MJ_kg": (
        "mass-weighted pure-ester heats of combustion: saturated esters to 0.02 % "
        "(Adriaanse 1965), C18 unsaturates from measured formation enthalpies (C3)"
    ),
    "lhv_MJ_kg": "the LHV of the default HHV (same reasoning)",
}

#: AOCS Cd 1c-85 calculated-IV factors, triglyceride basis (VERIFIED [S1]).
AOCS_CD1C85_FACTORS = {
    "C16:1": 0.950,
    "C18:1": 0.860,
    "C18:2": 1.732,
    "C18:3": 2.616,
    "C20:1": 0.785,
    "C22:1": 0.723,
}

_MAIN_C16_C18 = ("C16:0", "C16:1", "C18:0", "C18:1", "C18:2", "C18:3")


@dataclass(frozen=True)
class Bound:
    """One bound of a fitted domain, on a descriptor or on a sum of species mass %.

    ``species`` may be a tuple of keys or the name of a ``species.csv`` column:
    ``"untabulated:<column>"`` selects the species whose value in that column is
    blank (they rely on a fallback correlation).
    """

    label: str
    lo: float | None = None
    hi: float | None = None
    descriptor: str | None = None
    species: tuple[str, ...] | str = ()
    unit: str = "wt %"

    def species_index(self) -> np.ndarray:
        """Column indices of the species this bound sums."""
        if isinstance(self.species, str):
            _, column = self.species.split(":")
            return np.flatnonzero(~np.isfinite(species_column(column)))
        keys = species_keys()
        return np.array([keys.index(k) for k in self.species], dtype=int)

    def value(self, wt_pct: np.ndarray, desc: Mapping[str, np.ndarray]) -> np.ndarray:
        """The bounded quantity per sample."""
        if self.descriptor is not None:
            return np.asarray(desc[self.descriptor], dtype=float)
        return np.asarray(wt_pct, dtype=float)[:, self.species_index()].sum(axis=1)

    def violations(self, wt_pct, desc) -> list[tuple[str, np.ndarray]]:
        """(reason, mask) pairs for the samples outside this bound."""
        v = self.value(wt_pct, desc)
        out = []
        if self.lo is not None:
            out.append((f"{self.label} < {self.lo:g} {self.unit}", v < self.lo))
        if self.hi is not None:
            out.append((f"{self.label} > {self.hi:g} {self.unit}", v > self.hi))
        return out

    def text(self) -> str:
        """The bound as one line of text."""
        lo = "" if self.lo is None else f"{self.lo:g} <= "
        hi = "" if self.hi is None else f" <= {self.hi:g}"
        return f"{lo}{self.label}{hi} {self.unit}"


@dataclass(frozen=True)
class Domain:
    """The composition domain a method was fitted on, as data."""

    bounds: tuple[Bound, ...] = ()
    basis: str = ""
    fame: bool = True  # False: fitted on oils, so every FAME sample is outside

    def violations(self, wt_pct, desc) -> list[tuple[str, np.ndarray]]:
        """(reason, mask) pairs; a sample is in the domain when no mask is True."""
        n = np.asarray(wt_pct).shape[0]
        out = []
        if not self.fame:
            out.append(("fitted on vegetable oils, not on FAME", np.ones(n, dtype=bool)))
        for bound in self.bounds:
            out.extend(bound.violations(wt_pct, desc))
        return out

    def in_domain(self, wt_pct, desc) -> np.ndarray:
        """Boolean array, True where the sample lies inside every bound."""
        n = np.asarray(wt_pct).shape[0]
        ok = np.ones(n, dtype=bool)
        for _, mask in self.violations(wt_pct, desc):
            ok &= ~mask
        return ok

    def text(self) -> str:
        """The domain as one line of text."""
        parts = [] if self.fame else ["vegetable oils only"]
        parts += [b.text() for b in self.bounds]
        return "; ".join(parts) if parts else "no bounds recorded"


@dataclass(frozen=True)
class Method:
    """One way to estimate one property, with everything needed to judge it."""

    property: str
    name: str
    function: Callable[..., np.ndarray]
    unit: str
    citation: str
    error: float | None
    error_kind: str  # "aad_pct", "max_pct", "rmse", "r2" or "none"
    domain: Domain
    provenance: str  # VERIFIED, MEMORY or DERIVED: the weakest link of equation and data
    note: str
    temperature_dependent: bool = False
    #: Where no usable published error exists and no second method gives a spread:
    #: f(values, spread_by_property) -> +/- per sample, explained in ``error_note``.
    error_fallback: Callable[[np.ndarray, Mapping[str, np.ndarray]], np.ndarray] | None = None
    error_note: str = field(default="")

    def evaluate(self, wt_pct, desc, temperature_C=None) -> np.ndarray:
        """Values per sample; ``temperature_C`` only for temperature-dependent methods."""
        if temperature_C is not None and not self.temperature_dependent:
            raise ValueError(f"{self.name} does not take a temperature")
        return np.asarray(self.function(wt_pct, desc, temperature_C), dtype=float)

    def in_domain(self, wt_pct, desc) -> np.ndarray:
        """Boolean array, True where the sample lies in the fitted domain."""
        return self.domain.in_domain(wt_pct, desc)

    def absolute_error(self, values: np.ndarray) -> np.ndarray | None:
        """The published error as +/- per value, or None when it is not of that kind."""
        values = np.asarray(values, dtype=float)
        if self.error is None:
            return None
        if self.error_kind in ("aad_pct", "max_pct"):
            return np.abs(values) * self.error / 100.0
        if self.error_kind == "rmse":
            return np.full(values.shape, float(self.error))
        return None


# --- wrappers: (wt_pct, desc, temperature_C) -> values ---------------------------


def _col(key: str) -> int:
    return species_keys().index(key)


def _cn_krisnangkura1986(w, d, t=None):
    return ignition.krisnangkura1986(d["saponification_value_mgKOH_g"], d["iodine_value_gI2_100g"])


def _cn_bamgboye2008(w, d, t=None):
    return ignition.bamgboye2008(w)


def _cn_knothe2005(w, d, t=None):
    return ignition.knothe2005(w)


def _cn_rv2012(w, d, t=None):
    return ignition.ramirezverduzco2012(w)


def _iv_stoichiometric(w, d, t=None):
    return np.asarray(d["iodine_value_gI2_100g"], dtype=float)


@cache
def _aocs_factor_vector() -> np.ndarray:
    factors = iodine_value_factors("oil").copy()  # DERIVED triglyceride basis, all species
    for key, value in AOCS_CD1C85_FACTORS.items():
        factors[_col(key)] = value  # printed AOCS values where the method lists them
    factors.setflags(write=False)
    return factors


def _iv_aocs(w, d, t=None):
    return np.asarray(w, dtype=float) @ _aocs_factor_vector()


#: Key under which a caller may pass the already computed ideal-solubility cloud point in
#: ``desc`` (predict does, so the CFPP-from-cloud-point method does not compute it again).
CLOUD_POINT_KEY = "_imahara2006_cloud_point_C"
#: (property, method) pairs that read the composition only through that cloud point.
CLOUD_POINT_METHODS = frozenset({
    ("cloud_point_C", "imahara2006"),
    ("pour_point_C", "sarin2009_from_cloud_point"),
    ("cfpp_C", "from_cloud_point"),
})


def _cp_imahara2006(w, d, t=None):
    known = d.get(CLOUD_POINT_KEY) if isinstance(d, Mapping) else None
    if known is not None and len(known) == len(w):
        return np.asarray(known, dtype=float)
    return cold_flow.imahara2006(*cold_flow.saturated_mole_fractions(w))


def _cp_sarin2009(w, d, t=None):
    return cold_flow.sarin2009_cloud_point(np.asarray(w)[:, _col("C16:0")])


def _pp_sarin2009(w, d, t=None):
    return cold_flow.sarin2009_pour_point(np.asarray(w)[:, _col("C16:0")])


def _pp_sarin2009_from_cloud_point(w, d, t=None):
    return cold_flow.sarin2009_pour_point_from_cloud_point(_cp_imahara2006(w, d))


def _cfpp_ramos2009(w, d, t=None):
    return cold_flow.ramos2009(d["lcsf_wt_pct"])


def _cfpp_from_cloud_point(w, d, t=None):
    return cold_flow.cfpp_from_cloud_point(_cp_imahara2006(w, d))


def _os_park2008(w, d, t=None):
    w = np.asarray(w)
    return stability.park2008(w[:, _col("C18:2")] + w[:, _col("C18:3")])


def _os_park2008_bape(w, d, t=None):
    return stability.park2008_bape(w)


def _ox_mccormick2007(w, d, t=None):
    return stability.mccormick2007_indicator(d["oxidizability"])


def _ox_knothe2002(w, d, t=None):
    return stability.knothe2002_indicator(d["bape_wt_pct"])


def _rho_rv2022(w, d, t=None):
    return transport.ramirezverduzco2022(w, 15.0 if t is None else t)


def _rho_rv2012(w, d, t=None):
    return transport.ramirezverduzco2012_density(w, 15.0 if t is None else t)


def _nu_allen1999(w, d, t=None):
    return transport.allen1999(w, 40.0 if t is None else t)


def _nu_krisnangkura2006(w, d, t=None):
    return transport.krisnangkura2006(w, 40.0 if t is None else t)


def _nu_rv2012(w, d, t=None):
    return transport.ramirezverduzco2012_viscosity(w, 40.0 if t is None else t)


def _hhv_kay1936(w, d, t=None):
    return energy.kay1936(w)


def _hhv_rv2012(w, d, t=None):
    return energy.ramirezverduzco2012(w)


def _hhv_demirbas1998(w, d, t=None):
    return energy.demirbas1998(d["saponification_value_mgKOH_g"], d["iodine_value_gI2_100g"])


def _lhv(hhv_function):
    def lhv(w, d, t=None):
        return energy.lhv_from_hhv(hhv_function(w, d), d["hydrogen_wt_pct"])

    return lhv


# --- domains ------------------------------------------------------------------

_PUFA4 = Bound("esters with >= 4 C=C", hi=1.0, descriptor="pufa4_wt_pct")
_HYDROXY = Bound("C18:1OH", hi=1.0, species=("C18:1OH",))
_MAIN = Bound("C16:0-C18:3 main esters", lo=80.0, species=_MAIN_C16_C18)
#: Isomers whose melting point is not recorded: the cloud point cannot see them.
_NO_MELTING = Bound("esters without melting data (petroselinate, eleostearate)", hi=1.0,
                    species=("C18:1n12", "C18:3conj"))
_CONJUGATED = Bound("conjugated esters", hi=1.0, species=("C18:3conj",))
#: Sarin's blends: palm, jatropha, pongamia; their saturated esters other than palmitate
#: reach about 15 wt % (pongamia's stearate and C20-C24; DERIVED from typical profiles).
_OTHER_SATURATES = Bound("saturated esters other than C16:0", hi=15.0,
                         species=tuple(k for k in ("C12:0", "C14:0", "C15:0", "C17:0",
                                                   "C18:0", "C20:0", "C22:0", "C24:0")))


def _untabulated(column: str, label: str) -> Bound:
    return Bound(f"esters without a tabulated {label}", hi=10.0, species=f"untabulated:{column}")


@cache
def park2008_derived_rmse_h() -> float:
    """DERIVED RMSE of Park 2008 [h]: SD of the fitted curve over its X range x sqrt(1 - R2).

    X is taken as uniform over ``PARK2008_X_RANGE_WT_PCT``; R2 0.975 is MEMORY.
    """
    lo, hi = stability.PARK2008_X_RANGE_WT_PCT
    x = np.linspace(lo, hi, 2001)
    return float(np.std(stability.park2008(x)) * np.sqrt(1.0 - 0.975))


def _park_error(values, spreads):
    return np.full(np.shape(values), park2008_derived_rmse_h())


def _pour_point_error(values, spreads):
    # the spread of the cloud-point methods when the caller has it; NaN (no floor) if not
    cloud = spreads.get("cloud_point_C")
    return (np.full(np.shape(values), np.nan) if cloud is None
            else np.asarray(cloud, dtype=float))


def _build() -> dict[str, dict[str, Method]]:
    rv2012 = (
        "Ramírez-Verduzco L.F., Rodríguez-Rodríguez J.E., Jaramillo-Jacob A.R., "
        "Fuel 91 (2012) 102-111"
    )
    rv2012_domain = Domain((_PUFA4, _HYDROXY), "pure esters with at most three C=C (MEMORY)")
    methods = [
        # cetane number
        Method("cetane_number", "krisnangkura1986", _cn_krisnangkura1986, "1",
               "Krisnangkura K., J. Am. Oil Chem. Soc. 63 (1986) 552-553 (from memory)",
               None, "none", Domain((_MAIN, _PUFA4), "vegetable-oil methyl esters (MEMORY)"),
               "MEMORY", "cetane index from SN and IV"),
        Method("cetane_number", "bamgboye2008", _cn_bamgboye2008, "1",
               "Bamgboye A.I., Hansen A.C., Int. Agrophysics 22 (2008) 21-29 (from memory)",
               0.88, "r2",
               Domain((Bound("C14:0-C18:3 modelled esters", lo=90.0,
                             species=tuple(ignition.BAMGBOYE2008_COEFFICIENTS)),),
                      "esters outside x2..x8 act only through the intercept (DERIVED)"),
               "MEMORY", "linear in composition; coefficient vector for linear programmes"),
        Method("cetane_number", "knothe2005", _cn_knothe2005, "1",
               "Knothe G., Fuel Process. Technol. 86 (2005) 1059-1070 (pure-ester CNs, from "
               "memory); Knothe G., Energy Fuels 26 (2012) 5265-5273 (C20:4, C22:6); "
               "CombustDB via chemicals 1.5.2",
               None, "none",
               Domain((_untabulated("cetane_number", "CN"),),
                      "fallback per-ester CNs outside the table (DERIVED)"),
               "MEMORY", "mass-weighted measured pure-ester cetane numbers"),
        Method("cetane_number", "ramirezverduzco2012", _cn_rv2012, "1", rv2012,
               5.95, "aad_pct", rv2012_domain, "MEMORY",
               "per-ester CN from molar mass and double bonds, mass-weighted"),
        # iodine value
        Method("iodine_value_gI2_100g", "stoichiometric", _iv_stoichiometric, "g I2/100 g",
               "AOCS Cd 1c-85 (reapproved 2009) principle; EN 16300 (VERIFIED)",
               None, "none", Domain(basis="exact stoichiometry"), "DERIVED",
               "one I2 per C=C on the FAME basis"),
        Method("iodine_value_gI2_100g", "aocs_cd1c85", _iv_aocs, "g I2/100 g",
               "AOCS Recommended Practice Cd 1c-85, Calculated Iodine Value (reapproved 2009)",
               None, "none",
               Domain((_PUFA4,), "not applicable to fish oils (AOCS, ISO 3961, EN 16300)"),
               "VERIFIED", "triglyceride-basis factors applied to FAME % (C1)"),
        # cold flow
        Method("cfpp_C", "ramos2009", _cfpp_ramos2009, "°C",
               "Ramos M.J. et al., Bioresour. Technol. 100 (2009) 261-268, "
               "doi:10.1016/j.biortech.2008.06.039 (from memory)",
               None, "none",
               Domain((_MAIN, Bound("LCSF", hi=7.0, descriptor="lcsf_wt_pct")),
                      "about ten C16-C18 vegetable oils, LCSF up to palm's (MEMORY/DERIVED)"),
               "MEMORY", "linear in the long-chain saturated factor"),
        Method("cfpp_C", "from_cloud_point", _cfpp_from_cloud_point, "°C",
               "abstract on thermodynamic CP and CFPP of vegetable-oil and microalgae FAME "
               "(correlations.md [S21]; authors not shown), applied to the imahara2006 CP",
               None, "none", Domain(basis="22 microalgae FAME data sets (VERIFIED [S21])"),
               "MEMORY", "1.0191 CP - 2.9 (VERIFIED) on the ideal-solubility CP (MEMORY)"),
        Method("cloud_point_C", "imahara2006", _cp_imahara2006, "°C",
               "Imahara H., Minami E., Saka S., Fuel 85 (2006) 1666-1670 (from memory)",
               None, "none",
               Domain((_NO_MELTING,), "physical model; enthalpies of fusion MEMORY/DERIVED"),
               "MEMORY", "ideal solubility of the saturated esters and elaidate; NaN if none"),
        Method("cloud_point_C", "sarin2009", _cp_sarin2009, "°C",
               "Sarin A. et al., Energy 34 (2009) 2016-2021 (from memory)",
               None, "none",
               Domain((Bound("C16:0", lo=9.0, hi=45.0, species=("C16:0",)),),
                      "palm-jatropha-pongamia blends (MEMORY)"),
               "MEMORY", "linear in methyl palmitate; low-confidence coefficients"),
        Method("pour_point_C", "sarin2009_from_cloud_point", _pp_sarin2009_from_cloud_point,
               "°C",
               "Sarin A. et al., Energy 34 (2009) 2016-2021 (from memory), both lines, "
               "applied to the imahara2006 cloud point",
               None, "none",
               Domain((_NO_MELTING,), "pour point-cloud point line DERIVED from Sarin's two "
                      "fits (MEMORY); cloud point physical"),
               "MEMORY", "1.0856 CP - 6.82 on the ideal-solubility CP; sees every saturated ester",
               error_fallback=_pour_point_error,
               error_note="no published error and no second method: error is the std of "
                          "the cloud-point methods"),
        Method("pour_point_C", "sarin2009", _pp_sarin2009, "°C",
               "Sarin A. et al., Energy 34 (2009) 2016-2021 (from memory)",
               None, "none",
               Domain((Bound("C16:0", lo=9.0, hi=45.0, species=("C16:0",)), _OTHER_SATURATES),
                      "palm-jatropha-pongamia blends (MEMORY); sees palmitate only"),
               "MEMORY", "linear in methyl palmitate; low-confidence coefficients",
               error_fallback=_pour_point_error,
               error_note="no published error and no second method: error is the std of "
                          "the cloud-point methods"),
        # stability
        Method("oxidation_stability_110C_h", "park2008", _os_park2008, "h",
               "Park J.-Y. et al., Bioresour. Technol. 99 (2008) 1196-1203 (from memory)",
               0.975, "r2",
               Domain((Bound("C18:2 + C18:3", lo=stability.PARK2008_X_RANGE_WT_PCT[0],
                             hi=stability.PARK2008_X_RANGE_WT_PCT[1],
                             species=("C18:2", "C18:3")), _PUFA4),
                      "palm/rapeseed/soybean ester blends (MEMORY; X range DERIVED)"),
               "MEMORY", "no antioxidant effects; NaN where C18:2 + C18:3 = 0",
               error_fallback=_park_error,
               error_note="DERIVED RMSE: SD of the fit over its X range x sqrt(1 - R2 0.975)"),
        Method("oxidation_stability_110C_h", "park2008_bape", _os_park2008_bape, "h",
               "Park J.-Y. et al., Bioresour. Technol. 99 (2008) 1196-1203 (scale, from "
               "memory); Knothe G., J. Am. Oil Chem. Soc. 79 (2002) 847-854 (bis-allylic "
               "positions); Refaat A.A. 2009 quoting Dunn 2008 (monoene rate 1/41)",
               None, "none",
               Domain((Bound("bis-allylic position equivalents",
                             lo=stability.PARK2008_BAPE_RANGE_WT_PCT[0],
                             hi=stability.PARK2008_BAPE_RANGE_WT_PCT[1],
                             descriptor="bape_wt_pct"), _PUFA4, _CONJUGATED),
                      "palm/rapeseed/soybean ester blends (scale DERIVED from Park 2008)"),
               "MEMORY", "induction period inverse to the oxidizability; NaN for saturated only",
               error_fallback=_park_error,
               error_note="DERIVED RMSE of Park 2008 (no error published for this form)"),
        Method("oxidizability_indicator_wt_pct", "knothe2002", _ox_knothe2002,
               "wt % linoleate-eq.",
               "Knothe G., J. Am. Oil Chem. Soc. 79 (2002) 847-854 (pages from memory)",
               None, "none", Domain(basis="ranking index, not fitted"), "MEMORY",
               "INDICATOR (BAPE), not an induction period; higher is less stable"),
        Method("oxidizability_indicator_wt_pct", "mccormick2007", _ox_mccormick2007,
               "wt % linoleate-eq.",
               "McCormick R.L. et al., Fuel Process. Technol. 88 (2007) 651-657 (from memory)",
               None, "none", Domain(basis="ranking index, not fitted; C18 esters only"),
               "MEMORY", "INDICATOR (100 OX), not an induction period; higher is less stable"),
        # transport
        Method("density_15C_kg_m3", "ramirezverduzco2022", _rho_rv2022, "kg/m3",
               "Ramírez-Verduzco L.F., Sustainability 14 (2022) 6804, doi:10.3390/su14116804",
               0.29, "aad_pct",
               Domain((_HYDROXY,), "58 alkyl esters, 16 biodiesels, 8 blends; no -OH group"),
               "VERIFIED", "group-contribution molar volumes, ideal mixing",
               temperature_dependent=True),
        Method("density_15C_kg_m3", "ramirezverduzco2012", _rho_rv2012, "kg/m3", rv2012,
               0.11, "aad_pct", rv2012_domain, "MEMORY",
               "per-ester density at 20 °C, mass-weighted; EN 14214 slope 0.723 to other T",
               temperature_dependent=True),
        Method("kin_viscosity_40C_mm2_s", "allen1999", _nu_allen1999, "mm2/s",
               "Allen C.A.W., Watts K.C., Ackman R.G., Pegg M.J., Fuel 78 (1999) 1319-1326",
               3.0, "aad_pct",
               Domain((_untabulated("kin_viscosity_40C_mm2_s", "viscosity"),),
                      "natural biodiesels and simulated oils; fallback esters (DERIVED)"),
               "MEMORY",
               "log mixing (VERIFIED) of pure-ester viscosities (mostly MEMORY); "
               "Krisnangkura slopes to other T",
               temperature_dependent=True),
        Method("kin_viscosity_40C_mm2_s", "krisnangkura2006", _nu_krisnangkura2006, "mm2/s",
               "Krisnangkura K., Yimsuwan T., Pairintra R., Fuel 85 (2006) 107-113",
               8.56, "max_pct",
               Domain((Bound("esters other than C12:0-C18:0, C18:1-C18:3", hi=15.0,
                             species=tuple(k for k in species_keys() if k not in (
                                 "C12:0", "C14:0", "C16:0", "C18:0",
                                 "C18:1", "C18:2", "C18:3"))),),
                      "C12:0-C18:0 and C18:1-C18:3 esters (MEMORY)"),
               "MEMORY", "per-ester ln(nu) = A + B/T forms, log-mixed",
               temperature_dependent=True),
        Method("kin_viscosity_40C_mm2_s", "ramirezverduzco2012", _nu_rv2012, "mm2/s", rv2012,
               2.57, "aad_pct", rv2012_domain, "MEMORY",
               "per-ester viscosity from molar mass and double bonds, log-mixed",
               temperature_dependent=True),
        # energy
        Method("hhv_MJ_kg", "kay1936", _hhv_kay1936, "MJ/kg",
               "Kay W.B., Ind. Eng. Chem. 28 (1936) 1014-1019 (from memory); pure esters: "
               "Adriaanse N., Dekker H., Coops J., Recl. Trav. Chim. Pays-Bas 84 (1965) 393-407",
               None, "none",
               Domain((_untabulated("hhv_MJ_kg", "HHV"),),
                      "fallback per-ester HHVs outside the table (DERIVED)"),
               "VERIFIED", "mass-weighted pure-ester HHV"),
        Method("hhv_MJ_kg", "ramirezverduzco2012", _hhv_rv2012, "MJ/kg", rv2012,
               0.21, "aad_pct", rv2012_domain, "MEMORY",
               "per-ester HHV from molar mass and double bonds, mass-weighted"),
        Method("hhv_MJ_kg", "demirbas1998", _hhv_demirbas1998, "MJ/kg",
               "Demirbas A., Fuel 77 (1998) 1117-1120",
               0.0067, "aad_pct",
               Domain(basis="Turkish vegetable oils (VERIFIED [S36])", fame=False),
               "VERIFIED", "fitted on oils; FAME use is an extrapolation (C3)"),
    ]
    for hhv in [m for m in methods if m.property == "hhv_MJ_kg"]:
        methods.append(Method(
            "lhv_MJ_kg", hhv.name, _lhv(hhv.function), "MJ/kg",
            hhv.citation + "; LHV = HHV - 2.442 x 8.937 x H (water at 25 °C)",
            hhv.error, hhv.error_kind, hhv.domain, hhv.provenance,
            f"{hhv.name} HHV less the latent heat of the water formed",
        ))
    table: dict[str, dict[str, Method]] = {p: {} for p in PROPERTIES}
    for m in methods:
        if m.unit != PROPERTIES[m.property]:
            raise AssertionError(f"{m.property}/{m.name}: unit {m.unit}")  # pragma: no cover
        table[m.property][m.name] = m
    return table


@cache
def registry() -> Mapping[str, Mapping[str, Method]]:
    """The registry: property -> {method name -> Method}, built once on first use."""
    return MappingProxyType({p: MappingProxyType(ms) for p, ms in _build().items()})


def _unknown_property(prop: str) -> UnknownNameError:
    return UnknownNameError(
        f"unknown property {prop!r}; valid properties: {', '.join(PROPERTIES)}"
    )


def methods_for(prop: str) -> Mapping[str, Method]:
    """All methods of one property, by name; raises UnknownNameError for a bad name."""
    try:
        return registry()[prop]
    except KeyError:
        raise _unknown_property(prop) from None


def get_method(prop: str, name: str) -> Method:
    """One method; an unknown property or method raises UnknownNameError listing valid names.

    >>> get_method("cetane_number", "nope")
    Traceback (most recent call last):
    ...
    estimator.errors.UnknownNameError: unknown method 'nope' for cetane_number; valid methods: \
krisnangkura1986, bamgboye2008, knothe2005, ramirezverduzco2012
    """
    methods = methods_for(prop)
    try:
        return methods[name]
    except KeyError:
        raise UnknownNameError(
            f"unknown method {name!r} for {prop}; valid methods: {', '.join(methods)}"
        ) from None


def default_method(prop: str) -> Method:
    """The default method of a property (see :data:`DEFAULT_REASONS`)."""
    methods_for(prop)
    return get_method(prop, DEFAULTS[prop])


def list_methods() -> pd.DataFrame:
    """Every registered method as one row, for printing."""
    rows = []
    for prop, methods in registry().items():
        for m in methods.values():
            rows.append({
                "property": prop,
                "method": m.name,
                "default": DEFAULTS[prop] == m.name,
                "unit": m.unit,
                "error": m.error,
                "error_kind": m.error_kind,
                "provenance": m.provenance,
                "domain": m.domain.text(),
                "citation": m.citation,
                "note": m.note,
            })
    return pd.DataFrame(rows)
