"""A built wheel carries the bundled catalogues and examples and finds them without the
checkout; its distribution name is placer-balance (the name placer is another project's
on the package index), its import name and command placer."""

from __future__ import annotations

import os
import shutil
import subprocess
import sys
import zipfile
from pathlib import Path

ROOT = Path(__file__).resolve().parent.parent


def test_wheel_finds_bundled_catalogues(tmp_path):
    out = tmp_path / "dist"
    checkout = tmp_path / "checkout"   # a clean copy: no build folder of earlier builds
    shutil.copytree(ROOT, checkout, ignore=shutil.ignore_patterns(
        "build", "*.egg-info", ".git", "__pycache__", "*.so", ".hypothesis"))
    subprocess.run([sys.executable, "-m", "pip", "wheel", str(checkout), "--no-deps",
                    "--no-build-isolation", "-q", "-w", str(out)], check=True,
                   capture_output=True, text=True)
    wheel = next(out.glob("placer_balance-*.whl"))
    names = zipfile.ZipFile(wheel).namelist()
    assert "placer/catalogs/washers-steel.toml" in names
    assert "placer/catalogs/wheel-clips-oz.toml" in names
    examples = sorted(p.name for p in (ROOT / "examples").iterdir()
                      if p.suffix in (".toml", ".csv"))
    assert {f"placer/examples/{name}" for name in examples} <= set(names)
    # Every module of the source tree, and nothing else (a stale build folder once
    # carried a module the tree no longer has, and hid a package the list left out).
    source = {p.relative_to(ROOT).as_posix() for p in (ROOT / "placer").rglob("*.py")}
    assert {n for n in names if n.startswith("placer/") and n.endswith(".py")
            and not n.startswith(("placer/catalogs/", "placer/examples/"))} == source
    metadata = next(n for n in names if n.endswith(".dist-info/METADATA"))
    text = zipfile.ZipFile(wheel).read(metadata).decode("utf-8")
    assert "Name: placer-balance" in text
    assert any(line.startswith("Requires-Dist: matplotlib") for line in text.splitlines())
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
    # placer new example copies from the installed package, not from a checkout.
    copy = tmp_path / "copies"
    copy.mkdir()
    code = "import sys; from placer.cli import main; sys.exit(main(sys.argv[1:]))"
    run = subprocess.run([sys.executable, "-P", "-c", code, "new", "example", "all",
                          "--folder", str(copy)], cwd=tmp_path, env=env, capture_output=True,
                         text=True)
    assert run.returncode == 0, run.stderr
    assert sorted(p.name for p in copy.iterdir()) == examples
    assert (copy / "supply-fan.toml").read_bytes() == (ROOT / "examples" /
                                                      "supply-fan.toml").read_bytes()
