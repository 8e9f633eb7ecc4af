"""The dashboard as the user sees it: the real page in headless Chromium against ``siteharvest serve`` in its
own process, timed from the user's action to the last answer the page waits for.

Measured (median of the rounds, with the slowest round):

- first load: from navigation to the results table on screen and to the first figure drawn, on a first
  visit (empty browser cache) and on later visits;
- a field change: a number typed into a field, then from Enter to the last callback answered (its results
  shown);
- add a source / remove a source: the click, to the rebuilt editor and the new results;
- What it takes: the tab clicked, to the first sizing map drawn;
- Portfolio: the tab clicked with 100 spots loaded, to every row's verdict shown.

"The last callback answered": the page's requests to ``/_dash-update-component`` are counted; the time is
taken when the last of them finishes and no new one starts for 0.4 s (the quiet time is not counted).

Run by hand: ``python benchmarks/bench_page.py [--rounds 7] [--spots 100]``. Needs ``/usr/bin/chromium`` and
playwright (the test extras). Traffic stays on loopback.
"""

from __future__ import annotations

import argparse
import json
import os
import shutil
import statistics
import subprocess
import sys
import tempfile
import time
import urllib.request
from collections.abc import Callable
from pathlib import Path

from bench_load import free_port  # the benchmark beside this one
from playwright.sync_api import Page, sync_playwright

ROOT = Path(__file__).resolve().parents[1]
SAMPLES = ROOT / "sample_sites"
CHROMIUM = "/usr/bin/chromium"
HOST = "127.0.0.1"
QUIET_S = 0.4
UPDATE = "/_dash-update-component"


def start_server(paths: list[Path]) -> tuple[subprocess.Popen, str]:
    port = free_port()
    cmd = [sys.executable, "-m", "siteharvest", "serve", *map(str, paths), "--port", str(port)]
    proc = subprocess.Popen(cmd, cwd=ROOT, stdout=subprocess.DEVNULL, stderr=subprocess.PIPE,
                            env={**os.environ, "PYTHONPATH": str(ROOT)})
    url = f"http://{HOST}:{port}/"
    deadline = time.monotonic() + 120
    while time.monotonic() < deadline:
        if proc.poll() is not None:
            raise SystemExit(f"the server stopped: {proc.stderr.read().decode()[-400:]}")
        try:
            with urllib.request.urlopen(url + "_dash-layout", timeout=5):
                return proc, url
        except OSError:
            time.sleep(0.2)
    raise SystemExit("the server did not answer within 120 s")


class Watch:
    """Counts the page's callback requests; ``settle`` waits until they are all answered and quiet."""

    def __init__(self, page: Page) -> None:
        self.page = page
        self.pending = 0
        self.last_end = 0.0
        self.count = 0
        page.on("request", self._start)
        page.on("requestfinished", self._end)
        page.on("requestfailed", self._end)

    def _start(self, request) -> None:
        if UPDATE in request.url:
            self.pending += 1
            self.count += 1

    def _end(self, request) -> None:
        if UPDATE in request.url:
            self.pending -= 1
            self.last_end = time.perf_counter()

    def timed(self, action: Callable[[], None], ready: Callable[[], None] | None = None,
              timeout_s: float = 120.0) -> tuple[float, int]:
        """Seconds from the start of ``action`` to the last callback answer after it (and ``ready``)."""
        self.count = 0
        self.last_end = 0.0
        t0 = time.perf_counter()
        action()
        if ready is not None:
            ready()
        deadline = t0 + timeout_s
        while time.perf_counter() < deadline:
            self.page.wait_for_timeout(25)
            now = time.perf_counter()
            if self.pending == 0 and now - max(self.last_end, t0) >= QUIET_S:
                break
        end = max(self.last_end, t0) if self.count else time.perf_counter() - QUIET_S
        return end - t0, self.count


def summary(name: str, values: list[float], calls: list[int]) -> dict:
    row = {"what": name, "median_s": round(statistics.median(values), 3), "max_s": round(max(values), 3),
           "rounds": len(values), "callbacks": max(calls) if calls else 0}
    print(json.dumps(row), flush=True)
    return row


def results_shown(page: Page) -> Callable[[], None]:
    return lambda: page.locator(".sh-table tbody tr").first.wait_for(state="visible", timeout=120_000)


MARKS = """
  window.__shMarks = {};
  const shMark = (k) => { if (!(k in window.__shMarks)) { window.__shMarks[k] = performance.now(); } };
  new MutationObserver(() => {
    if (document.querySelector('.sh-table tbody tr')) { shMark('table'); }
    if (document.querySelector('#sh-fig-sources .main-svg .trace')) { shMark('figure'); }
  }).observe(document, {subtree: true, childList: true});
"""


def bench_first_load(browser, url: str, rounds: int) -> list[dict]:
    """From navigation start to the results table on screen, and to the first figure drawn (times taken in
    the page, from the navigation's start). A first visit has an empty browser cache; later visits reuse it."""
    rows = []
    context = browser.new_context(viewport={"width": 1440, "height": 900})
    context.add_init_script(MARKS)
    tables, figures = [], []
    for _ in range(rounds):
        page = context.new_page()
        page.goto(url)
        page.locator("#sh-fig-sources .main-svg .trace").first.wait_for(timeout=120_000)
        marks = page.evaluate("window.__shMarks")
        tables.append(marks["table"] / 1000)
        figures.append(marks["figure"] / 1000)
        page.close()
    context.close()
    rows.append(summary("first load, first visit: to the results table", tables[:1], [0]))
    rows.append(summary("first load, first visit: to the first figure drawn", figures[:1], [0]))
    rows.append(summary("first load, later visits: to the results table", tables[1:], [0]))
    rows.append(summary("first load, later visits: to the first figure drawn", figures[1:], [0]))
    return rows


