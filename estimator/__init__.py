"""fame-estimator: fuel properties of fatty acid methyl esters from a fatty-acid profile."""

from __future__ import annotations

__version__ = "0.1.0"
