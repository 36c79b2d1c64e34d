"""Shared fixtures: the repository's models and the `sojourn` command line to compare with.

The command line is the binary built from the same working tree: `$SOJOURN` if set (then
it must exist), else `target/release/sojourn`, else `sojourn` on PATH. Without any, the
tests that compare with it are skipped (build it with `cargo build --release`).
"""

from __future__ import annotations

import json
import os
import pathlib
import shutil
import subprocess
from typing import Any, Dict, List

import pytest

REPO = pathlib.Path(__file__).resolve().parents[2]


class Cli:
    """The `sojourn` binary, run from the repository root."""

    def __init__(self, path: str) -> None:
        self.path = path

    def output(self, *args: str) -> subprocess.CompletedProcess:
        return subprocess.run(
            [self.path, *args], cwd=REPO, capture_output=True, text=True, timeout=600
        )

    def stdout(self, *args: str) -> str:
        done = self.output(*args)
        assert done.returncode == 0, f"sojourn {args}: {done.stderr}"
        return done.stdout

    def json(self, *args: str) -> Dict[str, Any]:
        return json.loads(self.stdout(*args))

    def error(self, *args: str) -> str:
        """The error message of a failing command, without the `sojourn: error: ` prefix."""
        done = self.output(*args)
        assert done.returncode == 1, f"sojourn {args} did not fail: {done.stdout}"
        assert "panicked" not in done.stderr
        prefix = "sojourn: error: "
        assert done.stderr.startswith(prefix), done.stderr
        return done.stderr[len(prefix) :].rstrip("\n")


@pytest.fixture(scope="session")
def cli() -> Cli:
    explicit = os.environ.get("SOJOURN")
    if explicit:
        found = shutil.which(explicit)
        if found is None:
            pytest.fail(f"SOJOURN={explicit} is not an executable")
        return Cli(found)
    built = REPO / "target" / "release" / "sojourn"
    if built.is_file():
        return Cli(str(built))
    on_path = shutil.which("sojourn")
    if on_path is None:
        pytest.skip("no sojourn binary: run `cargo build --release` or set SOJOURN")
    return Cli(on_path)


@pytest.fixture(autouse=True)
def at_repository_root(monkeypatch: pytest.MonkeyPatch) -> None:
    """Every test runs in the repository root, so that relative model paths (and the
    labels reports carry) are the same for Python and for the command line."""
    monkeypatch.chdir(REPO)


def model_dict(name: str) -> Dict[str, Any]:
    """The JSON of `models/NAME.json`."""
    return json.loads((REPO / "models" / f"{name}.json").read_text())


def without_timing(report: Dict[str, Any]) -> Dict[str, Any]:
    """A report without its wall-clock field."""
    report = dict(report)
    report.pop("elapsed_s")
    return report


def text_without_timing(text: str) -> List[str]:
    """The lines of a pretty-printed report, the wall-clock line left out."""
    return [line for line in text.splitlines() if not line.lstrip().startswith('"elapsed_s"')]
