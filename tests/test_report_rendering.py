"""The reports as a reader sees them: the HTML report and the building view rendered by
headless Chromium (screenshots, the DOM after the page's script ran, and the console),
the PDFs rendered page by page by pdftoppm and their text read by pdftotext.

Chromium and poppler-utils are Debian packages; .ci/run installs them.  Outside CI these
tests skip, saying which program is missing; with CI=true a missing program fails them.
"""

from __future__ import annotations

import os
import re
import shutil
import subprocess
from html.parser import HTMLParser
from pathlib import Path

import numpy as np
import pytest
from click.testing import CliRunner

from envelope.cli import main

ROOT = Path(__file__).resolve().parents[1]
CAUTION = "for checking by a licensed engineer and defer to local codes"
CHROMIUM_FLAGS = ("--headless", "--no-sandbox", "--disable-gpu",
                  "--disable-background-networking", "--disable-component-update",
                  "--no-first-run", "--disable-sync")


def _tool(name: str, package: str) -> str:
    path = shutil.which(name)
    if path is None:
        if os.environ.get("CI") == "true":
            pytest.fail(f"{name} is not installed; CI must install the Debian package "
                        f"{package} (.ci/run does)")
        pytest.skip(f"{name} not installed (Debian package {package}); runs in CI")
    return path


@pytest.fixture(scope="module")
def batch_out(tmp_path_factory: pytest.TempPathFactory) -> Path:
    """The example cases and the demo, run as a batch with --report (on two worker
    processes, so that the reports are written by the process pool too)."""
    out = tmp_path_factory.mktemp("batch")
    demo = out.parent / "demo.toml"
    demo.write_bytes((ROOT / "envelope" / "data" / "demo.toml").read_bytes())
    run = CliRunner().invoke(main, ["batch", str(ROOT / "cases"), str(demo), "-o",
                                    str(out), "--report", "--workers", "2"])
    assert run.exit_code == 0, run.output
    return out


class _Counter(HTMLParser):
    """Counts elements by tag and by id, and collects links and row classes."""

    def __init__(self) -> None:
        super().__init__()
        self.tags: dict[str, int] = {}
        self.ids: set[str] = set()
        self.links: list[str] = []
        self.rows: list[str] = []

    def handle_starttag(self, tag: str, attrs: list[tuple[str, str | None]]) -> None:
        a = dict(attrs)
        self.tags[tag] = self.tags.get(tag, 0) + 1
        if a.get("id"):
            self.ids.add(str(a["id"]))
        if tag == "a" and a.get("href"):
            self.links.append(str(a["href"]))
        if tag == "tr" and "data-status" in a:
            self.rows.append(str(a.get("class") or ""))


def _chromium(url: str, tmp: Path, *extra: str) -> subprocess.CompletedProcess[str]:
    exe = _tool("chromium", "chromium")
    profile = tmp / f"profile-{len(list(tmp.glob('profile-*')))}"
    cmd = [exe, *CHROMIUM_FLAGS, f"--user-data-dir={profile}", "--enable-logging=stderr",
           "--v=0", *extra, url]
    return subprocess.run(cmd, capture_output=True, text=True, timeout=180, check=False)


def _console(stderr: str) -> list[str]:
    """The page's console messages and uncaught errors from Chromium's log."""
    return [line for line in stderr.splitlines() if ":CONSOLE" in line]


def _dom(url: str, tmp: Path) -> tuple[_Counter, str, list[str]]:
    run = _chromium(url, tmp, "--dump-dom")
    assert run.returncode == 0, run.stderr[-2000:]
    counter = _Counter()
    counter.feed(run.stdout)
    return counter, run.stdout, _console(run.stderr)


def _screenshot(url: str, tmp: Path, name: str) -> np.ndarray:
    from matplotlib import image

    shot = tmp / name
    run = _chromium(url, tmp, f"--screenshot={shot}", "--window-size=1280,1600",
                    "--hide-scrollbars")
    assert run.returncode == 0 and shot.is_file(), run.stderr[-2000:]
    assert _console(run.stderr) == []
    pixels = image.imread(shot)
    assert pixels.shape[:2] == (1600, 1280)
    return pixels


