"""The report as a builder reads it: physical parts, checks apart from instructions, labelled
figures, the model's limit beside the response, and a print layout that keeps headings with
their content.

Expected values: designators of the trade (R1, with a, b, c for the parts of one place, in the
arrangement's order: docs/method.md); the rest are properties of the page.  The print layout was
also looked at by eye, printed to PDF on A4 and Letter by a headless browser
(docs/report-and-export.md); a test cannot look, so these hold the rules that make it so.
"""

from __future__ import annotations

import re
from html.parser import HTMLParser

import pytest

from drawerfit.report.html import write_report
from drawerfit.stages.physical import designators

from .helpers import CE_PNP, FOLLOWER, PLAIN, with_networks, write_spec
from .test_report_html import _parse

# Places filled by two or three parts, in every arrangement and in both topologies (invented
# values whose networks make the role's value in the design file).
NETWORKS = {
    "follower": (FOLLOWER, {"R1": ("parallel", (9400.0, 9400.0)),
                            "R2": ("series-parallel", (2800.0, 5600.0, 5600.0)),
                            "RE": ("parallel-series", (1660.0, 1000.0, 660.0)),
                            "C1": ("series", (44e-6, 44e-6)), "C2": ("parallel", (110e-6, 110e-6))}),
    "common emitter": (CE_PNP, {"R1": ("series", (6000.0, 6000.0, 6000.0)), "R2": ("parallel", (246e3,) * 3),
                                "RE2": ("parallel", (2400.0, 2400.0)), "CE": ("parallel", (110e-6, 110e-6)),
                                "C2": ("series", (9.4e-6, 9.4e-6))}),
}


def _report(tmp_path, design, **kw):
    out = tmp_path / "report.html"
    write_report(design, out, **kw)
    return out


@pytest.mark.parametrize("case", list(NETWORKS))
def test_every_physical_part_is_drawn_and_listed_with_its_designator(tmp_path, case):
    base, networks = NETWORKS[case]
    page_path = _report(tmp_path, with_networks(tmp_path, base, networks), monte_carlo=0)
    texts = _parse(page_path).svgs["schematic of the stage"]
    page = page_path.read_text(encoding="utf-8")
    for role, (_arrangement, values) in networks.items():
        names = designators(role, len(values))
        assert len(names) == len(values) > 1
        for name in names:
            assert name in texts, (role, name)  # drawn, with its own label
            assert f"<td>{name}</td>" in page, (role, name)  # a row of the parts table
        assert role not in texts  # the place is not drawn as one symbol
        assert any(t.startswith(f"{role} = ") for t in texts)  # what its parts make together


def test_checks_carry_badges_and_instructions_do_not(tmp_path):
    page_path = _report(tmp_path, FOLLOWER, monte_carlo=0)
    page = page_path.read_text(encoding="utf-8")
    badge_rows = re.findall(r"<tr><td><span class=\"tag[^\"]*\">[^<]*</span></td><td>([^<]*)</td>", page)
    assert badge_rows and not any("polarity" in name for name in badge_rows)
    assert "Q1 state" in badge_rows
    # the fitting instructions say how each electrolytic goes in, without a badge
    fitting = page[page.index(">Fitting the parts<"):page.index(">Checks<")]
    assert "fit the + end toward the base" in fitting and "fit the + end toward the emitter" in fitting
    assert "tag" not in fitting
    # the Q1 state row says which voltage its numbers are
    state_row = re.search(r"Q1 state</td>(.*?)</tr>", page).group(1)
    assert "VCE " in state_row and "VCE(sat)" in state_row


def test_a_polarity_that_fails_is_a_check_not_an_instruction(tmp_path):
    # a divider of 10M over 10R holds the base at 12 µV, far below VBE: Q1 is cut off, the emitter
    # sits at 0 V and C2 sees no DC voltage, so no electrolytic can be fitted there (a failed check);
    # C1's 12 µV still has one sign, so its orientation stays an instruction
    spec = tmp_path / "s.toml"
    spec.write_text('topology = "emitter-follower"\nsupply = "12 V"\n[transistor]\nhfe = 100\n[parts]\n'
                    'R1 = "10M"\nR2 = "10"\nRE = "1k"\nC1 = "10u"\nC2 = { value = "10u", polarized = true }\n',
                    encoding="utf-8")
    page = _report(tmp_path, spec, monte_carlo=0).read_text(encoding="utf-8")
    assert re.search(r"NOT MET</span></td><td>C2 polarity</td>", page)
    assert "C1 polarity" not in page
    assert "Not ready to build" in page


def test_pin_order_from_the_stock_line_else_the_reminder(tmp_path):
    spec = write_spec(tmp_path, "ef-pnp-no-rs")
    page = _report(tmp_path, spec, monte_carlo=0).read_text(encoding="utf-8")
    assert "the stock file gives no pin order" in page
    spec.write_text(spec.read_text(encoding="utf-8").replace("hfe_min = 100", 'hfe_min = 100\npins = "ecb"'),
                    encoding="utf-8")
    page_path = _report(tmp_path, spec, monte_carlo=0)
    page = page_path.read_text(encoding="utf-8")
    assert "pins <strong>E-C-B</strong>" in page and "the stock file gives no pin order" not in page
    assert "pins E-C-B" in _parse(page_path).svgs["schematic of the stage"]  # beside Q1 in the drawing


