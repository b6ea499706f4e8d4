"""The report's style sheet: screen and print.

Print: the page size is the printer's (``@page`` sets margins only, so A4 and Letter both work);
a heading never ends a page (it sits in a ``keep`` block with the start of what it heads, and
``break-after: avoid`` holds it to what follows); figures, short tables and table rows do not
break; the schematic is held to a height that leaves it on the first page with the verdict and
the cautions.  docs/report-and-export.md says how this was checked.
"""

REPORT_CSS = """
:root { --ink:#1f3b57; --muted:#5b6b7a; --line:#d5dbe2; --accent:#b5541c; --ok:#2f6b2b; --bad:#a0281e;
        --paper:#fbfaf7; --band:#eef2f5; }
* { box-sizing: border-box; }
html { background: #e9ecef; }
body { font-family: system-ui, -apple-system, "Segoe UI", Roboto, "Noto Sans", "DejaVu Sans", Arial, sans-serif;
       color: var(--ink); background: var(--paper); max-width: 60rem; margin: 1.5rem auto; padding: 1.5rem 2rem;
       line-height: 1.45; font-size: 15px; box-shadow: 0 1px 4px rgba(0,0,0,.12); }
h1 { font-size: 1.55rem; margin: 0 0 .2rem; letter-spacing: .01em; }
h2 { font-size: 1.15rem; margin: 1.8rem 0 .6rem; padding-bottom: .2rem; border-bottom: 2px solid var(--ink); }
h3 { font-size: 1rem; margin: 1rem 0 .4rem; }
h1, h2, h3 { break-after: avoid; page-break-after: avoid; }
p { margin: .4rem 0; }
.sub { color: var(--muted); margin: 0 0 1rem; }
.verdict { padding: .6rem .9rem; border-left: 6px solid var(--ok); background: #e8f1e6; margin: .8rem 0; }
.verdict.bad { border-color: var(--bad); background: #f7e6e3; }
.cautions { border: 2px solid var(--accent); background: #fbf1e8; padding: .5rem 1rem; margin: 1rem 0; }
.cautions h2 { border: none; margin: .3rem 0; color: var(--accent); }
.cautions li { margin: .3rem 0; }
ul.fitting { padding-left: 1.2rem; margin: .4rem 0 .8rem; }
ul.fitting li { margin: .25rem 0; }
table { border-collapse: collapse; width: 100%; margin: .4rem 0 .8rem; font-size: .9rem; }
thead { display: table-header-group; }
th, td { border-bottom: 1px solid var(--line); padding: .28rem .45rem; text-align: left; vertical-align: top;
         overflow-wrap: break-word; }
th { background: var(--band); font-weight: 600; overflow-wrap: normal; }
td:first-child { overflow-wrap: normal; }
td.num, th.num { text-align: right; font-variant-numeric: tabular-nums; white-space: nowrap; }
tr.member td:first-child { padding-left: 1.3rem; }
tr.member td { color: #33506b; }
.tag { display: inline-block; white-space: nowrap; min-width: 4.6em; text-align: center; border-radius: 3px; padding: 0 .35em;
       font-size: .8rem; font-weight: 600; color: #fff; background: var(--ok); }
.tag.bad { background: var(--bad); } .tag.skip { background: #8a96a3; }
figure { margin: .6rem 0 1rem; break-inside: avoid; page-break-inside: avoid; }
figcaption { font-size: .85rem; color: var(--muted); margin-top: .25rem; }
figcaption .figno { color: var(--ink); font-weight: 700; }
svg.pic { display: block; width: 100%; height: auto; max-width: 100%; }
.schematic svg.pic { background: #fff; border: 1px solid var(--line); }
table.narrow { width: auto; min-width: 50%; }
.pair { display: flex; gap: 1rem; flex-wrap: wrap; }
.pair figure { flex: 1 1 18rem; min-width: 0; }
.beside { display: flex; gap: 1rem; align-items: flex-start; }
.beside > svg.pic { flex: 1 1 auto; min-width: 0; }
.beside > aside { flex: 0 0 12rem; }
aside.limit { border-left: 4px solid var(--accent); background: #fbf1e8; padding: .45rem .7rem; font-size: .85rem; }
aside.limit strong { color: var(--accent); }
.note { font-size: .85rem; color: var(--muted); }
.keep { break-inside: avoid; page-break-inside: avoid; }
.lead { break-after: avoid; page-break-after: avoid; }
footer { margin-top: 2rem; font-size: .8rem; color: var(--muted); border-top: 1px solid var(--line); padding-top: .5rem; }
@page { margin: 14mm 12mm; }
@media print {
  html { background: none; }
  body { max-width: none; width: auto; margin: 0; padding: 0; box-shadow: none; background: none; font-size: 10pt; }
  h2 { margin-top: 1.1rem; }
  h1, h2, h3 { break-after: avoid; page-break-after: avoid; }
  table { font-size: 8.5pt; }
  tr, li, .verdict, .cautions, .keep, figure { break-inside: avoid; page-break-inside: avoid; }
  .tag { border: 1px solid #000; color: #000; background: none !important; }
  .tag.bad { font-weight: 800; }
  .schematic svg.pic { max-height: 92mm; width: auto; margin: 0 auto; }
  figure.plot svg.pic { max-height: 80mm; width: auto; }
  .pair figure svg.pic { max-height: 62mm; }
  .beside > aside { flex-basis: 10rem; }
}
"""
