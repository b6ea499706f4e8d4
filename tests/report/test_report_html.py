"""The HTML report: parses, holds the schematic's designators and values, fetches nothing.

Expected values: the value codes are written by hand from IEC 60062 (4k7, 5k6, 830R, 22µ, ...);
the designators are the trade's (R1, C1, Q1); everything else is a property of the page (it
parses, it is self-contained, it is reproducible from its seed).
"""

from __future__ import annotations

import re
from html.parser import HTMLParser

import pytest
from click.testing import CliRunner

from drawerfit.cli import main
from drawerfit.report.html import write_report

from .helpers import CE_PNP, FOLLOWER, PLAIN, VARIANTS, write_spec


class _Page(HTMLParser):
    """Collects the text inside each inline <svg>, keyed by its aria-label, and every tag."""

    def __init__(self):
        super().__init__(convert_charrefs=True)
        self.svgs: dict[str, list[str]] = {}
        self.tags: list[tuple[str, dict]] = []
        self._svg: str | None = None
        self._depth = 0
        self.errors: list[str] = []
        self.stack: list[str] = []

    VOID = {"meta", "br", "hr", "img", "input", "link", "wbr", "col", "area", "base", "source"}

    def handle_startendtag(self, tag, attrs):
        self.tags.append((tag, dict(attrs)))  # <path ... />: opens and closes

    def handle_starttag(self, tag, attrs):
        a = dict(attrs)
        self.tags.append((tag, a))
        if tag not in self.VOID:
            self.stack.append(tag)
        if tag == "svg":
            if self._svg is None:
                self._svg = a.get("aria-label", "?")
                self.svgs.setdefault(self._svg, [])
            self._depth += 1

    def handle_endtag(self, tag):
        if not self.stack or self.stack[-1] != tag:
            self.errors.append(f"</{tag}> closes {self.stack[-1] if self.stack else 'nothing'}")
        else:
            self.stack.pop()
        if tag == "svg":
            self._depth -= 1
            if self._depth == 0:
                self._svg = None

    def handle_data(self, data):
        if self._svg is not None and data.strip():
            self.svgs[self._svg].append(data.strip())


def _parse(path) -> _Page:
    page = _Page()
    page.feed(path.read_text(encoding="utf-8"))
    page.close()
    return page


def _report(tmp_path, design, **kw):
    out = tmp_path / "report.html"
    write_report(design, out, **kw)
    return out


# Designator -> value text, from the design files (codes by hand, IEC 60062).  A place filled by a
# pair shows each part under its own designator: the follower's RE is 680R + 150R (REa, REb), the
# PNP stage's RC is 11k2 ∥ 11k2 (RCa, RCb).
EXPECTED = {
    FOLLOWER: {"R1": "4k7", "R2": "5k6", "REa": "680R", "REb": "150R", "C1": "22µ", "C2": "220µ",
               "Q1": "QN-SIG-A", "RS": "600R", "RL (load)": "10k"},
    CE_PNP: {"R1": "18k", "R2": "82k", "RE": "270R", "RE2": "1k2", "RCa": "11k2", "RCb": "11k2", "C1": "4µ7",
             "C2": "4µ7", "CE": "220µ", "Q1": "QP-SIG-B", "RS": "1k0", "RL (load)": "22k"},
    PLAIN: {"R1": "47k", "R2": "10k", "RE": "1k0", "RC": "4k7", "C1": "10µ", "C2": "10µ", "Q1": "QN-SIG-C",
            "RS": "600R", "RL (load)": "10k"},
}


@pytest.mark.parametrize("design", list(EXPECTED), ids=lambda p: p.stem)
def test_schematic_holds_every_designator_and_value(tmp_path, design):
    page = _parse(_report(tmp_path, design, monte_carlo=200))
    texts = page.svgs["schematic of the stage"]
    for designator, value in EXPECTED[design].items():
        assert designator in texts, (designator, texts)
        assert value in texts or any(t.startswith(value + " ") for t in texts), (designator, value, texts)