class _Figures(HTMLParser):
    """Each <figure>: its SVGs' aria-labels, its caption text, the text of any <aside> in it."""

    def __init__(self):
        super().__init__(convert_charrefs=True)
        self.figures: list[dict] = []
        self._in: list[str] = []

    def handle_starttag(self, tag, attrs):
        a = dict(attrs)
        if tag == "figure":
            self.figures.append({"svgs": [], "caption": "", "aside": ""})
        if self.figures and tag == "svg" and "aria-label" in a:
            self.figures[-1]["svgs"].append(a["aria-label"])
        self._in.append(tag)

    def handle_endtag(self, tag):
        while self._in and self._in.pop() != tag:
            pass

    def handle_data(self, data):
        if not self.figures:
            return
        if "figcaption" in self._in:
            self.figures[-1]["caption"] += data
        if "aside" in self._in:
            self.figures[-1]["aside"] += data


def test_every_figure_is_numbered_and_captioned_and_every_plot_axis_labelled(tmp_path):
    page_path = _report(tmp_path, FOLLOWER, monte_carlo=200)
    parser = _Figures()
    parser.feed(page_path.read_text(encoding="utf-8"))
    captions = [f["caption"].strip() for f in parser.figures]
    assert [c.split(".")[0] for c in captions] == [f"Figure {i}" for i in range(1, 6)]
    assert all(len(c) > 20 for c in captions)
    svgs = _parse(page_path).svgs
    axes = {"magnitude response": ("frequency (Hz)", "gain, source to load (dB)"),
            "DC and AC load lines": ("VCE (V)", "IC (mA)"),
            "histogram of IE": ("IE (mA)", "builds"),
            "histogram of the corner": ("−3 dB low corner (Hz)", "builds")}
    for name, labels in axes.items():
        for label in labels:
            assert label in svgs[name], (name, label)
    # the histogram names its targets in a legend with their values, not rotated against a line
    assert "target min 5.5 mA" in svgs["histogram of IE"] and "target max 8 mA" in svgs["histogram of IE"]


def test_the_upper_corner_is_said_to_be_unmodelled_beside_the_response(tmp_path):
    parser = _Figures()
    parser.feed(_report(tmp_path, PLAIN, monte_carlo=0).read_text(encoding="utf-8"))
    (response,) = [f for f in parser.figures if "magnitude response" in f["svgs"]]
    assert "Upper corner not modelled" in response["aside"]
    assert "upper corner not modelled" in " ".join(_parse(tmp_path / "report.html").svgs["magnitude response"])


class _Blocks(HTMLParser):
    """For each <h2>: the classes of the elements around it and the first tag after it."""

    def __init__(self):
        super().__init__(convert_charrefs=True)
        self.stack: list[tuple[str, str]] = []
        self.headings: list[dict] = []
        self._h2: dict | None = None
        self._after: dict | None = None

    def handle_starttag(self, tag, attrs):
        if self._after is not None:
            self._after["next"] = tag
            self._after = None
        cls = dict(attrs).get("class") or ""
        if tag == "h2":
            self._h2 = {"text": "", "around": [c for _, c in self.stack], "next": None}
            self.headings.append(self._h2)
        if tag not in ("meta", "br"):
            self.stack.append((tag, cls))

    def handle_endtag(self, tag):
        while self.stack and self.stack.pop()[0] != tag:
            pass
        if tag == "h2":
            self._after, self._h2 = self._h2, None

    def handle_data(self, data):
        if self._h2 is not None:
            self._h2["text"] += data


def test_print_rules_keep_headings_with_their_content(tmp_path):
    text = _report(tmp_path, FOLLOWER, monte_carlo=200).read_text(encoding="utf-8")
    css = text[text.index("<style>"):text.index("</style>")]
    print_css = css[css.index("@media print"):]
    assert re.search(r"h1, h2, h3 \{ break-after: avoid; page-break-after: avoid; }", print_css)
    assert re.search(r"\.keep, figure \{ break-inside: avoid; page-break-inside: avoid; }", print_css)
    assert ".lead { break-after: avoid; page-break-after: avoid; }" in css
    assert "thead { display: table-header-group; }" in css  # a table that breaks repeats its header
    assert re.search(r"\.schematic svg\.pic \{ max-height: \d+mm", print_css)  # page 1 holds the schematic
    parser = _Blocks()
    parser.feed(text)
    for h in parser.headings:
        kept = any("keep" in c.split() for c in h["around"])
        # a heading either sits in a block that does not break, or is followed straight by its
        # table, list or figure, which its break-after rule holds it to
        assert kept or h["next"] in ("table", "ul", "figure"), h
    pick = next(h for h in parser.headings if h["text"] == "Pick list")
    assert any("keep" in c.split() for c in pick["around"])  # never alone at the foot of a page
