#!/usr/bin/env python3
"""Escape time against optical depth for three albedos, through sojourn's Python API.

The scenario is invented: *Tessel-9*, a batch of turbid microspheres 1 mm in radius whose
extinction is set by the concentration of a scatterer, with three grades of absorber. The
script sweeps extinction and albedo as one grid (``sojourn.sweep`` with a spec dict and a
model built in Python), keeps the rows as a table that ``pandas.DataFrame(rows)`` takes as
it is, prints it, and, when matplotlib is installed, plots the mean escape time against
optical depth with steady diffusion theory (Milne extrapolated boundary) and the naive
estimate t = tau R / c.

    python examples/python/albedo_sweep.py [--out DIR] [--photons N]

Writes DIR/albedo-sweep.csv and, with matplotlib, DIR/escape-time-vs-optical-depth.png
(DIR defaults to the current folder). Same seed, same numbers, on any machine.
"""

from __future__ import annotations

import argparse
import csv
import pathlib
from typing import Any, Dict, List

import sojourn

ALBEDOS = [1.0, 0.99, 0.9]
EXTINCTIONS_PER_MM = [1.0, 2.0, 4.0, 8.0, 16.0, 32.0]
# (column, heading, scale) of the printed table; times in picoseconds.
SHOWN = [
    ("layers[0].albedo", "albedo", 1.0),
    ("optical_depth", "tau", 1.0),
    ("escaped", "escaped", 1.0),
    ("escape_time_mean_s", "mean ps", 1e12),
    ("escape_time_stderr_s", "± ps", 1e12),
    ("diffusion_mean_time_extrapolated_s", "diffusion ps", 1e12),
    ("time_ratio", "MC/diffusion", 1.0),
]


def model() -> sojourn.Model:
    """The base model: a uniform sphere 1 mm in radius, isotropic scattering, centred
    source (extinction and albedo are set by the sweep)."""
    return sojourn.Model.from_dict(
        {
            "name": "Tessel-9 turbid microsphere (invented)",
            "geometry": "sphere",
            "length_unit": "mm",
            "layers": [{"name": "bead", "outer_radius": 1.0, "extinction_coefficient": 1.0}],
        },
        label="<Tessel-9>",
    )


def sweep(photons: int) -> List[Dict[str, Any]]:
    """One row per (albedo, extinction) point, in grid order."""
    return sojourn.sweep(
        {
            "model": model(),
            "photons": photons,
            "seed": 2024,
            "parameters": [
                {"path": "layers[0].albedo", "values": ALBEDOS},
                {"path": "layers[0].extinction_coefficient", "values": EXTINCTIONS_PER_MM},
            ],
        }
    )


def print_table(rows: List[Dict[str, Any]]) -> None:
    """A few columns of the rows (all of them are in the CSV file); "-" where a value
    does not exist (no photon escaped)."""
    print("  ".join(f"{heading:>12}" for _, heading, _ in SHOWN))
    for row in rows:
        cells = [
            "-" if row[name] is None else f"{row[name] * scale:.5g}" for name, _, scale in SHOWN
        ]
        print("  ".join(f"{cell:>12}" for cell in cells))
    try:
        import pandas  # type: ignore[import-untyped]
    except ImportError:
        return
    frame = pandas.DataFrame(rows)
    print(f"pandas.DataFrame(rows): {frame.shape[0]} rows x {frame.shape[1]} columns")


def write_csv(rows: List[Dict[str, Any]], path: pathlib.Path) -> None:
    with path.open("w", newline="") as file:
        writer = csv.DictWriter(file, fieldnames=list(rows[0]))
        writer.writeheader()
        writer.writerows(rows)


def plot(rows: List[Dict[str, Any]], path: pathlib.Path) -> bool:
    """Mean escape time against optical depth, one series per albedo; False without
    matplotlib."""
    try:
        import matplotlib

        matplotlib.use("Agg")
        import matplotlib.pyplot as plt
    except ImportError:
        return False
    figure, axes = plt.subplots(figsize=(6.4, 4.4))
    markers = {1.0: "o", 0.99: "s", 0.9: "^"}
    for albedo in ALBEDOS:
        points = [
            row
            for row in rows
            if row["layers[0].albedo"] == albedo and row["escape_time_mean_s"] is not None
        ]
        tau = [row["optical_depth"] for row in points]
        axes.errorbar(
            tau,
            [row["escape_time_mean_s"] * 1e12 for row in points],
            yerr=[row["escape_time_stderr_s"] * 1e12 for row in points],
            marker=markers[albedo],
            linestyle="none" if albedo != 1.0 else "-",
            label=f"Monte Carlo, albedo {albedo}",
        )
    conservative = [row for row in rows if row["layers[0].albedo"] == 1.0]
    tau = [row["optical_depth"] for row in conservative]
    axes.plot(
        tau,
        [row["diffusion_mean_time_extrapolated_s"] * 1e12 for row in conservative],
        "k--",
        label="diffusion, extrapolated boundary",
    )
    axes.plot(
        tau,
        [row["diffusion_naive_time_s"] * 1e12 for row in conservative],
        "k:",
        label="naive estimate t = τR/c",
    )
    axes.set_xscale("log")
    axes.set_yscale("log")
    axes.set_xlabel("optical depth τ (centre → surface)")
    axes.set_ylabel("mean escape time (ps)")
    axes.set_title("Tessel-9 microsphere (invented), 1 mm radius")
    axes.legend(fontsize="small")
    figure.tight_layout()
    figure.savefig(path, dpi=100)
    plt.close(figure)
    return True


def main() -> None:
    parser = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    parser.add_argument("--out", type=pathlib.Path, default=pathlib.Path("."))
    parser.add_argument("--photons", type=int, default=4000)
    args = parser.parse_args()
    args.out.mkdir(parents=True, exist_ok=True)
    rows = sweep(args.photons)
    print_table(rows)
    write_csv(rows, args.out / "albedo-sweep.csv")
    print(f"wrote {args.out / 'albedo-sweep.csv'}")
    figure = args.out / "escape-time-vs-optical-depth.png"
    if plot(rows, figure):
        print(f"wrote {figure}")
    else:
        print("matplotlib is not installed: no figure (pip install matplotlib)")


if __name__ == "__main__":
    main()
