"""Models from files and dicts: the same validation, the same messages as the command line."""

from __future__ import annotations

import json
import math
import pathlib

import numpy as np
import pytest

import sojourn
from sojourn import Model, SojournError

from conftest import Cli, model_dict, without_timing

EMBER = "models/ember-two-zone.json"


def test_a_model_file_is_read_with_its_name_geometry_and_layers() -> None:
    model = Model.from_file(EMBER)
    assert model.name == "Ember, a two-zone test star (invented)"
    assert model.geometry == "sphere"
    assert model.layers == 2
    assert model.label == EMBER
    assert model.to_dict() == model_dict("ember-two-zone")
    assert Model.from_file(pathlib.Path(EMBER)).label == EMBER
    assert "Ember" in repr(model)


def test_a_dict_model_is_the_file_model() -> None:
    from_dict = Model.from_dict(model_dict("opal-diffuser"))
    assert from_dict.label == "<dict>"
    assert from_dict.geometry == "slab"
    assert from_dict.to_dict() == model_dict("opal-diffuser")
    by_dict = sojourn.run(from_dict, photons=300, seed=4).to_dict()
    by_file = sojourn.run("models/opal-diffuser.json", photons=300, seed=4).to_dict()
    assert by_dict["model"]["file"] == "<dict>"
    by_dict["model"]["file"] = by_file["model"]["file"]
    assert without_timing(by_dict) == without_timing(by_file)


def test_numpy_arrays_and_scalars_and_tuples_are_json_values() -> None:
    plain = model_dict("test-polytrope-n3-tau50")
    profile = plain["layers"][0]["profile"]
    mixed = json.loads(json.dumps(plain))
    mixed["layers"][0]["profile"] = {
        key: np.array(value) if isinstance(value, list) else value
        for key, value in profile.items()
    }
    mixed["layers"][0]["profile"]["radius"] = tuple(profile["radius"])
    assert Model.from_dict(mixed).to_dict() == plain

    slab = model_dict("opal-diffuser")
    slab["layers"][0]["thickness"] = np.float64(slab["layers"][0]["thickness"])
    slab["ambient_index"] = np.int64(1)
    assert Model.from_dict(slab).to_dict()["ambient_index"] == 1


def broken(edit) -> dict:
    model = model_dict("ember-two-zone")
    edit(model)
    return model


def set_in(path, value):
    def edit(model):
        target = model
        for key in path[:-1]:
            target = target[key]
        target[path[-1]] = value

    return edit


# (edit, a JSON path the message must name)
BAD_MODELS = {
    "unknown key": (set_in(["layers", 0, "albedoo"], 0.5), "layers[0]"),
    "wrong type": (set_in(["layers", 0, "extinction_coefficient"], "300"), "layers[0].extinction_coefficient"),
    "out of range": (set_in(["layers", 1, "albedo"], 1.5), "layers[1].albedo"),
    "negative": (set_in(["layers", 1, "extinction_coefficient"], -3), "layers[1]"),
    "unknown name": (set_in(["geometry"], "cube"), "geometry"),
    "missing field": (lambda model: model.pop("geometry"), "."),
    "radii not increasing": (set_in(["layers", 1, "outer_radius"], 0.2), "layers[1].outer_radius"),
}


@pytest.mark.parametrize("case", sorted(BAD_MODELS))
def test_a_bad_model_raises_the_command_lines_message(cli: Cli, tmp_path, case: str) -> None:
    edit, field = BAD_MODELS[case]
    model = broken(edit)
    path = tmp_path / "bad.json"
    path.write_text(json.dumps(model, indent=2))
    expected = cli.error("run", str(path), "--photons", "1")
    assert field in expected

    with pytest.raises(SojournError) as from_file:
        Model.from_file(path)
    assert str(from_file.value) == expected

    with pytest.raises(SojournError) as from_dict:
        Model.from_dict(model, label=str(path))
    assert str(from_dict.value) == expected
    assert isinstance(from_dict.value, ValueError)


def test_files_that_cannot_be_read_or_parsed_raise_the_command_lines_message(cli: Cli, tmp_path) -> None:
    missing = tmp_path / "missing.json"
    with pytest.raises(SojournError) as error:
        Model.from_file(missing)
    assert str(error.value) == cli.error("run", str(missing))

    not_json = tmp_path / "not-json.json"
    not_json.write_text('{"geometry": "sphere",\n  "layers": [}\n')
    with pytest.raises(SojournError) as error:
        Model.from_file(not_json)
    assert str(error.value) == cli.error("run", str(not_json))
    assert "line 2" in str(error.value)


def test_values_json_cannot_hold_are_refused_with_their_path() -> None:
    with pytest.raises(SojournError, match=r"<dict>: layers\[1\]\.albedo = NaN: expected a finite number"):
        Model.from_dict(broken(set_in(["layers", 1, "albedo"], math.nan)))
    with pytest.raises(TypeError, match=r"<dict>: layers\[0\]\.extinction_coefficient: a set is not a JSON value"):
        Model.from_dict(broken(set_in(["layers", 0, "extinction_coefficient"], {3.0})))
    with pytest.raises(TypeError, match=r"layers\[0\]: key 7 is a int: JSON keys are strings"):
        Model.from_dict(broken(set_in(["layers", 0, 7], 1.0)))
    with pytest.raises(TypeError, match="Model.from_dict takes a dict, not list"):
        Model.from_dict([1, 2])  # type: ignore[arg-type]


def test_a_profile_tolerance_outside_zero_to_one_is_refused() -> None:
    with pytest.raises(SojournError, match=r"profile_tolerance = 2: expected a relative tolerance between 0 and 1"):
        Model.from_file("models/test-polytrope-n3-tau50.json", profile_tolerance=2.0)
    fine = Model.from_file("models/test-polytrope-n3-tau50.json", profile_tolerance=0.05)
    default = Model.from_file("models/test-polytrope-n3-tau50.json")
    assert fine.layers < default.layers
