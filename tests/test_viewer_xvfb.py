"""The real application on a real X server (Xvfb): ``python -m profilecheck view IMAGE --cal
FILE`` runs the height job on a synthetic render, saves a screenshot of its window and quits.
The screenshot must show the picture and the verdict banner, not a blank window."""

import os
import select
import shutil
import subprocess
import sys
import time
from pathlib import Path

import numpy as np
import pytest

from profilecheck.calibration import Calibration, save_calibration
from profilecheck.synth import Camera, render

XVFB = shutil.which("Xvfb") or ("/usr/bin/Xvfb" if os.path.exists("/usr/bin/Xvfb") else None)
ROOT = Path(__file__).resolve().parents[1]


@pytest.fixture
def xserver():
    """Start Xvfb on a display number it picks itself (-displayfd), so parallel runs never
    collide; yield ':N'."""
    if XVFB is None:
        pytest.skip("Xvfb is not installed")
    rfd, wfd = os.pipe()
    proc = subprocess.Popen([XVFB, "-displayfd", str(wfd), "-screen", "0", "1600x1000x24",
                             "-nolisten", "tcp"], pass_fds=(wfd,),
                            stdout=subprocess.DEVNULL, stderr=subprocess.DEVNULL)
    os.close(wfd)
    got = b""
    deadline = time.monotonic() + 15
    while not got.endswith(b"\n") and time.monotonic() < deadline:
        ready, _, _ = select.select([rfd], [], [], 0.2)
        if ready:
            chunk = os.read(rfd, 64)
            if not chunk:
                break
            got += chunk
        elif proc.poll() is not None:
            break
    os.close(rfd)
    if not got.strip().isdigit():
        proc.kill()
        proc.wait(5)
        pytest.skip("Xvfb did not start")
    yield f":{int(got.strip())}"
    proc.terminate()
    try:
        proc.wait(5)
    except subprocess.TimeoutExpired:
        proc.kill()


@pytest.mark.xvfb
def test_window_on_a_real_display(xserver, tmp_path):
    import cv2
    shapes = pytest.importorskip("profilecheck.scenario._shapes")
    cam = Camera(mm_per_px=0.02, image_size=(400, 300))
    centre, _ = shapes.centre_side_view(apex_mm=(-1.0, 0.0), diameter_mm=3.0, length_mm=10.0)
    tool, _ = shapes.tool_side_view(tip_mm=(1.0, 0.05), thickness_mm=2.0, length_mm=10.0)
    img, _ = render([centre, tool], cam, blur_px=1.2, noise=2.0, supersample=2, seed=3)
    cv2.imwrite(str(tmp_path / "height.png"), img)
    save_calibration(Calibration(mm_per_px=0.02, u_mm_per_px=2e-6, image_size=(400, 300),
                                 label="bench"), tmp_path / "cal.json")
    shot = tmp_path / "shot.png"
    env = dict(os.environ, DISPLAY=xserver, QT_QPA_PLATFORM="xcb")
    out = subprocess.run([sys.executable, "-m", "profilecheck", "view", str(tmp_path / "height.png"),
                          "--cal", str(tmp_path / "cal.json"), "--run-mode", "height",
                          "--screenshot", str(shot), "--timeout", "60"],
                         env=env, cwd=ROOT, capture_output=True, text=True, timeout=120)
    assert out.returncode == 0, out.stderr
    assert "Traceback" not in out.stderr
    a = cv2.imread(str(shot))
    assert a is not None and a.shape[0] >= 600 and a.shape[1] >= 1000
    assert a.std() > 20                                   # not a blank window
    assert len(np.unique(a.reshape(-1, 3) // 16, axis=0)) > 20
    # the PASS banner in the viewer's pass blue #2a6fdb (B, G, R = 219, 111, 42)
    blue = np.all(np.abs(a.astype(int) - [219, 111, 42]) <= 6, axis=2)
    assert blue.sum() > 2000
    # the dark silhouette of the picture is on screen (the render's dark level is 30)
    assert (a.max(axis=2) < 60).sum() > 5000
