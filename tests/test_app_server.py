"""`loadcore app` as a real server: it listens on the loopback address only, from any folder."""

from __future__ import annotations

import os
import signal
import socket
import subprocess
import sys
import time
import urllib.request
from pathlib import Path

import pytest

SERVE_TIMEOUT_S = 120
LISTEN = "0A"  # TCP state code of a listening socket in /proc/net/tcp (Linux proc(5) manual)


def _free_port() -> int:
    with socket.socket(socket.AF_INET, socket.SOCK_STREAM) as sock:
        sock.bind(("127.0.0.1", 0))
        return int(sock.getsockname()[1])


def _listening_addresses(port: int) -> list[str]:
    """Local addresses (hex, as the kernel writes them) of sockets listening on ``port``."""
    found = []
    for table in ("/proc/net/tcp", "/proc/net/tcp6"):
        try:
            lines = Path(table).read_text().splitlines()[1:]
        except OSError:
            continue
        for line in lines:
            fields = line.split()
            address, hex_port = fields[1].rsplit(":", 1)
            if int(hex_port, 16) == port and fields[3] == LISTEN:
                found.append(address)
    return found


@pytest.mark.slow
@pytest.mark.skipif(not Path("/proc/net/tcp").exists(), reason="needs Linux /proc/net/tcp")
def test_app_listens_on_loopback_only_when_started_from_another_folder(tmp_path):
    port = _free_port()
    log_path = tmp_path / "server.log"
    env = {**os.environ, "LOADCORE_LIBRARY": str(tmp_path / "library.sqlite")}
    with log_path.open("wb") as log:
        server = subprocess.Popen(
            [sys.executable, "-m", "loadcore", "app", "--port", str(port)],
            cwd=tmp_path,  # not the project folder: the project's settings must still apply
            env=env,
            stdout=log,
            stderr=subprocess.STDOUT,
            start_new_session=True,
        )
    try:
        deadline = time.monotonic() + SERVE_TIMEOUT_S
        while True:
            assert server.poll() is None, log_path.read_text(errors="replace")
            try:
                with urllib.request.urlopen(f"http://127.0.0.1:{port}/_stcore/health", timeout=2):
                    break
            except OSError:
                assert time.monotonic() < deadline, "the app did not start"
                time.sleep(0.5)
        addresses = _listening_addresses(port)
        # 127.0.0.1 is written 0100007F (little-endian hex) in /proc/net/tcp.
        assert addresses == ["0100007F"], addresses
        printed = log_path.read_text(errors="replace")
        assert "localhost" in printed and "no login" not in printed
    finally:
        os.killpg(server.pid, signal.SIGTERM)
        try:
            server.wait(timeout=20)
        except subprocess.TimeoutExpired:
            os.killpg(server.pid, signal.SIGKILL)
