"""A headless Chromium driven through the DevTools protocol over a pipe (``--remote-debugging-pipe``).

Chromium reads protocol commands from file descriptor 3 and writes replies
and events to descriptor 4, each message JSON ended by a NUL byte; no
websocket client or browser-automation package is needed.
"""

# source: Chrome DevTools Protocol documentation (chromedevtools.github.io/devtools-protocol): the pipe transport
# on fds 3/4 with NUL-ended JSON messages, and the Page, Runtime, Log and Network domains used below.

import base64
import contextlib
import json
import os
import select
import shutil
import subprocess
import tempfile
import time

#: Names of the Chromium executable on Debian and elsewhere.
EXECUTABLES = ("chromium", "chromium-browser", "google-chrome", "google-chrome-stable")

#: What the page reports about its figures once loaded.
FIGURES_JS = """JSON.stringify(Array.from(document.querySelectorAll('figure img')).map(i => {
  const r = i.getBoundingClientRect();
  return {alt: i.alt, complete: i.complete, natural: [i.naturalWidth, i.naturalHeight], shown: [r.width, r.height]};
}))"""


def find_chromium():
    """The path of an installed Chromium (or Chrome), or None."""
    return next((shutil.which(n) for n in EXECUTABLES if shutil.which(n)), None)


class Chromium:
    """One headless browser; :meth:`load` opens a page and records what went wrong while it loaded."""

    def __init__(self, executable, timeout_s=60.0):
        self.timeout_s = timeout_s
        self._profile = tempfile.TemporaryDirectory(prefix="planetfit-chromium-")
        commands_r, self._commands = os.pipe()
        self._replies, replies_w = os.pipe()

        def on_fds_3_and_4():
            os.dup2(commands_r, 3)
            os.dup2(replies_w, 4)

        self.process = subprocess.Popen(
            [
                executable,
                "--headless",
                "--no-sandbox",  # tests may run as root, where Chromium's sandbox refuses to start
                "--disable-gpu",
                "--no-first-run",
                "--disable-extensions",
                "--disable-background-networking",
                "--hide-scrollbars",
                "--remote-debugging-pipe",
                f"--user-data-dir={self._profile.name}",
                "about:blank",
            ],
            stdin=subprocess.DEVNULL,
            stdout=subprocess.DEVNULL,
            stderr=subprocess.DEVNULL,
            preexec_fn=on_fds_3_and_4,
            pass_fds=(3, 4),
        )
        os.close(commands_r)
        os.close(replies_w)
        self._buffer, self._next_id, self.events = b"", 0, []

    def _read_message(self, deadline):
        while b"\0" not in self._buffer:
            left = deadline - time.monotonic()
            if left <= 0 or not select.select([self._replies], [], [], left)[0]:
                raise TimeoutError("Chromium did not answer in time")
            chunk = os.read(self._replies, 1 << 20)
            if not chunk:
                raise RuntimeError("Chromium closed the protocol pipe")
            self._buffer += chunk
        message, _, self._buffer = self._buffer.partition(b"\0")
        return json.loads(message)

    def send(self, method, session=None, **params):
        """Send one command and return its result; events that arrive meanwhile are kept in :attr:`events`."""
        self._next_id += 1
        message = {"id": self._next_id, "method": method, "params": params}
        if session:
            message["sessionId"] = session
        os.write(self._commands, json.dumps(message).encode() + b"\0")
        deadline = time.monotonic() + self.timeout_s
        while True:
            reply = self._read_message(deadline)
            if reply.get("id") == self._next_id:
                if "error" in reply:
                    raise RuntimeError(f"{method}: {reply['error']}")
                return reply.get("result", {})
            self.events.append(reply)

    def wait_for(self, method):
        """Wait for the event ``method`` (or find it among those already received)."""
        deadline = time.monotonic() + self.timeout_s
        while not any(e.get("method") == method for e in self.events):
            self.events.append(self._read_message(deadline))

    def load(self, url, screenshot_path, width=1280, height=900):
        """Open ``url``, wait for its load event, save a full-page PNG; return what the page did.

        Returns
        -------
        dict
            ``requests`` (every URL the page asked for), ``failed`` (failed
            requests), ``errors`` (console errors, uncaught exceptions, error
            log entries), ``figures`` (each image's natural and shown size) and
            ``size`` (the page's CSS width and height).
        """
        target = self.send("Target.createTarget", url="about:blank")["targetId"]
        session = self.send("Target.attachToTarget", targetId=target, flatten=True)["sessionId"]
        for domain in ("Page", "Runtime", "Log", "Network"):
            self.send(f"{domain}.enable", session)
        self.send(
            "Emulation.setDeviceMetricsOverride", session, width=width, height=height, deviceScaleFactor=1, mobile=False
        )
        self.events.clear()
        self.send("Page.navigate", session, url=url)
        self.wait_for("Page.loadEventFired")
        figures = json.loads(
            self.send("Runtime.evaluate", session, expression=FIGURES_JS, returnByValue=True)["result"]["value"]
        )
        content = self.send("Page.getLayoutMetrics", session)["cssContentSize"]
        clip = {"x": 0, "y": 0, "width": content["width"], "height": content["height"], "scale": 1}
        shot = self.send("Page.captureScreenshot", session, format="png", captureBeyondViewport=True, clip=clip)
        with open(screenshot_path, "wb") as fh:
            fh.write(base64.b64decode(shot["data"]))
        return {**_findings(self.events), "figures": figures, "size": (content["width"], content["height"])}

    def close(self):
        """End the browser and remove its profile."""
        with contextlib.suppress(Exception):
            self.send("Browser.close")
        try:
            self.process.wait(timeout=10)
        except subprocess.TimeoutExpired:
            self.process.kill()
            self.process.wait()
        os.close(self._commands)
        os.close(self._replies)
        self._profile.cleanup()


def _findings(events):
    """Requests, failed requests and errors among the protocol events of one page load."""
    out = {"requests": [], "failed": [], "errors": []}
    for e in events:
        method, p = e.get("method"), e.get("params", {})
        if method == "Network.requestWillBeSent":
            out["requests"].append(p["request"]["url"])
        elif method == "Network.loadingFailed":
            out["failed"].append(p.get("errorText", "failed"))
        elif method == "Network.responseReceived" and p["response"].get("status", 200) >= 400:
            out["failed"].append(f"{p['response']['url']}: HTTP {p['response']['status']}")
        elif method == "Runtime.consoleAPICalled" and p.get("type") in ("error", "assert"):
            out["errors"].append(" ".join(str(a.get("value", a.get("description"))) for a in p.get("args", [])))
        elif method == "Runtime.exceptionThrown":
            out["errors"].append(p["exceptionDetails"].get("text", "exception"))
        elif method == "Log.entryAdded" and p["entry"].get("level") == "error":
            out["errors"].append(p["entry"].get("text", "error"))
    return out
