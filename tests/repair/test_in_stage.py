"""repair.in_stage and substitutes_for: each substitute put into the stage of a spec.

Expected values: ``analysis.analyse`` run directly on the stage with the substitute's model (the
model the design search builds from a stock line, ``search.runner.transistor_model``); the
requirement's defaults from the spec's own transistor and the stage's worst case as
docs/repair.md states them; the crafted case of ``tests/repair/crafted.py`` worked by hand (its
docstring).  The same verdicts are held against ngspice in
tests/reference/test_ngspice_substitutes.py.
"""

from __future__ import annotations

from dataclasses import replace

import pytest

import drawerfit
from drawerfit.analysis import analyse
from drawerfit.io.spec import load_spec, parse_spec
from drawerfit.repair.substitutes import RequirementError, requirement_from_stage, substitutes_for
from drawerfit.search.runner import transistor_model

from .crafted import BREAKER, KEEPER, LOW_RATINGS, NO_PD, NO_VCEO, OTHER, SPEC, write_case


@pytest.fixture
def case(tmp_path):
    spec_path, stock_path = write_case(tmp_path)
    stock = drawerfit.load_stock(stock_path)
    spec = load_spec(spec_path, stock, label_may_be_absent=True)
    return spec, stock


def _by_label(result):
    return {s.line.label: s for s in result.substitutes}


def test_each_verdict_agrees_with_analyse_run_directly(case):
    spec, stock = case
    result = substitutes_for(stock, spec=spec)
    stage = spec.stage()
    judged = [s for s in result.substitutes if s.stage is not None]
    assert {s.line.label for s in judged} == {KEEPER, BREAKER, NO_VCEO, NO_PD, LOW_RATINGS}  # NPN lines only
    for s in judged:
        direct = analyse(replace(stage, transistor=transistor_model(s.line)), spec.conditions, targets=spec.targets)
        failing = [c.name for c in direct.warnings]
        unknown_q1 = [c.name for c in direct.checks if c.ok is None and c.name.startswith("Q1 ")]
        assert [b.check for b in s.stage.breaks] == failing, s.line.label
        assert list(s.stage.unchecked) == unknown_q1, s.line.label
        expected = "breaks" if failing else "unverified" if unknown_q1 else "keeps"
        assert s.stage.status == expected, s.line.label
        for b, c in zip(s.stage.breaks, direct.warnings):
            assert b.value == pytest.approx(float(c.value), rel=1e-9) and b.limit == pytest.approx(float(c.limit))
        assert s.stage.figures["ie"] == pytest.approx(float(direct.nominal.ie), rel=1e-12)
        assert s.stage.figures["ie_low"] == pytest.approx(float(direct.worst.low["ie"]), rel=1e-12)
        assert s.stage.figures["ie_high"] == pytest.approx(float(direct.worst.high["ie"]), rel=1e-12)


def test_the_crafted_case_keeps_one_and_breaks_one(case):
    spec, stock = case
    result = substitutes_for(stock, spec=spec)
    by = _by_label(result)
    assert result.board.status == "keeps"  # the stage is in spec with its own transistor
    assert by[KEEPER].stage.status == "keeps" and by[KEEPER].status == "pass"
    # worked by hand (crafted.py): about 3.4 mA at hFE 40, below the 4.2 mA asked
    brk = by[BREAKER].stage
    assert brk.status == "breaks" and [b.check for b in brk.breaks] == ["target ie_min"]
    b = brk.breaks[0]
    assert b.limit == pytest.approx(4.2e-3) and 3.0e-3 < b.value < 3.6e-3
    assert b.excess == pytest.approx((4.2e-3 - b.value) / 4.2e-3)  # missed by this share of the limit
    assert by[NO_VCEO].stage.status == "unverified" and by[NO_VCEO].stage.unchecked == ("Q1 VCEO",)
    assert by[NO_PD].stage.status == "unverified" and by[NO_PD].stage.unchecked == ("Q1 power",)
    # below the ratings asked (VCEO 20 V), yet the 12 V stage keeps its spec: both are said
    assert by[LOW_RATINGS].status == "fail" and by[LOW_RATINGS].stage.status == "keeps"
    assert by[OTHER].stage is None and not by[OTHER].right_polarity
    assert [s.line.label for s in result.keeps] == [KEEPER, LOW_RATINGS]  # in rank order


