"""JupyterLab + headless Chromium for the real-browser tests: one server and one page per session.

The server is a child process on a free 127.0.0.1 port with a random token, in a
temporary root directory with private Jupyter config, runtime, data, settings and
workspace directories, so nothing of the user's Jupyter set-up leaks in or is touched.
The browser is Debian's ``/usr/bin/chromium`` driven by the Playwright package (a
downloaded browser is never used).  Everything started here is stopped by process id,
also when a test fails.

Without Chromium, JupyterLab or Playwright the browser tests skip with the reason, except
under ``CI=true``, where they fail: CI installs Chromium (``.ci/run``) and must not pass
by skipping the one test that proves the widgets render.
"""

from __future__ import annotations

import importlib.util
import json
import os
import secrets
import signal
import socket
import subprocess
import sys
import time
import urllib.error
import urllib.request
from pathlib import Path
from typing import Iterator

import pytest
from browser_steps import CHROMIUM, CHROMIUM_ARGS, REPORT, LabServer

__all__: list[str] = []

# These notebooks are driven in the browser by the tests here; nbval (--nbval-lax) runs only notebooks/.
collect_ignore_glob = ["*.ipynb"]

SERVER_START_TIMEOUT = 90.0  # s: 2–4 s here; generous for a loaded CI machine


def pytest_terminal_summary(terminalreporter) -> None:
    if REPORT:
        terminalreporter.section("real-browser measurements")
        for line in REPORT:
            terminalreporter.write_line(line)


def _missing_tools() -> list[str]:
    missing = [name for name in ("jupyterlab", "playwright", "ipykernel", "psutil")
               if importlib.util.find_spec(name) is None]
    if not CHROMIUM.exists():
        missing.append(f"{CHROMIUM} (Debian package chromium)")
    return missing


def _require_tools() -> None:
    missing = _missing_tools()
    if not missing:
        return
    reason = ("the real-browser tests need " + ", ".join(missing)
              + "; install: pip install '.[test]' and, as root, apt-get install -y chromium")
    if os.environ.get("CI", "").lower() in {"1", "true", "yes"}:
        pytest.fail("CI=true: " + reason, pytrace=False)
    pytest.skip(reason)


def _free_port() -> int:
    with socket.socket(socket.AF_INET, socket.SOCK_STREAM) as sock:
        sock.bind(("127.0.0.1", 0))
        return sock.getsockname()[1]


def _stop_by_pid(pids: list[int], grace: float = 10.0) -> None:
    """SIGTERM each process we started, then SIGKILL whatever outlives ``grace`` seconds."""
    import psutil

    procs = []
    for pid in pids:
        try:
            proc = psutil.Process(pid)
            proc.send_signal(signal.SIGTERM)
            procs.append(proc)
        except psutil.NoSuchProcess:
            continue
    _, alive = psutil.wait_procs(procs, timeout=grace)
    for proc in alive:
        try:
            proc.kill()
        except psutil.NoSuchProcess:
            continue
    psutil.wait_procs(alive, timeout=grace)


@pytest.fixture(scope="session")
def lab_server(tmp_path_factory) -> Iterator[LabServer]:
    _require_tools()
    import psutil

    base = tmp_path_factory.mktemp("lab")
    root = base / "root"
    dirs = {name: base / name for name in ("config", "runtime", "data", "settings", "workspaces", "ipython")}
    for path in [root, *dirs.values()]:
        path.mkdir()
    # No "Jupyter news" toast over the notebook (and no network look-up for it).
    notification = dirs["settings"] / "@jupyterlab" / "apputils-extension" / "notification.jupyterlab-settings"
    notification.parent.mkdir(parents=True)
    notification.write_text(json.dumps({"fetchNews": "false", "checkForUpdates": False}))

    # The kernel must import the modeheat under test, also from an uninstalled checkout.
    import modeheat

    source_root = str(Path(modeheat.__file__).resolve().parents[1])
    env = dict(os.environ,
               JUPYTER_CONFIG_DIR=str(dirs["config"]), JUPYTER_RUNTIME_DIR=str(dirs["runtime"]),
               JUPYTER_DATA_DIR=str(dirs["data"]), JUPYTERLAB_SETTINGS_DIR=str(dirs["settings"]),
               JUPYTERLAB_WORKSPACES_DIR=str(dirs["workspaces"]), IPYTHONDIR=str(dirs["ipython"]),
               PYTHONPATH=os.pathsep.join(filter(None, [source_root, os.environ.get("PYTHONPATH")])))
    port, token = _free_port(), secrets.token_hex(16)
    log_path = base / "jupyterlab.log"
    with log_path.open("wb") as log:
        server = subprocess.Popen(
            [sys.executable, "-m", "jupyterlab", "--no-browser", "--allow-root", f"--port={port}",
             "--ServerApp.ip=127.0.0.1", f"--IdentityProvider.token={token}",
             f"--ServerApp.root_dir={root}", "--ServerApp.port_retries=0", "--LabApp.news_url=None"],
            env=env, stdout=log, stderr=subprocess.STDOUT, stdin=subprocess.DEVNULL)
    lab = LabServer(url=f"http://127.0.0.1:{port}", token=token, root=root, pid=server.pid)
    try:
        _wait_until_serving(lab, server, log_path)
        yield lab
    finally:
        # Kernels are the server's children: collect them before the server goes, then stop
        # each by id (the server shuts its kernels down on SIGTERM; the rest is a safety net).
        try:
            children = [child.pid for child in psutil.Process(server.pid).children(recursive=True)]
        except psutil.NoSuchProcess:
            children = []
        _stop_by_pid([server.pid])
        _stop_by_pid(children)


def _wait_until_serving(lab: LabServer, server: subprocess.Popen, log_path: Path) -> None:
    deadline = time.monotonic() + SERVER_START_TIMEOUT
    while time.monotonic() < deadline:
        if server.poll() is not None:
            pytest.fail(f"JupyterLab exited with {server.returncode}:\n{log_path.read_text()[-3000:]}",
                        pytrace=False)
        try:
            with urllib.request.urlopen(f"{lab.url}/api/status?token={lab.token}", timeout=2) as answer:
                if answer.status == 200:
                    return
        except (urllib.error.URLError, ConnectionError, TimeoutError):
            pass
        time.sleep(0.25)
    pytest.fail(f"JupyterLab did not answer within {SERVER_START_TIMEOUT:.0f} s:\n"
                f"{log_path.read_text()[-3000:]}", pytrace=False)


@pytest.fixture(scope="session")
def browser_page(lab_server):
    """One headless Chromium page for the session (Playwright's driver and the browser stop by id)."""
    import psutil
    from playwright.sync_api import sync_playwright

    before = {child.pid for child in psutil.Process().children(recursive=True)}
    playwright = sync_playwright().start()
    try:
        browser = playwright.chromium.launch(executable_path=str(CHROMIUM), args=CHROMIUM_ARGS, headless=True)
        started = [child.pid for child in psutil.Process().children(recursive=True) if child.pid not in before]
        try:
            page = browser.new_page(viewport={"width": 1400, "height": 1000})
            page.set_default_timeout(60_000)
            yield page
        finally:
            browser.close()
    finally:
        playwright.stop()
        # Playwright closes its driver and browser itself; stop any straggler by its id.
        _stop_by_pid([pid for pid in started if psutil.pid_exists(pid)])