def _not_blank(pixels: np.ndarray) -> None:
    grey = pixels[..., :3].mean(axis=2)
    assert grey.std() > 0.05, "the page rendered blank"
    # a page of small tables (the run's combinations) inks about 0.1 % of its pixels at
    # 50 dpi; a blank page none
    assert (grey < 0.5).mean() > 0.0003, "no dark text or lines on the page"


def test_beam_report_renders_in_chromium_with_tables_and_figures(batch_out: Path,
                                                                 tmp_path: Path) -> None:
    page = batch_out / "office-4span-si" / "report.html"
    url = page.as_uri()
    dom, text, console = _dom(url, tmp_path)
    assert console == [], console
    for table in ("design-table", "reactions-table", "sizing-table", "checks-table",
                  "cases-table", "echo", "envelope-table", "provenance"):
        assert table in dom.ids, table
    assert dom.tags.get("svg", 0) >= 2          # the model sketch and the envelope figure
    assert CAUTION in text
    assert re.search(r"ACI 318-19 22\.2", text)
    _not_blank(_screenshot(url, tmp_path, "report.png"))


def test_building_view_renders_sorts_filters_and_links_every_report(batch_out: Path,
                                                                    tmp_path: Path) -> None:
    index = batch_out / "_all" / "index.html"
    beams = sorted(p.name for p in batch_out.iterdir() if p.is_dir() and p.name != "_all")
    dom, text, console = _dom(index.as_uri(), tmp_path)
    assert console == [], console
    assert len(dom.rows) == len(beams)
    reports = [link for link in dom.links if link.endswith("/report.html")]
    assert sorted(link.split("/")[1] for link in reports) == beams
    for link in reports:
        assert (index.parent / link).resolve().is_file()
    assert CAUTION in text
    # the view in the address: filtered to the steel beams' status, sorted by M+
    dom, text, console = _dom(index.as_uri() + "?q=kip&sort=5", tmp_path)
    assert console == [], console
    shown = [c for c in dom.rows if "hidden" not in c]
    assert 0 < len(shown) < len(beams)
    assert re.search(r"(\d+) shown", text).group(1) == str(len(shown))
    _not_blank(_screenshot(index.as_uri(), tmp_path, "index.png"))


def _pdf_pages(pdf: Path, tmp: Path) -> list[Path]:
    exe = _tool("pdftoppm", "poppler-utils")
    prefix = tmp / pdf.stem
    run = subprocess.run([exe, "-r", "50", "-png", str(pdf), str(prefix)],
                         capture_output=True, text=True, timeout=120, check=False)
    assert run.returncode == 0, run.stderr
    return sorted(tmp.glob(f"{pdf.stem}*.png"))


def _pdf_text(pdf: Path) -> str:
    exe = _tool("pdftotext", "poppler-utils")
    run = subprocess.run([exe, "-layout", str(pdf), "-"], capture_output=True, text=True,
                         timeout=120, check=False)
    assert run.returncode == 0, run.stderr
    return " ".join(run.stdout.split())


def test_pdf_report_pages_render_and_carry_the_report_text(batch_out: Path,
                                                           tmp_path: Path) -> None:
    from matplotlib import image

    pdf = batch_out / "mezz-B3" / "report.pdf"
    pages = _pdf_pages(pdf, tmp_path)
    assert len(pages) >= 3
    for page in pages:
        _not_blank(image.imread(page))
    text = _pdf_text(pdf)
    assert CAUTION in text
    for heading in ("Input", "Combinations and patterns", "Envelopes", "Design actions",
                    "Support reactions", "Sizing and checks", "Checks"):
        assert heading in text, heading
    assert "AISC 360-22 F2.1" in text and "AISC 360-22 G2.1" in text
    assert "mezz-B3" in text


def test_pdf_summary_lists_every_beam(batch_out: Path, tmp_path: Path) -> None:
    pdf = batch_out / "_all" / "summary.pdf"
    assert _pdf_pages(pdf, tmp_path)
    text = _pdf_text(pdf)
    for folder in batch_out.iterdir():
        if folder.is_dir() and folder.name != "_all":
            assert folder.name in text
    assert CAUTION in text
