"""Run reports: plots of a finished run (matplotlib, imported lazily)."""
