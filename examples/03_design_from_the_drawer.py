"""Design a bench buffer from the teaching-lab drawer for ten units, save it and read it back."""

import tempfile
from pathlib import Path

import drawerfit

stock = drawerfit.load_stock("inventory_samples/teaching_lab.csv")
result = drawerfit.design("inventory_samples/specs/bench_buffer.toml", stock, units=10)
print(result)

print(result.to_pandas()[["designator", "code", "tolerance", "location", "row"]].to_string(index=False))
print(result.to_pandas("pick_list").to_string(index=False))

data = result.to_dict()  # what `drawerfit design --json` prints
print("binding constraints:", [b["name"] for b in data["worst_case"]["binding"]])

with tempfile.TemporaryDirectory() as folder:
    saved = drawerfit.save_design(result, Path(folder) / "buffer.toml")
    again = drawerfit.analyse(saved)  # the saved design reads back as the stage the search judged
    print(again)
