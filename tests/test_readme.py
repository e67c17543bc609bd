"""The README's "Using placer from Python" examples run as written (doctest)."""

from __future__ import annotations

import doctest
import os
from pathlib import Path

REPO_DIR = Path(__file__).resolve().parent.parent


def test_readme_examples_run(tmp_path):
    cwd = os.getcwd()
    os.chdir(REPO_DIR)                       # the examples use paths from the repository
    try:
        result = doctest.testfile(str(REPO_DIR / "README.md"), module_relative=False,
                                  optionflags=doctest.ELLIPSIS)
    finally:
        os.chdir(cwd)
    assert result.attempted >= 15
    assert result.failed == 0
