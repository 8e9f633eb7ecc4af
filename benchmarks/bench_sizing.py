"""Sizing and weather-risk speed on a sample spot, against looping the single-run path.

Targets (README): a 40 x 40 sizing map for one source <= 1 s; 500 weather years for one
configuration <= 5 s; 1,000 weather years of a three-source spot within 300 MB; >= 30 times faster
than calling the kernel once per configuration.
"""

from __future__ import annotations

import statistics
import time
import tracemalloc
from pathlib import Path

import numpy as np

from siteharvest.assess import assess, prepare
from siteharvest.kernel import StoreArrays, simulate
from siteharvest.site import load_site
from siteharvest.sizing import _harvest_at_sizes, harvester_sizes, resized_store, sizing_map, store_sizes, weather_risk
from siteharvest.store import store_levels
from siteharvest.timegrid import SECONDS_PER_HOUR

SPOT = Path(__file__).resolve().parents[1] / "sample_sites" / "corridor-window.toml"
BUSY_SPOT = SPOT.with_name("plant-room.toml")


def timed(fn, repeat: int = 3) -> float:
    fn()
    times = []
    for _ in range(repeat):
        t0 = time.perf_counter()
        fn()
        times.append(time.perf_counter() - t0)
    return statistics.median(times)


def main() -> None:
    prep = prepare(load_site(SPOT))
    sid = prep.spec.source[0].id
    map_s = timed(lambda: sizing_map(prep, sid, n_harvester=40, n_store=40))
    print(f"sizing map 40 x 40 ({sid}): {map_s * 1e3:.0f} ms (target <= 1000 ms)")
    risk_s = timed(lambda: weather_risk(prep, years=500), repeat=1)
    print(f"weather risk, 500 years, {len(prep.harvests)} sources + together: {risk_s:.2f} s (target <= 5 s)")
    busy = prepare(load_site(BUSY_SPOT))
    weather_risk(busy, years=10)
    tracemalloc.start()
    weather_risk(busy, years=1000)
    peak_mb = tracemalloc.get_traced_memory()[1] / 1e6
    tracemalloc.stop()
    print(f"weather risk, 1,000 years, {len(busy.harvests)} sources + together: peak {peak_mb:.0f} MB allocated "
          "(target <= 300 MB)")

    # the same steady-state map, one kernel call per configuration (the single-run path in a loop)
    spec = prep.spec.source[0]
    h_sizes, h_name, _, _ = harvester_sizes(spec, 40)
    s_sizes, s_name, _, _ = store_sizes(prep.spec.store, 40)
    harvest = _harvest_at_sizes(prep, 0, h_sizes, h_name)
    demand, allowed = prep.demand_j, prep.charge_allowed
    levels = [store_levels(resized_store(prep.spec.store, s_name, v), cold_start_until_v=harvest.cold_start_until_v,
                           quiescent_w=harvest.quiescent_w) for v in s_sizes]
    sample = [(i, j) for i in range(0, len(h_sizes), 8) for j in range(0, len(s_sizes), 8)]

    def one_by_one() -> None:
        for i, j in sample:
            simulate(harvest.running_w[i][None, :] * SECONDS_PER_HOUR, demand, StoreArrays.stack([levels[j]]),
                     cold_harvest_j=harvest.cold_w[i][None, :] * SECONDS_PER_HOUR, charge_allowed=allowed,
                     steady_year=True)

    loop_s = timed(one_by_one, repeat=1) / len(sample) * len(h_sizes) * len(s_sizes)
    rows = np.repeat(np.arange(len(h_sizes)), len(s_sizes))
    store_arr = StoreArrays.stack([levels[j] for _ in h_sizes for j in range(len(s_sizes))])
    vector_s = timed(lambda: simulate(harvest.running_w * SECONDS_PER_HOUR, demand, store_arr,
                                      cold_harvest_j=harvest.cold_w * SECONDS_PER_HOUR, charge_allowed=allowed,
                                      harvest_rows=rows, steady_year=True))
    print(f"steady-state map in one kernel call: {vector_s * 1e3:.0f} ms; one kernel call per configuration: "
          f"{loop_s:.1f} s (extrapolated from {len(sample)}), {loop_s / vector_s:.1f}x")

    # the single-run path: a whole assess() per configuration (weather loaded once)
    context = (prep.context, prep.weather_meta)

    def assess_each() -> None:
        for i, j in sample[:12]:
            src = spec.model_copy(update={h_name: type(getattr(spec, h_name))(h_sizes[i])})
            site = prep.spec.model_copy(update={"source": [src],
                                                "store": resized_store(prep.spec.store, s_name, s_sizes[j])})
            assess(site, context)

    single_s = timed(assess_each, repeat=1) / 12 * len(h_sizes) * len(s_sizes)
    print(f"assess() per configuration: {single_s:.1f} s for the map (extrapolated from 12); "
          f"sizing_map is {single_s / map_s:.0f}x faster (target >= 30x)")


if __name__ == "__main__":
    main()
