"""The profile report from Python against `sojourn profile --json`."""

from __future__ import annotations

import json

import numpy as np
import pytest

import sojourn
from sojourn import SojournError

from conftest import Cli


@pytest.mark.parametrize("model", ["models/ember-two-zone.json", "models/test-polytrope-n3-tau50.json"])
def test_the_profile_report_is_the_command_lines(cli: Cli, model: str) -> None:
    expected = cli.stdout("profile", model, "--json", "-")
    result = sojourn.profile(model)
    assert result.to_json() == expected
    assert result.to_dict() == json.loads(expected)


def test_shells_are_rows_and_columns() -> None:
    result = sojourn.profile("models/test-polytrope-n3-tau50.json")
    report = result.to_dict()
    rows = result.shells()
    assert len(rows) == report["model"]["shells"] > 10
    assert all(list(row) == list(rows[0]) for row in rows)
    columns = result.shell_arrays()
    assert "layer" not in columns
    radius = columns["radius_cm"]
    assert np.all(np.diff(radius) > 0)
    assert radius[-1] == report["radius_cm"]
    # Each shell's share of the diffusion time adds up to one.
    assert columns["time_share"].sum() == pytest.approx(1.0, rel=1e-12)


def test_a_slab_has_no_profile_report(cli: Cli) -> None:
    model = "models/opal-diffuser.json"
    with pytest.raises(SojournError) as error:
        sojourn.profile(model)
    assert str(error.value) == cli.error("profile", model)
