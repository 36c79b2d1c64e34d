"""sojourn: how long radiation takes to random-walk out of a scattering medium.

The Python face of the sojourn library: the same Rust core as the ``sojourn`` command
line, called in-process. A model is validated once (:class:`Model`), photons run with the
GIL released (Ctrl-C stops a run within a fraction of a second), and results come back as
dicts (the command line's JSON report, key for key and bit for bit) and NumPy arrays.

>>> import sojourn
>>> model = sojourn.Model.from_file("models/ember-two-zone.json")
>>> result = sojourn.run(model, photons=1000, seed=1)
>>> result.to_dict()["escape_time"]["mean_s"]          # doctest: +SKIP
>>> edges, counts = result.escape_times()               # NumPy arrays

Same model, seed and photon count give the same numbers as
``sojourn run MODEL --photons N --seed S --json -``, whatever the number of threads.

Caution: results are for research, teaching and optical design, not a basis for
light-exposure or laser-safety decisions or clinical dosimetry, which follow their own
standards.
"""

from __future__ import annotations

import json
import os
from typing import Any, Dict, List, Mapping, NamedTuple, Optional, Union

import numpy as np

from . import _sojourn
from ._sojourn import Model, SojournError

__version__: str = _sojourn.__version__

__all__ = [
    "Histogram",
    "Model",
    "ProfileResult",
    "RunResult",
    "SojournError",
    "profile",
    "run",
    "sweep",
]

ModelLike = Union[Model, Mapping[str, Any], str, "os.PathLike[str]"]
"""A :class:`Model`, a model dict, or the path of a model file."""


class Histogram(NamedTuple):
    """A histogram on fixed bins: ``edges`` has one more entry than ``counts``."""

    edges: np.ndarray
    """Bin edges (seconds for escape times), increasing, ``len(counts) + 1`` of them."""
    counts: np.ndarray
    """Photons per bin (unsigned integers)."""


def _model(model: ModelLike) -> Model:
    """A :class:`Model` from a model, a model dict or a model file path."""
    if isinstance(model, Model):
        return model
    if isinstance(model, Mapping):
        return Model.from_dict(dict(model))
    if isinstance(model, (str, os.PathLike)):
        return Model.from_file(model)
    raise TypeError(
        f"expected a sojourn.Model, a model dict or a model file path, not {type(model).__name__}"
    )


def _arrays(section: Mapping[str, Any], names: List[str]) -> Dict[str, np.ndarray]:
    """The lists ``names`` of a report section as float arrays (null entries as NaN)."""
    return {
        name: np.array([np.nan if v is None else v for v in section[name]], dtype=np.float64)
        for name in names
    }


