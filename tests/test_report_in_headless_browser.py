"""The report opened in a real headless Chromium, where one is installed (skipped otherwise).

The browser is driven over the Chrome DevTools Protocol on a pipe (``--remote-debugging-pipe``:
JSON messages separated by NUL bytes, commands on fd 3, replies on fd 4), so no Python
package is needed. Checked: the page loads; every request the page makes stays in the file
or in data: URLs (no outside requests); every image is decoded with a size (every figure is
shown); the build section and each axis's connection figure are present.

On Debian: ``apt-get install chromium-headless-shell`` (or ``chromium``).
"""
from __future__ import annotations

import json
import os
import select
import shutil
import subprocess
import time

import pytest

from conftest import SITES

BROWSERS = ("chromium-headless-shell", "chromium", "chromium-browser", "google-chrome", "headless_shell")


def _browser():
    for name in BROWSERS:
        path = shutil.which(name)
        if path:
            return path
    return None


class _Cdp:
    """A minimal DevTools client over the two pipes."""

    def __init__(self, exe: str, profile: str):
        to_r, self._to_w = os.pipe()
        self._from_r, from_w = os.pipe()

        def wire():  # in the child: fd 3 is what it reads, fd 4 where it writes
            a, b = os.dup(to_r), os.dup(from_w)
            os.dup2(a, 3)
            os.dup2(b, 4)

        self.proc = subprocess.Popen(
            [exe, "--headless", "--remote-debugging-pipe", "--no-sandbox", "--disable-gpu",
             "--no-first-run", f"--user-data-dir={profile}", "about:blank"],
            stdin=subprocess.DEVNULL, stdout=subprocess.DEVNULL, stderr=subprocess.DEVNULL,
            pass_fds=(3, 4, to_r, from_w), preexec_fn=wire)  # 3 and 4 survive the closing of fds
        os.close(to_r)
        os.close(from_w)
        self._buf = b""
        self._id = 0
        self.events = []

    def send(self, method: str, params=None, session=None, timeout: float = 30.0):
        self._id += 1
        msg = {"id": self._id, "method": method, "params": params or {}}
        if session:
            msg["sessionId"] = session
        os.write(self._to_w, json.dumps(msg).encode() + b"\0")
        while True:
            reply = self._next(timeout)
            if reply.get("id") == self._id:
                if "error" in reply:
                    raise RuntimeError(f"{method}: {reply['error']}")
                return reply.get("result", {})
            self.events.append(reply)

    def wait_event(self, method: str, timeout: float = 30.0):
        for e in self.events:
            if e.get("method") == method:
                return e
        end = time.monotonic() + timeout
        while time.monotonic() < end:
            e = self._next(end - time.monotonic())
            self.events.append(e)
            if e.get("method") == method:
                return e
        raise TimeoutError(method)

    def _next(self, timeout: float) -> dict:
        end = time.monotonic() + timeout
        while b"\0" not in self._buf:
            left = end - time.monotonic()
            ready, _, _ = select.select([self._from_r], [], [], max(left, 0))
            if not ready:
                raise TimeoutError("no reply from the browser")
            chunk = os.read(self._from_r, 1 << 20)
            if not chunk:
                raise RuntimeError("the browser closed the pipe")
            self._buf += chunk
        raw, self._buf = self._buf.split(b"\0", 1)
        return json.loads(raw)

    def close(self):
        try:
            self.send("Browser.close", timeout=5)
        except Exception:
            pass
        try:
            self.proc.wait(timeout=10)
        except subprocess.TimeoutExpired:
            self.proc.kill()
        os.close(self._to_w)
        os.close(self._from_r)


@pytest.fixture(scope="module")
def plan_dir(tmp_path_factory):
    from conftest import cli_code

    out = tmp_path_factory.mktemp("plan-browser")
    assert cli_code("plan", SITES / "smallsat-lab.toml", "--out", out) == 0
    return out


def test_report_in_headless_chromium(plan_dir, tmp_path):
    exe = _browser()
    if exe is None:
        pytest.skip("no headless Chromium installed (apt-get install chromium-headless-shell)")
    cdp = _Cdp(exe, str(tmp_path / "profile"))
    try:
        try:
            target = cdp.send("Target.createTarget", {"url": "about:blank"})["targetId"]
        except (RuntimeError, TimeoutError) as exc:
            pytest.skip(f"the browser did not start its DevTools pipe: {exc}")
        session = cdp.send("Target.attachToTarget", {"targetId": target, "flatten": True})["sessionId"]
        cdp.send("Network.enable", session=session)
        cdp.send("Page.enable", session=session)
        url = (plan_dir / "report.html").resolve().as_uri()
        cdp.send("Page.navigate", {"url": url}, session=session)
        cdp.wait_event("Page.loadEventFired", timeout=60)
        probe = """JSON.stringify({
            images: Array.from(document.images).map(i => ({ok: i.complete && i.naturalWidth > 0,
                                                         w: i.naturalWidth, alt: i.alt})),
            build: !!document.getElementById('build'),
            buildImages: Array.from(document.querySelectorAll('#build img')).length,
            title: document.title,
            text: document.body.innerText.slice(0, 200000)})"""
        result = cdp.send("Runtime.evaluate", {"expression": probe, "returnByValue": True}, session=session)
        page = json.loads(result["result"]["value"])
        requested = [e["params"]["request"]["url"] for e in cdp.events
                     if e.get("method") == "Network.requestWillBeSent"]
    finally:
        cdp.close()
    outside = [u for u in requested if not u.startswith(("file:", "data:", "about:"))]
    assert outside == [], outside  # the report is self-contained
    assert requested and requested[0] == url
    assert len(page["images"]) == 4 + 3, page["images"]  # four report figures, three connection figures
    assert all(img["ok"] and img["w"] > 100 for img in page["images"]), page["images"]  # decoded and shown
    assert page["build"] and page["buildImages"] == 3
    assert "Build sheet" in page["text"] and "Valid until" in page["text"]
    assert page["title"].startswith("Coil cage report")


def test_optional_pdf(plan_dir, run_cli, monkeypatch):
    """--pdf prints a PDF where a converter is installed; without one, one plain line and exit 2."""
    from conftest import assert_one_line_error

    if _browser() is not None:
        run = run_cli("report", plan_dir, "--pdf")
        assert run.code == 0, run
        data = (plan_dir / "report.pdf").read_bytes()
        assert data[:5] == b"%PDF-" and len(data) > 50_000  # PDF header (ISO 32000); figures embedded
    monkeypatch.setenv("PATH", "/nonexistent")
    run = run_cli("report", plan_dir, "--pdf")
    assert_one_line_error(run, "no PDF converter found")
    assert (plan_dir / "report.html").is_file()  # the HTML is still written
