"""Validate every reference table in ``estimator/tables/``.

Checks, per table: the required columns are present, no source-type cell is
empty (``source`` and every ``*_source`` column), numeric columns parse as
numbers, and the cross-table rules hold:

* species.csv: unique keys, integer structure columns, and the derived columns
  agree with ``scripts/build_species_table.py`` (its ``derived`` function);
* feedstocks.csv: every species column is a key of species.csv, values are
  non-negative, each profile (with ``other``) sums to 100 within 0.5, and the
  file is what ``scripts/build_feedstock_tables.py`` writes;
* feedstock_ranges.csv: oils are in feedstocks.csv, quantities are species keys
  (or ``iodine_value_oil``), min <= max, and each typical profile lies inside
  its own ranges;
* specs.csv: one parsable bound per row, known spec / property / unit / class;
* diesels.csv: known properties with the registry's units, values inside
  plausible physical bands, HHV above LHV, CFPP not above the cloud point.

Usage: ``python scripts/validate_tables.py``. Prints one line per table and one
line per problem; exits 1 if there is any problem.
"""

from __future__ import annotations

import contextlib
import csv
import importlib.util
import io
import math
import sys
import tempfile
from dataclasses import dataclass
from pathlib import Path
from types import ModuleType

ROOT = Path(__file__).resolve().parents[1]
TABLES = ROOT / "estimator" / "tables"
SCRIPTS = ROOT / "scripts"
if importlib.util.find_spec("estimator") is None:  # run from a checkout without installing
    sys.path.insert(0, str(ROOT))

from estimator.blending import DIESEL_PROPERTIES  # noqa: E402
from estimator.properties.descriptors import DESCRIPTOR_UNITS  # noqa: E402
from estimator.properties.methods import PROPERTIES  # noqa: E402

TABLE_NAMES = ("species", "feedstocks", "feedstock_ranges", "specs", "diesels")

# Required columns (the loaders in estimator/ read these by name).
REQUIRED = {
    "species": ["key", "carbons", "double_bonds", "trans", "hydroxyl", "delta",
                "acid_formula", "fame_formula", "acid_molar_mass_g_mol",
                "fame_molar_mass_g_mol", "allylic_positions", "bis_allylic_positions",
                "source", "cetane_number", "cetane_source", "melting_point_C",
                "melting_source", "enthalpy_fusion_kJ_mol", "fusion_source",
                "kin_viscosity_40C_mm2_s", "viscosity_source", "hhv_MJ_kg", "hhv_source"],
    "feedstocks": ["oil", "feedstock", "other", "basis", "source"],
    "feedstock_ranges": ["oil", "quantity", "min", "max", "source"],
    "specs": ["spec", "property", "climate_class", "min", "max", "unit",
              "exact_from_composition", "edition", "test_method", "mark", "source"],
    "diesels": ["diesel", "property", "value", "unit", "source"],
}
# Column that names a row in messages.
ROW_KEY = {"species": "key", "feedstocks": "oil", "feedstock_ranges": "oil",
           "specs": "spec", "diesels": "diesel"}

SPECIES_INT = ["carbons", "double_bonds", "trans", "hydroxyl", "allylic_positions",
               "bis_allylic_positions"]
SPECIES_FLOAT = ["acid_molar_mass_g_mol", "fame_molar_mass_g_mol", "cetane_number",
                 "melting_point_C", "enthalpy_fusion_kJ_mol", "kin_viscosity_40C_mm2_s",
                 "hhv_MJ_kg"]

PROFILE_SUM_TOL = 0.5  # wt %; the build script makes `other` = 100 - listed
# oil: (tabulated sum, reason) - profiles allowed to miss 100 because their source does
SUM_EXCEPTIONS = {
    "safflower": (103.0, "rounding in Maternal & Child Nutrition 2011 Table 2 [standards.md S27]"),
}
PROFILE_BASES = ("fame", "fatty-acid", "oil")
RANGE_EXTRA_QUANTITIES = ("iodine_value_oil",)  # read by estimator.profiles.ranges

COMPOSITION_PROPERTIES = ("linolenic_wt_pct", "pufa4_wt_pct")  # EN 14214 GC limits
#: Limits on a value measured on the sample (estimator.specs.MEASURED_PROPERTIES) -> unit.
MEASURED_PROPERTIES = {"ester_content_wt_pct": "wt %"}  # EN 14214 ester content (EN 14103)
SPEC_NAMES = ("en14214", "astm-d6751", "en590", "astm-d7467")
CLIMATE_CLASSES = ("", "A", "B", "C", "D", "E", "F", "0", "1", "2", "3", "4")
MARKS = ("VERIFIED", "MEMORY")

