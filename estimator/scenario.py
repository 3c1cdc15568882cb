"""A planning scenario: one JSON file naming the lots, the diesel, the targets and the lab data.

The scenario file says what a season's planning needs, so that one command runs
the buyer's comparison, the blender's curves and highest levels, the least-cost
mix, and the refit on the lab's samples, and writes one report. Paths inside the
file are relative to the file. Keys (all but ``lots`` optional)::

    {
      "title": "Winter tender",
      "lots":  {"file": "lots.csv", "basis": "fatty-acid",
                "specs": ["en14214", "astm-d6751"], "climate_class": "C",
                "pretreat": "none", "methanol_ratio": 6},
      "blend": {"diesel": "diesel_winter.json" or "en590-winter",
                "levels": [0, 2, 5, 7, 10, 20, 30], "climate_class": "F",
                "max_cfpp_C": null, "max_cloud_point_C": -8,
                "specs": ["en590", "astm-d7467"]},
      "mix":   {"spec": "en14214", "climate_class": null, "max_cfpp_C": -5,
                "max_cloud_point_C": null, "demand_t": 1500, "available_column": "available_t"},
      "lab":   {"file": "lab_samples.csv", "properties": ["cetane_number", "cfpp_C"],
                "seed": 0},
      "costs": "costs.json",
      "model": "lab" or "lab_model.json" or ["a.json", "b.json"]
    }

``costs`` names a costs file (:func:`estimator.sourcing.read_costs`) used by the
comparison and the mix. ``model`` makes lab models drive the decisions: their
properties replace the published estimates in the comparison's verdicts and
ranking, the blend and the mix; ``"lab"`` uses the models the ``lab`` part fits
(which then runs first). ``mix`` also takes ``margin_bands`` (see
:func:`estimator.mixing.least_cost_mix`; default 1).

Nothing here prints or draws; :mod:`estimator.report.scenario_report` writes the files.
"""

from __future__ import annotations

import json
import tempfile
from contextlib import contextmanager
from dataclasses import dataclass, field
from pathlib import Path
from typing import Any

from estimator.errors import InputFileError, UsageError

__all__ = ["Scenario", "ScenarioResult", "read_scenario", "run_scenario"]

_KEYS = {
    "": {"title", "lots", "blend", "mix", "lab", "costs", "model"},
    "lots": {"file", "basis", "specs", "climate_class", "pretreat", "methanol_ratio",
             "sum_tolerance"},
    "blend": {"diesel", "levels", "climate_class", "max_cfpp_C", "max_cloud_point_C", "specs"},
    "mix": {"spec", "climate_class", "max_cfpp_C", "max_cloud_point_C", "demand_t",
            "available_column", "pretreat", "margin_bands"},
    "lab": {"file", "properties", "seed", "basis"},
}


@dataclass(frozen=True)
class Scenario:
    """A validated scenario file: its folder and its four parts."""

    path: Path
    title: str
    lots: dict[str, Any]
    blend: dict[str, Any] | None = None
    mix: dict[str, Any] | None = None
    lab: dict[str, Any] | None = None
    costs: str | None = None
    model: tuple[str, ...] = ()

    def resolve(self, name: str) -> Path:
        """A path named in the scenario, relative to the scenario file."""
        p = Path(name)
        return p if p.is_absolute() else self.path.parent / p


@dataclass
class ScenarioResult:
    """What :func:`run_scenario` computed, part by part (None where a part is absent)."""

    scenario: Scenario
    profile: Any
    comparison: Any
    blend: dict[str, Any] | None = None
    mix: Any = None
    fits: list = field(default_factory=list)
    lab_profile: Any = None
    models: list = field(default_factory=list)
    costs: Any = None
    #: Properties a lab model gave in the decisions (``property -> how``).
    model_properties: dict = field(default_factory=dict)


