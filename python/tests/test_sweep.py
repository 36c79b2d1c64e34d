"""Sweeps from Python against `sojourn sweep`: the rows of sweep.jsonl, ready for pandas."""

from __future__ import annotations

import json
import pathlib
from typing import Any, Dict, List, Tuple

import pytest

import sojourn
from sojourn import Model, SojournError

from conftest import Cli, model_dict

SPEC = {
    "model": "model.json",
    "photons": 400,
    "seed": 3,
    "parameters": [
        {"path": "layers[0].albedo", "values": [1.0, 0.9]},
        {"path": "layers[0].extinction_coefficient", "log": {"from": 2, "to": 8, "count": 3}},
    ],
}


def write_spec(directory: pathlib.Path, spec: Dict[str, Any]) -> pathlib.Path:
    (directory / "model.json").write_text(json.dumps(model_dict("test-sphere-tau20")))
    path = directory / "spec.json"
    path.write_text(json.dumps(spec, indent=2))
    return path


def cli_rows(cli: Cli, spec: pathlib.Path) -> List[Dict[str, Any]]:
    out = spec.parent / "out"
    cli.stdout("sweep", str(spec), "--out", str(out), "--quiet")
    return [json.loads(line) for line in (out / "sweep.jsonl").read_text().splitlines()]


def test_a_sweep_from_python_gives_the_command_lines_rows(cli: Cli, tmp_path) -> None:
    spec = write_spec(tmp_path, SPEC)
    expected = cli_rows(cli, spec)
    rows = sojourn.sweep(spec)
    assert rows == expected
    # Same columns in the same order (the order of sweep.csv).
    assert [list(row) for row in rows] == [list(row) for row in expected]
    header = (tmp_path / "out" / "sweep.csv").read_text().splitlines()[0].split(",")
    assert list(rows[0]) == header
    assert len(rows) == 6 and [row["point"] for row in rows] == list(range(6))


def test_a_spec_dict_with_a_model_object_or_dict_gives_the_same_rows(tmp_path) -> None:
    spec = write_spec(tmp_path, SPEC)
    from_file = sojourn.sweep(spec, threads=1)
    as_path = sojourn.sweep(SPEC, base_dir=tmp_path)
    with_model = sojourn.sweep({**SPEC, "model": Model.from_file(tmp_path / "model.json")})
    with_dict = sojourn.sweep({**SPEC, "model": model_dict("test-sphere-tau20")}, threads=2)
    assert from_file == as_path == with_model == with_dict


def test_rows_are_ready_for_a_data_frame(tmp_path) -> None:
    rows = sojourn.sweep({**SPEC, "model": model_dict("test-sphere-tau20"), "photons": 100})
    assert all(list(row) == list(rows[0]) for row in rows)
    assert all(
        value is None or isinstance(value, (int, float, str)) for row in rows for value in row.values()
    )
    pandas = pytest.importorskip("pandas")
    frame = pandas.DataFrame(rows)
    assert frame.shape == (6, len(rows[0]))
    assert list(frame["layers[0].albedo"]) == [1.0, 1.0, 1.0, 0.9, 0.9, 0.9]


# (change to the spec, what the message names)
BAD_SPECS: Dict[str, Tuple[Dict[str, Any], str]] = {
    "unknown key": ({"photon": 5}, "photon"),
    "bad path": ({"parameters": [{"path": "layers[4].albedo", "values": [1.0]}]}, "parameters[0].path"),
    "invalid point": ({"parameters": [{"path": "layers[0].albedo", "values": [0.5, 1.5]}]}, "point 1"),
    "negative count": (
        {"parameters": [{"path": "layers[0].albedo", "linear": {"from": 0.5, "to": 1, "count": -2}}]},
        "parameters[0].linear.count",
    ),
    "negative photons": ({"photons": -5}, "photons"),
}


@pytest.mark.parametrize("case", sorted(BAD_SPECS))
def test_a_bad_spec_raises_the_command_lines_message(cli: Cli, tmp_path, case: str) -> None:
    change, field = BAD_SPECS[case]
    spec = write_spec(tmp_path, {**SPEC, **change})
    expected = cli.error("sweep", str(spec), "--out", str(tmp_path / "out"))
    assert field in expected
    with pytest.raises(SojournError) as from_file:
        sojourn.sweep(spec)
    assert str(from_file.value) == expected
    with pytest.raises(SojournError) as from_dict:
        sojourn.sweep({**SPEC, **change}, base_dir=tmp_path, label=str(spec))
    assert str(from_dict.value) == expected


def test_a_spec_of_the_wrong_type_is_a_type_error() -> None:
    with pytest.raises(TypeError, match="not list"):
        sojourn.sweep([SPEC])  # type: ignore[arg-type]
