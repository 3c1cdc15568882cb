"""Model files: fitted models as plain, validated JSON (never pickle).

A model file from a colleague must not be able to run code, so it holds numbers,
strings and lists only; reading it is ``json.loads`` followed by an explicit
validator (no pickle, no code evaluation, no imports chosen by the file). The
predictor is rebuilt from the numbers by :func:`estimator.refit.candidates.predict_params`,
the same code that produced the predictions at fit time, so a file read back gives
identical predictions.

Schema (``format_version`` 2)::

    {
      "format": "fame-estimator model",
      "format_version": 2,
      "package_version": "0.1.0",          # estimator.__version__ that wrote it
      "created_utc": "2025-01-01T00:00:00Z",
      "training": {"file": "lab.csv", "sha256": "<64 hex>", "rows": 32},
      "caution": "...",                    # estimator.cautions.CAUTION_SHORT
      "models": [                          # one entry per property
        {"property": "cetane_number", "unit": "1",
         "candidate": "ridge:composition", "kind": "ridge", "method": "",
         "features": ["C12:0", ...],
         "params": {...},                  # by kind, see _PARAM_SPECS
         "band": {"meaning": "standard uncertainty (one standard deviation) ...",
                  "source": "cross-validated RMSE" | "Gaussian-process sd x cross-validated
                             calibration",
                  "sd": 1.8,               # the CV RMSE [property unit]
                  "gp_sd_scale": 1.0},     # Gaussian process: its own sd is multiplied
                                           # by this (1 for the other kinds)
         "domain": {"features": [...], "lower": [...], "upper": [...], "center": [...],
                    "scale": [...], "points": [[...], ...], "threshold": 2.1, "rule": "..."},
         "cv": {"scheme": {...}, "tie_tolerance": 0.02, "chosen": "...", "statement": "...",
                "scores": [{"candidate": "...", "kind": "...", "rmse": 1.1, ...}, ...]},
         "n_samples": 32, "notes": []}
      ],
      "checksum": {"algorithm": "sha256", "value": "<64 hex>"}
    }

**The band.** A prediction's ``error`` is one standard uncertainty of a new
measurement, the same meaning as every other ± of the tool: the cross-validated RMSE
of the chosen model (held-out residuals, bias included), or for a Gaussian process its
own predictive standard deviation times ``gp_sd_scale``, the factor that makes the
held-out residuals divided by that standard deviation have a root mean square of 1.
Format version 1 stored 95 % half-widths; such files are refused (refit).

**Bounds** (refused beyond, with one line, before any array is built; constants of
:mod:`estimator.refit.limits`): the file at most :data:`MAX_FILE_BYTES` bytes and
nested as the schema; any number finite and within ±1e12 (``MAX_ABS_NUMBER``), fitted
parameters within ±1e6 (``MAX_ABS_PARAMETER``); at most 64 features
(``MAX_FEATURES``); a Gaussian process holds at most 2,000 training rows
(``MAX_GP_TRAINING_ROWS``; ``fit`` writes at most 500); a domain at most 5,000 points
(``MAX_DOMAIN_ROWS``); other lists at most 200 entries, text at most 20,000
characters, sample counts at most 10,000,000.

**Range checks** (so an edited file whose checksum was recomputed is still refused
when its numbers are absurd): with ``[lo, hi]`` the plausible range of the property
(``limits.PLAUSIBLE``) and ``span = hi - lo``: the band ``sd`` in (0, span]; the
prediction at the training mean (ridge and PLS ``intercept``, the Gaussian process's
``y_mean``) and a recalibration's value at the middle of the range within
``[lo - span, hi + span]``; a recalibration slope within ±10; scales positive;
Gaussian-process constant and length scale in (0, 1e4], noise in [0, 1e3], jitter
in [0, 1], ``gp_sd_scale`` in [0.05, 100] (exactly 1 for other kinds); domain bounds
and centre in [0, 100] wt % with lower <= upper, domain scales in (0, 100], domain
threshold in [0, 1e3]; tie tolerance in [0, 0.5]; RMSE and MAE not negative.

The checksum is the SHA-256 of the canonical JSON (sorted keys, no spaces) of the
document without ``checksum``. It detects a file edited or damaged after it was
written; it is not a signature (anyone can recompute it), and safety does not rest
on it: nothing in a file is ever executed.
"""

