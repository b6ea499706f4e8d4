"""The simulator harness must fail, never skip, under CI when ngspice is missing."""

from __future__ import annotations

import pytest

from . import spice_harness


def test_missing_ngspice_fails_under_ci(monkeypatch):
    monkeypatch.setattr(spice_harness.shutil, "which", lambda name: None)
    monkeypatch.setenv("CI", "true")
    with pytest.raises(pytest.fail.Exception, match="ngspice is not installed"):
        spice_harness.require_ngspice()
    monkeypatch.delenv("CI")
    with pytest.raises(pytest.skip.Exception):
        spice_harness.require_ngspice()
