"""Kernel speed: 1,000 configurations x 8,760 hours, against the plain per-hour loop of the tests.

Targets (README): <= 0.3 s, and >= 50 times faster than the plain loop in the same run.
"""

from __future__ import annotations

import statistics
import sys
import time
from pathlib import Path

import numpy as np

sys.path.insert(0, str(Path(__file__).resolve().parents[1] / "tests"))
from test_kernel import plain_loop

from siteharvest.kernel import StoreArrays, simulate

N_CONF, N_HOURS, N_PLAIN = 1000, 8760, 10


def main() -> None:
    rng = np.random.default_rng(1)
    harvest = rng.exponential(1.0, (N_CONF, N_HOURS)) * (rng.random((N_CONF, N_HOURS)) > 0.5)
    demand = np.full(N_HOURS, 0.8)
    levels = {"max_j": 50.0, "cutoff_j": 5.0, "turn_on_j": 12.0, "cold_start_j": 2.0,
              "leak_fraction_per_h": 1e-4, "leak_sqrt_j_per_h": 0.01, "leak_const_j_per_h": 0.001,
              "charge_efficiency": 0.95}
    store = StoreArrays(**{k: np.full(N_CONF, v) for k, v in levels.items()})
    allowed = np.ones(N_HOURS, dtype=bool)
    simulate(harvest[:2], demand, StoreArrays(**{k: np.full(2, v) for k, v in levels.items()}))  # compile/load
    times = []
    for _ in range(5):
        t0 = time.perf_counter()
        simulate(harvest, demand, store, charge_allowed=allowed)
        times.append(time.perf_counter() - t0)
    kernel_s = statistics.median(times)
    t0 = time.perf_counter()
    for k in range(N_PLAIN):
        plain_loop(harvest[k], harvest[k], demand, allowed, full=50.0, cut=5.0, turn_on=12.0, cold_lvl=2.0,
                   a=1e-4, b=0.01, c=0.001, eff=0.95)
    plain_s = (time.perf_counter() - t0) / N_PLAIN * N_CONF
    print(f"kernel: {N_CONF} configurations x {N_HOURS} h: {kernel_s * 1e3:.0f} ms (median of 5; target <= 300 ms)")
    print(f"plain per-hour loop, same work (from {N_PLAIN} configurations): {plain_s:.1f} s")
    print(f"speed-up: {plain_s / kernel_s:.0f}x (target >= 50x)")


if __name__ == "__main__":
    main()