class RunResult:
    """The result of :func:`run`: the JSON report of the command line, with arrays.

    ``to_dict()`` is the report (keys as in the README's *JSON report* table),
    ``escape_times()`` the escape-time histogram, and for slabs run with ``resolve=True``
    ``time_resolved()``, ``limb_darkening()`` and ``absorption_by_depth()`` give the
    resolved Monte Carlo curves beside diffusion theory as arrays.
    """

    def __init__(self, output: _sojourn.RunOutput) -> None:
        self._output = output
        self._report: Dict[str, Any] = json.loads(output.json)

    def to_dict(self) -> Dict[str, Any]:
        """The report as a dict: the content of ``sojourn run --json`` for the same run
        (only ``elapsed_s``, the wall-clock time, differs). A fresh copy each call."""
        report: Dict[str, Any] = json.loads(self._output.json)
        return report

    def to_json(self) -> str:
        """The report as JSON text, formatted as ``sojourn run --json`` writes it."""
        return self._output.json

    @property
    def photons(self) -> int:
        """Photons launched."""
        return int(self._report["photons"])

    @property
    def seed(self) -> int:
        """Seed of the random streams."""
        return int(self._report["seed"])

    def escape_times(self, which: str = "all") -> Histogram:
        """The escape-time histogram of the run, seconds: bins 1024 per octave (each at most 0.098 % wide)
        (the tally's own bins, from which the report's quantiles come), trimmed to the
        occupied range. ``which`` is ``"all"`` (every photon that left the medium, the
        report's ``escape_time``), ``"escaped"`` (spheres), ``"reflected"`` or
        ``"transmitted"`` (slabs). Empty arrays when no photon left that way."""
        edges, counts = self._output.histogram(which)
        return Histogram(np.array(edges, dtype=np.float64), np.array(counts, dtype=np.uint64))

    def _resolved(self) -> Mapping[str, Any]:
        resolved: Optional[Mapping[str, Any]] = self._report.get("resolved")
        if resolved is None:
            raise SojournError(
                "this run kept no resolved tallies: run a slab with resolve=True"
            )
        return resolved

    def time_resolved(self) -> Dict[str, np.ndarray]:
        """Time-resolved reflectance and transmittance (``resolve=True`` runs of slabs):
        ``time_s`` (bin centres), the Monte Carlo ``reflectance_per_s`` and
        ``transmittance_per_s`` (fraction of launched photons per second) and diffusion
        theory on the same bins: ``diffusion_reflectance_per_s``,
        ``diffusion_transmittance_per_s`` (extrapolated boundary) and
        ``diffusion_reflectance_zero_boundary_per_s``. Raises :class:`SojournError` for a
        run without resolved tallies."""
        return _arrays(
            self._resolved(),
            [
                "time_s",
                "reflectance_per_s",
                "transmittance_per_s",
                "diffusion_reflectance_per_s",
                "diffusion_transmittance_per_s",
                "diffusion_reflectance_zero_boundary_per_s",
            ],
        )

    def limb_darkening(self) -> Dict[str, np.ndarray]:
        """Angular distribution of reflected light (``resolve=True`` runs of slabs):
        bin-centre cosines ``mu``, the Monte Carlo radiance ``monte_carlo`` on the scale of
        ``exact_h_ratio`` = H(mu)/H(1) (deep conservative isotropic medium, Chandrasekhar
        1950) and Eddington's ``eddington`` = 0.4 + 0.6 mu."""
        return _arrays(
            self._resolved()["limb_darkening"],
            ["mu", "monte_carlo", "exact_h_ratio", "eddington"],
        )

    def absorption_by_depth(self) -> Dict[str, np.ndarray]:
        """Absorbed fraction of launched photons per cm of depth (``resolve=True`` runs of
        slabs): ``depth_cm`` (bin centres) and ``absorbed_per_cm``."""
        resolved = self._resolved()
        absorbed = _arrays(resolved, ["absorbed_per_cm"])["absorbed_per_cm"]
        width = float(resolved["depth_bin_cm"])
        return {
            "depth_cm": (np.arange(len(absorbed), dtype=np.float64) + 0.5) * width,
            "absorbed_per_cm": absorbed,
        }

    def path_by_layer(self) -> Dict[str, np.ndarray]:
        """Mean path length in each declared layer per outcome (the report's
        ``path_by_layer``), as arrays over the layers: ``layer``, ``thickness_cm``, and for
        each outcome ``escaped``, ``reflected``, ``transmitted``, ``absorbed`` the arrays
        ``{outcome}_mean_cm``, ``{outcome}_stderr_cm`` and ``{outcome}_pathlength_factor``
        (NaN where the outcome does not apply or no photon ended that way)."""
        rows = self._report["path_by_layer"]
        out: Dict[str, np.ndarray] = {
            "layer": np.array([row["layer"] for row in rows], dtype=np.int64),
            "thickness_cm": np.array([row["thickness_cm"] for row in rows], dtype=np.float64),
        }
        for outcome in ("escaped", "reflected", "transmitted", "absorbed"):
            for key in ("mean_cm", "stderr_cm", "pathlength_factor"):
                values = [
                    np.nan if row[outcome] is None or row[outcome][key] is None else row[outcome][key]
                    for row in rows
                ]
                out[f"{outcome}_{key}"] = np.array(values, dtype=np.float64)
        return out

    def __repr__(self) -> str:
        report = self._report
        mean = report["escape_time"]["mean_s"]
        return (
            f"<sojourn.RunResult {report['model']['name']!r}: {report['photons']} photons, "
            f"seed {report['seed']}, mean escape time {mean} s>"
        )