from __future__ import annotations

import hashlib
import json
import math
import re
from collections.abc import Mapping, Sequence
from dataclasses import dataclass, field
from datetime import datetime, timezone
from pathlib import Path

import numpy as np

from estimator import __version__
from estimator.errors import ModelFileError
from estimator.refit import limits
from estimator.refit.candidates import KINDS, predict_params
from estimator.refit.features import (
    DOMAIN_FEATURES,
    TrainingDomain,
    compute_features,
    is_known_feature,
    parse_estimate_feature,
)

__all__ = [
    "FORMAT",
    "BAND_MEANING",
    "FORMAT_VERSION",
    "MAX_FILE_BYTES",
    "FittedModel",
    "ModelFileContents",
    "Prediction",
    "file_provenance",
    "load_models",
    "model_document",
    "read_model_file",
    "save_models",
]

FORMAT = "fame-estimator model"
FORMAT_VERSION = 2
#: What the band of a model means, written into every model file.
BAND_MEANING = ("standard uncertainty (one standard deviation) of a new measurement, "
                "from cross-validation")
#: Larger files are refused before parsing [bytes].
MAX_FILE_BYTES = 20_000_000
_HEX64 = re.compile(r"^[0-9a-f]{64}$")
_REFIT = "refit with 'fame-estimator fit'"


@dataclass(frozen=True)
class Prediction:
    """Predictions of a fitted model for new samples."""

    value: np.ndarray
    error: np.ndarray  # one standard uncertainty of a new measurement, property unit
    in_domain: np.ndarray
    distance: np.ndarray  # standardized distance to the nearest training sample [1]


@dataclass(frozen=True)
class FittedModel:
    """One fitted model of one property, as stored in a model file."""

    property: str
    unit: str
    candidate: str
    kind: str
    method: str
    features: tuple[str, ...]
    params: Mapping
    domain: TrainingDomain
    band_sd: float
    n_samples: int
    cv: Mapping
    notes: tuple[str, ...] = field(default=())
    gp_sd_scale: float = 1.0

    def predict(self, wt_pct: np.ndarray) -> Prediction:
        """Value, standard uncertainty, in-domain flag and distance for compositions.

        The standard uncertainty (one standard deviation of a new measurement) is the
        cross-validated RMSE of the model, or for a Gaussian process its own predictive
        standard deviation times the cross-validated calibration ``gp_sd_scale``.
        """
        w = np.asarray(wt_pct, dtype=float)
        with np.errstate(all="ignore"):
            x = compute_features(w, self.features)
        value, sd = predict_params(self.kind, self.params, x)
        sd = np.full(value.shape, self.band_sd) if sd is None else sd * self.gp_sd_scale
        distance = self.domain.distance(w)
        inside = self.domain.within_bounds(w) & (distance <= self.domain.threshold)
        return Prediction(value, sd, inside, distance)

    @property
    def band_source(self) -> str:
        """Where the band comes from, in words."""
        if self.kind == "gp":
            return (f"Gaussian-process sd x {self.gp_sd_scale:.3g}, the cross-validated "
                    "calibration")
        return "cross-validated RMSE"

    def to_dict(self) -> dict:
        """The model's entry of a model file."""
        return {
            "property": self.property,
            "unit": self.unit,
            "candidate": self.candidate,
            "kind": self.kind,
            "method": self.method,
            "features": list(self.features),
            "params": _plain(self.params),
            "band": {"meaning": BAND_MEANING, "source": self.band_source,
                     "sd": float(self.band_sd), "gp_sd_scale": float(self.gp_sd_scale)},
            "domain": self.domain.to_dict(),
            "cv": _plain(self.cv),
            "n_samples": int(self.n_samples),
            "notes": list(self.notes),
        }

    @classmethod
    def from_dict(cls, data: Mapping) -> FittedModel:
        """Rebuild from a validated model-file entry."""
        return cls(
            property=data["property"],
            unit=data["unit"],
            candidate=data["candidate"],
            kind=data["kind"],
            method=data["method"],
            features=tuple(data["features"]),
            params=dict(data["params"]),
            domain=TrainingDomain.from_dict(data["domain"]),
            band_sd=float(data["band"]["sd"]),
            n_samples=int(data["n_samples"]),
            cv=dict(data["cv"]),
            notes=tuple(data["notes"]),
            gp_sd_scale=float(data["band"]["gp_sd_scale"]),
        )


