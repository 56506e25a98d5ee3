"""dagward: lint causal diagrams kept as `.dag` files next to analysis code.

The Python API, for an analysis project's own tests::

    from dagward import load_diagram, check_covariates

    diagram = load_diagram("causal/wellness.dag")   # raises DiagramError with findings
    diagram.d_separated({"age"}, {"motivation"}, given=set())
    diagram.adjustment_sets("total_effect")          # minimal valid adjustment sets
    problems = check_covariates("causal/wellness.dag", analysis="total_effect",
                                covariates=["age", "fitness_base"])
    assert not problems, problems
"""

from __future__ import annotations

from .api import CheckedDiagram, check_covariates, load_diagram
from .findings import DiagramError, Finding, Related
from .model import Span
from .version import __version__

__all__ = [
    "CheckedDiagram",
    "DiagramError",
    "Finding",
    "Related",
    "Span",
    "__version__",
    "check_covariates",
    "load_diagram",
]
