"""Shared test helpers: where the real third-party outputs and the demo study live."""
from __future__ import annotations

import shutil
from pathlib import Path

import pytest

ROOT = Path(__file__).resolve().parent.parent
# Real outputs of real programs (cclib's open test data, BSD-3); never copied into the project.
FIXTURES = ROOT.parent / "shared" / "fixtures" / "qc-logs"
DEMO = ROOT / "example_outputs"


def fixture_path(relative: str) -> Path:
    """Path of a third-party fixture log; skips the test when the shared folder is absent."""
    path = FIXTURES / relative
    if not path.exists():
        pytest.skip(f"third-party fixture {relative} not present (../shared/fixtures/qc-logs absent)")
    return path


def demo_path(relative: str = "") -> Path:
    """Path inside the demo study; skips when that part of the study is not there."""
    path = DEMO / relative
    if not path.exists():
        pytest.skip(f"demo study file {relative} not present")
    return path


def require_program(name: str) -> str:
    """Full path of an installed program (nwchem, xtb, chromium, ...) or skip."""
    found = shutil.which(name)
    if not found:
        pytest.skip(f"{name} is not installed (.ci/run installs it)")
    return found
