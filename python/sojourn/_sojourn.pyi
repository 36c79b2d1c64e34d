"""Type stubs of the extension module ``sojourn._sojourn`` (compiled from python/src/).

Use the package ``sojourn``, which wraps these in classes with NumPy arrays.
"""

import os
from typing import Any, Dict, Mapping, Optional, Tuple, Union, final

__all__ = ["Model", "RunOutput", "SojournError", "__version__", "profile", "run", "sweep"]
__version__: str

class SojournError(ValueError):
    """Input that sojourn refuses, with the command line's message (file or label, JSON
    path of the field, the value and what was expected)."""

@final
class Model:
    """A validated model (model-file format version 1)."""

    @staticmethod
    def from_file(
        path: Union[str, "os.PathLike[str]"], *, profile_tolerance: Optional[float] = None
    ) -> "Model":
        """Reads and validates a model file, as ``sojourn run FILE`` does."""
    @staticmethod
    def from_dict(
        model: Mapping[str, Any],
        *,
        label: Optional[str] = None,
        profile_tolerance: Optional[float] = None,
    ) -> "Model":
        """Validates a model given as a dict in the model-file format; ``label`` (default
        ``"<dict>"``) stands for the file name in errors and reports."""
    def to_dict(self) -> Dict[str, Any]:
        """The model as a dict in the model-file format."""
    @property
    def name(self) -> str:
        """The model's name (empty if it has none)."""
    @property
    def geometry(self) -> str:
        """``"sphere"`` or ``"slab"``."""
    @property
    def label(self) -> str:
        """The file the model was read from as given, or the label of a dict model."""
    @property
    def layers(self) -> int:
        """Number of layers the walkers see (a tabulated profile counts its sub-shells)."""

@final
class RunOutput:
    """What a run gives back: the JSON report and the escape-time histograms."""

    @property
    def json(self) -> str:
        """The JSON report, as ``sojourn run --json`` writes it."""
    def histogram(self, which: str) -> Tuple[list[float], list[int]]:
        """``(edges_s, counts)`` of the occupied bins of an escape-time histogram:
        ``which`` is ``"all"``, ``"escaped"``, ``"reflected"`` or ``"transmitted"``."""

def run(
    model: Model,
    *,
    photons: Optional[int] = None,
    seed: Optional[int] = None,
    threads: Optional[int] = None,
    method: str = "auto",
    absorption: str = "analog",
    max_steps: Optional[int] = None,
    resolve: bool = False,
    tof_bin_ps: Optional[float] = None,
    tof_bins: Optional[int] = None,
    cosine_bins: Optional[int] = None,
) -> RunOutput:
    """Runs photons through ``model`` as ``sojourn run MODEL --json`` does; ``None``
    stands for the defaults of ``sojourn.run`` (10000 photons, seed 1, the default step
    cap, 200 time bins, 20 cosine bins)."""

def profile(model: Model) -> str:
    """The profile report of a sphere as JSON text (``sojourn profile --json``)."""

def sweep(
    spec: Union[Mapping[str, Any], str, "os.PathLike[str]"],
    *,
    base_dir: Optional[str] = None,
    label: Optional[str] = None,
    threads: Optional[int] = None,
) -> str:
    """Runs a sweep; its table as JSON Lines (the text of ``sweep.jsonl``)."""
