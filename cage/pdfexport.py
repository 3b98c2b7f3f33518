"""Optional PDF of the HTML report, printed by a headless Chromium where one is installed.

The HTML report stays the default output; the PDF is made only on request and only when a
converter is found on the PATH (Debian: ``apt-get install chromium-headless-shell``). The
browser is started without network access to anything outside the file (the report is
self-contained) and with a fresh temporary profile.
"""
from __future__ import annotations

import os
import shutil
import subprocess
import tempfile
from pathlib import Path

from cage.errors import InputError

CONVERTERS = ("chromium-headless-shell", "chromium", "chromium-browser", "google-chrome", "headless_shell")
TIMEOUT_S = 120


def find_converter() -> str | None:
    """The path of a headless Chromium on the PATH, or None."""
    for name in CONVERTERS:
        path = shutil.which(name)
        if path:
            return path
    return None


def html_to_pdf(html_path: str | os.PathLike, pdf_path: str | os.PathLike) -> Path:
    """Print ``html_path`` to ``pdf_path`` (written to a temporary file beside it, then renamed)."""
    exe = find_converter()
    if exe is None:
        raise InputError("no PDF converter found: install a headless Chromium "
                         "(Debian: apt-get install chromium-headless-shell); the HTML report is written")
    src = Path(html_path).resolve()
    dest = Path(pdf_path)
    tmp = dest.with_name(f".{dest.name}.tmp")
    with tempfile.TemporaryDirectory() as profile:
        try:
            subprocess.run([exe, "--headless", "--no-sandbox", "--disable-gpu", "--no-first-run",
                            f"--user-data-dir={profile}", "--no-pdf-header-footer",
                            f"--print-to-pdf={tmp}", src.as_uri()],
                           stdin=subprocess.DEVNULL, stdout=subprocess.DEVNULL, stderr=subprocess.DEVNULL,
                           timeout=TIMEOUT_S, check=False)
        except (OSError, subprocess.TimeoutExpired) as exc:
            tmp.unlink(missing_ok=True)
            raise InputError(f"{dest}: the PDF converter failed ({type(exc).__name__})") from None
    if not tmp.is_file() or tmp.read_bytes()[:5] != b"%PDF-":
        tmp.unlink(missing_ok=True)
        raise InputError(f"{dest}: the PDF converter made no PDF")
    os.replace(tmp, dest)
    return dest
