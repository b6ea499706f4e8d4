"""Load a drawer, look at it as a table, and find what in it makes 3k3 within 1 %."""

import drawerfit

stock = drawerfit.load_stock("inventory_samples/teaching_lab.csv")
print(stock)

lines = stock.to_pandas()  # one row per stock line, SI units
print(lines.groupby("kind")["qty"].sum())

subs = drawerfit.match("3k3", stock, within=0.01, max_parts=2)
print(subs)
print(subs.to_pandas()[["value", "error", "describe", "on_hand"]].head())

# a capacitor, with the voltage rating it must offer
print(drawerfit.match("68n", stock, voltage="25 V", within=0.05))
