"""``report.pdf``: ``report.html`` printed by headless Chromium, when it is installed.

The page size is the report's CSS ``@page`` (``[report] page``, A4 or Letter). Chromium writes the
time of printing into the PDF's information dictionary (``/CreationDate``, ``/ModDate``); those
dates are overwritten with a fixed one of the same length (so every byte offset of the file stays
valid), which makes reruns byte-identical. Without Chromium, or when it fails, there is no PDF and
the reason is given to the caller (the summary and the screen say it).
"""

from __future__ import annotations

import os
import re
import shutil
import subprocess
import tempfile
from pathlib import Path

__all__ = ["CHROMIUM_NAMES", "PRINT_TIMEOUT_S", "find_chromium", "no_chromium_reason", "write_pdf", "fixed_dates"]

#: Executables tried in turn, on ``PATH``.
CHROMIUM_NAMES = ("chromium", "chromium-browser", "google-chrome")
#: The longest a print may take before it is given up. [s]
PRINT_TIMEOUT_S = 120.0
#: A PDF date, ``(D:YYYYMMDDHHmmSS`` and what follows up to the closing bracket.
_PDF_DATE = re.compile(rb"/(CreationDate|ModDate)\s*\(D:(\d{4,14})")


def find_chromium() -> str | None:
    """The path of the first Chromium on ``PATH``, or None."""
    for name in CHROMIUM_NAMES:
        found = shutil.which(name)
        if found:
            return found
    return None


def no_chromium_reason() -> str:
    """Why there is no PDF when no Chromium is found, with the fix."""
    return (
        f"no report.pdf: no headless Chromium found on PATH ({', '.join(CHROMIUM_NAMES)}); "
        "install it (Debian: apt-get install chromium) or print report.html from a browser"
    )


def fixed_dates(data: bytes) -> bytes:
    """``data`` with every PDF creation and modification date set to 2000-01-01 00:00:00, same length."""

    def fixed(match: re.Match) -> bytes:
        digits = match.group(2)
        return match.group(0)[: -len(digits)] + b"20000101000000"[: len(digits)].ljust(len(digits), b"0")

    return _PDF_DATE.sub(fixed, data)


def write_pdf(html_path: Path, pdf_path: Path, chromium: str | None = None) -> str | None:
    """Print ``html_path`` to ``pdf_path`` with headless Chromium.

    Parameters
    ----------
    html_path : Path
        ``report.html``, beside the plots it links.
    pdf_path : Path
    chromium : str, optional
        The executable; default :func:`find_chromium`.

    Returns
    -------
    str or None
        None when the PDF is written; else why not, in one line.
    """
    chromium = chromium or find_chromium()
    if chromium is None:
        return no_chromium_reason()
    with tempfile.TemporaryDirectory(prefix="mastplan-chromium-") as profile:
        command = [
            chromium,
            "--headless",
            "--disable-gpu",
            "--no-first-run",
            "--no-pdf-header-footer",
            f"--user-data-dir={profile}",
            f"--print-to-pdf={pdf_path}",
        ]
        if hasattr(os, "geteuid") and os.geteuid() == 0:
            command.append("--no-sandbox")  # Chromium refuses to start its sandbox as root
        command.append(Path(html_path).absolute().as_uri())
        try:
            done = subprocess.run(command, capture_output=True, timeout=PRINT_TIMEOUT_S, stdin=subprocess.DEVNULL)
        except subprocess.TimeoutExpired:
            pdf_path.unlink(missing_ok=True)
            return f"no report.pdf: Chromium ({chromium}) did not print within {PRINT_TIMEOUT_S:g} s"
        except OSError as exc:
            return f"no report.pdf: Chromium ({chromium}) did not start ({exc.strerror or exc})"
    if done.returncode != 0 or not pdf_path.is_file() or pdf_path.read_bytes()[:5] != b"%PDF-":
        pdf_path.unlink(missing_ok=True)
        last = (done.stderr or b"").decode("utf-8", "replace").strip().splitlines()
        return f"no report.pdf: Chromium ({chromium}) failed (exit {done.returncode}{': ' + last[-1] if last else ''})"
    pdf_path.write_bytes(fixed_dates(pdf_path.read_bytes()))
    return None