DIESEL_EXTRA = {"mean_molar_mass_g_mol": "g/mol"}
# Plausible physical bands for a petroleum middle-distillate diesel (inclusive).
DIESEL_BANDS = {
    # EN 590 arctic class minimum 800 (standards.md 3.4) to a heavy No. 2-D (common practice)
    "density_15C_kg_m3": (780.0, 880.0),
    # EN 590 arctic class 4 minimum 1.20 to the EN 590 maximum 4.50 (standards.md 3.3, 3.4)
    "kin_viscosity_40C_mm2_s": (1.2, 4.5),
    # D7467/D975 minimum 40 (standards.md 3.1, 3.2); above 60 is not a straight diesel
    # (common practice)
    "cetane_number": (40.0, 60.0),
    # GREET 45.56-45.76 and 42.60-42.78 MJ/kg (standards.md 5), widened (common practice)
    "hhv_MJ_kg": (44.5, 47.0),
    "lhv_MJ_kg": (41.5, 44.0),
    # seasonal diesels (standards.md 3.4 classes and [S21]); common practice envelope
    "cloud_point_C": (-40.0, 15.0),
    "cfpp_C": (-50.0, 10.0),
    # C10-C20 alkanes 142-283 g/mol (common practice)
    "mean_molar_mass_g_mol": (140.0, 285.0),
}
# HHV - LHV = latent heat of the product water = 9 w_H * 2.442 MJ/kg; w_H 11-15 wt %
# gives 2.4-3.3 MJ/kg (common practice)
HHV_LHV_GAP = (2.4, 3.3)
CFPP_ABOVE_CLOUD_TOL = 1.0  # degC; filters plug only once crystals exist (common practice)


@dataclass
class Table:
    """One CSV read as strings: header and rows."""

    name: str
    fields: list[str]
    rows: list[dict[str, str]]

    @property
    def filename(self) -> str:
        return f"{self.name}.csv"

    def label(self, i: int) -> str:
        key = ROW_KEY[self.name]
        return f"row {i + 2} ({self.rows[i].get(key, '?')})"  # +2: header, 1-based


@dataclass
class Result:
    """What the checks found for one table."""

    table: Table
    problems: list[str]
    notes: list[str]


def read_table(name: str, directory: Path = TABLES) -> Table:
    """Read ``<directory>/<name>.csv`` keeping every cell as a string."""
    with (directory / f"{name}.csv").open(newline="", encoding="utf-8") as fh:
        reader = csv.DictReader(fh)
        fields = list(reader.fieldnames or [])
        rows = list(reader)
    return Table(name, fields, rows)


def load_script(stem: str) -> ModuleType:
    """Import ``scripts/<stem>.py`` as a module without running its ``main``."""
    spec = importlib.util.spec_from_file_location(f"_tables_{stem}", SCRIPTS / f"{stem}.py")
    module = importlib.util.module_from_spec(spec)
    spec.loader.exec_module(module)
    return module


def as_float(text: str) -> float | None:
    """The cell as a finite float, or None if it is blank or not a number."""
    try:
        value = float(text)
    except (TypeError, ValueError):
        return None
    return value if math.isfinite(value) else None


# ------------------------------------------------------------------ generic checks
def check_required(table: Table) -> list[str]:
    """The columns the package reads are all present."""
    missing = [c for c in REQUIRED[table.name] if c not in table.fields]
    return [f"{table.filename}: missing columns {', '.join(missing)}"] if missing else []


def source_columns(table: Table) -> list[str]:
    """``source`` and every ``*_source`` column."""
    return [c for c in table.fields if c == "source" or c.endswith("_source")]


def check_sources(table: Table, columns: list[str] | None = None) -> list[str]:
    """No source-type cell is empty; one problem per column, naming the rows."""
    out = []
    for col in columns if columns is not None else source_columns(table):
        empty = [table.label(i) for i, r in enumerate(table.rows) if not (r.get(col) or "").strip()]
        if empty:
            out.append(f"{table.filename}: {col} empty in {len(empty)} rows: {', '.join(empty)}")
    return out


