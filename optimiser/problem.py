"""The pymoo problem: one flap option, the continuous variables free, vectorised.

Imported only when a search runs (it imports pymoo at the top).
"""

from __future__ import annotations

import numpy as np
from pymoo.core.problem import Problem

from .evaluation import size_frame
from .sizing import active_constraints


class SizingProblem(Problem):
    """Sizes the whole population with one ``size_frame`` call; keeps the last sized frame.

    F holds the study's objectives (minimised); G = -margin for each active constraint
    (margins are already normalised, so G <= 0 is met and violations have similar sizes).
    """

    def __init__(self, study, flap_index: int):
        from .search import free_variables
        free = free_variables(study)
        super().__init__(n_var=len(free), n_obj=len(study.objectives),
                         n_ieq_constr=len(active_constraints(study.spec)),
                         xl=np.array([v.lower for v in free]),
                         xu=np.array([v.upper for v in free]))
        self.study = study
        self.flap_index = int(flap_index)
        self.last_frame = None

    def _evaluate(self, x, out, *args, **kwargs):
        from .search import design_arrays, design_overrides, objectives_and_constraints
        ws, load, ar = design_arrays(self.study, x)
        frame = size_frame(self.study, ws, load, ar, np.full(len(ws), self.flap_index),
                           design_overrides(self.study, x))
        F, G = objectives_and_constraints(self.study, frame)
        if F.shape != (len(x), self.n_obj) or G.shape != (len(x), self.n_ieq_constr):
            raise RuntimeError(f"expected F of shape {(len(x), self.n_obj)} and G of shape "
                               f"{(len(x), self.n_ieq_constr)}, got {F.shape} and {G.shape}")
        out["F"], out["G"] = F, G
        self.last_frame = frame

    def __getstate__(self):
        state = dict(self.__dict__)
        state["last_frame"] = None  # the archive on disk holds it; keep copies small
        return state
