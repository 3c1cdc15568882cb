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

Every key has a type (text, number, list of text, ...) checked when the file is read;
``null`` is the same as leaving a key out. Files named in the scenario must lie in
the scenario's folder (or below it): absolute paths and ``..`` leading out of it are
refused unless the caller allows it (``report --allow-outside``), so a scenario
received from someone else reads nothing else on the machine.

``costs`` names a costs file (:func:`estimator.sourcing.read_costs`) used by the
comparison and the mix. ``model`` makes lab models drive the decisions: their
properties replace the published estimates in the comparison's verdicts and
ranking, the blend and the mix; ``"lab"`` uses the models the ``lab`` part fits
(which then runs first). ``mix`` also takes ``margin_bands`` (see
:func:`estimator.mixing.least_cost_mix`; default 1.3).

Nothing here prints or draws; :mod:`estimator.report.scenario_report` writes the files.
"""

from __future__ import annotations

import json
import math
import tempfile
from contextlib import contextmanager
from dataclasses import dataclass, field
from pathlib import Path
from typing import Any

from estimator.errors import InputFileError, UsageError

__all__ = ["Scenario", "ScenarioResult", "read_scenario", "run_scenario"]

#: The type of every key, per part: text, number, count (an integer >= 0), texts (a
#: list of text, or one text), levels (a list of numbers or '0,2,5'), class (a climate
#: class as text or a number 0-4), flag (true/false).
_TYPES = {
    "": {"title": "text", "lots": "part", "blend": "part", "mix": "part", "lab": "part",
         "costs": "text", "model": "texts"},
    "lots": {"file": "text", "basis": "text", "specs": "texts", "climate_class": "class",
             "pretreat": "text", "methanol_ratio": "number", "sum_tolerance": "number",
             "fractions": "flag"},
    "blend": {"diesel": "text", "levels": "levels", "climate_class": "class",
              "max_cfpp_C": "number", "max_cloud_point_C": "number", "specs": "texts"},
    "mix": {"spec": "text", "climate_class": "class", "max_cfpp_C": "number",
            "max_cloud_point_C": "number", "demand_t": "number", "available_column": "text",
            "pretreat": "text", "margin_bands": "number"},
    "lab": {"file": "text", "properties": "texts", "seed": "count", "basis": "text",
            "fractions": "flag"},
}
_KEYS = {part: set(types) for part, types in _TYPES.items()}
_WHAT = {
    "text": "a text", "number": "a finite number", "count": "a whole number from 0 to 4294967295",
    "texts": "a list of texts", "levels": "a list of numbers (or a text such as '0,5,20')",
    "class": "a climate class (e.g. 'C' or 2)", "flag": "true or false",
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
    allow_outside: bool = False
    costs: str | None = None
    model: tuple[str, ...] = ()

    def resolve(self, name: str, key: str = "file") -> Path:
        """A path named in the scenario, relative to the scenario file.

        Raises
        ------
        InputFileError
            The path is absolute or leads out of the scenario's folder (through ``..``
            or a link) and ``allow_outside`` is false.
        """
        p = Path(name)
        path = p if p.is_absolute() else self.path.parent / p
        if self.allow_outside:
            return path
        folder = self.path.parent.resolve()
        inside = not p.is_absolute() and path.resolve().is_relative_to(folder)
        if not inside:
            raise InputFileError(
                f"{self.path.name}: {key} {name!r} lies outside the scenario's folder; a "
                "scenario reads only files beside it or below it (the report command's "
                "--allow-outside lifts this)"
            )
        return path

    def input_files(self) -> list[Path]:
        """The scenario file and every file it names (lots, diesel, lab, costs, models)."""
        names = [self.lots.get("file"), (self.blend or {}).get("diesel"),
                 (self.lab or {}).get("file"), self.costs,
                 *(m for m in self.model if m != "lab")]
        return [self.path, *(self.resolve(n) for n in names if isinstance(n, str) and n)]


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


def read_scenario(path: str | Path, *, allow_outside: bool = False) -> Scenario:
    """Read and validate a scenario JSON file; unknown keys are an error listing known ones.

    Parameters
    ----------
    path : str or Path
        The scenario file.
    allow_outside : bool
        Let the scenario name files outside its own folder.

    Raises
    ------
    InputFileError
        Not JSON, a key of the wrong type (naming the key), or a missing part.
    UsageError
        An unknown key.
    """
    path = Path(path)
    label = path.name
    if not path.exists():
        raise InputFileError(f"{label}: no such file")
    if path.is_dir():
        raise InputFileError(f"{label}: is a folder, not a scenario file")
    if path.stat().st_size > 10e6:
        raise InputFileError(f"{label}: more than 10 MB: not a scenario file")
    try:
        data = json.loads(path.read_bytes().decode("utf-8-sig"),
                          parse_int=lambda t: int(t) if len(t) <= 18 else float(t),
                          parse_constant=lambda name: name)
    except (UnicodeDecodeError, json.JSONDecodeError) as exc:
        raise InputFileError(f"{label}: not valid JSON ({exc})") from None
    except RecursionError:
        raise InputFileError(f"{label}: JSON nested too deeply to be a scenario") from None
    if not isinstance(data, dict):
        raise InputFileError(f"{label}: expected a JSON object with 'lots', 'blend', 'mix', 'lab'")
    _check_keys(data, "", label)
    if "lots" not in data or not isinstance(data["lots"], dict) or "file" not in data["lots"]:
        raise InputFileError(f"{label}: 'lots' must be an object with at least a 'file'")
    if data.get("title") is not None:
        _check_type(data["title"], "text", "title", label)
    parts = {}
    for part in ("lots", "blend", "mix", "lab"):
        value = data.get(part)
        if value is None:
            parts[part] = None
            continue
        if not isinstance(value, dict):
            raise InputFileError(f"{label}: '{part}' must be a JSON object")
        _check_keys(value, part, label)
        parts[part] = {key: _check_type(v, _TYPES[part][key], f"{part}.{key}", label)
                       for key, v in value.items() if v is not None}
    for part, key in (("lots", "file"), ("lab", "file")):
        if parts[part] is not None and key in parts[part]:
            Scenario(path, "", {}, allow_outside=allow_outside).resolve(
                parts[part][key], f"'{part}.{key}'")
    if parts["blend"] is not None and "diesel" not in parts["blend"]:
        raise InputFileError(f"{label}: 'blend' needs a 'diesel' (a file or a built-in name)")
    if parts["lab"] is not None and not parts["lab"].get("properties"):
        raise InputFileError(f"{label}: 'lab' needs 'file' and a list of 'properties' to refit")
    if parts["lots"] is None or "file" not in parts["lots"]:
        raise InputFileError(f"{label}: 'lots' must be an object with at least a 'file'")
    if parts["lab"] is not None and "file" not in parts["lab"]:
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
                    allow_outside=allow_outside, costs=costs, model=models)


def _check_type(value: Any, kind: str, key: str, label: str) -> Any:
    """The value of ``key`` if it has the type ``kind``; else one line naming the key."""
    def number(v) -> bool:
        return (isinstance(v, (int, float)) and not isinstance(v, bool)
                and math.isfinite(float(v)))

    ok = {
        "text": lambda v: isinstance(v, str) and bool(v.strip()) and len(v) <= 1000,
        "number": number,
        "count": lambda v: isinstance(v, int) and not isinstance(v, bool) and 0 <= v < 2**32,
        "texts": lambda v: (isinstance(v, str) and bool(v.strip())) or (
            isinstance(v, list) and bool(v) and all(isinstance(x, str) and x.strip()
                                                    for x in v)),
        "levels": lambda v: (isinstance(v, str) and len(v) <= 1000) or (
            isinstance(v, list) and bool(v) and all(number(x) for x in v)),
        "class": lambda v: (isinstance(v, str) and len(v) <= 40) or (
            isinstance(v, int) and not isinstance(v, bool)),
        "flag": lambda v: isinstance(v, bool),
    }[kind]
    if not ok(value):
        shown = json.dumps(value) if not isinstance(value, str) else repr(value)
        shown = shown if len(shown) <= 40 else shown[:37] + "..."
        raise InputFileError(f"{label}: '{key}' must be {_WHAT[kind]}, got {shown}")
    if kind == "texts" and isinstance(value, str):
        return [value]
    if kind == "class":
        return str(value)
    return value


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

        costs = read_costs(scenario.resolve(scenario.costs, "'costs'"))
    profile = read_profile(
        scenario.resolve(lots["file"], "'lots.file'"), basis=lots.get("basis", "fame"),
        sum_tolerance=float(lots.get("sum_tolerance", 2.0)),
        fractions=bool(lots.get("fractions", False)),
    )
    result = ScenarioResult(scenario, profile, None, costs=costs)
    models: list[str] = []
    if "lab" in scenario.model:
        say("refitting on the lab samples")
        with _part(scenario, "lab"):
            _run_lab(scenario, result)
        models.append(str(_lab_model_file(scenario, result, tmp)))
    models += [str(scenario.resolve(m, "'model'")) for m in scenario.model if m != "lab"]
    models += extra_models
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

    lab_path = scenario.resolve(scenario.lab["file"], "'lab.file'")
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
        if text.startswith(f"{scenario.path.name}: "):
            raise
        raise type(exc)(f"{scenario.path.name}: '{name}': {text}") from None


def _run_blend(scenario: Scenario, profile, long=None) -> dict[str, Any]:
    import numpy as np

    from estimator import blend_targets, blending

    spec = scenario.blend
    diesel_name = spec["diesel"]
    beside = scenario.path.parent / diesel_name
    if Path(diesel_name).suffix.lower() in (".json", ".csv") or beside.exists() \
            or Path(diesel_name).is_absolute():
        diesel_source = str(scenario.resolve(diesel_name, "'blend.diesel'"))
    else:
        diesel_source = diesel_name  # a built-in diesel
    grid = blending.parse_levels(spec.get("levels", "0,2,5,7,10,20,30,50,100"))
    targets = blend_targets.blend_targets(
        max_cfpp_C=spec.get("max_cfpp_C"), max_cloud_point_C=spec.get("max_cloud_point_C"),
        climate_class=spec.get("climate_class"),
        specs=list(spec.get("specs", ("en590", "astm-d7467"))),
    )
    fuel = blending.load_diesel(diesel_source,
                                blending.needed_properties(t.property for t in targets))
    fame = blending.fame_component(profile.wt_pct, profile.samples, long=long,
                                   climate_class=spec.get("climate_class"))
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
        margin_bands=float(spec.get("margin_bands", 1.3)), models=models, costs=costs,
    )


def _run_lab(scenario: Scenario, result: ScenarioResult) -> None:
    from estimator.profiles.io import read_profile
    from estimator.refit import fit_properties

    spec = scenario.lab
    props = list(spec["properties"])
    path = scenario.resolve(spec["file"], "'lab.file'")
    lab = read_profile(path, basis=spec.get("basis", "fame"), extra_columns=tuple(props),
                       fractions=bool(spec.get("fractions", False)))
    result.lab_profile = lab
    result.fits = fit_properties(lab, props, seed=int(spec.get("seed", 0)))
    result.models = [f.model for f in result.fits]
