"""A built wheel carries the bundled catalogues and finds them without the checkout."""

from __future__ import annotations

import os
import subprocess
import sys
import zipfile
from pathlib import Path

ROOT = Path(__file__).resolve().parent.parent


def test_wheel_finds_bundled_catalogues(tmp_path):
    out = tmp_path / "dist"
    subprocess.run([sys.executable, "-m", "pip", "wheel", str(ROOT), "--no-deps",
                    "--no-build-isolation", "-q", "-w", str(out)], check=True,
                   capture_output=True, text=True)
    wheel = next(out.glob("placer-*.whl"))
    names = zipfile.ZipFile(wheel).namelist()
    assert "placer/catalogs/washers-steel.toml" in names
    site = tmp_path / "site"
    zipfile.ZipFile(wheel).extractall(site)
    code = ("import placer.io.catalogfile as c, placer.io.catalogfile as f; "
            "print(c.bundled_dir()); print(','.join(c.bundled_names())); "
            "print(f.load_bundled('washers-steel').items[1].id)")
    env = {k: v for k, v in os.environ.items() if k != "PYTHONPATH"}
    env["PYTHONPATH"] = str(site)
    # -I would drop site-packages (numpy); -P keeps the cwd off the path instead.
    run = subprocess.run([sys.executable, "-P", "-c", code], cwd=tmp_path, env=env,
                         capture_output=True, text=True, check=True)
    folder, listed, item = run.stdout.strip().splitlines()
    assert Path(folder).is_relative_to(site)
    assert {"washers-steel", "rim-clips-5g", "fan-blade-clips", "adhesive-segments"} <= set(
        listed.split(","))
    assert item == "M8"
