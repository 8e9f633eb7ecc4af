"""Static rendering: plotly figures to inline SVG through kaleido (one browser for many figures), and
HTML to PDF through headless Chromium, so that the HTML and the PDF share one layout.

Neither step touches the network: kaleido runs without MathJax and with the plotly.js that ships with
plotly; Chromium prints a local file with its background networking, component updates and sync off.
"""

from __future__ import annotations

import itertools
import os
import re
import shutil
import subprocess
import tempfile
import warnings
from concurrent.futures import Future, ThreadPoolExecutor
from pathlib import Path
from types import TracebackType

import plotly.graph_objects as go

CHROMIUM_CANDIDATES = ("/usr/bin/chromium", "chromium", "chromium-browser")
CHROMIUM_FLAGS = ("--headless", "--no-sandbox", "--disable-gpu", "--no-first-run", "--disable-background-networking",
                  "--disable-component-update", "--disable-sync", "--disable-dev-shm-usage", "--disable-extensions",
                  "--no-pdf-header-footer", "--disable-quic")
PDF_TIMEOUT_S = 180.0


class ReportError(RuntimeError):
    """The report could not be rendered (a missing browser, a failed print): one line for the user."""


def chromium_path() -> Path:
    """The Chromium executable: ``$SITEHARVEST_CHROMIUM``, else /usr/bin/chromium or one on the PATH."""
    override = os.environ.get("SITEHARVEST_CHROMIUM")
    candidates = (override,) if override else CHROMIUM_CANDIDATES
    for name in candidates:
        found = shutil.which(name) if name else None
        if found:
            return Path(found)
    raise ReportError("Chromium is needed to render the report but was not found "
                      f"(looked for {', '.join(c for c in candidates if c)}; set SITEHARVEST_CHROMIUM to its path)")


_ID = re.compile(r'\bid="([^"]+)"')


def _unique_ids(svg: str, prefix: str) -> str:
    """Prefix every id and every reference to it (``url(#x)``, ``url('#x')``, ``href="#x"``) so that
    several inline SVGs can share one page."""
    ids = set(_ID.findall(svg))
    if not ids:
        return svg

    def swap(match: re.Match[str]) -> str:
        lead, name = match.group(1), match.group(2)
        return f"{lead}{prefix}{name}" if name in ids else match.group(0)

    return re.sub(r'(\bid="|#)([A-Za-z_][\w\-.:]*)', swap, svg)


def inline_svg(svg: str, prefix: str, label: str) -> str:
    """Kaleido's SVG made to scale with its container, with unique ids and an accessible name."""
    svg = re.sub(r"^<\?xml[^>]*>\s*", "", svg.strip())
    svg = _unique_ids(svg, prefix)
    label = label.replace("&", "&amp;").replace('"', "&quot;").replace("<", "&lt;")
    return re.sub(r'^<svg([^>]*?) width="[\d.]+" height="[\d.]+"',
                  rf'<svg\1 role="img" aria-label="{label}" preserveAspectRatio="xMidYMid meet"', svg, count=1)


