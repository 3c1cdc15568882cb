"""Model files: fitted models as plain, validated JSON (never pickle).

A model file from a colleague must not be able to run code, so it holds numbers,
strings and lists only; reading it is ``json.loads`` followed by an explicit
validator (no pickle, no code evaluation, no imports chosen by the file). The
predictor is rebuilt from the numbers by :func:`estimator.refit.candidates.predict_params`,
the same code that produced the predictions at fit time, so a file read back gives
identical predictions.

Schema (``format_version`` 1)::

    {
      "format": "fame-estimator model",
      "format_version": 1,
      "package_version": "0.1.0",          # estimator.__version__ that wrote it
      "created_utc": "2025-01-01T00:00:00Z",
      "training": {"file": "lab.csv", "sha256": "<64 hex>", "rows": 32},
      "caution": "...",                    # estimator.cautions.CAUTION_SHORT
      "models": [                          # one entry per property
        {"property": "cetane_number", "unit": "1",
         "candidate": "ridge:composition", "kind": "ridge", "method": "",
         "features": ["C12:0", ...],
         "params": {...},                  # by kind, see _PARAM_SPECS
         "interval": {"level": 0.95, "source": "1.96 x CV RMSE" | "Gaussian process",
                      "half_width": 1.8},
         "domain": {"features": [...], "lower": [...], "upper": [...], "center": [...],
                    "scale": [...], "points": [[...], ...], "threshold": 2.1, "rule": "..."},
         "cv": {"scheme": {...}, "tie_tolerance": 0.02, "chosen": "...", "statement": "...",
                "scores": [{"candidate": "...", "kind": "...", "rmse": 1.1, ...}, ...]},
         "n_samples": 32, "notes": []}
      ],
      "checksum": {"algorithm": "sha256", "value": "<64 hex>"}
    }

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
FORMAT_VERSION = 1
#: Larger files are refused before parsing [bytes].
MAX_FILE_BYTES = 20_000_000
_HEX64 = re.compile(r"^[0-9a-f]{64}$")
_REFIT = "refit with 'fame-estimator fit'"


@dataclass(frozen=True)
class Prediction:
    """Predictions of a fitted model for new samples."""

    value: np.ndarray
    error: np.ndarray  # half-width of the 95 % prediction interval, property unit
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
    interval_half_width: float
    n_samples: int
    cv: Mapping
    notes: tuple[str, ...] = field(default=())

    def predict(self, wt_pct: np.ndarray) -> Prediction:
        """Value, 95 % interval half-width, in-domain flag and distance for compositions.

        The interval is the Gaussian process's own predictive interval, or for the other
        kinds 1.96 x the cross-validated RMSE on the training samples.
        """
        w = np.asarray(wt_pct, dtype=float)
        with np.errstate(all="ignore"):
            x = compute_features(w, self.features)
        value, half = predict_params(self.kind, self.params, x)
        if half is None:
            half = np.full(value.shape, self.interval_half_width)
        distance = self.domain.distance(w)
        inside = self.domain.within_bounds(w) & (distance <= self.domain.threshold)
        return Prediction(value, half, inside, distance)

    @property
    def interval_source(self) -> str:
        """Where the interval comes from."""
        return "Gaussian process" if self.kind == "gp" else "1.96 x CV RMSE"

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
            "interval": {"level": 0.95, "source": self.interval_source,
                         "half_width": float(self.interval_half_width)},
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
            interval_half_width=float(data["interval"]["half_width"]),
            n_samples=int(data["n_samples"]),
            cv=dict(data["cv"]),
            notes=tuple(data["notes"]),
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
    if not isinstance(doc, dict):
        raise ModelFileError(
            f"{label}: not a fame-estimator model file (top level is not an object)"
        )
    return doc


# ---------------------------------------------------------------- validator
class _Check:
    """Small explicit type checks with one-line messages naming the key."""

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
        return value

    def integer(self, obj: Mapping, key: str, where: str, lo: int | None = None) -> int:
        value = self.get(obj, key, where)
        if isinstance(value, bool) or not isinstance(value, int):
            raise self.fail(_join(where, key), f"must be an integer, got {_type(value)}")
        if lo is not None and value < lo:
            raise self.fail(_join(where, key), f"must be at least {lo}, got {value}")
        return value

    def number(self, obj: Mapping, key: str, where: str, *, positive: bool = False,
               nonnegative: bool = False) -> float:
        value = self.get(obj, key, where)
        if not _is_number(value):
            raise self.fail(_join(where, key), f"must be a number, got {_type(value)}")
        if positive and not value > 0:
            raise self.fail(_join(where, key), f"must be positive, got {value}")
        if nonnegative and not value >= 0:
            raise self.fail(_join(where, key), f"must not be negative, got {value}")
        return float(value)

    def numbers(self, obj: Mapping, key: str, where: str, length: int | None = None,
                *, positive: bool = False) -> list:
        value = self.get(obj, key, where)
        what = f"a list of {length} numbers" if length is not None else "a list of numbers"
        if not isinstance(value, list) or not all(_is_number(v) for v in value):
            raise self.fail(_join(where, key), f"must be {what}, got {_type(value)}")
        if length is not None and len(value) != length:
            raise self.fail(_join(where, key), f"must be {what}, got {len(value)}")
        if positive and not all(v > 0 for v in value):
            raise self.fail(_join(where, key), "must hold positive numbers only")
        return value

    def strings(self, obj: Mapping, key: str, where: str) -> list:
        value = self.get(obj, key, where)
        if not isinstance(value, list) or not all(isinstance(v, str) for v in value):
            raise self.fail(_join(where, key), f"must be a list of strings, got {_type(value)}")
        return value

    def matrix(self, obj: Mapping, key: str, where: str, columns: int) -> list:
        value = self.get(obj, key, where)
        ok = isinstance(value, list) and len(value) > 0 and all(
            isinstance(row, list) and len(row) == columns and all(_is_number(v) for v in row)
            for row in value
        )
        if not ok:
            raise self.fail(
                _join(where, key), f"must be a non-empty list of rows of {columns} numbers"
            )
        return value


def _join(where: str, key: str) -> str:
    return f"{where}.{key}" if where else key


def _is_number(value) -> bool:
    return (isinstance(value, (int, float)) and not isinstance(value, bool)
            and math.isfinite(value))


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


#: params keys by kind: (key, check, option) with check in number/numbers/int/matrix.
_PARAM_SPECS: dict[str, tuple[tuple[str, str, str], ...]] = {
    "published": (),
    "recalibrated": (("intercept", "number", ""), ("slope", "number", "")),
    "ridge": (("x_mean", "numbers", "d"), ("x_scale", "numbers", "d+"), ("coef", "numbers", "d"),
              ("intercept", "number", ""), ("alpha", "number", "+")),
    "pls": (("x_mean", "numbers", "d"), ("x_scale", "numbers", "d+"), ("coef", "numbers", "d"),
            ("intercept", "number", ""), ("n_components", "int", "1")),
    "gp": (("x_mean", "numbers", "d"), ("x_scale", "numbers", "d+"), ("y_mean", "number", ""),
           ("y_scale", "number", "+"), ("constant", "number", "+"),
           ("length_scale", "number", "+"), ("noise_level", "number", "0"),
           ("jitter", "number", "0"), ("x_train", "matrix", "d"), ("y_train", "numbers", "m")),
}


def validate_document(doc: Mapping, label: str) -> None:
    """Check every key and type of a model-file document; raise ModelFileError if wrong."""
    from estimator.properties.methods import PROPERTIES, methods_for

    c = _Check(label)
    if doc.get("format") != FORMAT:
        raise ModelFileError(
            f"{label}: not a fame-estimator model file (format key is not {FORMAT!r}); "
            "write one with 'fame-estimator fit LAB_FILE --property NAME -o model.json'"
        )
    version = c.get(doc, "format_version", "")
    if version != FORMAT_VERSION:
        raise ModelFileError(
            f"{label}: format_version {version!r} is not supported (fame-estimator "
            f"{__version__} reads version {FORMAT_VERSION}); {_REFIT}"
        )
    allowed = {"format", "format_version", "package_version", "created_utc", "training",
               "caution", "models", "checksum"}
    extra = sorted(set(doc) - allowed)
    if extra:
        raise c.fail(extra[0], "is not a key of a model file")
    c.string(doc, "package_version", "")
    c.string(doc, "created_utc", "")
    c.string(doc, "caution", "")
    training = c.object(doc, "training", "")
    c.string(training, "file", "training")
    sha = c.string(training, "sha256", "training")
    if not _HEX64.match(sha):
        raise c.fail("training.sha256", "must be 64 lowercase hex digits")
    c.integer(training, "rows", "training", lo=1)
    models = c.get(doc, "models", "")
    if not isinstance(models, list) or not models:
        raise c.fail("models", "must be a non-empty list of model entries")
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
        raise c.fail(f"{where}.property", f"{prop!r} is not a property fame-estimator estimates")
    unit = c.string(entry, "unit", where)
    if unit != properties[prop]:
        raise c.fail(f"{where}.unit", f"{unit!r} is not the unit of {prop} ({properties[prop]})")
    c.string(entry, "candidate", where)
    kind = c.string(entry, "kind", where)
    if kind not in KINDS:
        raise c.fail(f"{where}.kind", f"{kind!r} is not one of {', '.join(KINDS)}")
    method = c.string(entry, "method", where)
    features = c.strings(entry, "features", where)
    if not features:
        raise c.fail(f"{where}.features", "must not be empty")
    for name in features:
        if not is_known_feature(name):
            raise c.fail(f"{where}.features", f"holds unknown feature {name!r}")
        parsed = parse_estimate_feature(name)
        if parsed is not None:
            if parsed[0] != prop:
                raise c.fail(f"{where}.features", f"{name!r} estimates another property")
            if parsed[1] not in methods_for(prop):
                raise c.fail(f"{where}.features", f"{name!r} names an unknown method")
    if kind in ("published", "recalibrated"):
        if len(features) != 1 or parse_estimate_feature(features[0]) != (prop, method):
            raise c.fail(f"{where}.features", f"must be ['estimate:{prop}:{method}']")
    d = len(features)
    params = c.object(entry, "params", where)
    spec = _PARAM_SPECS[kind]
    extra = sorted(set(params) - {k for k, _, _ in spec})
    if extra:
        raise c.fail(f"{where}.params.{extra[0]}", f"is not a parameter of a {kind} model")
    pw = f"{where}.params"
    m_rows = None
    for key, check, opt in spec:
        if check == "number":
            c.number(params, key, pw, positive=opt == "+", nonnegative=opt == "0")
        elif check == "int":
            c.integer(params, key, pw, lo=int(opt))
        elif check == "matrix":
            m_rows = len(c.matrix(params, key, pw, d))
        elif opt == "m":
            c.numbers(params, key, pw, m_rows)
        else:
            c.numbers(params, key, pw, d, positive=opt.endswith("+"))
    interval = c.object(entry, "interval", where)
    c.number(interval, "level", f"{where}.interval", positive=True)
    c.string(interval, "source", f"{where}.interval")
    c.number(interval, "half_width", f"{where}.interval", nonnegative=True)
    dom = c.object(entry, "domain", where)
    dw = f"{where}.domain"
    if c.strings(dom, "features", dw) != list(DOMAIN_FEATURES):
        raise c.fail(f"{dw}.features", f"must be {list(DOMAIN_FEATURES)}")
    k = len(DOMAIN_FEATURES)
    for key in ("lower", "upper", "center"):
        c.numbers(dom, key, dw, k)
    c.numbers(dom, "scale", dw, k, positive=True)
    c.matrix(dom, "points", dw, k)
    c.number(dom, "threshold", dw, nonnegative=True)
    c.string(dom, "rule", dw)
    cv = c.object(entry, "cv", where)
    c.object(cv, "scheme", f"{where}.cv")
    c.number(cv, "tie_tolerance", f"{where}.cv", nonnegative=True)
    c.string(cv, "chosen", f"{where}.cv")
    c.string(cv, "statement", f"{where}.cv")
    score_list = c.get(cv, "scores", f"{where}.cv")
    if not isinstance(score_list, list):
        raise c.fail(f"{where}.cv.scores", f"must be a list, got {_type(score_list)}")
    for j, row in enumerate(score_list):
        sw = f"{where}.cv.scores[{j}]"
        if not isinstance(row, dict):
            raise c.fail(sw, f"must be an object, got {_type(row)}")
        c.string(row, "candidate", sw)
        for key in ("rmse", "mae", "bias"):
            c.number(row, key, sw)
    c.integer(entry, "n_samples", where, lo=1)
    c.strings(entry, "notes", where)
    return prop