def _plain(obj):
    """Numpy scalars and arrays to plain Python numbers and lists."""
    if isinstance(obj, Mapping):
        return {str(k): _plain(v) for k, v in obj.items()}
    if isinstance(obj, (list, tuple)):
        return [_plain(v) for v in obj]
    if isinstance(obj, np.ndarray):
        return _plain(obj.tolist())
    if isinstance(obj, (np.bool_, bool)):
        return bool(obj)
    if isinstance(obj, (np.integer, int)):
        return int(obj)
    if isinstance(obj, (np.floating, float)):
        return float(obj)
    return obj


# ------------------------------------------------------------------ writing
def file_provenance(path: str | Path, rows: int) -> dict:
    """``{"file", "sha256", "rows"}`` of a training file (``rows``: samples read)."""
    path = Path(path)
    digest = hashlib.sha256(path.read_bytes()).hexdigest()
    return {"file": path.name, "sha256": digest, "rows": int(rows)}


def _canonical(doc: Mapping) -> bytes:
    return json.dumps(doc, sort_keys=True, separators=(",", ":"), ensure_ascii=True,
                      allow_nan=False).encode("ascii")


def _checksum(doc: Mapping) -> str:
    body = {k: v for k, v in doc.items() if k != "checksum"}
    return hashlib.sha256(_canonical(body)).hexdigest()


def model_document(
    models: Sequence[FittedModel], training: Mapping, *, created_utc: str | None = None
) -> dict:
    """The JSON document of a model file, checksum included."""
    from estimator.cautions import CAUTION_SHORT

    props = [m.property for m in models]
    dup = [p for i, p in enumerate(props) if p in props[:i]]
    if dup:
        raise ModelFileError(f"two models for {dup[0]}; a model file holds one per property")
    if created_utc is None:
        created_utc = datetime.now(timezone.utc).strftime("%Y-%m-%dT%H:%M:%SZ")
    doc = {
        "format": FORMAT,
        "format_version": FORMAT_VERSION,
        "package_version": __version__,
        "created_utc": created_utc,
        "training": _plain(dict(training)),
        "caution": CAUTION_SHORT,
        "models": [m.to_dict() for m in models],
    }
    doc["checksum"] = {"algorithm": "sha256", "value": _checksum(doc)}
    return doc


def save_models(
    models: Sequence[FittedModel], path: str | Path, training: Mapping
) -> Path:
    """Write models (one per property) to one JSON model file, atomically."""
    from estimator.files import atomic_write

    doc = model_document(models, training)
    validate_document(doc, Path(path).name)  # never write what we could not read back
    text = json.dumps(doc, indent=1, sort_keys=False, allow_nan=False) + "\n"
    return atomic_write(path, lambda tmp: tmp.write_text(text, encoding="utf-8"))


# ------------------------------------------------------------------ reading
@dataclass(frozen=True)
class ModelFileContents:
    """What a model file holds: its models and the file-level provenance."""

    models: tuple[FittedModel, ...]
    training: Mapping
    package_version: str
    created_utc: str