def read_scenario(path: str | Path) -> Scenario:
    """Read and validate a scenario JSON file; unknown keys are an error listing known ones."""
    path = Path(path)
    label = path.name
    if not path.exists():
        raise InputFileError(f"{label}: no such file")
    try:
        data = json.loads(path.read_text(encoding="utf-8"))
    except (UnicodeDecodeError, json.JSONDecodeError) as exc:
        raise InputFileError(f"{label}: not valid JSON ({exc})") from None
    if not isinstance(data, dict):
        raise InputFileError(f"{label}: expected a JSON object with 'lots', 'blend', 'mix', 'lab'")
    _check_keys(data, "", label)
    if "lots" not in data or not isinstance(data["lots"], dict) or "file" not in data["lots"]:
        raise InputFileError(f"{label}: 'lots' must be an object with at least a 'file'")
    parts = {}
    for part in ("lots", "blend", "mix", "lab"):
        value = data.get(part)
        if value is None:
            parts[part] = None
            continue
        if not isinstance(value, dict):
            raise InputFileError(f"{label}: '{part}' must be a JSON object")
        _check_keys(value, part, label)
        parts[part] = value
    if parts["blend"] is not None and "diesel" not in parts["blend"]:
        raise InputFileError(f"{label}: 'blend' needs a 'diesel' (a file or a built-in name)")
    if parts["lab"] is not None and not parts["lab"].get("properties"):
        raise InputFileError(f"{label}: 'lab' needs 'file' and a list of 'properties' to refit")
    title = str(data.get("title") or path.stem)
    costs = data.get("costs")
    if costs is not None and not isinstance(costs, str):
        raise InputFileError(f"{label}: 'costs' must be the name of a costs JSON file")
    model = data.get("model")
    models = (model,) if isinstance(model, str) else tuple(model) if isinstance(
        model, list) else () if model is None else None
    if models is None or not all(isinstance(m, str) and m for m in models):
        raise InputFileError(f"{label}: 'model' must be \"lab\", a model file name or a list "
                             "of them")
    if "lab" in models and parts["lab"] is None:
        raise InputFileError(f"{label}: 'model' is \"lab\" but there is no 'lab' part to fit")
    return Scenario(path, title, parts["lots"], parts["blend"], parts["mix"], parts["lab"],
                    costs, models)


def _check_keys(obj: dict, part: str, label: str) -> None:
    unknown = sorted(set(obj) - _KEYS[part])
    if unknown:
        where = f"'{part}'" if part else "the top level"
        raise UsageError(
            f"{label}: unknown key {unknown[0]!r} in {where}; "
            f"known: {', '.join(sorted(_KEYS[part]))}"
        )


def run_scenario(scenario: Scenario, *, progress=None, models=()) -> ScenarioResult:
    """Run every part of a scenario and return the results (no output files written; with
    ``"model": "lab"`` the fitted models pass through a temporary model file).

    ``progress`` is an optional callable taking a short text, called before each part.
    ``models``: model files (paths as given, e.g. on the command line) added to the
    scenario's ``model`` key.
    """
    from estimator.comparison import compare_lots
    from estimator.profiles.io import read_profile
    from estimator.specs import normalise_climate_class

    say = progress or (lambda text: None)
    with tempfile.TemporaryDirectory(prefix="fame-scenario-") as tmp:
        return _run(scenario, say, Path(tmp), compare_lots, read_profile,
                    normalise_climate_class, [str(m) for m in models])


def _run(scenario: Scenario, say, tmp: Path, compare_lots, read_profile,
         normalise_climate_class, extra_models: list[str]) -> ScenarioResult:
    lots = scenario.lots
    costs = None
    if scenario.costs is not None:
        from estimator.sourcing import read_costs

        costs = read_costs(scenario.resolve(scenario.costs))
    profile = read_profile(
        scenario.resolve(lots["file"]), basis=lots.get("basis", "fame"),
        sum_tolerance=float(lots.get("sum_tolerance", 2.0)),
    )
    result = ScenarioResult(scenario, profile, None, costs=costs)
    models: list[str] = []
    if "lab" in scenario.model:
        say("refitting on the lab samples")
        with _part(scenario, "lab"):
            _run_lab(scenario, result)
        models.append(str(_lab_model_file(scenario, result, tmp)))
    models += [str(scenario.resolve(m)) for m in scenario.model if m != "lab"] + extra_models
    say("comparing the lots")
    result.comparison = compare_lots(
        profile,
        spec_names=tuple(lots.get("specs", ("en14214", "astm-d6751"))),
        climate_class=normalise_climate_class(lots.get("climate_class")),
        pretreat=lots.get("pretreat", "none"),
        methanol_ratio=float(lots.get("methanol_ratio", 6.0)),
        costs=costs, models=models,
    )
    result.model_properties = dict(result.comparison.model_properties or {})
    if scenario.blend is not None:
        say("blending with diesel")
        with _part(scenario, "blend"):
            result.blend = _run_blend(scenario, profile, result.comparison.estimates
                                      if models else None)
    if scenario.mix is not None:
        say("finding the least-cost mix")
        with _part(scenario, "mix"):
            result.mix = _run_mix(scenario, profile, models, costs)
    if scenario.lab is not None and not result.fits:
        say("refitting on the lab samples")
        with _part(scenario, "lab"):
            _run_lab(scenario, result)
    return result


