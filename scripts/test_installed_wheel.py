"""Build the wheel, install it outside the source tree, and run the test suite against it.

This catches data files missing from ``package_data``: the tests import
``estimator`` from the installed wheel, not from the working tree. The
dependencies come from the current environment (the project venv).
"""

from __future__ import annotations

import os
import subprocess
import sys
import tempfile
from pathlib import Path

ROOT = Path(__file__).resolve().parents[1]


def main() -> int:
    with tempfile.TemporaryDirectory(prefix="fame-wheel-") as tmp:
        tmp_path = Path(tmp)
        wheels, site = tmp_path / "wheels", tmp_path / "site"
        subprocess.run(
            [sys.executable, "-m", "pip", "wheel", "-q", "--no-deps", "--no-build-isolation",
             "-w", str(wheels), str(ROOT)],
            check=True,
        )
        wheel = next(wheels.glob("fame_estimator-*.whl"))
        subprocess.run(
            [sys.executable, "-m", "pip", "install", "-q", "--no-deps", "--target", str(site),
             str(wheel)],
            check=True,
        )
        env = {**os.environ, "PYTHONPATH": str(site)}
        where = subprocess.run(
            [sys.executable, "-c", "import estimator; print(estimator.__file__)"],
            check=True, capture_output=True, text=True, cwd=tmp, env=env,
        ).stdout.strip()
        if not where.startswith(str(site)):
            print(f"estimator was imported from {where}, not from the wheel", file=sys.stderr)
            return 1
        print(f"testing the installed wheel {wheel.name} ({where})")
        return subprocess.run(
            [sys.executable, "-m", "pytest", "-q", "-p", "no:cacheprovider", "--rootdir", tmp,
             "-c", str(ROOT / "pyproject.toml"), "-o", "testpaths=", "-o",
             "addopts=--import-mode=importlib", str(ROOT / "tests")],
            cwd=tmp, env=env,
        ).returncode


if __name__ == "__main__":
    sys.exit(main())