def read_model_file(path: str | Path) -> ModelFileContents:
    """Read and validate a model file; see :func:`load_models` for the errors raised."""
    path = Path(path)
    label = path.name
    if not path.is_file():
        raise ModelFileError(f"{label}: no such model file")
    if path.stat().st_size > MAX_FILE_BYTES:
        raise ModelFileError(f"{label}: larger than {MAX_FILE_BYTES} bytes; not a model file")
    try:
        text = path.read_text(encoding="utf-8")
    except UnicodeDecodeError:
        raise ModelFileError(f"{label}: not a UTF-8 text file; not a model file") from None
    doc = parse_document(text, label)
    validate_document(doc, label)
    models = tuple(FittedModel.from_dict(m) for m in doc["models"])
    return ModelFileContents(models, dict(doc["training"]), doc["package_version"],
                             doc["created_utc"])


def load_models(
    path: str | Path, properties: Sequence[str] | None = None
) -> list[FittedModel]:
    """Read, validate and rebuild the models of a model file.

    Parameters
    ----------
    path : str or Path
        A file written by ``fame-estimator fit -o`` / :func:`save_models`.
    properties : sequence of str, optional
        Properties the caller needs; a file without one of them is refused.

    Raises
    ------
    ModelFileError
        One line naming the file, the key and what to do: not JSON, another format or
        format version, a missing key, a wrong type, or a checksum that does not match.
    """
    label = Path(path).name
    models = list(read_model_file(path).models)
    if properties is not None:
        have = [m.property for m in models]
        for prop in properties:
            if prop not in have:
                raise ModelFileError(
                    f"{label}: holds a model for {', '.join(have)}, not {prop}; fit {prop} "
                    f"with 'fame-estimator fit LAB_FILE --property {prop}'"
                )
    return models


def parse_document(text: str, label: str) -> dict:
    """``json.loads`` that refuses NaN/Infinity and duplicate keys."""

    def no_constant(name: str):
        raise ModelFileError(f"{label}: contains {name}, which a model file never holds; {_REFIT}")

    def no_duplicates(pairs):
        keys = [k for k, _ in pairs]
        for i, k in enumerate(keys):
            if k in keys[:i]:
                raise ModelFileError(f"{label}: key {k!r} appears twice; {_REFIT}")
        return dict(pairs)

    try:
        doc = json.loads(text, parse_constant=no_constant, object_pairs_hook=no_duplicates)
    except json.JSONDecodeError as exc:
        raise ModelFileError(
            f"{label}: not valid JSON ({exc.msg} at line {exc.lineno}); not a model file"
        ) from None
    except ModelFileError:
        raise
    except RecursionError:
        raise ModelFileError(
            f"{label}: nested deeper than a model file ever is; not a model file"
        ) from None
    except ValueError:  # an integer with more digits than Python converts
        raise ModelFileError(
            f"{label}: holds a number too long to be a model-file number; not a model file"
        ) from None
    if not isinstance(doc, dict):
        raise ModelFileError(
            f"{label}: not a fame-estimator model file (top level is not an object)"
        )
    return doc


