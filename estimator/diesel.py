"""The diesel a FAME is blended into: read from a certificate-like file, checked for unit slips.

A diesel description is a JSON object or a one-row CSV whose keys are the tool's
property names (:data:`DIESEL_PROPERTIES`), plus optionally ``name``,
``mean_molar_mass_g_mol`` and ``<property>_error``. Only the properties the
question needs are required (:func:`needed_properties`): a cold-flow question
needs no heating value. A property left out is NaN in every blend.

Every number is checked on plausibility for a middle distillate
(:data:`PLAUSIBLE_RANGES`, common practice: wide enough for arctic grades and
paraffinic diesel). A value outside is refused with one line, and where the
value looks like a unit slip the line says which (density 0.828 looks like
g/cm³; cloud point 263 looks like kelvin; viscosity 2700 is not in mm²/s).
"""

from __future__ import annotations

import math
from collections.abc import Iterable, Mapping
from dataclasses import dataclass, field
from pathlib import Path

from estimator.errors import InputFileError, UnknownNameError
from estimator.tables import load_table

__all__ = [
    "DIESEL_MEAN_MOLAR_MASS_G_MOL",
    "DIESEL_PROPERTIES",
    "PLAUSIBLE_RANGES",
    "Diesel",
    "diesel_names",
    "load_diesel",
    "needed_properties",
    "read_diesel",
]

#: Properties a diesel description may give, with units.
DIESEL_PROPERTIES = {
    "density_15C_kg_m3": "kg/m3",
    "kin_viscosity_40C_mm2_s": "mm2/s",
    "cetane_number": "1",
    "hhv_MJ_kg": "MJ/kg",
    "lhv_MJ_kg": "MJ/kg",
    "cloud_point_C": "°C",
    "cfpp_C": "°C",
}
#: Optional keys of a diesel description besides ``<property>_error``.
DIESEL_OPTIONAL = {"name": None, "mean_molar_mass_g_mol": 200.0}
#: Mean molar mass of diesel used for mole fractions [g/mol] (MEMORY / common practice:
#: middle distillate averages about C14-C15; n-tetradecane is 198 g/mol).
DIESEL_MEAN_MOLAR_MASS_G_MOL = 200.0

#: Plausible values for a middle-distillate diesel (common practice; EN 590 asks
#: 820-845 kg/m3, 2.0-4.5 mm2/s and cetane >= 51; arctic grades and paraffinic diesel
#: reach lower density, viscosity and cold-flow values, so the ranges are wide).
PLAUSIBLE_RANGES = {
    "density_15C_kg_m3": (740.0, 900.0),
    "kin_viscosity_40C_mm2_s": (0.8, 8.0),
    "cetane_number": (30.0, 100.0),
    "hhv_MJ_kg": (42.0, 48.5),
    "lhv_MJ_kg": (39.0, 45.5),
    "cloud_point_C": (-60.0, 25.0),
    "cfpp_C": (-60.0, 25.0),
    "mean_molar_mass_g_mol": (120.0, 350.0),
}
#: Value windows that betray a unit slip: (property, low, high, what it looks like).
_SLIPS = (
    ("density_15C_kg_m3", 0.70, 1.0, "looks like g/cm³ (kg/L); give kg/m³ (e.g. 828, not 0.828)"),
    ("kin_viscosity_40C_mm2_s", 8.0e-7, 8.0e-6, "looks like m²/s; give mm²/s (cSt)"),
    ("kin_viscosity_40C_mm2_s", 100.0, 1.0e5, "looks like the wrong unit; give mm²/s (cSt), "
     "about 2-4.5 for diesel"),
    ("hhv_MJ_kg", 40000.0, 50000.0, "looks like kJ/kg; give MJ/kg"),
    ("lhv_MJ_kg", 38000.0, 46000.0, "looks like kJ/kg; give MJ/kg"),
    ("hhv_MJ_kg", 17000.0, 21500.0, "looks like Btu/lb; give MJ/kg"),
    ("lhv_MJ_kg", 16000.0, 20000.0, "looks like Btu/lb; give MJ/kg"),
    ("cloud_point_C", 210.0, 300.0, "looks like kelvin; give °C (subtract 273.15)"),
    ("cfpp_C", 210.0, 300.0, "looks like kelvin; give °C (subtract 273.15)"),
)


