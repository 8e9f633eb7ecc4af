"""Static rendering in one headless Chromium: plotly figures to inline SVG (plotly.js's own ``toImage``,
the plotly.js that ships with plotly), then the finished HTML printed to PDF in the same browser, so that
the HTML and the PDF share one layout and a report starts one browser.

The browser is driven over the DevTools protocol by choreographer and loads only local files: the
render page names plotly.js by its path inside the installed plotly package, and MathJax is never loaded.
"""

from __future__ import annotations

import asyncio
import base64
import contextlib
import itertools
import logging
import os
import re
import shutil
import tempfile
import threading
from collections.abc import Callable, Coroutine
from concurrent.futures import Future
from pathlib import Path
from types import TracebackType
from typing import Any, TypeVar
from urllib.parse import unquote

import plotly.graph_objects as go

CHROMIUM_CANDIDATES = ("/usr/bin/chromium", "chromium", "chromium-browser")
PDF_TIMEOUT_S = 180.0
START_TIMEOUT_S = 60.0
FIGURE_TIMEOUT_S = 60.0
# Besides choreographer's own flags: no background calls home and no QUIC probes (a report needs no network).
EXTRA_FLAGS = ("--disable-background-networking", "--disable-quic")
NAVIGATION_POLL_S = 0.02  # how often a loading tab is asked which document it shows
STREAM_PIECE_BYTES = 4 << 20  # how much of the printed PDF one DevTools message carries
A4_IN = (210 / 25.4, 297 / 25.4)  # paper when the page's CSS names none (ISO 216 A4, in inches)
T = TypeVar("T")


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
    """plotly.js's SVG made to scale with its container, with unique ids and an accessible name."""
    svg = re.sub(r"^<\?xml[^>]*>\s*", "", svg.strip())
    svg = _unique_ids(svg, prefix)
    label = label.replace("&", "&amp;").replace('"', "&quot;").replace("<", "&lt;")
    return re.sub(r'^<svg([^>]*?) width="[\d.]+" height="[\d.]+"',
                  rf'<svg\1 role="img" aria-label="{label}" preserveAspectRatio="xMidYMid meet"', svg, count=1)


RENDER_PAGE = """<!doctype html>
<html><head><meta charset="utf-8"><title>figures</title><script src="{plotly}"></script></head>
<body style="margin:0"><script>
async function renderFigure(fig, width, height) {{
  return Plotly.toImage({{data: fig.data || [], layout: fig.layout || {{}}, config: fig.config || {{}}}},
                        {{format: "svg", width: width, height: height, imageDataOnly: true}});
}}
</script></body></html>
"""


def plotly_js_path() -> Path:
    """The plotly.js bundle that ships with the installed plotly package (no network needed)."""
    import plotly

    path = Path(plotly.__file__).parent / "package_data" / "plotly.min.js"
    if not path.is_file():
        raise ReportError(f"plotly.js was not found at {path}; reinstall the 'plotly' package")
    return path


def _first_line(exc: BaseException) -> str:
    """The exception's first line of text (some carry a tuple of sentences: the first of them)."""
    first = exc.args[0] if exc.args else ""
    text = (first if isinstance(first, str) else str(exc)).strip()
    return text.splitlines()[0] if text else type(exc).__name__


def _quiet_chromium() -> type:
    """choreographer's Chromium launcher with :data:`EXTRA_FLAGS` added to its command line."""
    from choreographer.browsers import Chromium

    class QuietChromium(Chromium):
        def get_cli(self) -> list[str]:
            return [*super().get_cli(), *EXTRA_FLAGS]

    return QuietChromium


