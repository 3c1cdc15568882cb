"""The README picture: headless Chromium renders the report's one-page summary."""

from __future__ import annotations

import importlib.util
from pathlib import Path

import pytest

pytest.importorskip("matplotlib")
PIL = pytest.importorskip("PIL.Image")

ROOT = Path(__file__).resolve().parents[2]
SCRIPT = ROOT / "scripts" / "screenshot_report.py"


def _script():
    spec = importlib.util.spec_from_file_location("screenshot_report", SCRIPT)
    module = importlib.util.module_from_spec(spec)
    spec.loader.exec_module(module)
    return module


def test_summary_renders_at_1280_px_with_nothing_cut_at_the_right_edge(tmp_path):
    shot = _script()
    if shot.find_chromium() is None:
        pytest.skip("no Chromium on this machine (Debian package 'chromium')")
    from estimator.comparison import compare_lots
    from estimator.profiles.io import read_profile
    from estimator.report.html import write_comparison

    # the invented demo lots (data/demo/README.md)
    comparison = compare_lots(read_profile(ROOT / "data" / "demo" / "lots.csv",
                                           basis="fatty-acid"), climate_class="C")
    written = write_comparison(comparison, tmp_path / "out")
    png = shot.screenshot(written["report"], tmp_path / "summary.png")
    with PIL.open(png) as img:
        rgb = img.convert("RGB")
        width, height = rgb.size
        assert width == 1280 and 600 < height < 4000
        # the right margin stays blank: no table or text runs past the window
        right = [rgb.getpixel((x, y)) for x in range(width - 12, width)
                 for y in range(0, height, 7)]
        assert all(p == (255, 255, 255) for p in right)
    # the print stylesheet fits the summary on one A4 page
    assert shot.print_pages(written["report"]) == 1


def test_script_says_so_in_one_line_when_chromium_is_absent(monkeypatch, capsys, tmp_path):
    shot = _script()
    monkeypatch.setenv("CHROMIUM", str(tmp_path / "no-such-browser"))
    assert shot.main([str(tmp_path / "r.html"), "-o", str(tmp_path / "x.png")]) == 3
    assert "no Chromium found" in capsys.readouterr().out