def check_numeric(table: Table, columns: list[str], *, blank_ok: bool = True,
                  integer: bool = False) -> list[str]:
    """Each cell of ``columns`` is a (finite) number, or blank if ``blank_ok``."""
    out = []
    for i, row in enumerate(table.rows):
        for col in columns:
            text = (row.get(col) or "").strip()
            if not text:
                if not blank_ok:
                    out.append(f"{table.filename} {table.label(i)}: {col} is blank")
                continue
            value = as_float(text)
            if value is None:
                out.append(f"{table.filename} {table.label(i)}: {col} {text!r} is not a number")
            elif integer and value != int(value):
                out.append(f"{table.filename} {table.label(i)}: {col} {text!r} is not an integer")
    return out


def check_unique(table: Table, columns: list[str]) -> list[str]:
    """No two rows share the values of ``columns``."""
    seen: dict[tuple, int] = {}
    out = []
    for i, row in enumerate(table.rows):
        key = tuple(row.get(c, "") for c in columns)
        if key in seen:
            out.append(f"{table.filename} {table.label(i)}: duplicate {'/'.join(columns)} "
                       f"{'/'.join(key)} (first at {table.label(seen[key])})")
        else:
            seen[key] = i
    return out


# ------------------------------------------------------------------ species.csv
def check_species_derived(table: Table) -> list[str]:
    """Derived columns agree with ``scripts/build_species_table.py``."""
    build = load_script("build_species_table")
    out = []
    for i, row in enumerate(table.rows):
        try:
            expected = build.derived(row)
        except (KeyError, ValueError) as exc:
            out.append(f"{table.filename} {table.label(i)}: build script cannot derive ({exc})")
            continue
        for col, value in expected.items():
            if row.get(col) != value:
                out.append(f"{table.filename} {table.label(i)}: {col} is {row.get(col)!r}, "
                           f"build_species_table.py derives {value!r}")
    return out


def check_species(table: Table) -> Result:
    problems = check_required(table)
    if problems:
        return Result(table, problems, [])
    problems += check_sources(table)
    problems += check_numeric(table, SPECIES_INT, blank_ok=False, integer=True)
    problems += check_numeric(table, SPECIES_FLOAT)
    problems += check_unique(table, ["key"])
    derived = check_species_derived(table)
    problems += derived
    notes = [f"build_species_table.py: {len(derived)} derived cells differ"]
    return Result(table, problems, notes)


# ------------------------------------------------------------------ feedstocks.csv
def profile_columns(table: Table) -> list[str]:
    """The species columns of feedstocks.csv: those between ``feedstock`` and ``other``."""
    f = table.fields
    return f[f.index("feedstock") + 1: f.index("other")]


def profile_sum(row: dict[str, str], columns: list[str]) -> float:
    """Sum of the listed species and ``other`` (blank counts as 0)."""
    return sum(as_float(row.get(c) or "") or 0.0 for c in [*columns, "other"])


def check_profile_sums(table: Table) -> tuple[list[str], list[str]]:
    """Each profile sums to 100 within 0.5, except the documented exceptions."""
    cols = profile_columns(table)
    problems, notes = [], []
    for i, row in enumerate(table.rows):
        total = profile_sum(row, cols)
        oil = row["oil"]
        if oil in SUM_EXCEPTIONS:
            expected, why = SUM_EXCEPTIONS[oil]
            if abs(total - expected) <= PROFILE_SUM_TOL:
                notes.append(f"known exception: {oil} sums to {total:g} ({why})")
                continue
            problems.append(f"{table.filename} {table.label(i)}: sums to {total:g}, "
                            f"the known exception is {expected:g}")
        elif abs(total - 100.0) > PROFILE_SUM_TOL:
            problems.append(f"{table.filename} {table.label(i)}: species + other sum to "
                            f"{total:g}, not 100 +- {PROFILE_SUM_TOL}")
    return problems, notes


def check_matches_feedstock_build(name: str, directory: Path = TABLES) -> list[str]:
    """``<name>.csv`` equals what ``scripts/build_feedstock_tables.py`` writes.

    The build script is run with its output redirected to a temporary directory.
    """
    build = load_script("build_feedstock_tables")
    with tempfile.TemporaryDirectory() as tmp:
        build.OUT = Path(tmp)
        with contextlib.redirect_stdout(io.StringIO()):
            build.main()
        rebuilt = (Path(tmp) / f"{name}.csv").read_text(encoding="utf-8").splitlines()
    current = (directory / f"{name}.csv").read_text(encoding="utf-8").splitlines()
    if current == rebuilt:
        return []
    diff = [i + 1 for i, (a, b) in enumerate(zip(current, rebuilt)) if a != b]
    where = f"first at line {diff[0]}" if diff else f"{len(current)} vs {len(rebuilt)} lines"
    return [f"{name}.csv differs from what build_feedstock_tables.py writes ({where})"]


