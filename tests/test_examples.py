"""The gallery in examples/ and the notebook example in README.md run as written.

Expected behaviour: each script exits 0 (run in a subprocess from the repository root, as a reader
runs it), and prints the results it is about (their short reprs, checked by their opening words).
"""

from __future__ import annotations

import os
import re
import subprocess
import sys
from pathlib import Path

import pytest

ROOT = Path(__file__).resolve().parent.parent
EXAMPLES = sorted((ROOT / "examples").glob("*.py"))
SAYS = {"01_stock_and_match.py": ("<Stock from", "<MatchResult 3k3"),
        "02_analyse_a_stage.py": ("<Analysis emitter-follower",),
        "03_design_from_the_drawer.py": ("<DesignResult optimal", "<Analysis emitter-follower"),
        "04_kit_and_take.py": ("<KitResult", "<TakeResult take for 5 unit(s)", "dry run>", "<TakeResult undo of"),
        "05_transistor_substitutes.py": ("<SubstituteResult NPN; VCEO at least 45 V",
                                         "<SubstituteResult NPN; VCEO at least 40 V", "in spec unchanged: LabNPN-S2"),
        "06_two_stage_amplifier.py": ("<CascadeAnalysis two-stage capacitor-coupled NPN 12 V", "checks not met: none",
                                      "14 part lines for 4 units")}  # 12 roles + Q1, Q2


def _run(code_or_path, tmp_path) -> str:
    env = dict(os.environ, PYTHONPATH=str(ROOT / "src"), TMPDIR=str(tmp_path))
    args = [sys.executable, str(code_or_path)] if isinstance(code_or_path, Path) else [sys.executable, "-c",
                                                                                        code_or_path]
    out = subprocess.run(args, cwd=ROOT, capture_output=True, text=True, env=env, timeout=300)
    assert out.returncode == 0, out.stderr[-3000:]
    return out.stdout


def test_every_example_is_listed():
    assert [p.name for p in EXAMPLES] == sorted(SAYS)
    listed = (ROOT / "examples" / "README.md").read_text(encoding="utf-8")
    assert all(f"`{p.name}`" in listed for p in EXAMPLES)


@pytest.mark.parametrize("script", EXAMPLES, ids=lambda p: p.name)
def test_example_runs(script, tmp_path):
    out = _run(script, tmp_path)
    for words in SAYS[script.name]:
        assert words in out, (words, out[-2000:])


def test_readme_notebook_example_runs_as_written(tmp_path):
    text = (ROOT / "README.md").read_text(encoding="utf-8")
    blocks = re.findall(r"```python\n(.*?)```", text, flags=re.S)
    assert blocks, "README.md has a Python example"
    out = _run("\n".join(blocks), tmp_path)
    assert "<Stock from" in out and "<DesignResult optimal" in out