class ReportBrowser:
    """One headless Chromium that renders a report's figures and prints it: ``with ReportBrowser() as b:``.

    Entering starts the browser in a background thread and returns at once, so that the first spot is
    computed while the browser and plotly.js load. ``defer(fig)`` returns a placeholder and queues the
    figure; ``flush()`` hands the queue to the browser, which renders it to SVG over ``tabs`` tabs while
    the caller goes on; ``resolve(html)`` swaps the placeholders for the SVGs; ``pdf(html)`` prints a
    finished document (A4 and margins from its CSS). Browser trouble surfaces as :class:`ReportError`.
    """

    def __init__(self, width_px: int = 760, tabs: int = 1) -> None:
        self.width_px = width_px
        self.tabs = max(1, int(tabs))
        self._count = itertools.count(1)
        self._pending: list[tuple[str, go.Figure, str, int]] = []
        self._batches: list[Future[dict[str, str]]] = []
        self._loop: asyncio.AbstractEventLoop | None = None
        self._thread: threading.Thread | None = None
        self._opened: Future[None] | None = None
        self._browser: Any = None
        self._ready: asyncio.Queue[Any] | None = None
        self._tmp: tempfile.TemporaryDirectory[str] | None = None

    # -- lifecycle -------------------------------------------------------------------------------

    def __enter__(self) -> ReportBrowser:
        exe = chromium_path()
        quiet = logging.getLogger("choreographer")  # its warnings would reach stderr through logging's last resort
        if not quiet.handlers:
            quiet.addHandler(logging.NullHandler())
        self._tmp = tempfile.TemporaryDirectory(prefix="siteharvest-report-")
        page = Path(self._tmp.name) / "figures.html"
        page.write_text(RENDER_PAGE.format(plotly=plotly_js_path().as_uri()), encoding="utf-8")
        self._loop = asyncio.new_event_loop()
        self._thread = threading.Thread(target=self._loop.run_forever, name="siteharvest-browser", daemon=True)
        self._thread.start()
        self._opened = self._submit(self._open(exe, page.as_uri()))
        return self

    def __exit__(self, exc_type: type[BaseException] | None, exc: BaseException | None,
                 tb: TracebackType | None) -> None:
        try:
            if self._loop is not None:
                for batch in self._batches:
                    batch.cancel()
                with contextlib.suppress(Exception):  # best effort: the browser process ends with us anyway
                    self._submit(self._close()).result(timeout=30)
                self._loop.call_soon_threadsafe(self._loop.stop)
                if self._thread is not None:
                    self._thread.join(timeout=10)
                if not self._loop.is_running():
                    self._loop.close()
        finally:
            self._loop = self._thread = None
            self._batches = []
            if self._tmp is not None:
                self._tmp.cleanup()
                self._tmp = None

    def _submit(self, coro: Coroutine[Any, Any, T]) -> Future[T]:
        if self._loop is None:
            coro.close()
            raise RuntimeError("ReportBrowser used outside its 'with' block")
        return asyncio.run_coroutine_threadsafe(coro, self._loop)

    async def _open(self, exe: Path, page_uri: str) -> None:
        import choreographer

        try:
            self._browser = choreographer.Browser(path=str(exe), browser_cls=_quiet_chromium(), headless=True,
                                                  enable_extensions=False)
            await asyncio.wait_for(self._browser.open(), START_TIMEOUT_S)
            first = self._browser.get_tab() or await self._browser.create_tab()
            tabs = [first] + [await self._browser.create_tab() for _ in range(self.tabs - 1)]
            await asyncio.gather(*(self._navigate(tab, page_uri, START_TIMEOUT_S) for tab in tabs))
        except Exception as exc:  # choreographer reports browser trouble with many exception types
            await self._close_browser()
            if isinstance(exc, ReportError):
                raise
            raise ReportError(f"could not start Chromium ({exe}) for the report: {_first_line(exc)}") from exc
        self._ready = asyncio.Queue()
        for tab in tabs:
            self._ready.put_nowait(tab)

    async def _close_browser(self) -> None:
        if self._browser is not None:
            browser, self._browser = self._browser, None
            with contextlib.suppress(Exception):  # best effort: the browser process ends with us anyway
                await browser.close()

    async def _close(self) -> None:
        """Close the browser, then end every task still pending on this loop (the browser's watchdog)."""
        await self._close_browser()
        tasks = [t for t in asyncio.all_tasks() if t is not asyncio.current_task()]
        for task in tasks:
            task.cancel()
        await asyncio.gather(*tasks, return_exceptions=True)

    @staticmethod
    async def _command(tab: Any, method: str, params: dict[str, Any] | None = None,
                       timeout_s: float = FIGURE_TIMEOUT_S) -> dict[str, Any]:
        """One DevTools command; a protocol error or a script exception becomes a ReportError."""
        response = await asyncio.wait_for(tab.send_command(method, params=params), timeout_s)
        if "error" in response:
            raise ReportError(f"Chromium refused {method}: {response['error'].get('message', response['error'])}")
        result = response.get("result", {})
        details = result.get("exceptionDetails")
        if details:
            text = details.get("exception", {}).get("description") or details.get("text") or "script error"
            raise ReportError(f"a figure could not be drawn: {str(text).splitlines()[0]}")
        return result

    async def _navigate(self, tab: Any, uri: str, timeout_s: float) -> None:
        """Load ``uri`` in the tab and return once that document (not the one before) has loaded.

        A load event alone is not proof: the tab's first blank page can report its load late, after the
        navigation started. So the tab is asked which document it shows until it is ``uri``, complete.
        """
        await self._command(tab, "Page.navigate", {"url": uri})
        loop = asyncio.get_running_loop()
        deadline = loop.time() + timeout_s
        probe = {"expression": "decodeURI(location.href) + ' ' + document.readyState", "returnByValue": True}
        want = f"{unquote(uri)} complete"
        while True:
            try:
                shown = (await self._command(tab, "Runtime.evaluate", probe)).get("result", {}).get("value")
            except ReportError:  # between two documents there is briefly no page to ask
                shown = None
            if shown == want:
                return
            if loop.time() > deadline:
                raise ReportError(f"Chromium did not load {Path(uri).name} within {timeout_s:.0f} s (it shows "
                                  f"{shown or 'nothing'})")
            await asyncio.sleep(NAVIGATION_POLL_S)

    async def _tab(self) -> Any:
        assert self._opened is not None
        await asyncio.wrap_future(self._opened)
        assert self._ready is not None
        return await self._ready.get()

    # -- figures ---------------------------------------------------------------------------------

    def defer(self, fig: go.Figure, label: str = "", height_px: int | None = None) -> str:
        """A placeholder for the figure, rendered later in a batch (see :meth:`flush`, :meth:`resolve`)."""
        token = f"<!--siteharvest-figure-{next(self._count)}-->"
        self._pending.append((token, fig, label or (fig.layout.title.text or "figure"),
                              int(height_px or fig.layout.height or 420)))
        return token

    def flush(self) -> None:
        """Start rendering the queued figures in the browser while the caller goes on."""
        if not self._pending:
            return
        batch, self._pending = self._pending, []
        jobs = [(token, label, height, fig.to_json(validate=False)) for token, fig, label, height in batch]
        self._batches.append(self._submit(self._render(jobs)))

    async def _render(self, jobs: list[tuple[str, str, int, str]]) -> dict[str, str]:
        tab = await self._tab()
        try:
            out = {}
            for token, label, height, fig_json in jobs:
                expr = f"renderFigure({fig_json}, {self.width_px}, {height})"
                try:
                    result = await self._command(tab, "Runtime.evaluate",
                                                 {"expression": expr, "awaitPromise": True, "returnByValue": True})
                except ReportError as exc:
                    raise ReportError(f"{exc} (figure: {label})") from exc
                svg = result.get("result", {}).get("value")
                if not isinstance(svg, str) or "<svg" not in svg:
                    raise ReportError(f"a figure could not be drawn: plotly.js returned no SVG (figure: {label})")
                out[token] = inline_svg(svg, "f" + re.sub(r"\D", "", token) + "-", label)
            return out
        finally:
            assert self._ready is not None
            self._ready.put_nowait(tab)

    def resolve(self, html: str) -> str:
        """The document with every placeholder replaced by its rendered SVG."""
        self.flush()
        svgs: dict[str, str] = {}
        try:
            for batch in self._batches:
                svgs.update(batch.result())
        except ReportError:
            raise
        except Exception as exc:  # a timeout or a closed browser
            raise ReportError(f"could not render the report's figures in Chromium ({_first_line(exc)})") from exc
        finally:
            self._batches = []
        return re.sub(r"<!--siteharvest-figure-\d+-->", lambda m: svgs.get(m.group(0), ""), html)

    # -- printing --------------------------------------------------------------------------------

    def pdf(self, html: str, *, timeout_s: float = PDF_TIMEOUT_S) -> bytes:
        """Print a finished HTML document to PDF: paper and margins from the page's CSS, else A4."""
        return self.start_pdf(html, timeout_s=timeout_s)()

    def start_pdf(self, html: str, *, timeout_s: float = PDF_TIMEOUT_S) -> Callable[[], bytes]:
        """Start printing ``html`` (as :meth:`pdf`) and return at once with a function that waits for the
        PDF, so the caller can go on while the browser prints."""
        assert self._tmp is not None, "ReportBrowser.pdf() outside its 'with' block"
        page = Path(self._tmp.name) / f"report-{next(self._count)}.html"
        page.write_text(html, encoding="utf-8")
        printing = self._submit(self._print(page.as_uri(), timeout_s))

        def wait() -> bytes:
            try:
                return printing.result(timeout=timeout_s + 5)
            except ReportError:
                raise
            except TimeoutError:
                raise ReportError(f"Chromium did not finish printing the report within {timeout_s:.0f} s") from None
            except Exception as exc:
                raise ReportError(f"Chromium could not print the report to PDF ({_first_line(exc)})") from exc
            finally:
                page.unlink(missing_ok=True)

        return wait

    async def _print(self, uri: str, timeout_s: float) -> bytes:
        tab = await self._tab()
        try:
            await self._navigate(tab, uri, timeout_s)
            # The PDF comes back as a stream read in pieces, so a long portfolio is no single huge message.
            result = await self._command(tab, "Page.printToPDF",
                                         {"preferCSSPageSize": True, "printBackground": True,
                                          "displayHeaderFooter": False, "paperWidth": A4_IN[0],
                                          "paperHeight": A4_IN[1], "transferMode": "ReturnAsStream"}, timeout_s)
            data = await self._read_stream(tab, result.get("stream", ""), timeout_s)
            if not data.startswith(b"%PDF"):
                raise ReportError("Chromium returned no PDF")
            return data
        finally:
            assert self._ready is not None
            self._ready.put_nowait(tab)


    async def _read_stream(self, tab: Any, handle: str, timeout_s: float) -> bytes:
        """The whole of a DevTools stream, read in pieces of :data:`STREAM_PIECE_BYTES`."""
        if not handle:
            raise ReportError("Chromium returned no PDF")
        pieces = []
        try:
            while True:
                piece = await self._command(tab, "IO.read", {"handle": handle, "size": STREAM_PIECE_BYTES}, timeout_s)
                text = piece.get("data", "")
                pieces.append(base64.b64decode(text) if piece.get("base64Encoded") else text.encode("latin-1"))
                if piece.get("eof", True):
                    return b"".join(pieces)
        finally:
            with contextlib.suppress(Exception):
                await self._command(tab, "IO.close", {"handle": handle})


def html_to_pdf(html: str, *, timeout_s: float = PDF_TIMEOUT_S) -> bytes:
    """Print an HTML document to PDF with a browser of its own (A4 and margins come from the page's CSS)."""
    with ReportBrowser() as browser:
        return browser.pdf(html, timeout_s=timeout_s)
