"""The bundled demo studies, their sample design tables and the example campaign.

This folder is where people read them in the repository; installed, it is the package
``optimiser.problems`` (pyproject.toml maps it here: one copy), found with
``importlib.resources`` by ``optimiser.study.bundled_files``. Only the .toml and .csv files
beside this one ship as data.
"""
