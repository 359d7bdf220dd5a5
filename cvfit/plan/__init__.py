"""Experiment planning: which ligand concentrations will determine the constants.

:func:`load_plan` reads a PLAN.toml, :func:`make_plan` optimises and assesses the design
(:mod:`cvfit.plan.information` for the predicted covariance, :mod:`cvfit.plan.design` for
the criterion and the search); the figure, the HTML page and the simulated series are
written by :mod:`cvfit.plan.figure`, :mod:`cvfit.plan.html` and
:mod:`cvfit.plan.simulate_plan`. See docs/plan.md.
"""

from __future__ import annotations

from cvfit.plan.inputs import PlanInput, load_plan
from cvfit.plan.planner import make_plan
from cvfit.plan.result import DesignAssessment, PlanResult, PlanWarning

__all__ = ["PlanInput", "load_plan", "make_plan", "PlanResult", "DesignAssessment", "PlanWarning"]
