#!/usr/bin/env python3
"""Open a report page in a real headless Chromium, as a reader would, and check it.

    python3 tests/browser/check_page.py PAGE.html SCREENSHOT.png [CHROMIUM]

Checks: the page loads from its file with no network request, no console
error or uncaught exception, every <img> loaded, every inline chart (<svg>)
laid out with a size, the embedded font in use; saves a full-page
screenshot. Prints one JSON line with what it found; exits 1 on a failure.

Chromium is driven over its DevTools protocol on a websocket. The websocket
client is written here on the standard library (RFC 6455: the opening
handshake, masked client frames, fragmented and long server frames), so the
check needs Python 3 and the `chromium` package and nothing else.
"""

import base64
import json
import os
import shutil
import socket
import struct
import subprocess
import sys
import tempfile
import time
import urllib.parse

TIMEOUT = 60.0


class WebSocket:
    """A minimal RFC 6455 client: text frames out, whole messages in."""

    def __init__(self, url):
        parts = urllib.parse.urlparse(url)
        self.sock = socket.create_connection((parts.hostname, parts.port), timeout=TIMEOUT)
        key = base64.b64encode(os.urandom(16)).decode()
        request = (
            f"GET {parts.path} HTTP/1.1\r\nHost: {parts.hostname}:{parts.port}\r\n"
            "Upgrade: websocket\r\nConnection: Upgrade\r\n"
            f"Sec-WebSocket-Key: {key}\r\nSec-WebSocket-Version: 13\r\n\r\n"
        )
        self.sock.sendall(request.encode())
        response = b""
        while b"\r\n\r\n" not in response:
            chunk = self.sock.recv(4096)
            if not chunk:
                raise RuntimeError("the browser closed the websocket during the handshake")
            response += chunk
        head, self.buffer = response.split(b"\r\n\r\n", 1)
        if b" 101 " not in head.split(b"\r\n")[0]:
            raise RuntimeError(f"websocket handshake refused: {head[:200]!r}")

    def send(self, text):
        data = text.encode()
        header = bytearray([0x81])  # FIN, text frame
        n = len(data)
        if n < 126:
            header.append(0x80 | n)
        elif n < 65536:
            header.append(0x80 | 126)
            header += struct.pack(">H", n)
        else:
            header.append(0x80 | 127)
            header += struct.pack(">Q", n)
        mask = os.urandom(4)
        header += mask
        masked = bytes(b ^ mask[i % 4] for i, b in enumerate(data))
        self.sock.sendall(bytes(header) + masked)

    def _read(self, n):
        while len(self.buffer) < n:
            chunk = self.sock.recv(1 << 20)
            if not chunk:
                raise RuntimeError("the browser closed the websocket")
            self.buffer += chunk
        out, self.buffer = self.buffer[:n], self.buffer[n:]
        return out

    def receive(self):
        message = b""
        while True:
            b0, b1 = self._read(2)
            opcode, n = b0 & 0x0F, b1 & 0x7F
            if n == 126:
                n = struct.unpack(">H", self._read(2))[0]
            elif n == 127:
                n = struct.unpack(">Q", self._read(8))[0]
            payload = self._read(n)
            if opcode == 0x8:
                raise RuntimeError("the browser closed the websocket")
            if opcode == 0x9:  # ping: answer with a pong
                continue
            message += payload
            if b0 & 0x80:
                return message.decode()


class DevTools:
    def __init__(self, url):
        self.ws = WebSocket(url)
        self.next_id = 0
        self.events = []

    def call(self, method, params=None, session=None):
        self.next_id += 1
        message = {"id": self.next_id, "method": method, "params": params or {}}
        if session:
            message["sessionId"] = session
        self.ws.send(json.dumps(message))
        while True:
            reply = json.loads(self.ws.receive())
            if reply.get("id") == self.next_id:
                if "error" in reply:
                    raise RuntimeError(f"{method}: {reply['error']}")
                return reply.get("result", {})
            self.events.append(reply)

    def wait_for(self, method, deadline):
        for i, event in enumerate(self.events):
            if event.get("method") == method:
                return self.events.pop(i)
        while time.monotonic() < deadline:
            event = json.loads(self.ws.receive())
            if event.get("method") == method:
                return event
            self.events.append(event)
        raise RuntimeError(f"timed out waiting for {method}")


CHECK = """(async () => {
  await document.fonts.ready;
  const images = [...document.images].map(i => ({src: i.src.slice(0, 60), ok: i.complete && i.naturalWidth > 0}));
  const charts = [...document.querySelectorAll('figure > svg')].map(s => {
    const r = s.getBoundingClientRect();
    return {title: (s.querySelector('title') || {}).textContent || '', width: r.width, height: r.height};
  });
  const fonts = [...document.fonts].map(f => ({family: f.family, weight: f.weight, status: f.status}));
  return JSON.stringify({
    images, charts, fonts,
    fontReady: document.fonts.check('12px "Liberation Sans"') && document.fonts.check('bold 12px "Liberation Sans"'),
    figures: document.querySelectorAll('figure').length,
    captions: document.querySelectorAll('figcaption').length,
    height: document.documentElement.scrollHeight,
  });
})()"""


