"""A small headless-Chromium driver over the DevTools protocol on a pipe (standard library only).

Chromium started with ``--remote-debugging-pipe`` reads protocol commands from file descriptor 3
and writes replies and events to descriptor 4, each message a JSON text ended by a NUL byte
(Chrome DevTools Protocol, "remote debugging pipe"). This driver opens one page, records console
messages, exceptions, log entries, network requests and dialogs, evaluates expressions and takes
screenshots. Every wait has a deadline, and the browser is always stopped.
"""

from __future__ import annotations

import base64
import fcntl
import json
import os
import select
import shutil
import subprocess
import tempfile
import time
from pathlib import Path

#: flags that work in a root container without a display or network (project notes)
FLAGS = ["--headless", "--no-sandbox", "--disable-gpu", "--disable-quic", "--no-first-run",
         "--disable-background-networking", "--disable-component-update", "--disable-sync",
         "--disable-extensions", "--remote-debugging-pipe"]


def find_chromium() -> str | None:
    for name in ("chromium", "chromium-browser"):
        path = shutil.which(name)
        if path:
            return path
    return None


class BrowserError(RuntimeError):
    pass


class Page:
    """One Chromium process with one page attached (flattened session)."""

    def __init__(self, executable: str, width: int = 1280, height: int = 800,
                 timeout: float = 60.0) -> None:
        self.timeout = timeout
        self.events: list[dict] = []
        self._next = 0
        self._buffer = b""
        self._profile = tempfile.mkdtemp(prefix="airgate-chromium-")
        to_child_r, self._to_child = os.pipe()
        self._from_child, from_child_w = os.pipe()
        # the child must see them as descriptors 3 and 4: copy them above 9 first, so that
        # putting one on 3 cannot overwrite the other
        high_r = fcntl.fcntl(to_child_r, fcntl.F_DUPFD, 10)
        high_w = fcntl.fcntl(from_child_w, fcntl.F_DUPFD, 10)

        def child_fds() -> None:  # runs in the child between fork and exec
            os.dup2(high_r, 3)
            os.dup2(high_w, 4)

        self._proc = subprocess.Popen(
            [executable, *FLAGS, f"--user-data-dir={self._profile}",
             f"--window-size={width},{height}", "about:blank"],
            stdin=subprocess.DEVNULL, stdout=subprocess.DEVNULL, stderr=subprocess.DEVNULL,
            pass_fds=(3, 4), preexec_fn=child_fds)
        for fd in {to_child_r, from_child_w, high_r, high_w}:
            os.close(fd)
        try:
            self._session = self._attach(width, height)
        except BaseException:
            self.close()
            raise

    # --- protocol ---------------------------------------------------------------------------

    def _send(self, method: str, params: dict | None = None, session: bool = True) -> int:
        self._next += 1
        msg: dict = {"id": self._next, "method": method, "params": params or {}}
        if session and getattr(self, "_session", None):
            msg["sessionId"] = self._session
        os.write(self._to_child, json.dumps(msg).encode() + b"\0")
        return self._next

    def _read(self, deadline: float) -> dict:
        while b"\0" not in self._buffer:
            left = deadline - time.monotonic()
            if left <= 0:
                raise BrowserError("no answer from the browser in time")
            ready, _, _ = select.select([self._from_child], [], [], left)
            if ready:
                chunk = os.read(self._from_child, 1 << 20)
                if not chunk:
                    raise BrowserError("the browser closed the pipe")
                self._buffer += chunk
        raw, self._buffer = self._buffer.split(b"\0", 1)
        return json.loads(raw)

    def call(self, method: str, params: dict | None = None, session: bool = True) -> dict:
        wanted = self._send(method, params, session)
        deadline = time.monotonic() + self.timeout
        while True:
            msg = self._read(deadline)
            if msg.get("id") == wanted:
                if "error" in msg:
                    raise BrowserError(f"{method}: {msg['error']}")
                return msg.get("result", {})
            self.events.append(msg)

    def wait_for(self, method: str) -> dict:
        for msg in self.events:
            if msg.get("method") == method:
                return msg
        deadline = time.monotonic() + self.timeout
        while True:
            msg = self._read(deadline)
            self.events.append(msg)
            if msg.get("method") == method:
                return msg

    def _attach(self, width: int, height: int) -> str:
        targets = self.call("Target.getTargets", session=False)["targetInfos"]
        page = next(t for t in targets if t["type"] == "page")
        session = self.call("Target.attachToTarget", {"targetId": page["targetId"],
                                                      "flatten": True},
                            session=False)["sessionId"]
        self._session = session
        for domain in ("Page", "Runtime", "Log", "Network"):
            self.call(f"{domain}.enable")
        self.call("Emulation.setDeviceMetricsOverride",
                  {"width": width, "height": height, "deviceScaleFactor": 1, "mobile": False})
        return session

    # --- what a test uses -------------------------------------------------------------------

    def open(self, path: Path) -> None:
        self.events.clear()
        self.call("Page.navigate", {"url": path.resolve().as_uri()})
        self.wait_for("Page.loadEventFired")

    def evaluate(self, expression: str):
        result = self.call("Runtime.evaluate", {"expression": expression, "returnByValue": True})
        if "exceptionDetails" in result:
            raise BrowserError(f"script failed: {result['exceptionDetails']}")
        return result["result"].get("value")

    def screenshot(self, path: Path, full_page: bool = False) -> bytes:
        params: dict = {"format": "png"}
        if full_page:
            params["captureBeyondViewport"] = True
        data = base64.b64decode(self.call("Page.captureScreenshot", params)["data"])
        path.write_bytes(data)
        return data

    def problems(self) -> list[str]:
        """Console errors, uncaught exceptions, error log entries and dialogs so far."""
        out = []
        for msg in self.events:
            method, params = msg.get("method"), msg.get("params", {})
            if method == "Runtime.consoleAPICalled" and params.get("type") in ("error", "assert"):
                out.append(f"console.{params['type']}: {params.get('args')}")
            elif method == "Runtime.exceptionThrown":
                out.append(f"exception: {params.get('exceptionDetails', {}).get('text')}")
            elif method == "Log.entryAdded" and params.get("entry", {}).get("level") == "error":
                out.append(f"log: {params['entry'].get('text')}")
            elif method == "Page.javascriptDialogOpening":
                out.append(f"dialog: {params.get('message')}")
        return out

    def requests(self) -> list[str]:
        return [m["params"]["request"]["url"] for m in self.events
                if m.get("method") == "Network.requestWillBeSent"]

    def close(self) -> None:
        try:
            if self._proc.poll() is None:
                try:
                    self._send("Browser.close", session=False)
                    self._proc.wait(timeout=10)
                except (OSError, subprocess.TimeoutExpired):
                    self._proc.kill()
                    self._proc.wait(timeout=10)
        finally:
            for fd in (self._to_child, self._from_child):
                try:
                    os.close(fd)
                except OSError:
                    pass
            shutil.rmtree(self._profile, ignore_errors=True)

    def __enter__(self) -> Page:
        return self

    def __exit__(self, *exc) -> None:
        self.close()