def check_feedstocks(table: Table, species: Table, directory: Path = TABLES) -> Result:
    problems = check_required(table)
    if problems:
        return Result(table, problems, [])
    keys = {r["key"] for r in species.rows}
    cols = profile_columns(table)
    unknown = [c for c in cols if c not in keys]
    if unknown:
        problems.append(f"{table.filename}: columns not in species.csv: {', '.join(unknown)}")
    problems += check_sources(table)
    problems += check_numeric(table, [*cols, "other"])
    problems += check_unique(table, ["oil"])
    for i, row in enumerate(table.rows):
        negative = [c for c in [*cols, "other"] if (as_float(row.get(c) or "") or 0.0) < 0]
        if negative:
            problems.append(f"{table.filename} {table.label(i)}: negative {', '.join(negative)}")
        if row["basis"] not in PROFILE_BASES:
            problems.append(f"{table.filename} {table.label(i)}: basis {row['basis']!r} not one "
                            f"of {', '.join(PROFILE_BASES)}")
    sums, notes = check_profile_sums(table)
    problems += sums
    problems += check_matches_feedstock_build("feedstocks", directory)
    return Result(table, problems, notes)


# ------------------------------------------------------------------ feedstock_ranges.csv
def check_ranges(table: Table, species: Table, feedstocks: Table,
                 directory: Path = TABLES) -> Result:
    problems = check_required(table)
    if problems:
        return Result(table, problems, [])
    keys = {r["key"] for r in species.rows}
    profiles = {r["oil"]: r for r in feedstocks.rows}
    problems += check_sources(table)
    problems += check_numeric(table, ["min", "max"], blank_ok=False)
    problems += check_unique(table, ["oil", "quantity"])
    for i, row in enumerate(table.rows):
        where = f"{table.filename} {table.label(i)}"
        oil, q = row["oil"], row["quantity"]
        lo, hi = as_float(row["min"]), as_float(row["max"])
        if oil not in profiles:
            problems.append(f"{where}: oil {oil!r} is not in feedstocks.csv")
        if q not in keys and q not in RANGE_EXTRA_QUANTITIES:
            problems.append(f"{where}: quantity {q!r} is neither a species.csv key nor one of "
                            f"{', '.join(RANGE_EXTRA_QUANTITIES)}")
        if lo is None or hi is None:
            continue
        if lo > hi:
            problems.append(f"{where}: {q} min {lo:g} > max {hi:g}")
        if q in keys and (lo < 0 or hi > 100):
            problems.append(f"{where}: {q} range {lo:g}-{hi:g} outside 0-100 wt %")
        if q in keys and oil in profiles and q in profiles[oil]:
            value = as_float(profiles[oil][q] or "") or 0.0
            if not lo <= value <= hi:
                problems.append(f"{where}: typical {oil} {q} {value:g} in feedstocks.csv lies "
                                f"outside its range {lo:g}-{hi:g}")
    problems += check_matches_feedstock_build("feedstock_ranges", directory)
    return Result(table, problems, [])


# ------------------------------------------------------------------ specs.csv
def spec_property_unit(prop: str) -> str | None:
    """The unit a spec limit on ``prop`` must carry, or None for an unknown property."""
    if prop in PROPERTIES:
        return PROPERTIES[prop]
    if prop in COMPOSITION_PROPERTIES:
        return DESCRIPTOR_UNITS[prop]
    return MEASURED_PROPERTIES.get(prop)


def check_specs(table: Table) -> Result:
    problems = check_required(table)
    if problems:
        return Result(table, problems, [])
    problems += check_sources(table)
    problems += check_numeric(table, ["min", "max"])
    for i, row in enumerate(table.rows):
        where = f"{table.filename} {table.label(i)}"
        prop = row["property"]
        filled = [b for b in ("min", "max") if (row[b] or "").strip()]
        if len(filled) != 1:
            problems.append(f"{where}: {prop} has {len(filled)} bounds, expected exactly one")
        if row["spec"] not in SPEC_NAMES:
            problems.append(f"{where}: unknown spec {row['spec']!r}")
        unit = spec_property_unit(prop)
        if unit is None:
            problems.append(f"{where}: unknown property {prop!r}")
        elif row["unit"] != unit:
            problems.append(f"{where}: {prop} unit {row['unit']!r}, the registry says {unit!r}")
        if row["climate_class"] not in CLIMATE_CLASSES:
            problems.append(f"{where}: unknown climate class {row['climate_class']!r}")
        exact = row["exact_from_composition"]
        if exact not in ("true", "false"):
            problems.append(f"{where}: exact_from_composition {exact!r} is not true/false")
        elif (exact == "true") != (prop in COMPOSITION_PROPERTIES):
            problems.append(f"{where}: exact_from_composition {exact} for {prop}")
        if row["mark"] not in MARKS:
            problems.append(f"{where}: mark {row['mark']!r} not one of {', '.join(MARKS)}")
    problems += check_unique_bounds(table)
    return Result(table, problems, [])