def main():
    page, screenshot = sys.argv[1], sys.argv[2]
    chromium = sys.argv[3] if len(sys.argv) > 3 else (shutil.which("chromium") or shutil.which("chromium-browser"))
    if not chromium:
        print(json.dumps({"ok": False, "failures": ["no chromium found; install Debian's chromium package"]}))
        return 1
    profile = tempfile.mkdtemp(prefix="stratanet-browser-")
    browser = subprocess.Popen(
        [
            chromium, "--headless", "--no-sandbox", "--disable-gpu",
            "--disable-background-networking", "--disable-component-update",
            "--disable-sync", "--no-first-run", "--no-default-browser-check",
            "--disable-extensions", "--hide-scrollbars",
            f"--user-data-dir={profile}", "--remote-debugging-port=0", "about:blank",
        ],
        stdout=subprocess.DEVNULL, stderr=subprocess.DEVNULL,
    )
    failures = []
    found = {}
    try:
        port_file = os.path.join(profile, "DevToolsActivePort")
        deadline = time.monotonic() + TIMEOUT
        while not (os.path.exists(port_file) and len(open(port_file).read().split("\n")) >= 2):
            if time.monotonic() > deadline or browser.poll() is not None:
                raise RuntimeError("chromium did not start its DevTools endpoint")
            time.sleep(0.1)
        port, path = open(port_file).read().split("\n")[:2]
        tools = DevTools(f"ws://127.0.0.1:{port}{path}")
        target = tools.call("Target.createTarget", {"url": "about:blank"})["targetId"]
        session = tools.call("Target.attachToTarget", {"targetId": target, "flatten": True})["sessionId"]
        for domain in ("Page", "Runtime", "Log", "Network"):
            tools.call(f"{domain}.enable", session=session)
        tools.call("Emulation.setDeviceMetricsOverride",
                   {"width": 1100, "height": 900, "deviceScaleFactor": 1, "mobile": False}, session=session)
        url = "file://" + os.path.abspath(page)
        tools.call("Page.navigate", {"url": url}, session=session)
        tools.wait_for("Page.loadEventFired", time.monotonic() + TIMEOUT)
        result = tools.call("Runtime.evaluate", {"expression": CHECK, "awaitPromise": True, "returnByValue": True}, session=session)
        found = json.loads(result["result"]["value"])
        height = int(found["height"])
        tools.call("Emulation.setDeviceMetricsOverride",
                   {"width": 1100, "height": height, "deviceScaleFactor": 1, "mobile": False}, session=session)
        shot = tools.call("Page.captureScreenshot", {"format": "png", "captureBeyondViewport": True}, session=session)
        with open(screenshot, "wb") as f:
            f.write(base64.b64decode(shot["data"]))
        for event in tools.events:
            method, params = event.get("method"), event.get("params", {})
            if method == "Runtime.consoleAPICalled" and params.get("type") in ("error", "assert"):
                failures.append("console error: " + " ".join(str(a.get("value", a.get("description", ""))) for a in params.get("args", [])))
            elif method == "Runtime.exceptionThrown":
                failures.append("uncaught exception: " + params.get("exceptionDetails", {}).get("text", ""))
            elif method == "Log.entryAdded" and params.get("entry", {}).get("level") == "error":
                failures.append("log error: " + params["entry"].get("text", ""))
            elif method == "Network.requestWillBeSent":
                requested = params.get("request", {}).get("url", "")
                if not requested.startswith(("file:", "data:", "about:")):
                    failures.append("network request: " + requested)
        tools.call("Browser.close")
    except Exception as e:  # noqa: BLE001 - every failure is reported, not raised
        failures.append(f"{type(e).__name__}: {e}")
    finally:
        try:
            browser.wait(timeout=10)
        except subprocess.TimeoutExpired:
            browser.kill()
        shutil.rmtree(profile, ignore_errors=True)
    for image in found.get("images", []):
        if not image["ok"]:
            failures.append(f"image not loaded: {image['src']}")
    for chart in found.get("charts", []):
        if chart["width"] < 100 or chart["height"] < 100:
            failures.append(f"chart not laid out: {chart}")
    if found and not found.get("fontReady"):
        failures.append(f"the embedded font is not in use: {found.get('fonts')}")
    if found and found.get("figures", 0) == 0:
        failures.append("the page shows no figure")
    if found and found.get("captions") != found.get("figures"):
        failures.append("a figure has no caption")
    print(json.dumps({
        "ok": not failures,
        "failures": failures,
        "figures": found.get("figures"),
        "images": len(found.get("images", [])),
        "charts": len(found.get("charts", [])),
        "screenshot": screenshot,
    }))
    return 0 if not failures else 1


if __name__ == "__main__":
    sys.exit(main())
