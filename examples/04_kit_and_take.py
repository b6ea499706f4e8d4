"""Fill a parts list for five boards from the drawer, then take the parts out of a copy of the drawer."""

import shutil
import tempfile
from pathlib import Path

import drawerfit

with tempfile.TemporaryDirectory() as folder:
    drawer = Path(folder) / "drawer.csv"
    shutil.copy("inventory_samples/teaching_lab.csv", drawer)  # take changes the file: work on a copy

    kit = drawerfit.kit("inventory_samples/bench_amp_parts.csv", drawer, units=5)
    print(kit)
    print(kit.to_pandas("designators").to_string(index=False))
    print(kit.to_pandas("pick_list").to_string(index=False))

    preview = drawerfit.take(kit, drawer, dry_run=True)  # what would change, changing nothing
    print(preview)
    done = drawerfit.take(kit, drawer)
    print(done)
    print(done.to_pandas().to_string(index=False))

    print(drawerfit.history(drawer))
    print(drawerfit.undo(drawer))  # and put it all back
