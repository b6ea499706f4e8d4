"""The `drawerfit` command: thin click commands over the library.

Heavy libraries (pandas, scipy, ortools, matplotlib, openpyxl) are imported inside the commands,
so `drawerfit --help` stays fast.  User mistakes become one line on stderr and an exit status
(2 bad input, 3 no design in stock, 4 `analyze --must-pass` found a check not met, 5 the design
search stopped at its work budget), never a traceback.
"""

from __future__ import annotations

import functools
import sys

import click

from .parts import DrawerfitError, SpecError
from .values import ValueParseError, parse_quantity

EXIT_BAD_INPUT = 2
EXIT_NO_DESIGN = 3
EXIT_NOT_MET = 4  # analyze --must-pass: a target or rating is not met


class ValueType(click.ParamType):
    """A component value on the command line, read by the same parser as the stock loader."""

    name = "value"

    def __init__(self, expect: str | None = None):
        self.expect = expect

    def convert(self, value, param, ctx):
        if not isinstance(value, str):
            return value
        try:
            q = parse_quantity(value, self.expect)
        except ValueParseError as exc:
            self.fail(str(exc), param, ctx)
        if q.unit is None:  # '68n' is a capacitance, '4k7' a resistance: the loader's own rule
            from .values import Quantity, implied_unit

            q = Quantity(q.value, implied_unit(value))
        return q


class FractionType(click.ParamType):
    """A window or tolerance: '1%', '0.5 %' or a fraction such as 0.01."""

    name = "fraction"

    def convert(self, value, param, ctx):
        from .values import parse_tolerance

        if isinstance(value, float):
            return value
        try:
            return parse_tolerance(value)
        except ValueParseError as exc:
            self.fail(str(exc), param, ctx)


def user_errors(fn):
    """Turn DrawerfitError into a clean message and its exit status."""

    @functools.wraps(fn)
    def wrapper(*args, **kwargs):
        try:
            return fn(*args, **kwargs)
        except DrawerfitError as exc:
            click.echo(f"drawerfit: {exc}", err=True)
            sys.exit(exc.exit_status)

    return wrapper


@click.group(context_settings={"help_option_names": ["-h", "--help"]})
@click.version_option(package_name="drawerfit")
def main() -> None:
    """Design and fill small transistor stages from the parts you already own."""


# --- stock and match (values, loader, equivalents) -------------------------------------------


@main.command()
@click.argument("file", type=click.Path(dir_okay=False))
@click.option("--json", "as_json", is_flag=True, help="Print the lines and problems as JSON.")
@click.option("--strict", is_flag=True, help="Fail (exit 2) if any line cannot be read.")
@user_errors
def stock(file: str, as_json: bool, strict: bool) -> None:
    """Load a stock file (CSV or XLSX) and summarise what it holds."""
    from .commands.stock_cmd import run_stock

    run_stock(file, as_json=as_json, strict=strict)


TRANSISTOR_WORDS = ("npn", "pnp")


@main.command()
@click.argument("value", metavar="VALUE|npn|pnp")
@click.option("--stock", "stock_file", required=True, type=click.Path(dir_okay=False), help="Stock file.")
@click.option("--within", type=FractionType(), default=None, help="Window around VALUE, e.g. 1% or 0.01.")
@click.option("--max-parts", type=click.IntRange(1, 3), default=2, show_default=True)
@click.option("--power", type=ValueType("W"), default=None,
              help="Power rating the substitute must offer (resistors; a transistor's PD).")
@click.option("--voltage", type=ValueType("V"), default=None, help="Voltage rating the substitute must offer (capacitors).")
@click.option("--units", type=click.IntRange(1), default=1, show_default=True, help="How many are needed.")
@click.option("--top", type=click.IntRange(1), default=10, show_default=True)
@click.option("--json", "as_json", is_flag=True)
@click.option("--allow-polarized-series", is_flag=True,
              help="Also offer chains with electrolytics in series (they need balancing resistors).")
