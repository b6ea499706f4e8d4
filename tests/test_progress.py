"""The progress display: drawn only on a terminal, never with --quiet, never on a pipe.

Expected behaviour: properties of the module's contract (docs/report-and-export.md).
"""

from __future__ import annotations

import io

from click.testing import CliRunner

from drawerfit.cli import main
from drawerfit.progress import NO_PROGRESS, progress, wants_progress

from .report.helpers import FOLLOWER


class _Tty(io.StringIO):
    def isatty(self):
        return True


def test_draws_on_a_terminal_and_wipes_its_line():
    tty = _Tty()
    with progress("scoring", total=4, stream=tty) as tick:
        for _ in range(4):
            tick(note="chunk")
    out = tty.getvalue()
    assert out.startswith("\rscoring")
    assert "0/4 (0 %)" in out and "4/4 (100 %) · chunk" in out
    assert out.endswith("\r")  # the line is cleared when the work ends
    last = out.rstrip("\r").rsplit("\r", 1)[-1]
    assert last.strip() == ""


def test_silent_when_quiet_even_on_a_terminal():
    tty = _Tty()
    with progress("scoring", total=3, stream=tty, quiet=True) as tick:
        tick()
        tick(note="x")
    assert tty.getvalue() == ""


def test_silent_when_the_stream_is_not_a_terminal():
    pipe = io.StringIO()
    with progress("scoring", total=3, stream=pipe) as tick:
        tick(3, note="done")
    assert pipe.getvalue() == ""
    assert wants_progress(pipe) is False
    assert wants_progress(_Tty()) is True
    assert wants_progress(_Tty(), quiet=True) is False


def test_the_do_nothing_step_takes_the_same_calls():
    assert NO_PROGRESS() is None and NO_PROGRESS(2, note="x") is None


def test_report_and_export_print_nothing_on_stderr_without_a_terminal(tmp_path):
    runner = CliRunner()
    res = runner.invoke(main, ["report", str(FOLLOWER), "-o", str(tmp_path / "r.html"), "--monte-carlo", "50"])
    assert res.exit_code == 0 and res.stderr == ""
    res = runner.invoke(main, ["export", str(FOLLOWER), "--netlist", str(tmp_path / "s.cir"),
                               "--bom", str(tmp_path / "b.csv"), "--quiet"])
    assert res.exit_code == 0 and res.stderr == "" and res.stdout == ""


def test_report_progress_reaches_a_terminal(tmp_path, monkeypatch):
    # stderr replaced by a terminal-like stream: the report announces its phases on it
    import drawerfit.progress as prog
    import sys

    tty = _Tty()
    monkeypatch.setattr(sys, "stderr", tty)
    from drawerfit.commands.report_cmd import run_report

    run_report(str(FOLLOWER), str(tmp_path / "r.html"), stock_file=None, monte_carlo=50, seed=0, quiet=False)
    out = tty.getvalue()
    assert "Monte Carlo, 50 builds" in out and "schematic" in out
    tty2 = _Tty()
    monkeypatch.setattr(sys, "stderr", tty2)
    run_report(str(FOLLOWER), str(tmp_path / "r.html"), stock_file=None, monte_carlo=50, seed=0, quiet=True)
    assert tty2.getvalue() == ""
    assert prog.wants_progress(tty2, quiet=True) is False
