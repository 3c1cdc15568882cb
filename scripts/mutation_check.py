"""Perturb each coefficient of the default methods by 5 % and report which tests catch it.

For every module constant that a default method uses (see :data:`MUTATIONS`), and
for the species-table columns of pure-ester data the defaults read, a fresh pytest
process runs the property tests of that module with the value multiplied by 1.05
(each element of a dict or tuple in turn). A test that fails "catches" the change.
Catchers are split into outside-reference tests and regression tests (those marked
``@pytest.mark.regression``, which compare the code with its own constants).
Property-based (hypothesis) tests are skipped in the mutation runs: they check
invariants, not values, and are the slow part.

The aim (issue 9): every default coefficient is caught by at least one
outside-reference test, i.e. a test against a published value, a handbook value or
a reference library.

Usage::

    .venv/bin/python scripts/mutation_check.py              # all mutations
    .venv/bin/python scripts/mutation_check.py ramos        # only names containing 'ramos'

Prints one line per mutation and a summary; exits 1 if any mutation is caught by
no outside-reference test. This file is also the pytest plugin that applies the
mutation inside the child process (``-p mutation_check`` with ``scripts`` on the path).
"""

from __future__ import annotations

import json
import os
import subprocess
import sys
import tempfile
import time
from pathlib import Path

ROOT = Path(__file__).resolve().parents[1]
FACTOR = 1.05
ENV_TARGET = "FAME_MUTATION"
ENV_OUT = "FAME_MUTATION_OUT"

T = "tests/properties/"
#: (module, constant, test files): the module constants used by the default methods.
MUTATIONS = [
    # cetane number: ramirezverduzco2012
    ("ignition", "RV2012_CN_INTERCEPT", [T + "test_ignition.py"]),
    ("ignition", "RV2012_CN_MW_COEF", [T + "test_ignition.py"]),
    ("ignition", "RV2012_CN_DB_COEF", [T + "test_ignition.py"]),
    # iodine value: stoichiometric
    ("descriptors", "MOLAR_MASS_I2", [T + "test_descriptors.py"]),
    # CFPP: ramos2009 (and its LCSF)
    ("cold_flow", "RAMOS2009_SLOPE", [T + "test_cold_flow.py"]),
    ("cold_flow", "RAMOS2009_INTERCEPT", [T + "test_cold_flow.py"]),
    ("descriptors", "LCSF_WEIGHTS", [T + "test_descriptors.py", T + "test_cold_flow.py"]),
    # cloud point: imahara2006
    ("cold_flow", "GAS_CONSTANT_J_MOL_K", [T + "test_cold_flow.py"]),
    # pour point: sarin2009
    ("cold_flow", "SARIN2009_PP_SLOPE", [T + "test_cold_flow.py"]),
    ("cold_flow", "SARIN2009_PP_INTERCEPT", [T + "test_cold_flow.py"]),
    # oxidation stability: park2008
    ("stability", "PARK2008_A", [T + "test_stability.py"]),
    ("stability", "PARK2008_B", [T + "test_stability.py"]),
    # density: ramirezverduzco2022 group contributions
    ("transport", "RV2022_GROUPS", [T + "test_transport.py"]),
    # viscosity: allen1999 temperature slopes (Krisnangkura 2006 forms)
    ("transport", "K2006_SAT_B0", [T + "test_transport.py"]),
    ("transport", "K2006_SAT_B1", [T + "test_transport.py"]),
    ("transport", "K2006_C18_UNSATURATED", [T + "test_transport.py"]),
    # heating values: kay1936 (fallback pure-ester HHV) and the LHV conversion
    ("energy", "ADRIAANSE1965_CH2", [T + "test_energy.py"]),
    ("energy", "ADRIAANSE1965_CONST", [T + "test_energy.py"]),
    ("energy", "WATER_LATENT_HEAT_25C_MJ_KG", [T + "test_energy.py"]),
    ("energy", "WATER_PER_HYDROGEN", [T + "test_energy.py"]),
    # pure-ester data of the species table read by the defaults (whole column)
    ("species", "kin_viscosity_40C_mm2_s", [T + "test_transport.py"]),
    ("species", "hhv_MJ_kg", [T + "test_energy.py"]),
    ("species", "melting_point_C", [T + "test_cold_flow.py", T + "test_methods.py"]),
    ("species", "enthalpy_fusion_kJ_mol", [T + "test_cold_flow.py"]),
]


def _elements(value):
    """Paths to every number inside a constant (dict values, tuple items)."""
    if isinstance(value, dict):
        for key, inner in value.items():
            for path in _elements(inner):
                yield (key, *path)
    elif isinstance(value, tuple):
        for i, inner in enumerate(value):
            for path in _elements(inner):
                yield (i, *path)
    else:
        yield ()


