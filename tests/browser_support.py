"""Helpers of the real-browser tests: `loadcore app` on a loopback port, headless Chromium.

The server runs in its own process group with its own scenario library and is stopped at the end
(:func:`served_app`); every request that would leave the machine is aborted and recorded
(:func:`block_outside_requests`); screenshots go to test-artifacts/ (git-ignored).
"""

from __future__ import annotations

import os
import shutil
import signal
import socket
import subprocess
import sys
import time
import urllib.request
from collections.abc import Iterator
from pathlib import Path

import pytest
from test_app_support import REPO

ARTIFACTS = REPO / "test-artifacts"
CHROMIUM_ARGS = [
    "--no-sandbox",
    "--headless",
    "--disable-gpu",
    "--disable-quic",
    "--no-first-run",
    "--disable-background-networking",
    "--disable-component-update",
    "--disable-sync",
]
SERVE_TIMEOUT_S = 120
STEP_TIMEOUT_MS = 180_000


def chromium_path() -> str:
    path = shutil.which("chromium")
    if path is None:
        if os.environ.get("CI", "").lower() == "true":
            pytest.fail(
                "chromium is not installed, so the browser test cannot run in CI. Install "
                "Debian's chromium (`make chromium` or `apt-get install chromium`)."
            )
        pytest.skip("chromium is not installed (install it with `make chromium`)")
    return path


def _free_port() -> int:
    with socket.socket(socket.AF_INET, socket.SOCK_STREAM) as sock:
        sock.bind(("127.0.0.1", 0))
        return int(sock.getsockname()[1])


def _wait_until_serving(url: str, server: subprocess.Popen, log_path: Path) -> None:
    deadline = time.monotonic() + SERVE_TIMEOUT_S
    while time.monotonic() < deadline:
        if server.poll() is not None:
            pytest.fail(f"`loadcore app` exited early:\n{log_path.read_text(errors='replace')}")
        try:
            with urllib.request.urlopen(f"{url}/_stcore/health", timeout=2) as response:
                if response.read().strip() == b"ok":
                    return
        except OSError:
            time.sleep(0.5)
    pytest.fail(f"`loadcore app` did not serve within {SERVE_TIMEOUT_S} s")


def serve_app(tmp_path: Path) -> Iterator[str]:
    """`loadcore app --port <free port>` in its own process group, yielding its address; stopped
    at the end (the ``served_app`` fixture of tests/conftest.py)."""
    port = _free_port()
    log_path = tmp_path / "server.log"
    env = {**os.environ, "LOADCORE_LIBRARY": str(tmp_path / "library.sqlite")}
    # The program of the venv the tests run in, not whatever `loadcore` is on PATH.
    command = [sys.executable, "-m", "loadcore", "app", "--port", str(port)]
    with log_path.open("wb") as log:
        server = subprocess.Popen(
            command,
            cwd=REPO,
            env=env,
            stdout=log,
            stderr=subprocess.STDOUT,
            start_new_session=True,
        )
    url = f"http://127.0.0.1:{port}"
    try:
        _wait_until_serving(url, server, log_path)
        yield url
    finally:
        if server.poll() is None:
            os.killpg(server.pid, signal.SIGTERM)
            try:
                server.wait(timeout=20)
            except subprocess.TimeoutExpired:
                os.killpg(server.pid, signal.SIGKILL)
                server.wait(timeout=10)


def shot(page, name: str) -> None:
    """A screenshot of the top of the page (Streamlit scrolls inside its own container)."""
    ARTIFACTS.mkdir(exist_ok=True)
    page.evaluate(
        "() => document.querySelectorAll('[data-testid=\"stMain\"], section.main')"
        ".forEach(el => el.scrollTo(0, 0))"
    )
    page.wait_for_timeout(800)  # let the charts finish drawing
    page.screenshot(path=str(ARTIFACTS / f"{name}.png"))


def block_outside_requests(page) -> list[str]:
    """Abort every request that leaves this machine and keep its address (for an assertion)."""
    outside: list[str] = []

    def handle(route) -> None:
        url = route.request.url
        host = url.split("//", 1)[-1].split("/", 1)[0].split(":", 1)[0]
        if url.startswith(("data:", "blob:")) or host in ("127.0.0.1", "localhost"):
            route.continue_()
        else:
            outside.append(url)
            route.abort()

    page.route("**/*", handle)
    return outside


def go(page, link: str, title: str) -> None:
    page.get_by_role("link", name=link, exact=True).first.click()
    page.get_by_role("heading", name=title, exact=True).first.wait_for(timeout=STEP_TIMEOUT_MS)
