"""Shared fixtures: the repository's examples and the command-line binary to compare with."""

import os
import pathlib
import subprocess

import pytest

REPO = pathlib.Path(__file__).resolve().parents[2]
EXAMPLES = sorted((REPO / "examples").glob("*.clv"))


@pytest.fixture(scope="session")
def cli():
    """The `cleave` binary: $CLEAVE_BIN, else the repository's debug build (built if missing)."""
    path = os.environ.get("CLEAVE_BIN")
    if path:
        return pathlib.Path(path)
    path = REPO / "target" / "debug" / "cleave"
    if not path.exists():
        subprocess.run(["cargo", "build", "--quiet"], cwd=REPO, check=True)
    return path


def run_cli(cli, *args):
    """Runs the binary from the repository's root: (status, stdout, stderr)."""
    res = subprocess.run([str(cli), *map(str, args)], cwd=REPO, capture_output=True, text=True)
    return res.returncode, res.stdout, res.stderr
