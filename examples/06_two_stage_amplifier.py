"""A gain stage driving an emitter follower: analyse it, save it, and export its parts list."""

import tempfile
from pathlib import Path

import drawerfit
from drawerfit.io.saved_design import load_design
from drawerfit.io.saved_two_stage import write_two_stage_design
from drawerfit.report.bom import write_bom

spec = drawerfit.load_spec("inventory_samples/specs/two_stage_buffered.toml")
result = drawerfit.analyse(spec, monte_carlo=2000, seed=1)
print(result)  # both transistors' states, the gain, the corner, any check not met
print(result.to_dict()["dc"])  # both operating points, SI units
print(result.swing())  # the peak into the load and the transistor whose limit binds it
print(result.to_pandas("figures").loc[["ie1", "ie2", "gain", "f_low", "swing_peak"]])

with tempfile.TemporaryDirectory() as folder:
    saved = write_two_stage_design(Path(folder) / "line_driver.toml", spec.circuit(), {}, units=4,
                                   targets=spec.targets, conditions=spec.conditions, title=spec.title)
    rows = write_bom(load_design(saved), Path(folder) / "line_driver.csv")
    print(f"{rows} part lines for 4 units")
