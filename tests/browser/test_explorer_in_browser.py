"""The Explorer in a real browser: JupyterLab in headless Chromium runs ``explorer_demo.ipynb``
(``Explorer.demo()``), then a key press on the DOS-scale slider must lower the heat-capacity
curve, the representation selector must redraw it, and an uploaded C_p file must show.

Latencies (key press → SVG path changed) are printed beside the issue's targets (median
≤ 100 ms, 90th percentile ≤ 150 ms) and not gated: the machine is shared.  The harness
itself is proved on a stand-in by ``test_browser_harness.py``.
"""

from __future__ import annotations

import os
from pathlib import Path

import numpy as np
import pytest
from browser_steps import (axis_ticks, choose_representation, first_line_d, latency_summary,
                           line_y, open_and_run_all, press_and_time, report, upload_and_wait)


pytestmark = pytest.mark.browser

HERE = Path(__file__).parent
DEMO_CP = HERE.parents[1] / "demo_spectra" / "zorbium_lumide_cp.txt"
FIGURE = ".mh-heat-capacity"
PRESSES = 12
ERROR_COLOUR = "rgb(163, 38, 27)"  # StatusArea's colour for problems (#a3261b)


def test_explorer_demo_in_browser(lab_server, browser_page, tmp_path):
    page = browser_page
    open_and_run_all(page, lab_server, HERE / "explorer_demo.ipynb")
    page.locator(f"{FIGURE} path.line").first.wait_for(state="visible")
    page.locator(".mh-spectrum").first.wait_for(state="visible")

    picture = os.environ.get("MODEHEAT_EXPLORER_PICTURE")
    if picture:  # the README's picture: MODEHEAT_EXPLORER_PICTURE=PATH python -m pytest tests/browser
        page.set_viewport_size({"width": 1400, "height": 1600})
        page.locator(".mh-explorer").first.screenshot(path=picture)
    ticks = axis_ticks(page, FIGURE)
    latencies, paths = press_and_time(page, FIGURE, ".mh-param-dos-scale .noUi-handle", PRESSES)
    # Pixels compare like C only while the axes stay put; the contract keeps them fixed
    # while a slider moves (the curve moves against the data, the frame does not).
    assert axis_ticks(page, FIGURE) == ticks, "the C axes rescaled while the DOS-scale slider moved"
    # ArrowRight raises the DOS frequency scale: stiffer modes, so the model's C at every T
    # drops (common practice: at fixed T, C of a harmonic mode falls as its frequency rises).
    # The C axis points up on screen while SVG y grows downward, so a lower C is a LARGER
    # y in the path: every point's y must grow or stay (where C is saturated), some strictly.
    for press, (before, after) in enumerate(zip(paths, paths[1:]), start=1):
        assert after != before, f"press {press}: the model curve did not change"
        y0, y1 = line_y(before), line_y(after)
        assert y0.shape == y1.shape, f"press {press}: the curve changed its number of points"
        # 1e-3 px: float formatting of the same point; far below one pixel
        assert np.all(y1 >= y0 - 1e-3), f"press {press}: C rose at some T (curve moved up on screen)"
        assert np.any(y1 > y0 + 1e-3), f"press {press}: the curve did not move down"
    median, p90 = latency_summary("Explorer.demo(), heat-capacity view", latencies)
    assert p90 < 2000.0  # sanity bound only: the machine is shared; the targets are printed, not gated
    # The DOS view redraws on the same key press, after the heat-capacity view (sent second).
    dos_latencies, dos_paths = press_and_time(page, ".mh-spectrum", ".mh-param-dos-scale .noUi-handle", 10)
    assert all(a != b for a, b in zip(dos_paths, dos_paths[1:])), "the model DOS did not move with its scale"
    latency_summary("Explorer.demo(), DOS view", dos_latencies)

    before = first_line_d(page, FIGURE)
    choose_representation(page, "θ_D(T)")
    page.wait_for_function("([sel, d]) => document.querySelector(sel).getAttribute('d') !== d",
                           arg=[f"{FIGURE} path.line", before])

    status = upload_and_wait(page, FIGURE, DEMO_CP)
    colour = page.evaluate("() => getComputedStyle(document.querySelector('.mh-status span') "
                           "?? document.querySelector('.mh-status')).color")
    assert colour != ERROR_COLOUR, f"uploading {DEMO_CP.name} gave a problem: {status}"

    shot = tmp_path / "explorer_demo.png"
    page.screenshot(path=str(shot), full_page=True)
    assert shot.stat().st_size > 0
    report(f"Explorer screenshot: {shot}")
