"""`drawerfit report --help` and `export --help` load no heavy library (a habit of well-kept
CLI projects: start-up stays fast); the report package imports them inside its functions.
"""

from __future__ import annotations

import os
import subprocess
import sys
from pathlib import Path

import pytest

ROOT = Path(__file__).resolve().parents[2]
HEAVY = ["pandas", "scipy", "ortools", "openpyxl", "matplotlib", "schemdraw", "numpy"]


@pytest.mark.parametrize("command", ["report", "export"])
def test_help_loads_no_heavy_library(command):
    code = ("import sys, drawerfit.cli, drawerfit.progress\n"
            "from click.testing import CliRunner\n"
            f"r = CliRunner().invoke(drawerfit.cli.main, [{command!r}, '--help'])\n"
            "assert r.exit_code == 0, r.output\n"
            f"print([m for m in {HEAVY!r} if m in sys.modules])\n")
    env = dict(os.environ, PYTHONPATH=str(ROOT / "src"))
    out = subprocess.run([sys.executable, "-c", code], capture_output=True, text=True, env=env, check=True)
    assert out.stdout.strip() == "[]"
