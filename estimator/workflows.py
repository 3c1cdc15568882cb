"""Whole jobs as tables: what each CLI command computes, callable from Python.

These functions hold no printing and no file writing; the CLI formats and writes
what they return.
"""

from __future__ import annotations

import pandas as pd

from estimator.profiles.profile import Profile
from estimator.properties.descriptors import descriptors

__all__ = ["descriptor_table", "predict_table"]


def descriptor_table(profile: Profile) -> pd.DataFrame:
    """One row per sample: ``sample`` then every composition descriptor."""
    desc = descriptors(profile.wt_pct)
    table = pd.DataFrame(desc)
    table.insert(0, "sample", profile.samples)
    return table


def predict_table(profile: Profile) -> pd.DataFrame:
    """The wide ``predict`` table: sample, descriptors, and the notes on each profile."""
    from estimator.profiles.ranges import codex_warnings

    table = descriptor_table(profile)
    warnings = codex_warnings(profile)
    notes = profile.notes.copy()
    warned = (warnings != "").to_numpy()
    if warned.any():
        notes[warned] = [
            f"{n}; {w}" if n else w
            for n, w in zip(notes[warned].tolist(), warnings[warned].tolist(), strict=True)
        ]
    table["notes"] = notes.to_numpy()
    return table