@dataclass(frozen=True)
class Diesel:
    """A diesel described by its own measured or typical properties (missing ones NaN)."""

    name: str
    values: Mapping[str, float]
    errors: Mapping[str, float] = field(default_factory=dict)
    mean_molar_mass_g_mol: float = DIESEL_MEAN_MOLAR_MASS_G_MOL
    source: str = ""

    def value(self, prop: str) -> float:
        """The diesel's value of one property (NaN when the description does not give it)."""
        return float(self.values.get(prop, math.nan))

    def error(self, prop: str) -> float:
        """The stated error of one property (0 when the description gives none)."""
        return float(self.errors.get(prop, 0.0))

    @property
    def origin(self) -> str:
        """Where the description comes from, in words: a built-in diesel, or its file."""
        if not self.source or self.source.startswith("built-in"):
            return self.source or "described by the caller"
        return f"from {self.source}"

    def has(self, prop: str) -> bool:
        """Whether the description gives ``prop``."""
        return prop in self.values and math.isfinite(float(self.values[prop]))


def needed_properties(target_properties: Iterable[str]) -> list[str]:
    """Diesel properties a blend question needs: its targets' properties, and the density
    whenever mass or mole fractions enter (viscosity, heating values, cloud point).

    Examples
    --------
    >>> needed_properties(["cfpp_C"])
    ['cfpp_C']
    >>> needed_properties(["cloud_point_C"])
    ['density_15C_kg_m3', 'cloud_point_C']
    """
    props = set(target_properties)
    if "lhv_MJ_L" in props:
        props |= {"lhv_MJ_kg"}
    if props & {"kin_viscosity_40C_mm2_s", "hhv_MJ_kg", "lhv_MJ_kg", "cloud_point_C"}:
        props.add("density_15C_kg_m3")
    return [p for p in DIESEL_PROPERTIES if p in props]


def diesel_names() -> list[str]:
    """Names of the built-in typical diesels (``estimator/tables/diesels.csv``)."""
    return list(dict.fromkeys(load_table("diesels")["diesel"]))


def _builtin_diesel(name: str) -> Diesel:
    table = load_table("diesels")
    rows = table[table["diesel"] == name]
    values = dict(zip(rows["property"], rows["value"].astype(float), strict=True))
    return _make_diesel(values, name, _builtin_words(name), name, None)


def _builtin_words(name: str) -> str:
    """Where a built-in diesel comes from, in words (``en590-winter`` -> *built-in typical
    EN 590 winter diesel*)."""
    spec, _, season = name.partition("-")
    spec = {"en590": "EN 590"}.get(spec, spec)
    return f"built-in typical {spec} {season} diesel" if season else f"built-in typical {spec}"


def load_diesel(spec: str, required: Iterable[str] | None = None) -> Diesel:
    """A diesel from a file path (.json or one-row .csv) or a built-in name.

    ``required``: the properties the question needs (default: all of
    :data:`DIESEL_PROPERTIES`).

    Examples
    --------
    >>> d = load_diesel("en590-winter")
    >>> d.value("cfpp_C"), d.value("cloud_point_C")
    (-15.0, -5.0)
    """
    path = Path(spec)
    if path.suffix.lower() in (".json", ".csv") or path.exists():
        return read_diesel(path, required)
    names = diesel_names()
    key = spec.strip().lower()
    if key in names:
        return _builtin_diesel(key)
    raise UnknownNameError(
        f"unknown diesel {spec!r}; use a built-in name ({', '.join(names)}) or a .json/.csv file"
    )


def _number(label: str, key: str, val) -> float:
    if isinstance(val, bool) or val is None:
        raise InputFileError(f"{label}: key {key!r}: not a number: {val!r}")
    try:
        num = float(val.strip().replace(",", ".") if isinstance(val, str) else val)
    except (TypeError, ValueError, OverflowError):
        raise InputFileError(f"{label}: key {key!r}: not a number: {val!r}") from None
    if not math.isfinite(num):
        raise InputFileError(f"{label}: key {key!r}: not a finite number: {val!r}")
    return num