# ---------------------------------------------------------------- validator
class _Check:
    """Small explicit type, size and range checks with one-line messages naming the key."""

    def __init__(self, label: str):
        self.label = label

    def fail(self, where: str, problem: str) -> ModelFileError:
        return ModelFileError(f"{self.label}: {where} {problem}; {_REFIT} or restore the file")

    def get(self, obj: Mapping, key: str, where: str):
        if key not in obj:
            raise ModelFileError(
                f"{self.label}: missing key {where}{'.' if where else ''}{key}; "
                f"{_REFIT} or restore the file"
            )
        return obj[key]

    def object(self, obj: Mapping, key: str, where: str) -> dict:
        value = self.get(obj, key, where)
        if not isinstance(value, dict):
            raise self.fail(_join(where, key), f"must be an object, got {_type(value)}")
        return value

    def string(self, obj: Mapping, key: str, where: str) -> str:
        value = self.get(obj, key, where)
        if not isinstance(value, str):
            raise self.fail(_join(where, key), f"must be a string, got {_type(value)}")
        if len(value) > limits.MAX_TEXT_CHARS:
            raise self.fail(_join(where, key),
                            f"is longer than {limits.MAX_TEXT_CHARS} characters")
        return value

    def integer(self, obj: Mapping, key: str, where: str, lo: int | None = None,
                hi: int | None = None) -> int:
        value = self.get(obj, key, where)
        if isinstance(value, bool) or not isinstance(value, int):
            raise self.fail(_join(where, key), f"must be an integer, got {_type(value)}")
        if lo is not None and value < lo:
            raise self.fail(_join(where, key), f"must be at least {lo}, got {value}")
        if hi is not None and value > hi:
            raise self.fail(_join(where, key), f"must be at most {hi}, got {_short(value)}")
        return value

    def number(self, obj: Mapping, key: str, where: str, *, positive: bool = False,
               nonnegative: bool = False, lo: float | None = None,
               hi: float | None = None) -> float:
        value = self.get(obj, key, where)
        if not _is_number(value):
            raise self.fail(_join(where, key), _number_problem(value))
        if positive and not value > 0:
            raise self.fail(_join(where, key), f"must be positive, got {value}")
        if nonnegative and not value >= 0:
            raise self.fail(_join(where, key), f"must not be negative, got {value}")
        if (lo is not None and value < lo) or (hi is not None and value > hi):
            raise self.fail(_join(where, key),
                            f"must lie between {lo:g} and {hi:g}, got {value:g}")
        return float(value)

    def numbers(self, obj: Mapping, key: str, where: str, length: int | None = None,
                *, positive: bool = False, bound: float = limits.MAX_ABS_NUMBER) -> list:
        value = self.get(obj, key, where)
        what = f"a list of {length} numbers" if length is not None else "a list of numbers"
        if not isinstance(value, list) or not all(_is_number(v) for v in value):
            raise self.fail(_join(where, key), f"must be {what}, got {_type(value)}")
        if length is not None and len(value) != length:
            raise self.fail(_join(where, key), f"must be {what}, got {len(value)}")
        if positive and not all(v > 0 for v in value):
            raise self.fail(_join(where, key), "must hold positive numbers only")
        if any(abs(v) > bound for v in value):
            raise self.fail(_join(where, key), f"must hold numbers within ±{bound:g} only")
        return value

    def strings(self, obj: Mapping, key: str, where: str,
                max_items: int = limits.MAX_LIST_ITEMS) -> list:
        value = self.get(obj, key, where)
        if not isinstance(value, list) or not all(isinstance(v, str) for v in value):
            raise self.fail(_join(where, key), f"must be a list of strings, got {_type(value)}")
        if len(value) > max_items:
            raise self.fail(_join(where, key), f"holds {len(value)} entries, at most "
                                               f"{max_items} allowed")
        if any(len(v) > limits.MAX_TEXT_CHARS for v in value):
            raise self.fail(_join(where, key),
                            f"holds text longer than {limits.MAX_TEXT_CHARS} characters")
        return value

    def matrix(self, obj: Mapping, key: str, where: str, columns: int, *, max_rows: int,
               bound: float = limits.MAX_ABS_NUMBER) -> list:
        value = self.get(obj, key, where)
        if isinstance(value, list) and len(value) > max_rows:
            # refused on its length, before any row is looked at
            raise self.fail(_join(where, key),
                            f"holds {len(value)} rows, at most {max_rows} allowed")
        ok = isinstance(value, list) and len(value) > 0 and all(
            isinstance(row, list) and len(row) == columns and all(_is_number(v) for v in row)
            for row in value
        )
        if not ok:
            raise self.fail(
                _join(where, key), f"must be a non-empty list of rows of {columns} numbers"
            )
        if any(abs(v) > bound for row in value for v in row):
            raise self.fail(_join(where, key), f"must hold numbers within ±{bound:g} only")
        return value


def _join(where: str, key: str) -> str:
    return f"{where}.{key}" if where else key


def _is_number(value) -> bool:
    """A finite JSON number within ±:data:`limits.MAX_ABS_NUMBER` (huge integers too)."""
    if isinstance(value, bool) or not isinstance(value, (int, float)):
        return False
    if isinstance(value, float) and not math.isfinite(value):
        return False
    return abs(value) <= limits.MAX_ABS_NUMBER


