"""The comparison page in a real browser: Debian's headless Chromium.

Marked ``browser``; skips with a reason when no ``chromium`` is on the PATH (install it with
``apt-get install --no-install-recommends chromium``; .ci/run does). Chromium is driven from its
own command line, so no Python package is needed: ``--dump-dom`` prints the DOM once the page has
loaded and any script in it has run, and ``--screenshot`` saves a PNG. Layout, keyboard and print
checks drive it through ChromeDriver (``apt-get install chromium-driver``) over the W3C WebDriver
protocol with the standard library's HTTP client (``WebDriver`` below; they skip without it).

A dumped DOM cannot show a window variable, so every hostile payload (test_compare.HOSTILE) also
tries to set ``data-pwned`` on the root element: the dumped DOM must not carry it. A control page
with the same payloads pasted in raw shows that the check does see script that runs.
"""

from __future__ import annotations

import base64
import json
import re
import shutil
import socket
import struct
import subprocess
import tempfile
import time
import urllib.request
from pathlib import Path

import pytest

from scoring.combine import rank
from summarize import report_html
from summarize.reading import read_document
from test_compare import GOOD, GOOD_STATES, HOSTILE, SOURCE, WEAK, WEAK_STATES, fake_candidate, fake_comparison
from test_compare import fake_keyword_set

CHROMIUM = shutil.which("chromium") or shutil.which("chromium-browser")
CHROMEDRIVER = shutil.which("chromedriver")
ARTIFACTS = Path(__file__).resolve().parents[1] / "test-artifacts"
SCREENSHOT = ARTIFACTS / "compare-report.png"
WINDOW = (1280, 2000)

pytestmark = [
    pytest.mark.browser,
    pytest.mark.skipif(
        CHROMIUM is None, reason="chromium is not installed (apt-get install --no-install-recommends chromium)"
    ),
]


def chromium(url: str, *extra: str) -> str:
    """Run headless Chromium once with a fresh profile and no network services; return stdout."""
    with tempfile.TemporaryDirectory(prefix="boildown-chromium-") as profile:
        cmd = [
            CHROMIUM, "--headless", "--no-sandbox", "--disable-gpu", "--disable-background-networking",
            "--disable-component-update", "--no-first-run", "--disable-sync", "--disable-extensions",
            "--hide-scrollbars", f"--user-data-dir={profile}", *extra, url,
        ]
        done = subprocess.run(cmd, capture_output=True, text=True, timeout=180)
    if done.returncode != 0:
        pytest.fail(f"chromium exited {done.returncode}: {done.stderr.strip()[-800:]}")
    return done.stdout


def pwned(dom: str) -> bool:
    """Whether a payload marked the root element (its start tag carries data-pwned)."""
    root = re.search(r"<html\b[^>]*>", dom, re.I)
    assert root, dom[:200]
    return "data-pwned" in root.group(0)


def dump_dom(path: Path) -> str:
    # a few seconds of virtual time, so an image's error handler would have had its turn
    return chromium(path.as_uri(), "--virtual-time-budget=3000", "--dump-dom")


@pytest.fixture(scope="module")
def hostile_page(tmp_path_factory) -> Path:
    page = tmp_path_factory.mktemp("page") / "compare.html"
    page.write_text(report_html.render_html(fake_comparison(hostile=True, references=True)), encoding="utf-8")
    return page


def test_page_in_chromium_has_its_parts_and_runs_no_document_script(hostile_page):
    dom = dump_dom(hostile_page)
    assert dom.lstrip().lower().startswith("<!doctype html>") and '<html lang="en">' in dom
    assert '<table class="ranking">' in dom and '<table class="grid">' in dom and "<svg" in dom
    assert dom.count('class="st ') >= 2 * 7  # one state cell per key word and candidate
    assert not pwned(dom)  # no payload ran
    # the payloads are on the page as text (the DOM serialiser escapes them back)
    assert "&lt;script&gt;window.__pwned=1;" in dom and "&lt;/table&gt;" in dom
    assert "<script" not in dom.lower()