def numeric_field(page: Page):
    """The first source's first numeric field (a size), as a user would pick one to try."""
    name = page.evaluate("""() => [...document.querySelectorAll("#sh-editor input[name^='source.0.']")]
        .find(e => e.offsetParent && e.value.trim() !== '' && Number(e.value) > 0)?.name""")
    return page.locator(f"#sh-editor input[name='{name}']")


def bench_field_change(page: Page, watch: Watch, rounds: int) -> dict:
    field = numeric_field(page)
    field.wait_for(state="visible")
    base = float(field.input_value())
    times, calls = [], []
    for r in range(rounds):
        value = f"{base * (1.0 + 0.01 * (r + 1)):.6g}"  # never seen before: the assessment cache misses

        field.fill(value)  # typed first: the timing starts at Enter, which applies it
        t, n = watch.timed(lambda: field.press("Enter"))
        times.append(t)
        calls.append(n)
    field.fill(f"{base:g}")
    field.press("Enter")
    watch.timed(lambda: None)
    return summary("a field change to its results", times, calls)


def source_count(page: Page) -> int:
    return page.evaluate("""() => [...document.querySelectorAll('#sh-editor .sh-block[data-path]')]
        .filter(e => /^source[.][0-9]+$/.test(e.dataset.path)).length""")


def bench_add_remove(page: Page, watch: Watch, rounds: int) -> list[dict]:
    add = page.locator("#sh-editor .sh-add-row button >> visible=true").first
    adds, removes, add_calls, remove_calls = [], [], [], []
    for _ in range(rounds):
        before = source_count(page)
        t, n = watch.timed(add.click)
        adds.append(t)
        add_calls.append(n)
        assert source_count(page) == before + 1, "the added source is not in the editor"
        remove = page.locator(f"#sh-editor .sh-block[data-path='source.{before}'] button", has_text="remove")
        t, n = watch.timed(remove.first.click)
        removes.append(t)
        remove_calls.append(n)
    return [summary("add a source", adds, add_calls), summary("remove a source", removes, remove_calls)]


def bench_tab(page: Page, watch: Watch, label: str, ready_selector: str, rounds: int, name: str) -> dict:
    times, calls = [], []
    for _ in range(rounds):
        page.locator(".sh-tab", has_text="Sources side by side").click()
        watch.timed(lambda: None)
        t, n = watch.timed(lambda: page.locator(".sh-tab", has_text=label).click(),
                           lambda: page.locator(ready_selector).first.wait_for(state="visible", timeout=120_000))
        times.append(t)
        calls.append(n)
    return summary(name, times, calls)


def many_spots(folder: Path, n: int) -> None:
    """``n`` site files: the samples renamed and each given its own node current (every one assessed anew)."""
    samples = sorted(SAMPLES.glob("*.toml"))
    shutil.copytree(SAMPLES / "surveys", folder / "surveys", dirs_exist_ok=True)
    for i in range(n):
        src = samples[i % len(samples)]
        text = src.read_text(encoding="utf-8")
        name_line = next(line for line in text.splitlines() if line.startswith("name = "))
        text = text.replace(name_line, f'name = "Spot {i + 1:03d}"', 1)
        (folder / f"spot-{i + 1:03d}-{src.name}").write_text(text, encoding="utf-8")


def main() -> int:
    parser = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    parser.add_argument("--rounds", type=int, default=7)
    parser.add_argument("--spots", type=int, default=100, help="spots for the Portfolio timing (default 100)")
    args = parser.parse_args()
    rows: list[dict] = []
    with sync_playwright() as pw:
        browser = pw.chromium.launch(executable_path=CHROMIUM, args=["--headless", "--no-sandbox", "--disable-gpu"])
        proc, url = start_server([])
        try:
            rows += bench_first_load(browser, url, args.rounds)
            page = browser.new_page(viewport={"width": 1440, "height": 900})
            watch = Watch(page)
            watch.timed(lambda: page.goto(url), results_shown(page))
            rows.append(bench_field_change(page, watch, args.rounds))
            rows += bench_add_remove(page, watch, max(3, args.rounds // 2))
            rows.append(bench_tab(page, watch, "What it takes", "#sh-fig-sizing .main-svg", max(3, args.rounds // 2),
                                  "What it takes: to the first map"))
            page.close()
        finally:
            proc.terminate()
            proc.wait(timeout=30)
        with tempfile.TemporaryDirectory() as tmp:
            many_spots(Path(tmp), args.spots)
            proc, url = start_server([Path(tmp)])
            try:
                page = browser.new_page(viewport={"width": 1440, "height": 900})
                watch = Watch(page)
                page.add_init_script(MARKS)
                page.goto(url)
                page.locator(".sh-table tbody tr").first.wait_for(timeout=120_000)
                rows.append(summary(f"first load with {args.spots} spots: to the results table",
                                    [page.evaluate("window.__shMarks.table") / 1000], [0]))
                watch.timed(lambda: None)
                ready = "#sh-portfolio-table .ag-row[row-index='0'] .ag-cell[col-id='verdict']"
                rows.append(bench_tab(page, watch, "Portfolio", ready, max(3, args.rounds // 2),
                                      f"Portfolio with {args.spots} spots: to the rows shown"))
                page.close()
            finally:
                proc.terminate()
                proc.wait(timeout=30)
        browser.close()
    print(json.dumps({"machine_cores": os.cpu_count(), "rows": rows}))
    return 0


if __name__ == "__main__":
    raise SystemExit(main())
