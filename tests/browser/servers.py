"""Start and stop a private Jupyter server (JupyterLab or Notebook 7) for the browser tests.

Everything the server reads or writes (settings, workspaces, config, runtime files, the
notebooks) lives under one temporary folder, so a run never touches the user's own Jupyter
set-up, and everything started is stopped again, also when a test fails.
"""

from __future__ import annotations

import json
import os
import signal
import socket
import subprocess
import sys
import time
import urllib.error
import urllib.request
from pathlib import Path

import psutil

VENV_BIN = Path(sys.executable).parent


def free_port() -> int:
    with socket.socket(socket.AF_INET, socket.SOCK_STREAM) as s:
        s.bind(("127.0.0.1", 0))
        return int(s.getsockname()[1])


def write_lab_settings(settings_dir: Path, theme: str | None = None) -> None:
    """Settings the tests depend on: no windowed notebook (every cell stays in the DOM), the
    notebook's own kernel started without asking, no news or update pop-ups, and optionally
    the theme."""
    def put(plugin: str, name: str, value: dict) -> None:
        path = settings_dir / plugin / f"{name}.jupyterlab-settings"
        path.parent.mkdir(parents=True, exist_ok=True)
        path.write_text(json.dumps(value))

    put("@jupyterlab/notebook-extension", "tracker",
        {"windowingMode": "none", "autoStartDefaultKernel": True})
    put("@jupyterlab/apputils-extension", "notification",
        {"fetchNews": "false", "checkForUpdates": False})
    if theme is not None:
        put("@jupyterlab/apputils-extension", "themes", {"theme": theme})


class JupyterServer:
    """One `jupyter lab` or `jupyter notebook` process on 127.0.0.1, token and password off."""

    def __init__(self, base: Path, app: str = "lab", theme: str | None = None):
        self.app = app
        self.base = base
        self.root = base / "notebooks"
        self.root.mkdir(parents=True, exist_ok=True)
        self.settings_dir = base / "lab-settings"
        self.port = free_port()
        self.url = f"http://127.0.0.1:{self.port}"
        self.log_path = base / f"jupyter-{app}.log"
        self.proc: subprocess.Popen[bytes] | None = None
        self._log = None
        write_lab_settings(self.settings_dir, theme)

    def env(self) -> dict[str, str]:
        env = dict(os.environ)
        env.update({
            "JUPYTERLAB_SETTINGS_DIR": str(self.settings_dir),
            "JUPYTERLAB_WORKSPACES_DIR": str(self.base / "lab-workspaces"),
            "JUPYTER_CONFIG_DIR": str(self.base / "jupyter-config"),
            "JUPYTER_DATA_DIR": str(self.base / "jupyter-data"),
            "JUPYTER_RUNTIME_DIR": str(self.base / "jupyter-runtime"),
            "IPYTHONDIR": str(self.base / "ipython"),
            "JUPYTER_PLATFORM_DIRS": "1",
            "PYTHONUNBUFFERED": "1",
        })
        env.pop("ANYWIDGET_HMR", None)
        return env

    def start(self, timeout: float = 90) -> JupyterServer:
        cmd = [str(VENV_BIN / "jupyter"), self.app,
               "--no-browser", "--ip=127.0.0.1", f"--port={self.port}",
               "--ServerApp.port_retries=0",
               "--ServerApp.token=", "--ServerApp.password=",
               "--ServerApp.disable_check_xsrf=True",
               f"--ServerApp.root_dir={self.root}"]
        if os.geteuid() == 0:
            cmd.append("--allow-root")
        self._log = open(self.log_path, "wb")
        self.proc = subprocess.Popen(cmd, cwd=self.root, env=self.env(), stdout=self._log,
                                     stderr=subprocess.STDOUT, start_new_session=True)
        deadline = time.monotonic() + timeout
        while time.monotonic() < deadline:
            if self.proc.poll() is not None:
                raise RuntimeError(f"jupyter {self.app} exited with {self.proc.returncode}:\n"
                                   + self.log_tail())
            try:
                with urllib.request.urlopen(f"{self.url}/api/status", timeout=2) as r:
                    if r.status == 200:
                        return self
            except (urllib.error.URLError, ConnectionError, TimeoutError):
                pass
            time.sleep(0.3)
        self.stop()
        raise RuntimeError(f"jupyter {self.app} did not answer in {timeout} s:\n" + self.log_tail())

    def log_tail(self, chars: int = 4000) -> str:
        try:
            return self.log_path.read_text(errors="replace")[-chars:]
        except OSError:
            return ""

    def api(self, method: str, path: str, body: object = None) -> object:
        data = None if body is None else json.dumps(body).encode()
        req = urllib.request.Request(f"{self.url}{path}", data=data, method=method,
                                     headers={"Content-Type": "application/json"})
        with urllib.request.urlopen(req, timeout=20) as r:
            text = r.read()
        return json.loads(text) if text else None

    def shutdown_kernels(self) -> None:
        try:
            for k in self.api("GET", "/api/kernels") or []:  # type: ignore[union-attr]
                self.api("DELETE", f"/api/kernels/{k['id']}")
        except (urllib.error.URLError, OSError, ValueError):
            pass

    def stop(self) -> None:
        """Stop the server, its kernels (they run in sessions of their own) and anything else
        it started, by process id."""
        proc, self.proc = self.proc, None
        if proc is None:
            return
        try:
            family = psutil.Process(proc.pid).children(recursive=True)
        except psutil.Error:
            family = []
        if proc.poll() is None:
            self.shutdown_kernels()
            try:
                os.killpg(proc.pid, signal.SIGTERM)
            except ProcessLookupError:
                pass
            try:
                proc.wait(timeout=15)
            except subprocess.TimeoutExpired:
                try:
                    os.killpg(proc.pid, signal.SIGKILL)
                except ProcessLookupError:
                    pass
                proc.wait(timeout=10)
        for child in family:
            try:
                if child.is_running():
                    child.kill()
            except psutil.Error:
                pass
        if self._log is not None:
            self._log.close()
            self._log = None
