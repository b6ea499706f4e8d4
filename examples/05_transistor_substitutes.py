"""What in the drawer replaces a board's transistor: by its ratings alone, then tried in the stage."""

import drawerfit

stock = drawerfit.load_stock("inventory_samples/teaching_lab.csv")

# by the ratings alone: NPN, VCEO at least 45 V, IC max at least 150 mA, hFE near 100-300
wanted = drawerfit.substitutes("npn", stock, vceo="45V", ic_max="150mA", hfe="100-300")
print(wanted)
print(wanted.to_pandas()[["rank", "status", "label", "location", "qty", "hfe_distance", "why"]].to_string(index=False))

# tried in the stage it is for (a follower whose transistor failed): the requirement defaults to the
# stage's own transistor, and each candidate is analysed in the stage at its worst case
in_stage = drawerfit.substitutes("npn", stock, spec="inventory_samples/buffer_repair.toml")
print(in_stage)
for s in in_stage.substitutes:
    if s.stage is not None:
        breaks = "; ".join(f"{b.check}: {b.message}" for b in s.stage.breaks) or "nothing"
        print(f"{s.line.label} in {s.line.location}: {s.stage.status}; breaks {breaks}")
print("in spec unchanged:", ", ".join(s.line.label for s in in_stage.keeps))