@click.option("--strict", is_flag=True, help="Fail (exit 2) if any stock line cannot be read.")
@click.option("--vceo", default=None, metavar="V", help="Transistors: the lowest VCEO, e.g. 45V.")
@click.option("--ic-max", "ic_max", default=None, metavar="A", help="Transistors: the lowest IC max, e.g. 150mA.")
@click.option("--hfe", default=None, metavar="MIN-MAX", help="Transistors: the hFE range the stage was built for.")
@click.option("--hfe-min", "hfe_min", default=None, metavar="N", help="Transistors: the low end of the hFE range.")
@click.option("--hfe-max", "hfe_max", default=None, metavar="N", help="Transistors: the high end of the hFE range.")
@click.option("--vce-sat", "vce_sat", default=None, metavar="V", help="Transistors: the highest VCE(sat), e.g. 0.3V.")
@click.option("--in", "spec_file", default=None, type=click.Path(dir_okay=False), metavar="SPEC.toml",
              help="Transistors: the stage (spec with [parts]) each substitute is tried in; what is not "
                   "given defaults to its own transistor.")
@click.pass_context
@user_errors
def match(ctx, value, stock_file, within, max_parts, power, voltage, units, top, as_json, allow_polarized_series,
          strict, vceo, ic_max, hfe, hfe_min, hfe_max, vce_sat, spec_file) -> None:
    """Find what in the drawer makes VALUE: single parts, series or parallel pairs, triples.

    With npn or pnp instead of a value: the transistors in the drawer that can replace one, with
    their margins, best first; with --in SPEC.toml, each tried in the stage.
    """
    transistor_opts = {"--vceo": vceo, "--ic-max": ic_max, "--hfe": hfe, "--hfe-min": hfe_min,
                       "--hfe-max": hfe_max, "--vce-sat": vce_sat, "--in": spec_file}
    if value.strip().lower() in TRANSISTOR_WORDS:
        from click.core import ParameterSource

        passive = {"--within": within is not None, "--voltage": voltage is not None,
                   "--allow-polarized-series": allow_polarized_series,
                   "--max-parts": ctx.get_parameter_source("max_parts") != ParameterSource.DEFAULT}
        wrong = [name for name, given in passive.items() if given]
        if wrong:
            raise SpecError(f"match {value}: {wrong[0]} applies to resistors and capacitors, not to transistors")
        from .commands.match_cmd import run_substitutes

        run_substitutes(value.strip().lower(), stock_file, vceo=vceo, ic_max=ic_max, power=power, hfe=hfe,
                        hfe_min=hfe_min, hfe_max=hfe_max, vce_sat=vce_sat, spec_file=spec_file, units=units,
                        top=top, as_json=as_json, strict=strict)
        return
    wrong = [name for name, v in transistor_opts.items() if v is not None]
    if wrong:
        raise SpecError(f"match {value}: {wrong[0]} applies to transistors (match npn or match pnp)")
    if value.strip().isalpha():
        raise SpecError(f"match: {value!r} is neither a value (such as 4k7 or 68n) nor a transistor polarity "
                        "(npn or pnp)")
    quantity = ValueType().convert(value, ctx.command.params[0], ctx)
    from .commands.match_cmd import run_match

    run_match(quantity, stock_file, within=within, max_parts=max_parts, power=power, voltage=voltage,
              units=units, top=top, as_json=as_json, strict=strict,
              allow_polarized_series=allow_polarized_series)


# --- analyze (stage models) ------------------------------------------------------------------


@main.command()
@click.argument("spec", type=click.Path(dir_okay=False))
@click.option("--stock", "stock_file", type=click.Path(dir_okay=False), default=None,
              help="Stock file, to look up [transistor] label.")
@click.option("--json", "as_json", is_flag=True, help="Print the figures as JSON (SI units).")
@click.option("--monte-carlo", "monte_carlo", type=click.IntRange(0, 10_000_000), default=0,
              show_default=True, help="Random builds to simulate from the tolerances.")
@click.option("--seed", type=int, default=0, show_default=True, help="Seed for --monte-carlo.")
@click.option("--must-pass", "must_pass", is_flag=True,
              help="Exit with status 4 when any target or rating is not met (to guard a script).")
@user_errors
def analyze(spec, stock_file, as_json, monte_carlo, seed, must_pass) -> None:
    """Analyse the stage in SPEC (TOML with [parts]): bias, gain, corner, swing, ratings, spread."""
    from .commands.analyze_cmd import run_analyze

    run_analyze(spec, stock_file=stock_file, as_json=as_json, monte_carlo=monte_carlo, seed=seed,
                must_pass=must_pass)


