"""One spot, one year, all its sources, after the weather is loaded (target <= 150 ms each)."""

from __future__ import annotations

import statistics
import time
from pathlib import Path

from siteharvest.assess import assess, build_context
from siteharvest.site import load_site

SAMPLES = Path(__file__).resolve().parents[1] / "sample_sites"


def main() -> None:
    for path in sorted(SAMPLES.glob("*.toml")):
        spec = load_site(path)
        t0 = time.perf_counter()
        context = build_context(spec)
        load_s = time.perf_counter() - t0
        assess(spec, context)  # first call: solar position cached on the context, kernel loaded
        times = []
        for _ in range(7):
            t0 = time.perf_counter()
            assess(spec, context)
            times.append(time.perf_counter() - t0)
        print(f"{path.name:28s} {len(spec.source)} sources: {statistics.median(times) * 1e3:6.1f} ms "
              f"(weather load {load_s * 1e3:.0f} ms)")


if __name__ == "__main__":
    main()