def _lab_model_file(scenario: Scenario, result: ScenarioResult, tmp: Path) -> Path:
    """The lab part's models as a model file in ``tmp`` (read back like any --model file)."""
    from estimator.refit import file_provenance, save_models

    lab_path = scenario.resolve(scenario.lab["file"])
    return save_models(result.models, tmp / "lab_model.json",
                       file_provenance(lab_path, len(result.lab_profile)))


@contextmanager
def _part(scenario: Scenario, name: str):
    """Name the scenario file and part in any error raised inside it."""
    from estimator.errors import EstimatorError

    try:
        yield
    except EstimatorError as exc:
        text = str(exc).replace("--levels", "levels").replace("--demand-t", "demand_t")
        raise type(exc)(f"{scenario.path.name}: '{name}': {text}") from None


def _run_blend(scenario: Scenario, profile, long=None) -> dict[str, Any]:
    import numpy as np

    from estimator import blend_targets, blending

    spec = scenario.blend
    diesel_name = spec["diesel"]
    candidate = scenario.resolve(diesel_name)
    grid = blending.parse_levels(spec.get("levels", "0,2,5,7,10,20,30,50,100"))
    targets = blend_targets.blend_targets(
        max_cfpp_C=spec.get("max_cfpp_C"), max_cloud_point_C=spec.get("max_cloud_point_C"),
        climate_class=spec.get("climate_class"),
        specs=list(spec.get("specs", ("en590", "astm-d7467"))),
    )
    fuel = blending.load_diesel(str(candidate) if candidate.exists() else diesel_name,
                                blending.needed_properties(t.property for t in targets))
    fame = blending.fame_component(profile.wt_pct, profile.samples, long=long)
    wide = blending.blend_wide(fame, fuel, grid)
    highest = blend_targets.highest_levels(fame, fuel, targets) if targets else None
    top = float(grid.max()) if grid.max() > 0 else 100.0
    curve = blending.blend_wide(fame, fuel, np.union1d(grid, np.linspace(0, top, 51)))
    return {"diesel": fuel, "grid": grid, "targets": targets, "wide": wide, "highest": highest,
            "curve": curve, "summary": blend_targets.summary_table(highest) if targets else None}


def _run_mix(scenario: Scenario, profile, models=(), costs=None):
    from estimator import mixing
    from estimator.specs import normalise_climate_class

    spec = scenario.mix
    climate_class = normalise_climate_class(spec.get("climate_class"))
    name = spec.get("spec", "en14214")
    constraints = mixing.mix_constraints(
        name, climate_class=climate_class, max_cfpp_C=spec.get("max_cfpp_C"),
        max_cloud_point_C=spec.get("max_cloud_point_C"),
    )
    return mixing.least_cost_mix(
        profile, constraints, demand_t=spec.get("demand_t"),
        available_column=spec.get("available_column"), pretreat=spec.get("pretreat", "none"),
        spec=name, climate_class=climate_class,
        margin_bands=float(spec.get("margin_bands", 1.0)), models=models, costs=costs,
    )


def _run_lab(scenario: Scenario, result: ScenarioResult) -> None:
    from estimator.profiles.io import read_profile
    from estimator.refit import fit_properties

    spec = scenario.lab
    props = list(spec["properties"])
    path = scenario.resolve(spec["file"])
    lab = read_profile(path, basis=spec.get("basis", "fame"), extra_columns=tuple(props))
    result.lab_profile = lab
    result.fits = fit_properties(lab, props, seed=int(spec.get("seed", 0)))
    result.models = [f.model for f in result.fits]
