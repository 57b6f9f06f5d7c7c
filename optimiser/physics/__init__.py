"""Pure, vectorised physics in SI units: one module per topic.

Nothing here imports pymoo, pandas, pint, TOML or any layer above; every function takes numpy
arrays (one element per design) and returns arrays.
"""

G0 = 9.80665
"""Standard gravitational acceleration [m s^-2] (USSA 1976)."""
