"""Reporting: every figure and written report of a run, a pick, a flap comparison, a sweep
and a robustness study (matplotlib imported lazily, through :mod:`.figures`)."""
