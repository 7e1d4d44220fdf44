"""Open an HTML file in headless Chromium and report what it rendered.

Usage: browser_check.py CHROMIUM PAGE.html SCREENSHOT.png

Talks to the browser over the DevTools protocol on a pipe
(--remote-debugging-pipe: commands on fd 3, replies on fd 4, each message
JSON ended by a NUL byte), so it needs nothing beyond the standard library.
Loads the page from disk, then prints one JSON object on stdout:

- figures: for each <figure class="plot">, its id, the rendered size of its
  <svg> and how many drawing elements the svg holds;
- console: console calls, uncaught exceptions and log entries at warning or
  error level (a failed resource load shows there), each as text;
- page_height: the rendered document height in CSS pixels;
and writes a full-page PNG screenshot.
"""

import base64
import json
import os
import select
import subprocess
import sys
import tempfile
import time

TIMEOUT_S = 60.0

FIGURES_JS = """
JSON.stringify({
  figures: Array.from(document.querySelectorAll('figure.plot')).map(f => {
    const svg = f.querySelector('svg');
    const box = svg ? svg.getBoundingClientRect() : {width: 0, height: 0};
    const shapes = svg ? svg.querySelectorAll('path, polyline, line, rect, circle, text').length : 0;
    return {id: f.id, width: box.width, height: box.height, shapes: shapes};
  }),
  page_height: document.documentElement.scrollHeight
})
"""


class Browser:
    def __init__(self, chromium, profile):
        to_browser_r, self.to_browser = os.pipe()
        self.from_browser, from_browser_w = os.pipe()

        def wire():
            os.dup2(to_browser_r, 3)
            os.dup2(from_browser_w, 4)

        flags = [
            "--headless",
            "--no-sandbox",
            "--disable-gpu",
            "--disable-quic",
            "--no-first-run",
            "--disable-background-networking",
            "--disable-component-update",
            "--disable-sync",
            f"--user-data-dir={profile}",
            "--remote-debugging-pipe",
            "about:blank",
        ]
        self.proc = subprocess.Popen(
            [chromium] + flags,
            pass_fds=(3, 4),
            preexec_fn=wire,
            stdin=subprocess.DEVNULL,
            stdout=subprocess.DEVNULL,
            stderr=subprocess.DEVNULL,
        )
        os.close(to_browser_r)
        os.close(from_browser_w)
        self.buffer = b""
        self.next_id = 0
        self.events = []
        self.deadline = time.monotonic() + TIMEOUT_S

    def send(self, method, params=None, session=None):
        self.next_id += 1
        message = {"id": self.next_id, "method": method, "params": params or {}}
        if session:
            message["sessionId"] = session
        os.write(self.to_browser, json.dumps(message).encode() + b"\0")
        return self.next_id

    def receive(self):
        while b"\0" not in self.buffer:
            left = self.deadline - time.monotonic()
            if left <= 0 or not select.select([self.from_browser], [], [], left)[0]:
                raise TimeoutError("the browser stopped answering")
            chunk = os.read(self.from_browser, 1 << 20)
            if not chunk:
                raise EOFError("the browser closed its pipe")
            self.buffer += chunk
        message, self.buffer = self.buffer.split(b"\0", 1)
        return json.loads(message)

    def call(self, method, params=None, session=None):
        wanted = self.send(method, params, session)
        while True:
            message = self.receive()
            if message.get("id") == wanted:
                if "error" in message:
                    raise RuntimeError(f"{method}: {message['error']}")
                return message["result"]
            self.events.append(message)

    def wait_for(self, method):
        for k, event in enumerate(self.events):
            if event.get("method") == method:
                return self.events.pop(k)
        while True:
            message = self.receive()
            if message.get("method") == method:
                return message
            self.events.append(message)

    def close(self):
        try:
            self.send("Browser.close")
            self.proc.wait(timeout=10)
        except Exception:
            self.proc.kill()
            self.proc.wait()


def problems(events):
    found = []
    for e in events:
        method, params = e.get("method"), e.get("params", {})
        if method == "Runtime.consoleAPICalled":
            text = " ".join(str(a.get("value", a.get("description", ""))) for a in params.get("args", []))
            found.append(f"console.{params.get('type')}: {text}")
        elif method == "Runtime.exceptionThrown":
            found.append(f"exception: {params.get('exceptionDetails', {}).get('text')}")
        elif method == "Log.entryAdded":
            entry = params.get("entry", {})
            if entry.get("level") in ("warning", "error"):
                found.append(f"log {entry.get('level')}: {entry.get('text')} {entry.get('url', '')}")
    return found


def main():
    chromium, page, screenshot = sys.argv[1], os.path.abspath(sys.argv[2]), sys.argv[3]
    with tempfile.TemporaryDirectory() as profile:
        browser = Browser(chromium, profile)
        try:
            target = browser.call("Target.createTarget", {"url": "about:blank"})["targetId"]
            session = browser.call(
                "Target.attachToTarget", {"targetId": target, "flatten": True}
            )["sessionId"]
            for domain in ("Runtime", "Log", "Page"):
                browser.call(f"{domain}.enable", session=session)
            browser.call(
                "Emulation.setDeviceMetricsOverride",
                {"width": 1200, "height": 900, "deviceScaleFactor": 1, "mobile": False},
                session=session,
            )
            browser.call("Page.navigate", {"url": "file://" + page}, session=session)
            browser.wait_for("Page.loadEventFired")
            result = browser.call(
                "Runtime.evaluate",
                {"expression": FIGURES_JS, "returnByValue": True},
                session=session,
            )
            rendered = json.loads(result["result"]["value"])
            size = browser.call("Page.getLayoutMetrics", session=session)["cssContentSize"]
            shot = browser.call(
                "Page.captureScreenshot",
                {
                    "format": "png",
                    "captureBeyondViewport": True,
                    "clip": {"x": 0, "y": 0, "width": size["width"], "height": size["height"], "scale": 1},
                },
                session=session,
            )
            with open(screenshot, "wb") as f:
                f.write(base64.b64decode(shot["data"]))
            rendered["console"] = problems(browser.events)
        finally:
            browser.close()
    print(json.dumps(rendered))


if __name__ == "__main__":
    main()
