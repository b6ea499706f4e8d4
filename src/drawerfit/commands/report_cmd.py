"""`report` and `export`: the work behind the thin click commands."""

from __future__ import annotations

from pathlib import Path

import click

from ..parts import SpecError
from ..progress import progress

# Steps the report announces (reading, nominal, worst case, Monte Carlo, schematic, plots, writing).
_REPORT_STEPS = 7


def run_report(design_file: str, output: str, *, stock_file: str | None, monte_carlo: int, seed: int,
               quiet: bool) -> None:
    from ..report.html import write_report

    with progress("report", total=_REPORT_STEPS, quiet=quiet) as tick:
        write_report(design_file, output, stock_file=stock_file, monte_carlo=monte_carlo, seed=seed,
                     on_step=tick)
    if not quiet:
        click.echo(f"wrote {output}")


def run_export(design_file: str, *, netlist: str | None, bom: str | None, quiet: bool,
               stock_file: str | None = None) -> None:
    from ..io.files import atomic_write, check_output
    from ..report.bom import write_bom
    from ..report.export import design_netlist
    from ..report.html import design_inputs, read_design

    outputs = [Path(p) for p in (netlist, bom) if p]
    if netlist and bom and Path(netlist).resolve() == Path(bom).resolve():
        raise SpecError(f"{netlist}: the netlist and the parts list need different files")
    inputs = design_inputs(design_file, stock_file)
    if netlist:
        check_output(netlist, inputs, "netlist")
    if bom:
        check_output(bom, inputs, "bom")
    done = []
    with progress("export", total=1 + len(outputs), quiet=quiet) as tick:
        tick(0, note="reading the design")
        design, _ = read_design(design_file, stock_file)
        tick()
        if netlist:
            tick(0, note="netlist")
            atomic_write(Path(netlist), design_netlist(design))
            done.append(f"wrote {netlist} (SPICE netlist)")
            tick()
        if bom:
            tick(0, note="parts list")
            rows = write_bom(design, bom)
            done.append(f"wrote {bom} ({rows} part lines, {design.units} unit{'s' if design.units != 1 else ''})")
            tick()
    if not quiet:
        for line in done:
            click.echo(line)
