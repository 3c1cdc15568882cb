"""Whole jobs as tables: what each CLI command computes, callable from Python.

These functions hold no printing and no file writing; the CLI formats and writes
what they return.
"""

from __future__ import annotations

from collections.abc import Mapping, Sequence

import pandas as pd

from estimator.profiles.profile import Profile
from estimator.properties.descriptors import descriptors
from estimator.properties.predict import estimate, estimate_wide, wide

__all__ = ["Prediction", "descriptor_table", "predict", "profile_notes"]


class Prediction:
    """The result of :func:`predict`: wide table, long table, and the profile behind them.

    The long table is built on first use when the wide one came straight from the
    estimates (the default path, faster on many samples).
    """

    def __init__(self, wide: pd.DataFrame, long, profile: Profile) -> None:
        self.wide = wide
        self.profile = profile
        self._long = long

    @property
    def long(self) -> pd.DataFrame:
        """sample, property, method, value, unit, error, in_domain, note."""
        if callable(self._long):
            self._long = self._long()
        return self._long


def descriptor_table(profile: Profile, desc=None) -> pd.DataFrame:
    """One row per sample: ``sample`` then every composition descriptor."""
    desc = descriptors(profile.wt_pct) if desc is None else desc
    table = pd.DataFrame(desc)
    table.insert(0, "sample", profile.samples)
    return table


def profile_notes(profile: Profile) -> list[str]:
    """Per-sample notes: what was done to the numbers, and Codex range warnings."""
    from estimator.profiles.ranges import codex_warnings

    notes = profile.notes.copy()
    warnings = codex_warnings(profile)
    warned = (warnings != "").to_numpy()
    if warned.any():
        notes[warned] = [
            f"{n}; {w}" if n else w
            for n, w in zip(notes[warned].tolist(), warnings[warned].tolist(), strict=True)
        ]
    return notes.tolist()


def predict(
    profile: Profile,
    *,
    methods: str | Mapping[str, str] = "default",
    temperatures_C: Sequence[float] = (),
    models: Sequence[str] = (),
) -> Prediction:
    """Estimate every fuel property of every sample, plus the composition descriptors.

    Parameters
    ----------
    profile : Profile
    methods : {'default', 'all'} or mapping of property to method name
    temperatures_C : sequence of float
        Extra temperatures for the density and viscosity curves. [degC]
    models : sequence of str
        JSON model files from ``fame-estimator fit``; each fitted property replaces the
        default method in the wide table and appears as its own method in the long one.

    Returns
    -------
    Prediction
        ``wide``: sample, each property and its ``_error``, the descriptors, ``flags``
        and ``notes``; ``long``: sample, property, method, value, unit, error,
        in_domain, note.
    """
    desc = descriptors(profile.wt_pct)

    def make_long() -> pd.DataFrame:
        return estimate(profile.wt_pct, profile.samples, methods=methods,
                        temperatures_C=temperatures_C)

    if models:
        from estimator.refit.apply import apply_models, wide_with_models

        long = make_long()
        order = list(wide(long).columns)
        long = apply_models(profile, list(models), long)
        table = wide_with_models(long)
        # keep the property order of the plain table; fitted properties take their place
        table = table[[c for c in order if c in table.columns]
                      + [c for c in table.columns if c not in order]]
    elif methods == "all":
        long = make_long()
        table = wide(long)
    else:
        long = make_long  # built only if asked for
        table = estimate_wide(profile.wt_pct, profile.samples, methods=methods,
                              temperatures_C=temperatures_C, desc=desc)
    flags = table.pop("flags")
    desc = descriptor_table(profile, desc).drop(columns="sample")
    desc = desc.drop(columns=[c for c in desc.columns if c in table.columns])
    table = pd.concat([table.reset_index(drop=True), desc.reset_index(drop=True)], axis=1)
    table["flags"] = flags.to_numpy()
    table["notes"] = profile_notes(profile)
    return Prediction(table, long, profile)
