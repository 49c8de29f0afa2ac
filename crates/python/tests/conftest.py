"""Shared helpers of the Python package's tests.

The reference for every "same numbers" check is the command line, run as a separate program:
`rungs analyze FILE --format json` (its path in RUNGS_CLI, set by scripts/test; built with
cargo when it is not set).
"""

import os
import pathlib
import subprocess

import pytest

ROOT = pathlib.Path(__file__).resolve().parents[3]
DEMO = ROOT / "crates" / "core" / "data" / "demo"


@pytest.fixture(scope="session")
def cli() -> str:
    path = os.environ.get("RUNGS_CLI")
    if path:
        return path
    subprocess.run(
        ["cargo", "build", "-q", "-p", "rungs-cli", "--locked"], cwd=ROOT, check=True
    )
    return str(ROOT / "target" / "debug" / "rungs")


def run_cli(cli: str, *args: str, cwd=None) -> subprocess.CompletedProcess:
    return subprocess.run([cli, *args], cwd=cwd, capture_output=True, text=True)
