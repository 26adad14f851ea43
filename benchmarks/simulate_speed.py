"""One nominal simulation of the 4f example against the FFT floor, and its peak memory.

Run by hand: ``python3 benchmarks/simulate_speed.py [--grid 1024] [--repeat 5]``. Prints the
time of one simulation (targets cached, as in a study) beside the same number of plain
scipy.fft 2-D transforms of the same size and precision, measured in the same run, and the
peak memory traced by tracemalloc in units of one field-sized array. Targets: at most 3x the
FFT floor, at most 16 field-sized arrays. Nothing here is asserted: it prints ratios.
"""

from __future__ import annotations

import argparse
import dataclasses
import time
import tracemalloc
from pathlib import Path

import numpy as np
import scipy.fft

from benchcheck.api import load_layout
from benchcheck.evaluate.factory import make_evaluator

LAYOUT = Path(__file__).resolve().parents[1] / "layouts" / "relay_4f_vortex.toml"


def best_of(function, repeat: int) -> float:
    times = []
    for _ in range(repeat):
        start = time.perf_counter()
        function()
        times.append(time.perf_counter() - start)
    return min(times)


def main() -> None:
    parser = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    parser.add_argument("--grid", type=int, default=1024)
    parser.add_argument("--repeat", type=int, default=5)
    args = parser.parse_args()
    layout = load_layout(LAYOUT)
    layout = dataclasses.replace(layout, simulation=dataclasses.replace(layout.simulation, grid=args.grid))
    evaluator = make_evaluator(layout)
    realization = evaluator.realization()
    trace = evaluator.nominal
    simulator = evaluator.simulate
    simulator.simulate(realization, trace)  # first run builds and caches the targets

    def one_simulation():
        simulator._upstream.clear()  # every plane computed again (a study keeps the unchanged ones)
        simulator.simulate(realization, trace)

    result = simulator.simulate(realization, trace)
    stages = sum(1 for plane in result.planes.values() if plane.method != "start")
    # Each Fourier stage is one 2-D transform; the modulator's flat dead space needs one more
    # (the unmodulated light's spectrum), so that is what the simulation must do at least.
    flat_dead_space = any(element.type == "modulator" and element.value("dead_space", "flat") == "flat"
                          for element in layout.elements)
    transforms = stages + int(flat_dead_space)
    field = np.ones((args.grid, args.grid), np.complex64)

    def fft_floor():
        for _ in range(transforms):
            scipy.fft.fft2(field, workers=-1, overwrite_x=False)

    def first_simulation():
        # The hologram built anew (its cache emptied), as the first simulation of a run does.
        for hologram in simulator._holograms.values():
            hologram.clear()
        simulator._upstream.clear()
        simulator.simulate(realization, trace, with_targets=False)

    simulation_time = best_of(one_simulation, args.repeat)
    floor_time = best_of(fft_floor, args.repeat)
    uncached_time = best_of(first_simulation, args.repeat)
    tracemalloc.start()
    one_simulation()
    _, peak = tracemalloc.get_traced_memory()
    tracemalloc.stop()
    field_bytes = field.nbytes
    print(f"grid {args.grid} x {args.grid}, complex64, {stages} Fourier stages, {transforms} 2-D transforms")
    print(f"one simulation, hologram cached (a study trial): {simulation_time * 1e3:.1f} ms")
    print(f"one simulation from scratch (hologram computed, no targets): {uncached_time * 1e3:.1f} ms")
    print(f"{transforms} scipy.fft.fft2 of the same size: {floor_time * 1e3:.1f} ms")
    print(f"ratio to the FFT floor, cached: {simulation_time / floor_time:.2f} (target <= 3)")
    print(f"ratio to the FFT floor, from scratch: {uncached_time / floor_time:.2f}")
    print(f"peak traced memory: {peak / 2**20:.1f} MiB = {peak / field_bytes:.1f} field-sized arrays (target <= 16)")


if __name__ == "__main__":
    main()
