"""The comparison page in a real browser: Debian's headless Chromium.

Marked ``browser``; skips with a reason when no ``chromium`` is on the PATH (install it with
``apt-get install --no-install-recommends chromium``; .ci/run does). Chromium is driven from its
own command line, so no Python package is needed: ``--dump-dom`` prints the DOM once the page has
loaded and any script in it has run, and ``--screenshot`` saves a PNG.

A dumped DOM cannot show a window variable, so every hostile payload (test_compare.HOSTILE) also
tries to set ``data-pwned`` on the root element: the dumped DOM must not carry it. A control page
with the same payloads pasted in raw shows that the check does see script that runs.
"""

from __future__ import annotations

import re
import shutil
import struct
import subprocess
import tempfile
from pathlib import Path

import pytest

from summarize import report_html
from test_compare import HOSTILE, fake_comparison

CHROMIUM = shutil.which("chromium") or shutil.which("chromium-browser")
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
