"""Long runs stay under Python's control: Ctrl-C stops them, other threads keep running."""

from __future__ import annotations

import signal
import subprocess
import sys
import threading
import time

import sojourn

from conftest import REPO

# A run of a trillion photons would take days: only an interruption ends it.
ENDLESS_RUN = """
import sojourn
model = sojourn.Model.from_file("models/test-sphere-tau20.json")
print("walking", flush=True)
sojourn.run(model, photons=10**12, method="direct")
"""

ENDLESS_SWEEP = """
import sojourn
spec = {
    "model": "models/test-sphere-tau20.json",
    "photons": 10**12,
    "parameters": [{"path": "layers[0].albedo", "values": [1.0, 0.5]}],
}
print("walking", flush=True)
sojourn.sweep(spec)
"""


def interrupt(script: str) -> tuple[subprocess.CompletedProcess, float]:
    """Runs `script` in a fresh interpreter, sends SIGINT a second after it starts
    walking; returns the finished process and the seconds from the signal to its end."""
    process = subprocess.Popen(
        [sys.executable, "-c", script],
        cwd=REPO,
        stdout=subprocess.PIPE,
        stderr=subprocess.PIPE,
        text=True,
    )
    assert process.stdout is not None and process.stdout.readline() == "walking\n"
    time.sleep(1.0)
    assert process.poll() is None, "the run ended by itself"
    sent = time.monotonic()
    process.send_signal(signal.SIGINT)
    try:
        stdout, stderr = process.communicate(timeout=30)
    except subprocess.TimeoutExpired:
        process.kill()
        raise AssertionError("the run did not stop within 30 s of Ctrl-C")
    waited = time.monotonic() - sent
    return subprocess.CompletedProcess(process.args, process.returncode, stdout, stderr), waited


def test_ctrl_c_stops_a_long_run_with_keyboard_interrupt() -> None:
    done, waited = interrupt(ENDLESS_RUN)
    assert done.returncode != 0
    assert done.stderr.rstrip().endswith("KeyboardInterrupt"), done.stderr
    assert "panicked" not in done.stderr
    # Chunks aim at 0.2 s; allow for a loaded machine.
    assert waited < 3.0, f"{waited:.2f} s from Ctrl-C to exit"


def test_ctrl_c_stops_a_long_sweep_with_keyboard_interrupt() -> None:
    done, waited = interrupt(ENDLESS_SWEEP)
    assert done.returncode != 0
    assert done.stderr.rstrip().endswith("KeyboardInterrupt"), done.stderr
    assert waited < 3.0, f"{waited:.2f} s from Ctrl-C to exit"


def test_the_gil_is_released_while_photons_walk() -> None:
    """A Python thread keeps running while another thread's run walks its photons. Were
    the GIL held, the ticking loop would stall for the whole run (one tick, measured)."""
    finished = threading.Event()

    def walk() -> None:
        sojourn.run("models/test-sphere-tau20.json", photons=60_000, method="direct", threads=1)
        finished.set()

    walker = threading.Thread(target=walk)
    started = time.monotonic()
    walker.start()
    ticks = [started]
    while not finished.is_set():
        time.sleep(0.002)
        ticks.append(time.monotonic())
    walker.join()
    took = ticks[-1] - started
    longest_gap = max(b - a for a, b in zip(ticks, ticks[1:]))
    assert took > 0.3, "the run was too short to tell"
    assert len(ticks) > 10, f"{len(ticks)} ticks in {took:.2f} s"
    assert longest_gap < took / 3, f"the loop stalled for {longest_gap:.2f} s of {took:.2f} s"
