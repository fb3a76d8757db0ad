"""WebKitGTK's MiniBrowser driven through selenium and WebKitWebDriver under a private Xvfb display,
shared by the browser tests (tests/browser/conftest.py) and the benchmark's engines section.

Every session request has a deadline (selenium's default client timeout is none, so a MiniBrowser
that never appears would hang the run); a failed request kills stray MiniBrowser processes,
restarts WebKitWebDriver on a fresh port and tries again, up to three times in all.
"""

from __future__ import annotations

import os
import shutil
import socket
import subprocess
import time
from pathlib import Path

SESSION_TIMEOUT_S = 120
SESSION_TRIES = 3


def minibrowser() -> Path | None:
    found = sorted(Path("/usr/lib").glob("*/webkit2gtk-4.1/MiniBrowser"))
    return found[0] if found else None


def missing() -> list[tuple[str, str]]:
    """(what, Debian package) for each piece of the WebKit setup that is not installed."""
    needs = []
    if shutil.which("WebKitWebDriver") is None:
        needs.append(("WebKitWebDriver", "webkit2gtk-driver"))
    if minibrowser() is None:
        needs.append(("WebKitGTK's MiniBrowser", "libwebkit2gtk-4.1-0"))
    if shutil.which("Xvfb") is None:
        needs.append(("Xvfb", "xvfb"))
    return needs


def _free_display() -> int:
    number = 90
    while Path(f"/tmp/.X{number}-lock").exists() or Path(f"/tmp/.X11-unix/X{number}").exists():
        number += 1
    return number


def _free_port() -> int:
    with socket.socket() as probe:
        probe.bind(("127.0.0.1", 0))
        return probe.getsockname()[1]


def _wait_for_port(port: int, process: subprocess.Popen, what: str, timeout_s: float = 20) -> None:
    deadline = time.monotonic() + timeout_s
    while time.monotonic() < deadline:
        if process.poll() is not None:
            raise RuntimeError(f"{what} exited with code {process.returncode}")
        with socket.socket() as probe:
            if probe.connect_ex(("127.0.0.1", port)) == 0:
                return
        time.sleep(0.2)
    raise RuntimeError(f"{what} did not listen on port {port} within {timeout_s} s")


def _stop(process: subprocess.Popen | None) -> None:
    if process is None or process.poll() is not None:
        return
    process.terminate()
    try:
        process.wait(timeout=10)
    except subprocess.TimeoutExpired:
        process.kill()
        process.wait(timeout=10)


def _kill_minibrowsers() -> None:
    subprocess.run(["pkill", "-KILL", "-f", "webkit2gtk-4.1/MiniBrowser"], check=False,
                   stdout=subprocess.DEVNULL, stderr=subprocess.DEVNULL)


class WebKitDriver:
    """start() an Xvfb display and WebKitWebDriver; new_session() -> a fresh MiniBrowser session
    (its own empty storage; the caller quits it); stop() ends both processes."""

    def __init__(self):
        self.display = f":{_free_display()}"
        self.screen = self.server = None
        self.url = ""

    def start(self) -> WebKitDriver:
        self.screen = subprocess.Popen(["Xvfb", self.display, "-screen", "0", "1280x1024x24", "-nolisten", "tcp"],
                                       stdout=subprocess.DEVNULL, stderr=subprocess.DEVNULL)
        self._start_server()
        return self

    def _start_server(self) -> None:
        port = _free_port()
        self.server = subprocess.Popen(["WebKitWebDriver", f"--port={port}"], env={**os.environ, "DISPLAY": self.display},
                                       stdout=subprocess.DEVNULL, stderr=subprocess.DEVNULL)
        _wait_for_port(port, self.server, "WebKitWebDriver")
        self.url = f"http://127.0.0.1:{port}"

    def new_session(self, script_timeout_s: float = 60):
        from selenium import webdriver
        from selenium.webdriver.remote.client_config import ClientConfig
        from selenium.webdriver.webkitgtk.options import Options

        failures = []
        for attempt in range(SESSION_TRIES):
            options = Options()
            options.binary_location = str(minibrowser())
            options.add_argument("--automation")
            try:
                session = webdriver.Remote(command_executor=self.url, options=options,
                                           client_config=ClientConfig(remote_server_addr=self.url, timeout=SESSION_TIMEOUT_S))
            except Exception as error:  # a timeout or a refused session: clean up and retry
                failures.append(f"try {attempt + 1}: {type(error).__name__}: {error}".strip())
                _kill_minibrowsers()
                _stop(self.server)
                self._start_server()
                continue
            session.set_script_timeout(script_timeout_s)
            return session
        raise RuntimeError(f"no MiniBrowser session after {SESSION_TRIES} tries: {'; '.join(failures)}")

    def stop(self) -> None:
        _stop(self.server)
        _stop(self.screen)