def test_escaping_alone_holds_without_the_content_security_policy(hostile_page, tmp_path):
    page = tmp_path / "no-csp.html"
    text = hostile_page.read_text(encoding="utf-8")
    meta = f'<meta http-equiv="Content-Security-Policy" content="{report_html.esc(report_html.CSP)}">\n'
    assert meta in text
    page.write_text(text.replace(meta, ""), encoding="utf-8")
    assert not pwned(dump_dom(page))


def test_control_the_check_sees_script_that_runs_and_the_policy_stops_it(tmp_path):
    payloads = "".join(HOSTILE[:2])
    raw = '<!doctype html><html lang="en"><head>{head}</head><body><p>control</p>' + payloads + "</body></html>"
    unprotected = tmp_path / "raw.html"
    unprotected.write_text(raw.format(head=""), encoding="utf-8")
    assert pwned(dump_dom(unprotected))  # the detector works: raw payloads do run
    protected = tmp_path / "raw-csp.html"
    meta = f'<meta http-equiv="Content-Security-Policy" content="{report_html.esc(report_html.CSP)}">'
    protected.write_text(raw.format(head=meta), encoding="utf-8")
    assert not pwned(dump_dom(protected))  # and our policy alone blocks them


def test_screenshot_saved_as_artifact(hostile_page):
    ARTIFACTS.mkdir(exist_ok=True)
    SCREENSHOT.unlink(missing_ok=True)
    chromium(hostile_page.as_uri(), f"--window-size={WINDOW[0]},{WINDOW[1]}", f"--screenshot={SCREENSHOT}")
    data = SCREENSHOT.read_bytes()
    # PNG signature and IHDR size (PNG specification, W3C REC 2003, sections 5.2 and 11.2.2)
    assert data[:8] == b"\x89PNG\r\n\x1a\n"
    assert struct.unpack(">II", data[16:24]) == WINDOW
    assert len(data) > 50_000  # a blank page of this size compresses to a few kilobytes


# --------------------------------------------------------------------------- layout, keyboard, print

needs_driver = pytest.mark.skipif(CHROMEDRIVER is None, reason="chromedriver is not installed "
                                  "(apt-get install --no-install-recommends chromium-driver)")
# W3C WebDriver, "Keyboard actions": the code points of the keys pressed
TAB, ENTER, SPACE = "\ue004", "\ue007", " "
# CSS pixels of an A4 page (210 mm at 96 per inch) less the print stylesheet's 14 mm margins
PRINT_WIDTH = round((210 - 2 * 14) / 25.4 * 96)


class WebDriver:
    """The few W3C WebDriver commands these tests need, spoken to ChromeDriver over HTTP."""

    def __init__(self, width: int, height: int = 1000):
        with socket.socket() as probe:
            probe.bind(("127.0.0.1", 0))
            port = probe.getsockname()[1]
        self.profile = tempfile.TemporaryDirectory(prefix="boildown-chromedriver-")
        self.driver = subprocess.Popen([CHROMEDRIVER, f"--port={port}"], stdout=subprocess.DEVNULL,
                                       stderr=subprocess.DEVNULL)
        self.base = f"http://127.0.0.1:{port}"
        for _ in range(100):
            try:
                self._send("GET", "/status")
                break
            except OSError:
                time.sleep(0.1)
        args = ["--headless", "--no-sandbox", "--disable-gpu", "--hide-scrollbars", "--no-first-run",
                "--disable-extensions", "--disable-background-networking", f"--window-size={width},{height}",
                f"--user-data-dir={self.profile.name}"]
        caps = {"capabilities": {"alwaysMatch": {"browserName": "chrome",
                                                 "goog:chromeOptions": {"binary": CHROMIUM, "args": args}}}}
        self.session = self._send("POST", "/session", caps)["sessionId"]

    def _send(self, method: str, path: str, body=None):
        data = json.dumps(body).encode() if body is not None else None
        request = urllib.request.Request(self.base + path, data=data, method=method,
                                         headers={"Content-Type": "application/json"})
        with urllib.request.urlopen(request, timeout=180) as answer:
            return json.loads(answer.read() or b"{}").get("value")

    def command(self, method: str, path: str, body=None):
        return self._send(method, f"/session/{self.session}{path}", body)

    def open(self, url: str) -> None:
        self.command("POST", "/url", {"url": url})

    def js(self, script: str, *args):
        """Run a function body in the page (WebDriver's own channel: the page's policy does not apply)."""
        return self.command("POST", "/execute/sync", {"script": script, "args": list(args)})

    def press(self, *keys: str) -> None:
        steps = [step for k in keys for step in ({"type": "keyDown", "value": k}, {"type": "keyUp", "value": k})]
        self.command("POST", "/actions", {"actions": [{"type": "key", "id": "keyboard", "actions": steps}]})

    def cdp(self, cmd: str, params: dict):
        """A Chrome DevTools Protocol command through ChromeDriver's extension endpoint."""
        return self.command("POST", "/goog/cdp/execute", {"cmd": cmd, "params": params})

    def close(self) -> None:
        try:
            self.command("DELETE", "")
        finally:
            self.driver.terminate()
            self.driver.wait(timeout=30)
            self.profile.cleanup()