def check_unique_bounds(table: Table) -> list[str]:
    """At most one limit per spec, property, climate class and bound."""
    seen: dict[tuple, int] = {}
    out = []
    for i, row in enumerate(table.rows):
        bound = "min" if (row["min"] or "").strip() else "max"
        key = (row["spec"], row["property"], row["climate_class"], bound)
        if key in seen:
            out.append(f"{table.filename} {table.label(i)}: second {bound} for "
                       f"{key[1]} class {key[2] or '-'} (first at {table.label(seen[key])})")
        else:
            seen[key] = i
    return out


# ------------------------------------------------------------------ diesels.csv
def check_diesels(table: Table) -> Result:
    problems = check_required(table)
    if problems:
        return Result(table, problems, [])
    units = {**DIESEL_PROPERTIES, **DIESEL_EXTRA}
    problems += check_sources(table)
    problems += check_numeric(table, ["value"], blank_ok=False)
    problems += check_unique(table, ["diesel", "property"])
    values: dict[str, dict[str, float]] = {}
    for i, row in enumerate(table.rows):
        where = f"{table.filename} {table.label(i)}"
        prop, value = row["property"], as_float(row["value"])
        if prop not in units:
            problems.append(f"{where}: unknown property {prop!r}")
            continue
        if row["unit"] != units[prop]:
            problems.append(f"{where}: {prop} unit {row['unit']!r}, expected {units[prop]!r}")
        if value is None:
            continue
        values.setdefault(row["diesel"], {})[prop] = value
        lo, hi = DIESEL_BANDS[prop]
        if not lo <= value <= hi:
            problems.append(f"{where}: {prop} {value:g} outside the plausible {lo:g}-{hi:g}")
    for diesel, v in values.items():
        missing = [p for p in DIESEL_PROPERTIES if p not in v]
        if missing:
            problems.append(f"{table.filename}: {diesel} lacks {', '.join(missing)}")
        if "hhv_MJ_kg" in v and "lhv_MJ_kg" in v:
            gap = v["hhv_MJ_kg"] - v["lhv_MJ_kg"]
            if not HHV_LHV_GAP[0] <= gap <= HHV_LHV_GAP[1]:
                problems.append(f"{table.filename}: {diesel} HHV - LHV = {gap:.2f} MJ/kg, outside "
                                f"{HHV_LHV_GAP[0]:g}-{HHV_LHV_GAP[1]:g}")
        if "cfpp_C" in v and "cloud_point_C" in v:
            if v["cfpp_C"] > v["cloud_point_C"] + CFPP_ABOVE_CLOUD_TOL:
                problems.append(f"{table.filename}: {diesel} CFPP {v['cfpp_C']:g} is above its "
                                f"cloud point {v['cloud_point_C']:g}")
    return Result(table, problems, [])


# ------------------------------------------------------------------ driver
def validate(directory: Path = TABLES) -> list[Result]:
    """Run every check; one result per table in ``TABLE_NAMES`` order."""
    t = {name: read_table(name, directory) for name in TABLE_NAMES}
    return [
        check_species(t["species"]),
        check_feedstocks(t["feedstocks"], t["species"], directory),
        check_ranges(t["feedstock_ranges"], t["species"], t["feedstocks"], directory),
        check_specs(t["specs"]),
        check_diesels(t["diesels"]),
    ]


def main(directory: Path = TABLES) -> int:
    results = validate(directory)
    for r in results:
        n = len(r.table.rows)
        k = len(r.problems)
        status = " OK" if not k else f", {k} problem{'s' if k > 1 else ''}"
        extra = f" ({'; '.join(r.notes)})" if r.notes else ""
        print(f"{r.table.filename}: {n} rows{status}{extra}")
        for p in r.problems:
            print(f"  {p}")
    return 1 if any(r.problems for r in results) else 0


if __name__ == "__main__":
    sys.exit(main())
