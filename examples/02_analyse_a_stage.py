"""The figures, checks and spread of an emitter follower found on a bench (inventory_samples)."""

import drawerfit

analysis = drawerfit.analyse("inventory_samples/follower_bench.toml", monte_carlo=2000, seed=1)
print(analysis)

figures = analysis.to_pandas()  # each figure: nominal and the worst-case ends
print(figures.loc[["ie", "gain", "rin", "f_low", "swing_peak"]])

checks = analysis.to_pandas("checks")
print(checks[["name", "ok", "message"]].to_string(index=False))

samples = analysis.to_pandas("samples")  # the 2000 random builds, drawn again from the seed
print(samples["f_low"].describe())
print("share of builds meeting every target and rating:", analysis.monte_carlo["meets_all"])
