"""Render a report page in headless Chromium, on screen and printed, and measure it.

Used by ``tests/test_report_browser.py``; also runnable by hand to look at a
report: ``.venv/bin/python tests/browser_check.py reports/x/report.html``.

What is measured, for each paper size (A4 and Letter) in the print layout:

* images: every ``<img>`` decoded (``naturalWidth > 0``);
* tables: the right edge of every table cell lies within the printable width
  of the paper (the page width less the report's print margins), and no table
  is wider than its box (nothing scrolled out of sight or clipped);
* figures: the PDF is read back and every figure image is drawn on exactly
  one page (a figure split across a page break is drawn on two pages, each
  part clipped).
"""

from __future__ import annotations

import shutil
import sys
from dataclasses import dataclass, field
from pathlib import Path

#: Paper sizes checked: name → (width, height) in millimetres.
PAPERS = {"A4": (210.0, 297.0), "Letter": (215.9, 279.4)}
#: The report's print margins (must match ``@page`` in the template), millimetres.
MARGIN_MM = 12.0
PX_PER_MM = 96.0 / 25.4


def chromium_path() -> str | None:
    """The Chromium executable (Debian's ``chromium``), or None when not installed."""
    for name in ("chromium", "chromium-browser", "google-chrome"):
        path = shutil.which(name)
        if path:
            return path
    return None


@dataclass
class PageCheck:
    """What the browser saw of one report page."""

    broken_images: list[str] = field(default_factory=list)
    images: int = 0
    wide_tables: list[str] = field(default_factory=list)
    split_figures: list[str] = field(default_factory=list)
    pages: dict[str, int] = field(default_factory=dict)
    screenshots: list[Path] = field(default_factory=list)
    pdfs: list[Path] = field(default_factory=list)

    @property
    def problems(self) -> list[str]:
        return (
            [f"broken image: {s}" for s in self.broken_images]
            + [f"table wider than the page: {s}" for s in self.wide_tables]
            + [f"figure split or clipped: {s}" for s in self.split_figures]
        )


_MEASURE_IMAGES = """() => Array.from(document.images).map(
    (im, k) => [im.alt || ('image ' + k), im.complete && im.naturalWidth > 0])"""

_MEASURE_TABLES = """(limit) => {
  const out = [];
  document.querySelectorAll('table').forEach((t, k) => {
    const name = (t.closest('section') ? t.closest('section').id : '') + ' table ' + k;
    const cells = t.querySelectorAll('th, td');
    let right = t.getBoundingClientRect().right;
    cells.forEach(c => { right = Math.max(right, c.getBoundingClientRect().right); });
    const box = t.parentElement;
    if (right > limit + 0.5) out.push(name + ': right edge ' + right.toFixed(0) + ' px > ' + limit.toFixed(0));
    if (box.scrollWidth > box.clientWidth + 1) out.push(name + ': scrolls sideways');
  });
  return out;
}"""


def _figure_placements(pdf: Path) -> tuple[int, list[tuple[int, str]]]:
    """Pages of the PDF and (page, image name) for every image drawn on a page.

    A figure cut by a page break is drawn on both pages (each part clipped),
    so it is counted twice.
    """
    from pypdf import PdfReader

    reader = PdfReader(str(pdf))
    placements = [
        (number, image.name)
        for number, page in enumerate(reader.pages, start=1)
        for image in page.images
    ]
    return len(reader.pages), placements


def check_page(html: Path, out_dir: Path, name: str) -> PageCheck:
    """Render ``html`` on screen and printed (A4 and Letter) and measure it.

    Screenshots and PDFs are written to ``out_dir`` as ``<name>-screen.png``,
    ``<name>-print-A4.png``, ``<name>-A4.pdf``, and so on.
    """
    from playwright.sync_api import sync_playwright

    exe = chromium_path()
    if exe is None:
        raise RuntimeError("chromium is not installed")
    out_dir.mkdir(parents=True, exist_ok=True)
    result = PageCheck()
    with sync_playwright() as pw:
        browser = pw.chromium.launch(executable_path=exe, args=["--no-sandbox"])
        try:
            page = browser.new_page(viewport={"width": 1280, "height": 900})
            page.goto(html.resolve().as_uri())
            page.wait_for_load_state("load")
            images = page.evaluate(_MEASURE_IMAGES)
            result.images = len(images)
            result.broken_images = [alt for alt, ok in images if not ok]
            shot = out_dir / f"{name}-screen.png"
            page.screenshot(path=str(shot), full_page=True)
            result.screenshots.append(shot)
            for paper, (w_mm, _h_mm) in PAPERS.items():
                width_px = round((w_mm - 2 * MARGIN_MM) * PX_PER_MM)
                page.set_viewport_size({"width": width_px, "height": 1000})
                page.emulate_media(media="print")
                wide = page.evaluate(_MEASURE_TABLES, width_px)
                result.wide_tables += [f"{paper}: {w}" for w in wide]
                shot = out_dir / f"{name}-print-{paper}.png"
                page.screenshot(path=str(shot), full_page=True)
                result.screenshots.append(shot)
                pdf = out_dir / f"{name}-{paper}.pdf"
                page.pdf(path=str(pdf), format=paper, prefer_css_page_size=False,
                         margin={k: f"{MARGIN_MM}mm" for k in ("top", "bottom", "left", "right")},
                         print_background=True)
                result.pdfs.append(pdf)
                pages, placements = _figure_placements(pdf)
                result.pages[paper] = pages
                if len(placements) != result.images:
                    result.split_figures.append(
                        f"{paper}: {len(placements)} image placements on "
                        f"{sorted({p for p, _ in placements})} for {result.images} images"
                    )
                page.emulate_media(media="screen")
        finally:
            browser.close()
    return result


if __name__ == "__main__":
    target = Path(sys.argv[1])
    res = check_page(target, target.parent / "browser", "page")
    for problem in res.problems:
        print(problem)
    print(f"{res.images} images; pages {res.pages}; files in {target.parent / 'browser'}")
    sys.exit(1 if res.problems else 0)