def run(
    model: ModelLike,
    *,
    photons: int = 10_000,
    seed: int = 1,
    threads: Optional[int] = None,
    method: str = "auto",
    absorption: str = "analog",
    max_steps: Optional[int] = None,
    resolve: bool = False,
    tof_bin_ps: Optional[float] = None,
    tof_bins: int = 200,
    cosine_bins: int = 20,
) -> RunResult:
    """Runs ``photons`` photons through ``model`` and compares them with diffusion theory,
    as ``sojourn run MODEL --json`` does.

    ``model`` is a :class:`Model`, a model dict or a model file path. ``seed`` fixes the
    result bit for bit; ``threads`` (default: one per core) does not change it.
    ``method`` is ``"direct"`` (every scattering), ``"accelerated"`` (diffusion jumps deep
    inside nearly uniform regions) or ``"auto"`` (the accelerated walker; identical to
    direct where no jump applies). ``absorption`` is ``"analog"`` (an absorbed photon ends)
    or ``"weighted"`` (implicit capture: each interaction scatters and multiplies the
    photon's weight by the albedo, with Russian roulette below weight 1e-3). ``max_steps`` caps the free flights per photon
    (censored beyond). ``resolve=True`` (slabs) keeps time-of-flight, depth, angle and
    radial tallies, on ``tof_bins`` time bins of ``tof_bin_ps`` picoseconds (default: 200
    bins over the longer of 4 diffusion mean times and 8 decay times) and ``cosine_bins``
    exit-cosine bins.

    The GIL is released while photons walk; Ctrl-C raises ``KeyboardInterrupt`` within
    about 0.2 s. Raises :class:`SojournError` for arguments the command line would
    refuse, with its message style (``photons = -5: expected a whole number >= 1``), and
    ``TypeError`` for arguments of the wrong type.
    """
    output = _sojourn.run(
        _model(model),
        photons=photons,
        seed=seed,
        threads=threads,
        method=method,
        absorption=absorption,
        max_steps=max_steps,
        resolve=resolve,
        tof_bin_ps=tof_bin_ps,
        tof_bins=tof_bins,
        cosine_bins=cosine_bins,
    )
    return RunResult(output)


class ProfileResult:
    """The profile report of a sphere (:func:`profile`): optical structure and where the
    diffusion time accrues, no Monte Carlo."""

    def __init__(self, text: str) -> None:
        self._text = text
        self._report: Dict[str, Any] = json.loads(text)

    def to_dict(self) -> Dict[str, Any]:
        """The report as a dict: the content of ``sojourn profile MODEL --json``."""
        report: Dict[str, Any] = json.loads(self._text)
        return report

    def to_json(self) -> str:
        """The report as JSON text, as ``sojourn profile --json`` writes it."""
        return self._text

    def shells(self) -> List[Dict[str, Any]]:
        """One dict per shell, innermost first (``pandas.DataFrame(result.shells())``):
        radii in cm, density, temperature, opacity, extinction, mean free path, optical
        depths, each shell's part of the diffusion time and its share."""
        return [dict(row) for row in self._report["shells"]]

    def shell_arrays(self) -> Dict[str, np.ndarray]:
        """The numeric shell columns as float arrays (null entries as NaN)."""
        rows = self._report["shells"]
        if not rows:
            return {}
        names = [name for name, value in rows[0].items() if not isinstance(value, str)]
        return _arrays({name: [row[name] for row in rows] for name in names}, names)

    def __repr__(self) -> str:
        report = self._report
        return (
            f"<sojourn.ProfileResult {report['model']['name']!r}: {len(report['shells'])} "
            f"shells, optical depth {report['optical_depth']}>"
        )


def profile(model: ModelLike) -> ProfileResult:
    """The optical structure and diffusion-time budget of a sphere, as
    ``sojourn profile MODEL --json`` computes it (no Monte Carlo). Raises
    :class:`SojournError` for a slab, with the command line's message."""
    return ProfileResult(_sojourn.profile(_model(model)))


def sweep(
    spec: Union[Mapping[str, Any], str, "os.PathLike[str]"],
    *,
    base_dir: Union[str, "os.PathLike[str]", None] = None,
    label: Optional[str] = None,
    threads: Optional[int] = None,
) -> List[Dict[str, Any]]:
    """Runs a parameter study and returns its table: one dict per point, with the columns
    of ``sweep.csv`` in order (``pandas.DataFrame(rows)`` takes it as it is).

    ``spec`` is a sweep spec file path or a dict in the same format (``model``,
    ``photons``, ``seed``, ``max_steps``, ``method``, ``parameters``, ``combine``; see the
    README's *Sweep specification*). In a dict, ``"model"`` may be a model file path
    (relative to ``base_dir``, default the current folder), a :class:`Model` or a model
    dict. ``label`` names a dict spec in errors. Point i runs with random stream i, so the
    rows equal the lines of the ``sweep.jsonl`` that ``sojourn sweep`` writes for the same
    spec. Raises :class:`SojournError` for a spec the command line would refuse, with its
    message; Ctrl-C raises ``KeyboardInterrupt``.
    """
    if isinstance(spec, Mapping):
        spec = dict(spec)
        entry = spec.get("model")
        if isinstance(entry, Mapping) and not isinstance(entry, dict):
            spec["model"] = dict(entry)
    elif not isinstance(spec, (str, os.PathLike)):
        raise TypeError(
            f"expected a sweep spec dict or a spec file path, not {type(spec).__name__}"
        )
    text = _sojourn.sweep(
        spec,
        base_dir=None if base_dir is None else os.fspath(base_dir),
        label=label,
        threads=threads,
    )
    return [json.loads(line) for line in text.splitlines() if line]