def test_pairs_are_shown_with_their_parts(tmp_path):
    # RE = 680 + 150 in series (the design file), RC = 11k2 ∥ 11k2: each part drawn under its own
    # designator, the place labelled with what they make together, and no one-symbol stand-in
    texts = _parse(_report(tmp_path, FOLLOWER, monte_carlo=0)).svgs["schematic of the stage"]
    assert {"REa", "REb", "RE = 830R"} <= set(texts) and "RE" not in texts
    texts = _parse(_report(tmp_path, CE_PNP, monte_carlo=0)).svgs["schematic of the stage"]
    assert {"RCa", "RCb", "RC = 5k6"} <= set(texts) and "RC" not in texts


@pytest.mark.parametrize("name", list(VARIANTS))
def test_schematic_draws_present_parts_only(tmp_path, name):
    topology, polarity, supply, rs, load, parts = VARIANTS[name]
    page = _parse(_report(tmp_path, write_spec(tmp_path, name), monte_carlo=0))
    texts = page.svgs["schematic of the stage"]
    for role in ("R1", "R2", "RE", "RE2", "RC", "C1", "C2", "CE"):
        assert (role in texts) == (role in parts), role
    assert ("RS" in texts) == (rs is not None)
    assert ("RL (load)" in texts) == (load is not None)
    assert "Q1" in texts


def test_page_parses_and_holds_every_section(tmp_path):
    page = _parse(_report(tmp_path, FOLLOWER, monte_carlo=300))
    assert page.errors == [] and page.stack == []  # every element closed, in order
    assert set(page.svgs) == {"schematic of the stage", "magnitude response", "DC and AC load lines",
                              "histogram of IE", "histogram of the corner"}
    text = (tmp_path / "report.html").read_text(encoding="utf-8")
    for heading in ("Before you build", "Schematic", "Fitting the parts", "Checks", "Parts", "Pick list",
                    "Magnitude response", "Load lines", "Spread over 300 random builds"):
        assert f">{heading}<" in text, heading
    # the target corner (20 Hz in the design file) is marked on the response plot
    assert "target: corner at or below 20 Hz" in page.svgs["magnitude response"]
    # every bin of the pick list is on the page
    for bin_name in ("R-04", "R-05", "R-02", "R-01", "C-03", "C-05", "T-01"):
        assert f">{bin_name}<" in text


def test_no_outside_reference(tmp_path):
    text = _report(tmp_path, CE_PNP, monte_carlo=100).read_text(encoding="utf-8")
    assert not re.search(r"https?://", text)
    assert not re.search(r"//[a-z0-9.-]+\.[a-z]{2,}/", text, re.I)  # protocol-relative URLs
    page = _parse(tmp_path / "report.html")
    for tag, attrs in page.tags:
        assert tag not in ("link", "script", "iframe", "img", "object", "embed"), tag
        for key in ("src", "href"):
            if key in attrs:
                assert attrs[key].startswith("#"), (tag, attrs)  # in-page references only
    for ref in re.findall(r"url\(([^)]*)\)", text):
        assert ref.startswith("#"), ref
    assert "@import" not in text


def test_ids_are_unique_across_the_inline_svgs(tmp_path):
    page = _parse(_report(tmp_path, FOLLOWER, monte_carlo=100))
    ids = [a["id"] for _, a in page.tags if "id" in a]
    assert len(ids) == len(set(ids))
    for _, a in page.tags:
        if a.get("href", "").startswith("#"):
            assert a["href"][1:] in ids


def test_print_css_leaves_the_page_size_to_the_printer(tmp_path):
    text = _report(tmp_path, FOLLOWER, monte_carlo=0).read_text(encoding="utf-8")
    page_rule = re.search(r"@page\s*{([^}]*)}", text).group(1)
    assert "size" not in page_rule  # so A4 and Letter both work
    assert "@media print" in text
    assert "max-width: 100%" in text


def test_no_histograms_without_monte_carlo(tmp_path):
    page = _parse(_report(tmp_path, FOLLOWER, monte_carlo=0))
    assert "histogram of IE" not in page.svgs


