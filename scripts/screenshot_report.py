"""Render the one-page summary of an HTML report to PNG with headless Chromium.

Usage::

    python scripts/screenshot_report.py out/demo/report.html -o docs/report_summary.png

The page is rendered at 1280 px wide (``--width``); the height is the summary's
(``--height`` overrides it, default: measured from the page by a first render
at a generous height and trimmed to the end of the summary). Chromium runs with
a fresh, throw-away profile and no network use. Prints the path written, or one
line saying Chromium was not found (exit 3), so tests can skip cleanly.
"""

from __future__ import annotations

import argparse
import os
import shutil
import subprocess
import sys
import tempfile
from pathlib import Path

__all__ = ["find_chromium", "print_pages", "screenshot"]

#: Executables tried in order (Debian's package installs ``chromium``).
CANDIDATES = ("chromium", "chromium-browser", "google-chrome", "google-chrome-stable")


def find_chromium() -> str | None:
    """The path of a Chromium executable, or None (``CHROMIUM`` overrides the search)."""
    env = os.environ.get("CHROMIUM")
    if env:
        return env if shutil.which(env) or Path(env).exists() else None
    for name in CANDIDATES:
        path = shutil.which(name)
        if path:
            return path
    return None


def _summary_only(html_text: str) -> str:
    """The page up to the end of the summary (the caution opens it): no details, no footer."""
    start = html_text.find('<p class="more">')
    if start < 0:
        start = html_text.find("<details")
    end = html_text.find("</main>")
    if start < 0 or end < 0:
        return html_text
    return html_text[:start] + html_text[end:]


def screenshot(report: str | Path, output: str | Path, *, width: int = 1280,
               height: int | None = None, chromium: str | None = None,
               timeout_s: float = 120.0) -> Path:
    """Write a PNG of the report's summary as Chromium draws it at ``width`` px.

    Raises FileNotFoundError when no Chromium is found.
    """
    chromium = chromium or find_chromium()
    if chromium is None:
        raise FileNotFoundError("no Chromium found (install Debian's 'chromium' package)")
    report = Path(report).resolve()
    output = Path(output).resolve()
    output.parent.mkdir(parents=True, exist_ok=True)
    with tempfile.TemporaryDirectory(prefix="fame-shot-") as tmp:
        page = Path(tmp) / "summary.html"
        page.write_text(_summary_only(report.read_text(encoding="utf-8")), encoding="utf-8")
        shot = Path(tmp) / "shot.png"
        profile = Path(tmp) / "profile"
        profile.mkdir()
        cmd = [chromium, *_flags(profile), "--hide-scrollbars", f"--screenshot={shot}",
               f"--window-size={width},{height or 2400}", page.as_uri()]
        subprocess.run(cmd, check=True, capture_output=True, timeout=timeout_s)
        if height is None:
            _trim(shot)
        shutil.copyfile(shot, output)
    return output


def _flags(profile: Path) -> list[str]:
    return ["--headless", "--no-sandbox", "--disable-gpu", "--disable-quic", "--no-first-run",
            "--disable-background-networking", "--disable-component-update", "--disable-sync",
            f"--user-data-dir={profile}"]


def print_pages(report: str | Path, *, chromium: str | None = None,
                timeout_s: float = 120.0) -> int:
    """How many A4 pages the report's summary fills when printed (the print stylesheet)."""
    import re

    chromium = chromium or find_chromium()
    if chromium is None:
        raise FileNotFoundError("no Chromium found (install Debian's 'chromium' package)")
    with tempfile.TemporaryDirectory(prefix="fame-print-") as tmp:
        page = Path(tmp) / "summary.html"
        page.write_text(_summary_only(Path(report).read_text(encoding="utf-8")),
                        encoding="utf-8")
        pdf = Path(tmp) / "summary.pdf"
        profile = Path(tmp) / "profile"
        profile.mkdir()
        subprocess.run([chromium, *_flags(profile), "--no-pdf-header-footer",
                        f"--print-to-pdf={pdf}", page.as_uri()],
                       check=True, capture_output=True, timeout=timeout_s)
        return len(re.findall(rb"/Type\s*/Page(?!s)", pdf.read_bytes()))


def _trim(path: Path) -> None:
    """Cut the white space below the page's last content (and keep the file small)."""
    try:
        from PIL import Image
    except ImportError:  # matplotlib brings Pillow; without it keep the full shot
        return
    with Image.open(path) as img:
        rgb = img.convert("RGB")
        w, h = rgb.size
        pixels = rgb.load()
        bottom = h
        for y in range(h - 1, -1, -1):
            if any(pixels[x, y] != (255, 255, 255) for x in range(0, w, 4)):
                bottom = min(h, y + 24)
                break
        rgb.crop((0, 0, w, bottom)).quantize(colors=64).save(path, optimize=True)


def main(argv: list[str] | None = None) -> int:
    """Command line: report path, -o PNG, optional --width and --height."""
    parser = argparse.ArgumentParser(description=__doc__.split("\n")[0])
    parser.add_argument("report", help="report.html written by 'fame-estimator report'")
    parser.add_argument("-o", "--output", required=True, help="PNG to write")
    parser.add_argument("--width", type=int, default=1280)
    parser.add_argument("--height", type=int, default=None)
    args = parser.parse_args(argv)
    if find_chromium() is None:
        print("screenshot_report: no Chromium found; install Debian's 'chromium' package")
        return 3
    path = screenshot(args.report, args.output, width=args.width, height=args.height)
    print(f"wrote {path}")
    return 0


if __name__ == "__main__":
    sys.exit(main())