@pytest.fixture(scope="module")
def editors_page(tmp_path_factory) -> Path:
    """Three candidates with the long names an editor's files and boildown's own drafts have."""
    from summarize import compare as comparing

    document = read_document(SOURCE)
    good = GOOD.read_text().strip()
    ranked = rank([
        fake_candidate("annual_water_quality_report.abstract_good.txt", good, GOOD_STATES, share=0.62, fluency=0.81),
        fake_candidate("boildown:balanced", good.replace(" over eleven weeks,", ""), GOOD_STATES, share=0.55,
                       fluency=0.85),
        fake_candidate("annual_water_quality_report.abstract_weak.txt", WEAK.read_text().strip(), WEAK_STATES,
                       share=0.12, fluency=0.9),
    ])
    cmp = comparing.assemble(document, ranked, fake_keyword_set(document.text), budget=60, name="source.md")
    page = tmp_path_factory.mktemp("editor") / "compare.html"
    page.write_text(report_html.render_html(cmp), encoding="utf-8")
    return page


@pytest.fixture
def browser_at(request):
    opened = []

    def start(width: int, height: int = 1000) -> WebDriver:
        opened.append(WebDriver(width, height))
        return opened[-1]

    yield start
    for b in opened:
        b.close()


# every text run of a heading or a column label that the browser laid out on more than one line
BROKEN_WORDS = """
const broken = [];
for (const el of document.querySelectorAll('h1, h2, h3, th, legend, .pick label, .chart-legend li')) {
  const walker = document.createTreeWalker(el, NodeFilter.SHOW_TEXT);
  for (let node = walker.nextNode(); node; node = walker.nextNode()) {
    for (const m of node.data.matchAll(/\\S+/g)) {
      const range = document.createRange();
      range.setStart(node, m.index);
      range.setEnd(node, m.index + m[0].length);
      const lines = new Set([...range.getClientRects()].filter(r => r.width > 0).map(r => Math.round(r.bottom)));
      if (lines.size > 1) broken.push(el.tagName + ': ' + m[0]);
    }
  }
}
return broken;
"""


@needs_driver
@pytest.mark.parametrize("width", [1400, 800])
def test_layout_keeps_every_header_word_whole(editors_page, browser_at, width):
    browser = browser_at(width)
    browser.open(editors_page.as_uri())
    assert browser.js(BROKEN_WORDS) == []
    # the page itself never scrolls sideways (wide tables scroll inside their own region)
    assert browser.js("return document.documentElement.scrollWidth <= window.innerWidth")
    # the three candidates stand side by side, in rank order, none overlapping
    boxes = browser.js("return [...document.querySelectorAll('.col')].map(c => c.getBoundingClientRect().toJSON())")
    assert len(boxes) == 3 and len({round(b["top"]) for b in boxes}) == 1
    assert all(a["right"] <= b["left"] for a, b in zip(boxes, boxes[1:]))
    ARTIFACTS.mkdir(exist_ok=True)
    shot = browser.command("GET", "/screenshot")
    (ARTIFACTS / f"compare-report-{width}.png").write_bytes(base64.b64decode(shot))


