"""Fixtures of the browser tests: a private JupyterLab server, one headless Chromium, a page per
test that records the console, and the timings summary."""

from __future__ import annotations

import os
import re
from collections.abc import Callable, Iterator
from pathlib import Path

import pytest
from lab import CHROMIUM, CHROMIUM_ARGS, TIMINGS, ConsoleLog, Notebook, write_notebook
from servers import JupyterServer

REPO = Path(__file__).resolve().parents[2]

@pytest.fixture(scope="session")
def output_dir() -> Path:
    """Where screenshots and the timings go (test-output/ is ignored by git)."""
    path = Path(os.environ.get("STRAYLINE_TEST_OUTPUT", REPO / "test-output" / "browser"))
    path.mkdir(parents=True, exist_ok=True)
    return path


@pytest.fixture(scope="session")
def chromium(tmp_path_factory: pytest.TempPathFactory) -> Iterator[object]:
    """One headless Chromium (Debian's) with a fresh profile, for the whole run."""
    if not os.path.exists(CHROMIUM):
        pytest.fail(f"{CHROMIUM} is missing: install Debian's chromium (make browser-deps)")
    from playwright.sync_api import sync_playwright

    with sync_playwright() as p:
        context = p.chromium.launch_persistent_context(
            str(tmp_path_factory.mktemp("chromium-profile")), executable_path=CHROMIUM,
            headless=True, args=CHROMIUM_ARGS, viewport={"width": 1400, "height": 1000},
            device_scale_factor=1)
        context.set_default_timeout(60_000)
        try:
            yield context
        finally:
            context.close()


def _server(tmp_path_factory: pytest.TempPathFactory, app: str) -> Iterator[JupyterServer]:
    server = JupyterServer(tmp_path_factory.mktemp(f"jupyter-{app}"), app=app)
    try:
        server.start()
        yield server
    finally:
        server.stop()


@pytest.fixture(scope="session")
def lab_server(tmp_path_factory: pytest.TempPathFactory) -> Iterator[JupyterServer]:
    """JupyterLab on 127.0.0.1, token off, in a temporary folder, shared by the modules."""
    yield from _server(tmp_path_factory, "lab")


@pytest.fixture(scope="module")
def notebook7_server(tmp_path_factory: pytest.TempPathFactory) -> Iterator[JupyterServer]:
    """`jupyter notebook` (Notebook 7) on its own."""
    yield from _server(tmp_path_factory, "notebook")


@pytest.hookimpl(wrapper=True, tryfirst=True)
def pytest_runtest_makereport(item: pytest.Item, call: pytest.CallInfo) -> object:
    report = yield
    setattr(item, f"report_{report.when}", report)
    return report


@pytest.fixture
def page(chromium: object, request: pytest.FixtureRequest, output_dir: Path) -> Iterator[object]:
    """A fresh tab; its console is recorded in ``page.strayline_log``. On failure a screenshot
    and the console go to the output folder."""
    p = chromium.new_page()  # type: ignore[attr-defined]
    log = ConsoleLog()
    p.on("console", log.on_console)
    p.on("pageerror", log.on_page_error)
    p.strayline_log = log
    try:
        yield p
    finally:
        report = getattr(request.node, "report_call", None)
        if report is not None and report.failed:
            name = re.sub(r"[^\w.-]+", "_", request.node.name)
            try:
                p.screenshot(path=str(output_dir / f"failed-{name}.png"), full_page=True)
            except Exception as exc:
                print(f"no screenshot: {exc}")
            (output_dir / f"failed-{name}.console.txt").write_text("\n".join(log.errors))
            print(f"[failure] screenshot and console in {output_dir}")
        p.close()


@pytest.fixture
def notebook_factory(page: object, request: pytest.FixtureRequest
                     ) -> Iterator[Callable[..., Notebook]]:
    """Write a notebook into a server's folder and return a driver for it; the kernel is shut
    down when the test ends."""
    opened: list[tuple[JupyterServer, str]] = []

    def make(server: JupyterServer, name: str, *sources: str) -> Notebook:
        write_notebook(server.root, name, *sources)
        nb = Notebook(page, server, name, app=server.app)  # type: ignore[arg-type]
        nb.folder = server.root
        opened.append((server, name))
        return nb

    yield make
    for server, name in opened:
        try:
            for s in server.api("GET", "/api/sessions") or []:  # type: ignore[union-attr]
                if s.get("path", "").endswith(name):
                    server.api("DELETE", f"/api/sessions/{s['id']}")
        except Exception as exc:  # the server may already be gone
            print(f"could not stop the kernel of {name}: {exc}")


def pytest_terminal_summary(terminalreporter: object) -> None:
    if not TIMINGS:
        return
    lines = [f"{what:<40} {case:<14} {seconds:8.2f} s" for what, case, seconds in TIMINGS]
    out = Path(os.environ.get("STRAYLINE_TEST_OUTPUT", REPO / "test-output" / "browser"))
    out.mkdir(parents=True, exist_ok=True)
    (out / "timings.txt").write_text("\n".join(lines) + "\n")
    tr = terminalreporter
    tr.section("strayline browser timings (measured, not asserted)")  # type: ignore
    for line in lines:
        tr.write_line(line)  # type: ignore[attr-defined]
    tr.write_line(f"(also in {out / 'timings.txt'})")  # type: ignore[attr-defined]
