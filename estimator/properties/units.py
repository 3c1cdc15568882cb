"""Unit vocabulary of the property docstrings: the glossary the docstring meta-test checks.

Every entry of a Parameters or Returns section in ``estimator.properties`` ends with
its unit in brackets, e.g. ``Iodine value. [g I2/100 g]``. The bracket must hold one
of the keys of :data:`UNITS`, spelled exactly as here; ``tests/properties/
test_docstrings.py`` fails on any other spelling. To document a new unit, add it
here with a one-line meaning rather than writing a variant of an existing one.

Spelling conventions:

- mass percent is ``wt %`` (with a space), as in ``DESCRIPTOR_UNITS``;
- powers are plain digits after the symbol (``kg/m3``, ``mm2/s``), no ``^``;
- Celsius temperatures are ``degC``, absolute temperatures ``K``;
- dimensionless quantities (counts, indices, ratios, booleans) are ``1``;
- a coefficient per unit of an input is written ``<unit> per <unit>``.

Examples
--------
>>> UNITS["wt %"]
'mass percent on the stated basis (FAME unless said otherwise), 0-100'
"""

from __future__ import annotations

__all__ = ["UNITS"]

#: Unit string used in docstring brackets -> one-line meaning.
UNITS: dict[str, str] = {
    # composition
    "wt %": "mass percent on the stated basis (FAME unless said otherwise), 0-100",
    "mol/mol": "mole fraction, 0-1",
    "per wt %": "dimensionless coefficient per mass percent of a species",
    # composition descriptors
    "g/mol": "molar mass, grams per mole",
    "mg KOH/g": "saponification value: milligrams of KOH per gram of sample",
    "g I2/100 g": "iodine value: grams of iodine per 100 g of sample",
    "g I2/100 g per wt %": "iodine value contributed by one mass percent of a species",
    # temperature
    "degC": "temperature in degrees Celsius",
    "K": "absolute temperature or a temperature difference, kelvin",
    # energy
    "kJ/mol": "molar energy (enthalpy of fusion, heat of combustion), kilojoules per mole",
    "MJ/kg": "specific energy (heating value), megajoules per kilogram",
    # transport
    "kg/m3": "density, kilograms per cubic metre",
    "cm3/mol": "molar volume, cubic centimetres per mole",
    "mm2/s": "kinematic viscosity, square millimetres per second (= cSt)",
    # time
    "h": "time in hours (Rancimat induction period)",
    "min": "time in minutes (GC retention time)",
    # mass
    "mg": "mass in milligrams (sample and internal standard weighed in)",
    # dimensionless
    "1": "dimensionless: a number, count, index, ratio or boolean flag",
}