def _number_problem(value) -> str:
    if isinstance(value, (int, float)) and not isinstance(value, bool):
        return f"must be a number within ±{limits.MAX_ABS_NUMBER:g}, got {_short(value)}"
    return f"must be a number, got {_type(value)}"


def _short(value) -> str:
    text = f"{value:g}" if isinstance(value, float) else str(value)
    return text if len(text) <= 24 else f"{text[:10]}... ({len(text)} digits)"


def _type(value) -> str:
    if value is None:
        return "null"
    if isinstance(value, bool):
        return "true/false"
    if isinstance(value, (int, float)):
        return "a number"
    if isinstance(value, str):
        return "a string"
    if isinstance(value, list):
        return "a list"
    if isinstance(value, dict):
        return "an object"
    return type(value).__name__  # pragma: no cover (json gives only the above)


_P = limits.MAX_ABS_PARAMETER
#: params keys by kind: (key, check, option) with check in number/numbers/int/matrix.
#: Options: "" any value within ±MAX_ABS_PARAMETER, "+" positive, "0" not negative,
#: "d" one per feature, "d+" one positive per feature, "m" one per training row, or
#: (lo, hi) a range.
_PARAM_SPECS: dict[str, tuple[tuple[str, str, object], ...]] = {
    "published": (),
    "recalibrated": (("intercept", "number", ""),
                     ("slope", "number", (-limits.MAX_SLOPE, limits.MAX_SLOPE))),
    "ridge": (("x_mean", "numbers", "d"), ("x_scale", "numbers", "d+"), ("coef", "numbers", "d"),
              ("intercept", "number", ""), ("alpha", "number", (1e-12, _P))),
    "pls": (("x_mean", "numbers", "d"), ("x_scale", "numbers", "d+"), ("coef", "numbers", "d"),
            ("intercept", "number", ""), ("n_components", "int", "1")),
    "gp": (("x_mean", "numbers", "d"), ("x_scale", "numbers", "d+"), ("y_mean", "number", ""),
           ("y_scale", "number", (1e-12, _P)), ("constant", "number", (1e-12, 1e4)),
           ("length_scale", "number", (1e-12, 1e4)), ("noise_level", "number", (0.0, 1e3)),
           ("jitter", "number", (0.0, 1.0)), ("x_train", "matrix", "d"),
           ("y_train", "numbers", "m")),
}


def validate_document(doc: Mapping, label: str) -> None:
    """Check every key, type, size and range of a model-file document; raise if wrong."""
    from estimator.properties.methods import PROPERTIES, methods_for

    c = _Check(label)
    if doc.get("format") != FORMAT:
        raise ModelFileError(
            f"{label}: not a fame-estimator model file (format key is not {FORMAT!r}); "
            "write one with 'fame-estimator fit LAB_FILE --property NAME -o model.json'"
        )
    version = c.get(doc, "format_version", "")
    if version == 1:
        raise ModelFileError(
            f"{label}: format_version 1 stored 95 % intervals; fame-estimator {__version__} "
            f"prints one standard uncertainty and reads version {FORMAT_VERSION}; {_REFIT}"
        )
    if version != FORMAT_VERSION:
        raise ModelFileError(
            f"{label}: format_version {_short(version)!s} is not supported (fame-estimator "
            f"{__version__} reads version {FORMAT_VERSION}); {_REFIT}"
        )
    allowed = {"format", "format_version", "package_version", "created_utc", "training",
               "caution", "models", "checksum"}
    extra = sorted(set(doc) - allowed)
    if extra:
        raise c.fail(extra[0][:40], "is not a key of a model file")
    c.string(doc, "package_version", "")
    c.string(doc, "created_utc", "")
    c.string(doc, "caution", "")
    training = c.object(doc, "training", "")
    c.string(training, "file", "training")
    sha = c.string(training, "sha256", "training")
    if not _HEX64.match(sha):
        raise c.fail("training.sha256", "must be 64 lowercase hex digits")
    c.integer(training, "rows", "training", lo=1, hi=limits.MAX_SAMPLE_COUNT)
    models = c.get(doc, "models", "")
    if not isinstance(models, list) or not models:
        raise c.fail("models", "must be a non-empty list of model entries")
    if len(models) > len(PROPERTIES):
        raise c.fail("models", f"holds {len(models)} entries, more than the "
                               f"{len(PROPERTIES)} properties fame-estimator estimates")
    seen: list[str] = []
    for i, entry in enumerate(models):
        where = f"models[{i}]"
        if not isinstance(entry, dict):
            raise c.fail(where, f"must be an object, got {_type(entry)}")
        prop = _validate_model(c, entry, where, PROPERTIES, methods_for)
        if prop in seen:
            raise c.fail(f"{where}.property", f"repeats {prop!r}; one model per property")
        seen.append(prop)
    checksum = c.object(doc, "checksum", "")
    if c.string(checksum, "algorithm", "checksum") != "sha256":
        raise c.fail("checksum.algorithm", "must be 'sha256'")
    value = c.string(checksum, "value", "checksum")
    if value != _checksum(doc):
        raise ModelFileError(
            f"{label}: checksum does not match the contents (the file was edited or damaged "
            f"after it was written); restore the original file or {_REFIT}"
        )