# --- design (optimizer) and demo -------------------------------------------------------------


@main.command()
@click.argument("spec", type=click.Path(dir_okay=False))
@click.option("--stock", "stock_file", required=True, type=click.Path(dir_okay=False), help="Stock file (CSV or XLSX).")
@click.option("--units", type=click.IntRange(1), default=1, show_default=True, help="How many stages to build.")
@click.option("--max-parts", type=click.IntRange(1, 3), default=2, show_default=True,
              help="Most parts per role (2: pairs, 3: triples).")
@click.option("--guarantee", type=click.Choice(["worst-case", "nominal"]), default="worst-case", show_default=True,
              help="Hold the constraints over tolerances, hFE and ambient, or at the nominal point only.")
@click.option("--prefer", type=click.Choice(["fewest-parts", "closest"]), default="fewest-parts", show_default=True,
              help="Fewest parts first, or closest to the target centres first.")
@click.option("--top", type=click.IntRange(1), default=1, show_default=True, help="Show this many designs.")
@click.option("--json", "as_json", is_flag=True, help="Print the design as JSON (SI units).")
@click.option("--save", type=click.Path(dir_okay=False), default=None, help="Write an analyze-ready DESIGN.toml.")
@click.option("--exhaustive", is_flag=True, help="Enumerate every candidate naively (slow; for cross-checks).")
@click.option("--report", type=click.Path(dir_okay=False), default=None, help="Write an HTML report.")
@click.option("--quiet", is_flag=True, help="Shorter output; no stock notes.")
@click.option("--strict", is_flag=True, help="Fail (exit 2) if any stock line cannot be read.")
@click.option("--budget", type=click.FloatRange(0.01, 1000.0), default=1.0, show_default=True,
              help="Work budget of the search, as a multiple of the default (about 20 s of pruning on one "
                   "core); past it the answer is the best found, with exit status 5.")
@click.option("--keep", is_flag=True,
              help="Mend a board: SPEC's [parts] and [transistor] are on the board; change the fewest of them.")
@click.option("--fixed", "fixed", default=None, metavar="ROLES",
              help="With --keep: roles never changed, e.g. R1,RC (a part that cannot be reached).")
@click.option("--broken", "broken", default=None, metavar="ROLES",
              help="With --keep: roles always replaced, e.g. Q1 (a dead part).")
@user_errors
def design(spec, stock_file, units, max_parts, guarantee, prefer, top, as_json, save, exhaustive, report, quiet,
           strict, budget, keep, fixed, broken) -> None:
    """Design the stage in SPEC (TOML with [targets]) from the parts in the stock file.

    With --keep, mend the board SPEC describes ([parts], [transistor] and [targets]) with the fewest
    changes from the drawer, and print a repair note."""
    if keep:
        from .commands.repair_note import check_keep_options, run_keep

        check_keep_options(save, report)
        run_keep(spec, stock_file, fixed=fixed, broken=broken, units=units, max_parts=max_parts,
                 guarantee=guarantee, prefer=prefer, top=top, as_json=as_json, exhaustive=exhaustive, quiet=quiet,
                 strict=strict, budget=budget)
        return
    if fixed or broken:
        from .parts import SpecError

        raise SpecError("--fixed and --broken mark the roles of a board: use them with --keep")
    from .commands.design_cmd import run_design

    run_design(spec, stock_file, units=units, max_parts=max_parts, guarantee=guarantee, prefer=prefer, top=top,
               as_json=as_json, save=save, exhaustive=exhaustive, report=report, quiet=quiet, strict=strict,
               budget=budget)


@main.command()
@user_errors
def demo() -> None:
    """Design a bench buffer and a gain stage from the sample teaching-lab drawer (writes nothing)."""
    from .commands.design_cmd import run_demo

    run_demo()


# --- kit and take (parts lists, stock updates) -----------------------------------------------


@main.command()
@click.argument("parts_list", metavar="LIST", type=click.Path(dir_okay=False))
@click.option("--stock", "stock_file", required=True, type=click.Path(dir_okay=False), help="Stock file.")
@click.option("--units", type=click.IntRange(1), default=1, show_default=True, help="How many boards to build.")
@click.option("--max-parts", type=click.IntRange(1, 3), default=2, show_default=True,
              help="Most parts combined to make one value.")
