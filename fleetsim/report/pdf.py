"""The report printed to PDF by headless Chromium, when it is installed.

Chromium lays the page out with the report's print style sheet (``@page``
margins, figures kept whole, tables wrapped) on A4 or Letter paper; no
header or footer lines are added. Nothing is downloaded: the browser is the
one installed on the machine (Debian's ``chromium`` package, or a
``google-chrome``/``chromium-browser`` on the ``PATH``).
"""

from __future__ import annotations

import shutil
import subprocess
import tempfile
from pathlib import Path

from fleetsim.errors import InputError

#: Executables tried, in order.
BROWSERS = ("chromium", "chromium-browser", "google-chrome")
#: Longest wait for the browser, seconds.
TIMEOUT_S = 180


def find_browser() -> str | None:
    """Path of an installed Chromium, or None."""
    for name in BROWSERS:
        path = shutil.which(name)
        if path:
            return path
    return None


def print_pdf(html: Path, pdf: Path, *, paper: str = "A4", browser: str | None = None) -> Path:
    """Print ``html`` to ``pdf`` with headless Chromium.

    Parameters
    ----------
    html
        The report page.
    pdf
        Where to write the PDF.
    paper
        ``"A4"`` or ``"Letter"``.
    browser
        Chromium executable (default: :func:`find_browser`).

    Raises
    ------
    InputError
        When no Chromium is installed, or it fails or times out.
    """
    if paper not in ("A4", "Letter"):
        raise InputError("--paper", f"expected A4 or Letter, got {paper!r}")
    exe = browser or find_browser()
    if exe is None:
        raise InputError("--pdf", "expected Chromium to be installed (e.g. apt-get install chromium)")
    html = Path(html).resolve()
    page = html
    tmp = None
    if paper != "A4":
        # The page sets margins only; the paper size comes from an @page rule added here.
        tmp = tempfile.NamedTemporaryFile("w", suffix=".html", dir=html.parent, delete=False,
                                          encoding="utf-8")
        text = html.read_text(encoding="utf-8")
        tmp.write(text.replace("<style>", f"<style>@page {{ size: {paper}; }}", 1))
        tmp.close()
        page = Path(tmp.name)
    else:
        text = html.read_text(encoding="utf-8")
        tmp = tempfile.NamedTemporaryFile("w", suffix=".html", dir=html.parent, delete=False,
                                          encoding="utf-8")
        tmp.write(text.replace("<style>", "<style>@page { size: A4; }", 1))
        tmp.close()
        page = Path(tmp.name)
    with tempfile.TemporaryDirectory() as profile:
        cmd = [exe, "--headless", "--no-sandbox", "--disable-gpu", "--no-pdf-header-footer",
               f"--user-data-dir={profile}", f"--print-to-pdf={Path(pdf).resolve()}",
               page.as_uri()]
        try:
            done = subprocess.run(cmd, capture_output=True, timeout=TIMEOUT_S, check=False)
        except subprocess.TimeoutExpired:
            raise InputError("--pdf", f"expected Chromium to print within {TIMEOUT_S} s") from None
        finally:
            if tmp is not None:
                Path(tmp.name).unlink(missing_ok=True)
    if done.returncode != 0 or not Path(pdf).is_file():
        raise InputError("--pdf", f"expected Chromium ({exe}) to print the page; it exited "
                         f"with code {done.returncode}")
    return Path(pdf)