def read_diesel(path: str | Path, required: Iterable[str] | None = None) -> Diesel:
    """Read a diesel description: a JSON object or a one-row CSV keyed by property name.

    Keys: those of :data:`DIESEL_PROPERTIES` (``required`` of them must be given;
    default all), optional ``name``, ``mean_molar_mass_g_mol`` and
    ``<property>_error``. Values are checked on type and plausibility. The file is
    only read.
    """
    import pandas as pd

    path = Path(path)
    label = path.name
    if not path.exists():
        raise InputFileError(f"{label}: no such file")
    suffix = path.suffix.lower()
    if suffix == ".json":
        from estimator.files import read_json_object

        raw = read_json_object(path, "property: value")
    elif suffix == ".csv":
        try:
            frame = pd.read_csv(path, keep_default_na=False, na_values=[""], dtype=str)
        except (UnicodeDecodeError, pd.errors.ParserError, pd.errors.EmptyDataError) as exc:
            raise InputFileError(f"{label}: cannot read as CSV ({exc})") from None
        if len(frame) != 1:
            raise InputFileError(f"{label}: a diesel CSV has one data row, found {len(frame)}")
        raw = {str(k).strip(): v for k, v in frame.iloc[0].items()
               if not (isinstance(v, float) and math.isnan(v))}
    else:
        raise InputFileError(f"{label}: a diesel description is a .json or one-row .csv file")
    allowed = set(DIESEL_PROPERTIES) | set(DIESEL_OPTIONAL) | {
        f"{p}_error" for p in DIESEL_PROPERTIES
    }
    unknown = [k for k in raw if k not in allowed]
    if unknown:
        raise InputFileError(
            f"{label}: unknown key {str(unknown[0])[:40]!r}; a diesel file takes "
            f"{', '.join(DIESEL_PROPERTIES)}, optional name, mean_molar_mass_g_mol, "
            "<property>_error"
        )
    if "name" in raw and not isinstance(raw["name"], str):
        raise InputFileError(f"{label}: key 'name': not a text: {raw['name']!r}")
    values = {key: _number(label, key, val) for key, val in raw.items() if key != "name"}
    name = str(raw.get("name") or path.stem)[:120]
    return _make_diesel(values, name, label, label, required)


def _plausible(label: str, key: str, value: float) -> None:
    lo, hi = PLAUSIBLE_RANGES[key]
    if lo <= value <= hi:
        return
    for prop, s_lo, s_hi, hint in _SLIPS:
        if prop == key and s_lo <= value <= s_hi:
            raise InputFileError(f"{label}: {key!r} {value:g} {hint}")
    unit = DIESEL_PROPERTIES.get(key, "g/mol")
    unit = "" if unit == "1" else f" {unit}"
    raise InputFileError(f"{label}: {key!r} {value:g} is outside {lo:g} to {hi:g}{unit}, the "
                         "plausible range for a diesel")


def _make_diesel(values: dict[str, float], name: str, source: str, label: str,
                 required: Iterable[str] | None) -> Diesel:
    needed = list(DIESEL_PROPERTIES) if required is None else list(required)
    missing = [p for p in needed if p not in values]
    if missing:
        tail = (f"it needs {', '.join(DIESEL_PROPERTIES)}" if required is None else
                f"this question needs {', '.join(needed)}")
        raise InputFileError(
            f"{label}: diesel description lacks {missing[0]!r} "
            f"[{DIESEL_PROPERTIES.get(missing[0], '')}]; {tail}"
        )
    for key, value in values.items():
        if key in PLAUSIBLE_RANGES:
            _plausible(label, key, value)
        elif key.endswith("_error"):
            lo, hi = PLAUSIBLE_RANGES[key.removesuffix("_error")]
            if not 0 <= value <= hi - lo:
                raise InputFileError(f"{label}: {key!r} {value:g} is outside 0 to {hi - lo:g}, "
                                     "a plausible stated error")
    mm = values.get("mean_molar_mass_g_mol", DIESEL_MEAN_MOLAR_MASS_G_MOL)
    errors = {p: values[f"{p}_error"] for p in DIESEL_PROPERTIES if f"{p}_error" in values}
    return Diesel(
        name=name,
        values={p: values[p] for p in DIESEL_PROPERTIES if p in values},
        errors=errors,
        mean_molar_mass_g_mol=mm,
        source=source,
    )