class FigureRenderer:
    """Render many figures with one kaleido browser: ``with FigureRenderer() as r: ...``.

    Entering launches the browser in the background, so that work done before the first figure overlaps
    the launch. ``svg(fig)`` renders at once; ``defer(fig)`` returns a placeholder and queues the figure,
    ``flush()`` hands the queue to a background thread that renders it in a batch over ``tabs`` browser
    tabs (while the caller computes the next spot), and ``resolve(html)`` swaps the placeholders for the
    SVGs. A kaleido server that was already running is used and left running.
    """

    def __init__(self, width_px: int = 760, tabs: int = 2) -> None:
        self.width_px = width_px
        self.tabs = tabs
        self._started = False
        self._count = itertools.count(1)
        self._pending: list[tuple[str, go.Figure, str, int]] = []
        self._batches: list[Future[dict[str, str]]] = []
        self._pool: ThreadPoolExecutor | None = None
        self._tmp: tempfile.TemporaryDirectory[str] | None = None

    def __enter__(self) -> FigureRenderer:
        import kaleido

        path = chromium_path()
        server = getattr(kaleido, "_global_server", None)
        if server is None or not server.is_running():
            with warnings.catch_warnings():
                warnings.simplefilter("ignore")
                kaleido.start_sync_server(mathjax=False, n=self.tabs, path=str(path), silence_warnings=True)
            self._started = True
        self._pool = ThreadPoolExecutor(max_workers=1, thread_name_prefix="siteharvest-figures")
        self._tmp = tempfile.TemporaryDirectory(prefix="siteharvest-figures-")
        return self

    def __exit__(self, exc_type: type[BaseException] | None, exc: BaseException | None,
                 tb: TracebackType | None) -> None:
        if self._pool is not None:
            self._pool.shutdown(wait=True, cancel_futures=True)
            self._pool = None
        if self._tmp is not None:
            self._tmp.cleanup()
            self._tmp = None
        if self._started:
            import kaleido

            kaleido.stop_sync_server(silence_warnings=True)
            self._started = False

    def _opts(self, fig: go.Figure, height_px: int | None) -> dict[str, object]:
        return {"format": "svg", "width": self.width_px, "height": int(height_px or fig.layout.height or 420)}

    def svg(self, fig: go.Figure, label: str = "", height_px: int | None = None) -> str:
        """The figure as an inline SVG element (text stays text), rendered now."""
        import kaleido

        try:
            with warnings.catch_warnings():
                warnings.simplefilter("ignore")
                data = kaleido.calc_fig_sync(fig, opts=self._opts(fig, height_px))
        except Exception as exc:  # kaleido reports browser trouble with many exception types
            raise _render_error(exc) from exc
        text = data.decode("utf-8") if isinstance(data, bytes) else str(data)
        return inline_svg(text, f"f{next(self._count)}-", label or (fig.layout.title.text or "figure"))

    def defer(self, fig: go.Figure, label: str = "", height_px: int | None = None) -> str:
        """A placeholder for the figure, rendered later in a batch (see :meth:`flush`, :meth:`resolve`)."""
        token = f"<!--siteharvest-figure-{next(self._count)}-->"
        self._pending.append((token, fig, label or (fig.layout.title.text or "figure"),
                              int(height_px or fig.layout.height or 420)))
        return token

    def flush(self) -> None:
        """Start rendering the queued figures in the background."""
        if not self._pending:
            return
        if self._pool is None or self._tmp is None:
            raise RuntimeError("FigureRenderer.flush() outside its 'with' block")
        batch, self._pending = self._pending, []
        self._batches.append(self._pool.submit(self._render_batch, batch, Path(self._tmp.name)))

    def _render_batch(self, batch: list[tuple[str, go.Figure, str, int]], folder: Path) -> dict[str, str]:
        import kaleido

        jobs = []
        for token, fig, _, height in batch:
            name = re.sub(r"\D", "", token)
            jobs.append({"fig": fig, "path": str(folder / f"figure-{name}.svg"),
                         "opts": {"format": "svg", "width": self.width_px, "height": height}})
        try:
            with warnings.catch_warnings():
                warnings.simplefilter("ignore")
                kaleido.write_fig_from_object_sync(jobs, cancel_on_error=True)
        except Exception as exc:  # kaleido reports browser trouble with many exception types
            raise _render_error(exc) from exc
        out = {}
        for (token, _, label, _), job in zip(batch, jobs, strict=True):
            text = Path(str(job["path"])).read_text(encoding="utf-8")
            out[token] = inline_svg(text, "f" + re.sub(r"\D", "", token) + "-", label)
        return out

    def resolve(self, html: str) -> str:
        """The document with every placeholder replaced by its rendered SVG."""
        self.flush()
        svgs: dict[str, str] = {}
        for batch in self._batches:
            svgs.update(batch.result())
        self._batches = []
        return re.sub(r"<!--siteharvest-figure-\d+-->", lambda m: svgs.get(m.group(0), ""), html)


def _render_error(exc: BaseException) -> ReportError:
    first = str(exc).splitlines()[0] if str(exc) else ""
    return ReportError(f"could not render a figure with Chromium through kaleido: {type(exc).__name__}: {first}")


def html_to_pdf(html: str, *, timeout_s: float = PDF_TIMEOUT_S) -> bytes:
    """Print an HTML document to PDF with headless Chromium (A4 and margins come from the page's CSS)."""
    exe = chromium_path()
    with tempfile.TemporaryDirectory(prefix="siteharvest-report-") as tmp:
        folder = Path(tmp)
        page = folder / "report.html"
        out = folder / "report.pdf"
        page.write_text(html, encoding="utf-8")
        cmd = [str(exe), *CHROMIUM_FLAGS, f"--user-data-dir={folder / 'profile'}", f"--print-to-pdf={out}",
               page.as_uri()]
        try:
            proc = subprocess.run(cmd, cwd=folder, capture_output=True, timeout=timeout_s, check=False)
        except subprocess.TimeoutExpired:
            raise ReportError(f"Chromium did not finish printing the report within {timeout_s:.0f} s") from None
        except OSError as exc:
            raise ReportError(f"could not start Chromium ({exe}): {exc.strerror or exc}") from None
        if not out.is_file() or out.stat().st_size == 0:
            lines = [ln for ln in proc.stderr.decode("utf-8", "replace").splitlines()
                     if ln.strip() and "dbus" not in ln.lower()]
            raise ReportError(f"Chromium could not print the report to PDF (exit {proc.returncode}"
                              + (f": {lines[-1].strip()[:200]}" if lines else "") + ")")
        return out.read_bytes()
