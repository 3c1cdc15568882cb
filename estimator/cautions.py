"""The safety wording every verdict, blend and report carries."""

from __future__ import annotations

__all__ = ["CAUTION", "CAUTION_SHORT"]

CAUTION = (
    "These are estimates from published correlations, not certification. Fuel that "
    "misses its specification can damage engines and strand vehicles in cold weather. "
    "Fuel is accepted only on the standard test methods (EN 14214, ASTM D6751, EN 590 and "
    "the methods they name) run by a qualified laboratory. Making biodiesel involves "
    "methanol and caustic: follow local codes and licensed practice."
)

CAUTION_SHORT = (
    "Estimates, not certification: accept fuel only on the standard test methods in a "
    "qualified laboratory; follow local codes and licensed practice."
)