def test_same_seed_same_page_other_seed_other_spread(tmp_path):
    a = tmp_path / "a.html"
    b = tmp_path / "b.html"
    c = tmp_path / "c.html"
    write_report(FOLLOWER, a, monte_carlo=400, seed=7)
    write_report(FOLLOWER, b, monte_carlo=400, seed=7)
    write_report(FOLLOWER, c, monte_carlo=400, seed=8)
    assert a.read_text() == b.read_text()
    assert a.read_text() != c.read_text()


def test_failed_target_is_said_plainly(tmp_path):
    # The follower's corner with 10 µF / 47 µF into 4k7 is a few hertz: a 1 Hz target cannot be met.
    spec = write_spec(tmp_path, "ef-pnp-no-rs", targets={"f_low": "1 Hz", "swing": "0.5 V"})
    text = _report(tmp_path, spec, monte_carlo=100).read_text(encoding="utf-8")
    assert "Not ready to build" in text
    assert "NOT MET" in text
    row = re.search(r"NOT MET</span></td><td>([^<]*)</td>", text).group(1)
    assert "corner" in row


def test_plain_spec_says_it_has_no_bins(tmp_path):
    text = _report(tmp_path, PLAIN, monte_carlo=0).read_text(encoding="utf-8")
    assert "no bins and no pick list" in text


def test_cautions_for_polarized_parts_and_high_supply(tmp_path):
    import html

    from drawerfit.cautions import ELECTROLYTIC, GENERAL, HIGH_VOLTAGE

    text = _report(tmp_path, FOLLOWER, monte_carlo=0).read_text(encoding="utf-8")
    assert html.escape(ELECTROLYTIC.text) in text and html.escape(GENERAL.text) in text
    assert html.escape(HIGH_VOLTAGE.text) not in text
    # a 60 V supply (above the 50 V caution level, common practice) gets the high-voltage caution
    spec = write_spec(tmp_path, "ce-npn-re2-unbypassed")
    spec.write_text(spec.read_text().replace('supply = "20 V"', 'supply = "60 V"'))
    text = _report(tmp_path, spec, monte_carlo=0).read_text(encoding="utf-8")
    assert html.escape(HIGH_VOLTAGE.text) in text
    # and so does a low-voltage stage inside mains equipment
    spec = write_spec(tmp_path, "ef-pnp-no-rs")
    spec.write_text("mains = true\n" + spec.read_text())
    text = _report(tmp_path, spec, monte_carlo=0).read_text(encoding="utf-8")
    assert html.escape(HIGH_VOLTAGE.text) in text


def test_cli_report_writes_the_page_and_is_quiet_on_a_pipe(tmp_path):
    out = tmp_path / "r.html"
    res = CliRunner().invoke(main, ["report", str(FOLLOWER), "-o", str(out), "--monte-carlo", "100"])
    assert res.exit_code == 0, res.output
    assert res.stderr == ""  # CliRunner's stderr is not a terminal: no progress line
    assert res.stdout.strip() == f"wrote {out}"
    assert "<svg" in out.read_text(encoding="utf-8")


@pytest.mark.parametrize("content, words", [
    ("this is = not toml [", "not valid TOML"),
    ('topology = "emitter-follower"\n', "supply: missing"),
    ('topology = "emitter-follower"\nsupply = "12 X"\n[transistor]\nhfe = 100\n[parts]\nR1 = "1k"\n', "supply"),
])
def test_bad_design_file_exits_2_with_its_name(tmp_path, content, words):
    bad = tmp_path / "bad.toml"
    bad.write_text(content)
    out = tmp_path / "r.html"
    res = CliRunner().invoke(main, ["report", str(bad), "-o", str(out)])
    assert res.exit_code == 2
    assert str(bad) in res.stderr and words in res.stderr
    assert "Traceback" not in res.output
    assert not out.exists()