def _mutated(value, path):
    if not path:
        return value * FACTOR
    head, rest = path[0], path[1:]
    if isinstance(value, dict):
        return {k: (_mutated(v, rest) if k == head else v) for k, v in value.items()}
    return tuple(_mutated(v, rest) if i == head else v for i, v in enumerate(value))


def targets(selection: str = "") -> list[tuple[str, str, tuple, list[str]]]:
    """Every single mutation: (module, constant, element path, test files)."""
    import importlib

    out = []
    for module, name, tests in MUTATIONS:
        if selection and selection not in name.lower() and selection not in module:
            continue
        if module == "species":
            out.append((module, name, (), tests))
            continue
        value = getattr(importlib.import_module(f"estimator.properties.{module}"), name)
        for path in _elements(value):
            out.append((module, name, path, tests))
    return out


# --- pytest plugin side (runs in the child process) -------------------------------


def pytest_configure(config):  # noqa: D103 - pytest hook
    spec = os.environ.get(ENV_TARGET)
    if not spec:
        return
    module, name, path = json.loads(spec)
    path = tuple(path)
    if module == "species":
        from estimator.tables import species_table

        table = species_table()
        table[name] = table[name] * FACTOR  # the cached frame every loader reads
        return
    import importlib

    mod = importlib.import_module(f"estimator.properties.{module}")
    setattr(mod, name, _mutated(getattr(mod, name), _json_path(getattr(mod, name), path)))


def _json_path(value, path):
    """JSON turns tuple indices and numeric dict keys into lists/strings: map them back."""
    out = []
    for step in path:
        if isinstance(value, dict):
            key = next(k for k in value if str(k) == str(step))
            out.append(key)
            value = value[key]
        else:
            out.append(int(step))
            value = value[int(step)]
    return tuple(out)


_RESULTS: list[dict] = []


def pytest_collection_modifyitems(config, items):  # noqa: D103 - pytest hook
    # property-based (hypothesis) tests check invariants such as monotonicity, which a 5 %
    # change of a coefficient keeps; they are the slow part, so the mutation runs skip them
    if not os.environ.get(ENV_TARGET):
        return
    keep = [i for i in items if not getattr(getattr(i, "obj", None), "is_hypothesis_test",
                                            False)]
    if len(keep) != len(items):
        config.hook.pytest_deselected(items=[i for i in items if i not in keep])
        items[:] = keep


def pytest_runtest_logreport(report):  # noqa: D103 - pytest hook
    if report.failed and os.environ.get(ENV_TARGET):
        _RESULTS.append({"test": report.nodeid,
                         "regression": "regression" in report.keywords})


def pytest_sessionfinish(session, exitstatus):  # noqa: D103 - pytest hook
    out = os.environ.get(ENV_OUT)
    if out and os.environ.get(ENV_TARGET):
        Path(out).write_text(json.dumps(_RESULTS), encoding="utf-8")


# --- driver -----------------------------------------------------------------------


def run_one(module: str, name: str, path: tuple, tests: list[str]) -> list[dict]:
    """Run the tests with one mutation; the failing tests with their kind."""
    with tempfile.TemporaryDirectory() as tmp:
        out = Path(tmp) / "caught.json"
        env = dict(os.environ, PYTHONPATH=str(ROOT / "scripts"),
                   **{ENV_TARGET: json.dumps([module, name, list(path)]), ENV_OUT: str(out)})
        subprocess.run(
            [sys.executable, "-m", "pytest", "-q", "-p", "no:cacheprovider", "-p",
             "mutation_check", "-m", "not slow", *tests],
            cwd=ROOT, env=env, capture_output=True, text=True, check=False,
        )
        return json.loads(out.read_text(encoding="utf-8")) if out.exists() else []


def main(argv: list[str] | None = None) -> int:
    """Run every mutation; print who caught it; exit 1 if one escapes the outside tests."""
    argv = sys.argv[1:] if argv is None else argv
    todo = targets(argv[0].lower() if argv else "")
    start = time.perf_counter()
    escaped = []
    for module, name, path, tests in todo:
        caught = run_one(module, name, path, tests)
        outside = [c["test"] for c in caught if not c["regression"]]
        regression = [c["test"] for c in caught if c["regression"]]
        label = f"{module}.{name}" + "".join(f"[{p}]" for p in path)
        status = "caught" if outside else ("ONLY REGRESSION" if regression else "NOT CAUGHT")
        print(f"{label:<52} {status:<15} outside {len(outside):>2}, regression "
              f"{len(regression):>2}" + (f"  e.g. {outside[0].split('::')[-1]}" if outside else ""),
              flush=True)
        if not outside:
            escaped.append(label)
    print(f"\n{len(todo) - len(escaped)} of {len(todo)} default coefficients (+5 %) caught by "
          f"an outside-reference test; {time.perf_counter() - start:.0f} s")
    if escaped:
        print("not caught by an outside-reference test: " + ", ".join(escaped))
    return 1 if escaped else 0


if __name__ == "__main__":
    sys.exit(main())