def _validate_model(c: _Check, entry: Mapping, where: str, properties, methods_for) -> str:
    prop = c.string(entry, "property", where)
    if prop not in properties:
        raise c.fail(f"{where}.property",
                     f"{prop[:60]!r} is not a property fame-estimator estimates")
    unit = c.string(entry, "unit", where)
    if unit != properties[prop]:
        raise c.fail(f"{where}.unit",
                     f"{unit[:40]!r} is not the unit of {prop} ({properties[prop]})")
    c.string(entry, "candidate", where)
    kind = c.string(entry, "kind", where)
    if kind not in KINDS:
        raise c.fail(f"{where}.kind", f"{kind[:40]!r} is not one of {', '.join(KINDS)}")
    method = c.string(entry, "method", where)
    features = c.strings(entry, "features", where, max_items=limits.MAX_FEATURES)
    if not features:
        raise c.fail(f"{where}.features", "must not be empty")
    for name in features:
        if not is_known_feature(name):
            raise c.fail(f"{where}.features", f"holds unknown feature {name[:60]!r}")
        parsed = parse_estimate_feature(name)
        if parsed is not None:
            if parsed[0] != prop:
                raise c.fail(f"{where}.features", f"{name!r} estimates another property")
            if parsed[1] not in methods_for(prop):
                raise c.fail(f"{where}.features", f"{name[:80]!r} names an unknown method")
    if kind in ("published", "recalibrated"):
        if len(features) != 1 or parse_estimate_feature(features[0]) != (prop, method):
            raise c.fail(f"{where}.features", f"must be ['estimate:{prop}:{method[:40]}']")
    d = len(features)
    params = c.object(entry, "params", where)
    spec = _PARAM_SPECS[kind]
    extra = sorted(set(params) - {k for k, _, _ in spec})
    if extra:
        raise c.fail(f"{where}.params.{extra[0][:40]}", f"is not a parameter of a {kind} model")
    pw = f"{where}.params"
    m_rows = None
    for key, check, opt in spec:
        if check == "number":
            lo, hi = opt if isinstance(opt, tuple) else (-_P, _P)
            c.number(params, key, pw, lo=lo, hi=hi)
        elif check == "int":
            c.integer(params, key, pw, lo=int(opt), hi=limits.MAX_FEATURES)
        elif check == "matrix":
            m_rows = len(c.matrix(params, key, pw, d, max_rows=limits.MAX_GP_TRAINING_ROWS,
                                  bound=_P))
        elif opt == "m":
            c.numbers(params, key, pw, m_rows, bound=_P)
        else:
            c.numbers(params, key, pw, d, positive=str(opt).endswith("+"), bound=_P)
    _check_scale(c, prop, kind, params, pw)
    lo, hi, span = limits.plausible_span(prop)
    band = c.object(entry, "band", where)
    bw = f"{where}.band"
    c.string(band, "meaning", bw)
    c.string(band, "source", bw)
    c.number(band, "sd", bw, lo=1e-12 * max(span, 1.0), hi=span)
    gp_lo, gp_hi = limits.GP_SD_SCALE_RANGE if kind == "gp" else (1.0, 1.0)
    c.number(band, "gp_sd_scale", bw, lo=gp_lo, hi=gp_hi)
    dom = c.object(entry, "domain", where)
    dw = f"{where}.domain"
    if c.strings(dom, "features", dw) != list(DOMAIN_FEATURES):
        raise c.fail(f"{dw}.features", f"must be {list(DOMAIN_FEATURES)}")
    k = len(DOMAIN_FEATURES)
    bounds = {key: c.numbers(dom, key, dw, k, bound=100.0) for key in ("lower", "upper", "center")}
    for key, values in bounds.items():
        if any(v < 0 for v in values):
            raise c.fail(f"{dw}.{key}", "must hold mass fractions between 0 and 100 wt %")
    if any(a > b for a, b in zip(bounds["lower"], bounds["upper"])):
        raise c.fail(f"{dw}.lower", "must not exceed domain.upper")
    c.numbers(dom, "scale", dw, k, positive=True, bound=100.0)
    c.matrix(dom, "points", dw, k, max_rows=limits.MAX_DOMAIN_ROWS, bound=1e3)
    c.number(dom, "threshold", dw, lo=0.0, hi=1e3)
    c.string(dom, "rule", dw)
    cv = c.object(entry, "cv", where)
    c.object(cv, "scheme", f"{where}.cv")
    c.number(cv, "tie_tolerance", f"{where}.cv", lo=0.0, hi=0.5)
    c.string(cv, "chosen", f"{where}.cv")
    c.string(cv, "statement", f"{where}.cv")
    score_list = c.get(cv, "scores", f"{where}.cv")
    if not isinstance(score_list, list):
        raise c.fail(f"{where}.cv.scores", f"must be a list, got {_type(score_list)}")
    if len(score_list) > limits.MAX_LIST_ITEMS:
        raise c.fail(f"{where}.cv.scores", f"holds {len(score_list)} entries, at most "
                                           f"{limits.MAX_LIST_ITEMS} allowed")
    for j, row in enumerate(score_list):
        sw = f"{where}.cv.scores[{j}]"
        if not isinstance(row, dict):
            raise c.fail(sw, f"must be an object, got {_type(row)}")
        c.string(row, "candidate", sw)
        c.number(row, "rmse", sw, nonnegative=True)
        c.number(row, "mae", sw, nonnegative=True)
        c.number(row, "bias", sw)
    c.integer(entry, "n_samples", where, lo=1, hi=limits.MAX_SAMPLE_COUNT)
    c.strings(entry, "notes", where)
    return prop


def _check_scale(c: _Check, prop: str, kind: str, params: Mapping, where: str) -> None:
    """The model's prediction at a typical point lies within the property's widened range."""
    lo, hi, span = limits.plausible_span(prop)
    inner, outer = lo - span, hi + span
    if kind == "recalibrated":
        mid = 0.5 * (lo + hi)
        key = "intercept"
        value = params["intercept"] + params["slope"] * mid
        what = f"with the slope gives {value:.4g} for an estimate of {mid:g}"
    elif kind in ("ridge", "pls"):
        key, value = "intercept", params["intercept"]
        what = f"gives {value:.4g} at the training mean"
    elif kind == "gp":
        key, value = "y_mean", params["y_mean"]
        what = f"gives {value:.4g} at the training mean"
        if params["y_scale"] > span:
            raise c.fail(f"{where}.y_scale", f"must not exceed {span:g} ({prop} range "
                                             f"{lo:g} to {hi:g})")
    else:
        return
    if not inner <= value <= outer:
        raise c.fail(f"{where}.{key}", f"{what}, outside {inner:g} to {outer:g} (plausible "
                                       f"{prop} {lo:g} to {hi:g}, widened by its span)")