def test_report_will_not_write_over_its_input(tmp_path):
    copy = tmp_path / "design.toml"
    copy.write_bytes(FOLLOWER.read_bytes())
    before = copy.read_bytes()
    res = CliRunner().invoke(main, ["report", str(copy), "-o", str(copy)])
    assert res.exit_code == 2 and "input file" in res.stderr
    assert copy.read_bytes() == before


def test_stock_resolves_the_label_and_is_checked_against_the_design(tmp_path, samples):
    # ce_repair_pnp.toml names its transistor only by label: the stock file supplies it
    from drawerfit.stock import load_stock

    spec = samples / "ce_repair_pnp.toml"
    stock_file = samples / "repair_bench.csv"
    before = stock_file.read_bytes()
    out = tmp_path / "r.html"
    res = CliRunner().invoke(main, ["report", str(spec), "--stock", str(stock_file), "-o", str(out)])
    assert res.exit_code == 0, res.output
    assert stock_file.read_bytes() == before  # read only
    line = next(l for l in load_stock(str(stock_file)).transistors() if l.label == "BenchPNP-7")
    text = out.read_text(encoding="utf-8")
    assert f"hFE {line.hfe_min:g} to {line.hfe_max:g}" in text
    if line.location:
        assert f"bin {line.location}" in text
    # without the stock the label cannot be resolved: exit 2, naming the key
    res = CliRunner().invoke(main, ["report", str(spec), "-o", str(tmp_path / "x.html")])
    assert res.exit_code == 2 and "transistor.label" in res.stderr
    # a design whose checksum matches the stock says so; one that does not, warns
    design = tmp_path / "d.toml"
    for checksum, words in ((load_stock(str(stock_file)).checksum, "unchanged since the design was made"),
                            ("0" * 64, "has changed since the design was made")):
        design.write_text(f'stock_checksum = "{checksum}"\n' + spec.read_text(encoding="utf-8"), encoding="utf-8")
        res = CliRunner().invoke(main, ["report", str(design), "--stock", str(stock_file), "-o", str(out)])
        assert res.exit_code == 0, res.output
        assert words in out.read_text(encoding="utf-8")


def test_user_text_cannot_break_the_page(tmp_path):
    # a transistor label and a bin name with markup and schemdraw's math marker in them
    hostile = 'Q<script>x</script>&$1$'
    text = FOLLOWER.read_text(encoding="utf-8").replace('label = "QN-SIG-A"', f"label = '{hostile}'")
    text = text.replace('location = "R-04"', 'location = "<b>R4</b>"')
    design = tmp_path / "hostile.toml"
    design.write_text(text, encoding="utf-8")
    out = _report(tmp_path, design, monte_carlo=20)
    page = _parse(out)
    assert page.errors == [] and page.stack == []
    assert not any(tag in ("script", "b") for tag, _ in page.tags)
    texts = page.svgs["schematic of the stage"]
    assert "Q<script>x</script>&\uff041\uff04" in texts  # shown as text; '$' by its look-alike
    assert "&lt;b&gt;R4&lt;/b&gt;" in out.read_text(encoding="utf-8")


@pytest.mark.parametrize("r1, r2, rc", [("1M", "1k", "4k7"), ("10k", "47k", "47k")], ids=["cut-off", "saturated"])
def test_a_stage_out_of_its_active_region_is_reported_not_hidden(tmp_path, r1, r2, rc):
    # divider 1M/1k puts the base at 12 mV (cut off); 10k/47k with RC 47k saturates (VBE 0.65 V and
    # VCE(sat) 0.2 V, common practice): either way there is no corner and the page says so
    spec = tmp_path / "s.toml"
    spec.write_text('topology = "common-emitter"\nsupply = "12 V"\n[transistor]\nhfe = 100\n[parts]\n'
                    f'R1 = "{r1}"\nR2 = "{r2}"\nRE = "1k"\nRC = "{rc}"\nC1 = "10u"\nC2 = "10u"\n')
    text = _report(tmp_path, spec, monte_carlo=50).read_text(encoding="utf-8")
    assert "Not ready to build" in text and "Q1 state" in text
    assert "50 of 50 builds: no value (not active)" in text