@click.option("--time-limit", type=click.FloatRange(0.1), default=30.0, show_default=True,
              help="Seconds the allocation may take; past it the best found is shown, marked not proven.")
@click.option("--json", "as_json", is_flag=True, help="Print the result as JSON.")
@click.option("--save", type=click.Path(dir_okay=False), default=None,
              help="Write the result as KIT.json, the file `take` reads.")
@click.option("--strict", is_flag=True, help="Fail (exit 2) if any stock line cannot be read.")
@user_errors
def kit(parts_list, stock_file, units, max_parts, time_limit, as_json, save, strict) -> None:
    """Fill a parts list (CSV or XLSX) from the drawer for N units and list what to buy."""
    from .commands.kit_cmd import run_kit_cmd

    run_kit_cmd(parts_list, stock_file, units=units, max_parts=max_parts, time_limit=time_limit,
                as_json=as_json, save=save, strict=strict)


@main.command()
@click.argument("pick_file", metavar="[DESIGN.toml|KIT.json]", required=False, type=click.Path(dir_okay=False))
@click.option("--stock", "stock_file", required=True, type=click.Path(dir_okay=False), help="Stock file to change.")
@click.option("--units", type=click.IntRange(1), default=None, help="Units to take (default: as saved).")
@click.option("--dry-run", is_flag=True, help="Show what would change; change nothing.")
@click.option("--undo", "undo_to", is_flag=False, flag_value="last", default=None, metavar="[N]",
              help="Put back the last take; with N (a number from --history), every take back to N.")
@click.option("--history", "show_history", is_flag=True, help="List the takes logged for the stock file.")
@click.option("--json", "as_json", is_flag=True, help="Print what changed as JSON.")
@user_errors
def take(pick_file, stock_file, units, dry_run, undo_to, show_history, as_json) -> None:
    """Take a design's or kit's parts out of the stock file (backup, lock, log, atomic write).

    With --undo (no design or kit file) the last take is put back; --history lists them all.
    """
    from .commands.take_cmd import run_take_cmd

    run_take_cmd(pick_file, stock_file, units=units, dry_run=dry_run, undo_to=undo_to, show_history=show_history,
                 as_json=as_json)


# --- report and export -----------------------------------------------------------------------


@main.command()
@click.argument("design_file", metavar="DESIGN.toml", type=click.Path(dir_okay=False))
@click.option("-o", "--output", required=True, type=click.Path(dir_okay=False), help="HTML file to write.")
@click.option("--stock", "stock_file", type=click.Path(dir_okay=False), default=None,
              help="The stock file the design was made from: checked against the design, read only.")
@click.option("--monte-carlo", "monte_carlo", type=click.IntRange(0), default=2000, show_default=True,
              help="Random builds for the spread histograms (0: none).")
@click.option("--seed", type=int, default=0, show_default=True, help="Seed of the random builds.")
@click.option("--quiet", is_flag=True, help="No progress display and no closing line.")
@user_errors
def report(design_file, output, stock_file, monte_carlo, seed, quiet) -> None:
    """Write one self-contained HTML page showing a saved design (or a stage spec)."""
    from .commands.report_cmd import run_report

    run_report(design_file, output, stock_file=stock_file, monte_carlo=monte_carlo, seed=seed, quiet=quiet)


@main.command()
@click.argument("design_file", metavar="DESIGN.toml", type=click.Path(dir_okay=False))
@click.option("--netlist", type=click.Path(dir_okay=False), default=None, help="SPICE netlist to write (.cir).")
@click.option("--bom", type=click.Path(dir_okay=False), default=None, help="Parts list to write (.csv or .xlsx).")
@click.option("--stock", "stock_file", type=click.Path(dir_okay=False), default=None,
              help="Stock file (read only), for a transistor given by its label.")
@click.option("--quiet", is_flag=True, help="No progress display and no closing lines.")
@user_errors
def export(design_file, netlist, bom, stock_file, quiet) -> None:
    """Carry a saved design elsewhere: a SPICE netlist and/or a parts list for N units."""
    from .commands.report_cmd import run_export

    if not netlist and not bom:
        raise click.UsageError("give --netlist FILE, --bom FILE, or both")
    run_export(design_file, netlist=netlist, bom=bom, quiet=quiet, stock_file=stock_file)


if __name__ == "__main__":  # pragma: no cover
    main()
