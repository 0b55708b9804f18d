"""The study report in a real browser: headless Chromium renders it, every figure is there and not empty,
no console message (the page has no script), and a screenshot is a real picture.

Skipped only when Debian's chromium is not installed (``apt-get install -y chromium chromium-driver``).
The reports are those of the invented solvent-recovery and three-zone-site case studies; nothing here
checks a published number (tests/io/test_report.py and tests/cli/test_report_cli.py do).
"""

import re
import shutil
import struct
import subprocess
import xml.etree.ElementTree as ET
from pathlib import Path

import numpy as np
import pytest

from heatloom import cli

ROOT = Path(__file__).resolve().parents[2]
DEMO = ROOT / "case_studies" / "solvent_recovery"
SITE = ROOT / "case_studies" / "three_zone_site"
CASES = {   # case folder, figures, sections that must be there
    "study": (DEMO, 7, ("summary", "targets", "sweep", "design", "safety", "methods")),   # composite, grand
    # composite, balanced composite, driving force, two sweep figures, grid diagram
    "site": (SITE, 3, ("summary", "zones", "mains", "safety", "methods")),   # zone grand composites, zone
    # profiles, site profiles
}
FLAGS = ["--headless", "--no-sandbox", "--disable-gpu", "--disable-quic", "--no-first-run",
         "--disable-background-networking", "--disable-component-update", "--disable-sync", "--hide-scrollbars"]
SVG = "{http://www.w3.org/2000/svg}"


def chromium() -> str:
    for name in ("/usr/bin/chromium", shutil.which("chromium"), shutil.which("chromium-browser")):
        if name and Path(name).exists():
            return name
    pytest.skip("headless Chromium is not installed (Debian: apt-get install -y chromium chromium-driver)")


def browse(tmp_path: Path, page: Path, *extra: str) -> subprocess.CompletedProcess:
    """Chromium on a page with a fresh profile; console messages logged to stderr."""
    profile = tmp_path / f"profile-{len(list(tmp_path.glob('profile-*')))}"
    cmd = [chromium(), *FLAGS, f"--user-data-dir={profile}", "--enable-logging=stderr", "--v=0", *extra,
           page.resolve().as_uri()]
    return subprocess.run(cmd, capture_output=True, text=True, timeout=180, check=False)


def console_messages(stderr: str) -> list[str]:
    return [line for line in stderr.splitlines() if ":CONSOLE" in line]


@pytest.fixture(scope="module", params=list(CASES))
def report(request, tmp_path_factory):
    chromium()                                                # skip before making the report when there is none
    folder, figures, sections = CASES[request.param]
    out = tmp_path_factory.mktemp("report")
    argv = ["report", str(folder), "--out", str(out), "--quiet"] + (["--sweep", "5:30"] if folder == DEMO else [])
    saved = cli.COMMANDS
    cli.COMMANDS = tuple(dict.fromkeys((*saved, "report")))   # until the lead lists "report" in cli.COMMANDS
    try:
        assert cli.main(argv) == 0
    finally:
        cli.COMMANDS = saved
    return out / "report.html", figures, sections


def test_console_capture_works(tmp_path):
    # the check below can fail: a page with an error and a console message is caught by it
    page = tmp_path / "error.html"
    page.write_text('<!DOCTYPE html><html><head><title>t</title></head><body><p>x</p>'
                    '<script>console.error("made-up problem"); notAFunction();</script></body></html>',
                    encoding="utf-8")
    result = browse(tmp_path, page, "--dump-dom")
    messages = console_messages(result.stderr)
    assert any("made-up problem" in m for m in messages)
    assert any("Uncaught ReferenceError" in m for m in messages)


def test_every_figure_rendered_and_no_console_message(tmp_path, report):
    report, figures, sections = report
    html = report.read_text(encoding="utf-8")
    assert not re.search(r"<script\b", html, flags=re.I)       # the report itself has no JavaScript
    stated = int(re.search(r'<meta name="heatloom-figures" content="(\d+)" />', html).group(1))
    assert stated == figures
    result = browse(tmp_path, report, "--dump-dom")
    assert result.returncode == 0, result.stderr[-2000:]
    assert console_messages(result.stderr) == []
    dom = result.stdout
    assert f'id="figure-count">{figures}<' in dom
    svgs = re.findall(r"<svg\b.*?</svg>", dom, flags=re.S)
    assert len(svgs) == stated
    assert len(re.findall(r"<figure\b", dom)) == stated
    for s in svgs:
        root = ET.fromstring(s)
        assert len(list(root.iter(f"{SVG}path"))) > 20           # drawn, not an empty frame
        w, h = (float(x) for x in root.get("viewBox").split()[2:])
        assert w > 100 and h > 100
    for key in sections:
        assert f'<section id="{key}">' in dom


def png_size(data: bytes) -> tuple[int, int]:
    assert data[:8] == b"\x89PNG\r\n\x1a\n" and data[12:16] == b"IHDR"
    return struct.unpack(">II", data[16:24])


def test_screenshot_is_a_real_picture(tmp_path, report):
    import matplotlib.image as mpimg

    report, _, _ = report
    shot = tmp_path / "report.png"
    result = browse(tmp_path, report, f"--screenshot={shot}", "--window-size=1280,4000")
    assert result.returncode == 0, result.stderr[-2000:]
    assert console_messages(result.stderr) == []
    data = shot.read_bytes()
    assert png_size(data) == (1280, 4000)
    assert len(data) > 50_000
    pixels = mpimg.imread(shot)[..., :3]
    ink = np.mean(pixels.mean(axis=2) < 0.85)            # share of pixels darker than the page
    assert 0.01 < ink < 0.6
    rows = np.flatnonzero((pixels.mean(axis=2) < 0.85).any(axis=1))
    assert rows.min() < 200 and rows.max() > 3000          # content from the top to near the bottom