def test_the_requirement_defaults_to_the_stages_own_transistor(case):
    spec, stock = case
    req = substitutes_for(stock, spec=spec).requirement
    # the spec's [transistor]: hFE 150-400, VCEO 40 V, IC max 100 mA, PD 500 mW
    assert (req.polarity, req.hfe_min, req.hfe_max, req.vceo, req.ic_max, req.pd) == \
        ("npn", 150.0, 400.0, 40.0, 0.1, 0.5)
    assert req.origin_of("vceo") == "spec" and req.vce_sat is None
    # without ratings in the spec: VCEO the supply; IC max twice the highest IC, PD the highest
    # dissipation over the 50 % derating (common practice), both at the stage's worst case
    bare = SPEC.replace('vceo = "40 V"\n', "").replace('ic_max = "100 mA"\n', "").replace('pd = "500 mW"\n', "")
    import tomllib

    spec2 = parse_spec(tomllib.loads(bare), "bare.toml")
    board = analyse(spec2.stage(), spec2.conditions, targets=spec2.targets)
    req2 = requirement_from_stage(spec2.stage(), board)
    assert req2.vceo == 12.0 and req2.origin_of("vceo") == "supply"
    assert req2.ic_max == pytest.approx(2 * float(board.worst.high["ic"]))
    assert req2.pd == pytest.approx(float(board.worst.high["p_q"]) / 0.5)
    assert req2.origin_of("pd") == "stage"
    # what is given overrides, field by field
    req3 = requirement_from_stage(spec2.stage(), board, {"vceo": 60.0, "hfe_min": 500.0})
    assert req3.vceo == 60.0 and req3.origin_of("vceo") == "given"
    assert (req3.hfe_min, req3.hfe_max) == (500.0, None)  # the stage's own top end is below the floor asked
    with pytest.raises(RequirementError, match="the stage is NPN: a PNP cannot"):
        requirement_from_stage(spec2.stage(), board, {"polarity": "pnp"})


def test_the_result_dict_and_table(case):
    spec, stock = case
    result = substitutes_for(stock, spec=spec, top=2)
    d = result.to_dict()
    assert set(d) == {"requirement", "stage", "substitutes", "failing", "counts", "cautions", "warnings",
                      "assumptions", "problems"}
    assert d["counts"] == {"pass": 1, "unknown": 2, "fail": 2, "other_polarity": 1, "keeps_stage": 2, "top": 2}
    assert [x["label"] for x in d["substitutes"]] == [KEEPER, NO_VCEO]  # top 2 of pass + unknown
    assert d["stage"]["board"]["status"] == "keeps" and d["stage"]["targets"] == {"ie_min": 4.2e-3,
                                                                                     "ie_max": 5.5e-3}
    import json

    json.dumps(d, allow_nan=False)
    frame = result.to_pandas()
    assert list(frame["label"]) == [s.line.label for s in result.substitutes]  # every line, best first
    assert frame.loc[frame["label"] == BREAKER, "stage_breaks"].item() == "target ie_min"
    assert "keep the stage in spec" in repr(result)


def test_a_spec_without_parts_is_refused(tmp_path):
    _spec, stock_path = write_case(tmp_path)
    design_spec = tmp_path / "design.toml"
    design_spec.write_text('topology = "emitter-follower"\nsupply = "12 V"\n[targets]\nie = "5 mA"\n')
    with pytest.raises(drawerfit.SpecError, match="no \\[parts\\]"):
        drawerfit.substitutes("npn", stock_path, spec=design_spec)
