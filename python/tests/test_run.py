"""Runs from Python against `sojourn run --json`: the same bits, arrays from the tally."""

from __future__ import annotations

import json
import subprocess
import sys
from typing import Any, Dict, List

import numpy as np
import pytest

import sojourn
from sojourn import Model, SojournError

from conftest import REPO, Cli, text_without_timing, without_timing

EMBER = "models/ember-two-zone.json"
OPAL = "models/opal-diffuser.json"

# (model, command-line options, the same as keyword arguments)
SAME_RUNS: Dict[str, Any] = {
    "two-zone sphere, auto": (EMBER, ["--photons", "1000", "--seed", "1"], dict(photons=1000, seed=1)),
    "uniform sphere, direct": (
        "models/test-sphere-tau20.json",
        ["--photons", "700", "--seed", "7", "--method", "direct", "--threads", "1"],
        dict(photons=700, seed=7, method="direct", threads=1),
    ),
    "refractive slab, resolved": (
        OPAL,
        ["--photons", "3000", "--seed", "3", "--resolve", "--cosine-bins", "10", "--tof-bins", "50"],
        dict(photons=3000, seed=3, resolve=True, cosine_bins=10, tof_bins=50),
    ),
    "layered slab, step cap": (
        "models/diffuser-three-layer.json",
        ["--photons", "1500", "--seed", "11", "--max-steps", "40"],
        dict(photons=1500, seed=11, max_steps=40),
    ),
    "profile sphere, accelerated": (
        "models/test-polytrope-n3-tau50.json",
        ["--photons", "400", "--seed", "5", "--method", "accelerated"],
        dict(photons=400, seed=5, method="accelerated"),
    ),
}


@pytest.mark.parametrize("case", sorted(SAME_RUNS))
def test_a_run_from_python_is_the_command_lines_run_bit_for_bit(cli: Cli, case: str) -> None:
    model, options, arguments = SAME_RUNS[case]
    expected = cli.stdout("run", model, *options, "--json", "-")
    result = sojourn.run(Model.from_file(model), **arguments)
    # The same text, line for line, but for the wall-clock time.
    assert text_without_timing(result.to_json()) == text_without_timing(expected)
    assert without_timing(result.to_dict()) == without_timing(json.loads(expected))


def test_the_readme_acceptance_command_prints_the_command_lines_mean(cli: Cli) -> None:
    command = (
        "import sojourn; print(sojourn.run(sojourn.Model.from_file('models/ember-two-zone.json'), "
        "photons=1000, seed=1).to_dict()['escape_time']['mean_s'])"
    )
    printed = subprocess.run(
        [sys.executable, "-c", command], cwd=REPO, capture_output=True, text=True, check=True
    ).stdout
    report = cli.json("run", EMBER, "--photons", "1000", "--seed", "1", "--json", "-")
    assert printed == f"{report['escape_time']['mean_s']}\n"


def test_the_thread_count_does_not_change_a_bit() -> None:
    one = sojourn.run(EMBER, photons=3001, seed=9, threads=1).to_dict()
    two = sojourn.run(EMBER, photons=3001, seed=9, threads=2).to_dict()
    assert without_timing(one) == without_timing(two)
    assert one["photons"] == 3001


def test_different_seeds_give_different_walks() -> None:
    first = sojourn.run(EMBER, photons=200, seed=1).to_dict()["escape_time"]["mean_s"]
    second = sojourn.run(EMBER, photons=200, seed=2).to_dict()["escape_time"]["mean_s"]
    assert first != second


def test_the_escape_time_histogram_is_the_reports_distribution() -> None:
    result = sojourn.run(EMBER, photons=2000, seed=2)
    report = result.to_dict()["escape_time"]
    edges, counts = result.escape_times()
    assert edges.dtype == np.float64 and counts.dtype == np.uint64
    assert len(edges) == len(counts) + 1
    # Bit-keyed bins of the tally: 1024 per octave, so each is at most 2^-10 of its lower edge wide.
    widths = edges[1:] / edges[:-1] - 1
    assert np.all(widths > 0) and np.all(widths <= 2.0**-10 * (1 + 1e-12))
    assert int(counts.sum()) == report["count"] == 2000
    assert counts[0] > 0 and counts[-1] > 0
    assert edges[0] <= report["min_s"] < edges[1]
    assert edges[-2] <= report["max_s"] < edges[-1]
    # The mean from bin centres is within the bin resolution (±0.05 %) of the exact mean.
    centres = np.sqrt(edges[:-1] * edges[1:])
    mean = float((centres * counts).sum() / counts.sum())
    assert abs(mean / report["mean_s"] - 1) < 0.0005
    # The median from the histogram's cumulative counts falls in the report's median bin.
    cumulative = np.cumsum(counts)
    median_bin = int(np.searchsorted(cumulative, counts.sum() / 2))
    assert edges[median_bin] <= report["median_s"] <= edges[median_bin + 1]
    assert result.escape_times("escaped").counts.sum() == 2000
    assert len(result.escape_times("reflected").edges) == 0


def test_slab_histograms_split_by_face() -> None:
    result = sojourn.run(OPAL, photons=1000, seed=6)
    report = result.to_dict()
    reflected = result.escape_times("reflected")
    transmitted = result.escape_times("transmitted")
    assert int(reflected.counts.sum()) == report["reflected_time"]["count"]
    assert int(transmitted.counts.sum()) == report["transmitted_time"]["count"]
    assert int(result.escape_times().counts.sum()) == report["escape_time"]["count"]
    with pytest.raises(SojournError, match='unknown escape-time histogram "upward"'):
        result.escape_times("upward")