def active(browser: WebDriver) -> dict:
    return browser.js("const a = document.activeElement; const s = a.closest('section');"
                      "return {tag: a.tagName, id: a.id, text: a.textContent.trim(), section: s ? s.id : null,"
                      "hash: location.hash}")


def tab_to(browser: WebDriver, text: str, limit: int = 60) -> dict:
    for _ in range(limit):
        browser.press(TAB)
        now = active(browser)
        if now["text"] == text:
            return now
    pytest.fail(f"{text!r} was not reached with Tab")


@needs_driver
def test_keyboard_moves_between_the_views(editors_page, browser_at):
    browser = browser_at(1400)
    browser.open(editors_page.as_uri())
    browser.press(TAB)
    assert active(browser)["text"] == "Skip to the report"  # the first stop (WCAG 2.4.1)
    tab_to(browser, "Side by side")
    browser.press(ENTER)
    here = active(browser)
    assert here["hash"] == "#side" and here["id"] == "side"  # the view itself has the focus
    browser.press(TAB)
    first = active(browser)
    assert first["section"] == "side" and first["id"] == "show-1"  # the first column's box
    browser.press(TAB, TAB)  # the third column's box, two stops on: the space bar unticks it
    assert active(browser)["id"] == "show-3"
    browser.press(SPACE)
    assert browser.js("return getComputedStyle(document.getElementById('c-3')).display") == "none"
    assert browser.js("return getComputedStyle(document.getElementById('c-2')).display") != "none"
    back = tab_to(browser, "Back to the list of views")
    assert back["section"] == "side"
    browser.press(ENTER)
    assert active(browser)["hash"] == "#views"
    browser.press(TAB)
    assert active(browser)["text"] == "Ranking"  # the first view in the list
    tab_to(browser, "Key words by candidate")
    browser.press(ENTER)
    assert active(browser)["id"] == "keywords"


@needs_driver
def test_print_keeps_the_side_by_side_view_legible(editors_page, browser_at):
    browser = browser_at(1400)
    browser.open(editors_page.as_uri())
    browser.cdp("Emulation.setEmulatedMedia", {"media": "print"})
    browser.cdp("Emulation.setDeviceMetricsOverride", {"width": PRINT_WIDTH, "height": 1000, "deviceScaleFactor": 1,
                                                       "mobile": False})
    cols = browser.js("""return [...document.querySelectorAll('.col')].map(c => {
        const r = c.getBoundingClientRect(), s = getComputedStyle(c.querySelector('.ct'));
        return {left: r.left, right: r.right, top: r.top, width: r.width, font: parseFloat(s.fontSize),
                shown: getComputedStyle(c).display !== 'none'};
      })""")
    assert [c["shown"] for c in cols] == [True, True, True]  # what the reader chose, all three here
    # two to a row across the page, each wide enough for about 40 characters of 9-point text or more
    # (common practice in typesetting: 45 to 75 characters a line reads comfortably; 40 is our floor)
    assert cols[0]["top"] == cols[1]["top"] < cols[2]["top"]
    for c in cols:
        assert c["font"] >= 12 and c["width"] >= 40 * 0.5 * c["font"] and c["right"] <= PRINT_WIDTH
    assert browser.js("return getComputedStyle(document.querySelector('.pick')).display") == "none"
    assert browser.js("return document.documentElement.scrollWidth") <= PRINT_WIDTH
    pdf = base64.b64decode(browser.cdp("Page.printToPDF", {"printBackground": False})["data"])
    assert pdf[:5] == b"%PDF-"  # PDF 1.7 (ISO 32000-1) section 7.5.2: the header line
    ARTIFACTS.mkdir(exist_ok=True)
    (ARTIFACTS / "compare-report.pdf").write_bytes(pdf)