def test_resolved_curves_come_as_arrays_beside_diffusion_theory() -> None:
    result = sojourn.run(OPAL, photons=3000, seed=3, resolve=True, tof_bins=50, cosine_bins=10)
    resolved = result.to_dict()["resolved"]
    curves = result.time_resolved()
    assert set(curves) == {
        "time_s",
        "reflectance_per_s",
        "transmittance_per_s",
        "diffusion_reflectance_per_s",
        "diffusion_transmittance_per_s",
        "diffusion_reflectance_zero_boundary_per_s",
    }
    for name, values in curves.items():
        assert values.dtype == np.float64 and values.shape == (50,)
        assert values.tolist() == resolved[name]
    # Bin centres a bin width apart; the curves integrate to the reflected fraction
    # (diffuse reflectance, less what arrives after the last bin).
    width = resolved["time_bin_s"]
    assert np.allclose(np.diff(curves["time_s"]), width)
    reflected = result.to_dict()["outcome"]["reflected"]
    in_bins = float(curves["reflectance_per_s"].sum() * width)
    assert in_bins == pytest.approx(reflected - resolved["later_fraction"][0], rel=1e-9)

    limb = result.limb_darkening()
    assert limb["mu"].shape == (10,)
    assert np.allclose(limb["eddington"], 0.4 + 0.6 * limb["mu"])
    depth = result.absorption_by_depth()
    assert depth["depth_cm"].shape == depth["absorbed_per_cm"].shape
    absorbed = float(depth["absorbed_per_cm"].sum() * resolved["depth_bin_cm"])
    assert absorbed == pytest.approx(result.to_dict()["outcome"]["absorbed"], rel=1e-9)


def test_runs_without_resolved_tallies_have_no_curves() -> None:
    with pytest.raises(SojournError, match="resolve=True"):
        sojourn.run(EMBER, photons=10).time_resolved()


def test_a_model_may_be_given_as_a_path_or_a_dict() -> None:
    by_path = sojourn.run(EMBER, photons=100, seed=3).to_dict()
    by_dict = sojourn.run(json.loads((REPO / EMBER).read_text()), photons=100, seed=3).to_dict()
    assert by_dict["escape_time"] == by_path["escape_time"]
    with pytest.raises(TypeError, match="not int"):
        sojourn.run(42, photons=10)  # type: ignore[arg-type]


# (keyword arguments, exception, message)
BAD_ARGUMENTS: List[Any] = [
    (dict(photons=-5), SojournError, "photons = -5: expected a whole number >= 1"),
    (dict(photons=0), SojournError, "photons = 0: expected a whole number >= 1"),
    (dict(photons=2**64), SojournError, "photons = 18446744073709551616: expected a whole number from 1 to 18446744073709551615"),
    (dict(photons="1000"), TypeError, "photons = '1000': expected a whole number (int), not str"),
    (dict(photons=1000.0), TypeError, "photons = 1000.0: expected a whole number (int), not float"),
    (dict(seed=-1), SojournError, "seed = -1: expected a whole number >= 0"),
    (dict(threads=0), SojournError, "threads = 0: expected a whole number from 1 to 1024"),
    (dict(max_steps=0), SojournError, "max_steps = 0: expected a whole number >= 1"),
    (dict(method="fast"), SojournError, 'unknown walk method "fast": expected direct, accelerated or auto'),
    (dict(absorption="implicit"), SojournError, 'unknown absorption treatment "implicit": expected analog'),
    (dict(resolve=True), SojournError, f"{EMBER}: resolve=True is for slabs; this model is a sphere"),
    (dict(tof_bin_ps=2.0), SojournError, "tof_bin_ps is for resolved runs: add resolve=True"),
    (dict(cosine_bins=0), SojournError, "cosine_bins = 0: expected a whole number from 1 to 10000"),
]


@pytest.mark.parametrize("arguments, exception, message", BAD_ARGUMENTS)
def test_bad_arguments_raise_a_clear_exception(arguments, exception, message) -> None:
    with pytest.raises(exception) as error:
        sojourn.run(EMBER, **arguments)
    assert str(error.value).startswith(message)


def test_the_run_refuses_what_the_sweep_spec_refuses_in_the_same_words() -> None:
    with pytest.raises(SojournError) as from_run:
        sojourn.run(EMBER, photons=0)
    with pytest.raises(SojournError) as from_spec:
        sojourn.sweep({"model": EMBER, "photons": 0, "parameters": [{"path": "layers[0].albedo", "values": [1]}]})
    assert str(from_spec.value) == f"<sweep spec>: {from_run.value}"


def test_an_unknown_keyword_is_a_type_error() -> None:
    with pytest.raises(TypeError, match="unexpected keyword argument 'photon'"):
        sojourn.run(EMBER, photon=10)  # type: ignore[call-arg]


def test_path_by_layer_comes_as_arrays_per_outcome() -> None:
    # The two-layer tissue phantom: a path per layer for each face, the pathlength factor
    # path / thickness, and null (NaN) for the sphere-only outcome.
    result = sojourn.run("models/tissue-phantom-two-layer.json", photons=2000, seed=2)
    paths = result.path_by_layer()
    report = result.to_dict()["path_by_layer"]
    assert list(paths["layer"]) == [row["layer"] for row in report]
    assert np.all(np.isnan(paths["escaped_mean_cm"]))
    for i, row in enumerate(report):
        reflected = row["reflected"]
        assert paths["reflected_mean_cm"][i] == reflected["mean_cm"]
        assert paths["reflected_pathlength_factor"][i] == pytest.approx(
            reflected["mean_cm"] / row["thickness_cm"], rel=1e-12
        )
