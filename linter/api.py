"""The Python API: load a diagram, ask it questions, check a covariate list."""

from __future__ import annotations

import os
from collections.abc import Iterable
from dataclasses import dataclass, replace

from .config import Settings
from .engine import lint_diagram, lint_source
from .findings import DiagramError, Finding
from .model import Analysis, Diagram, Entry, Name, Span


@dataclass(frozen=True)
class CheckedDiagram:
    """A diagram that parsed and passed the structure rules with no error."""

    diagram: Diagram

    @property
    def variables(self) -> list[str]:
        return list(self.diagram.variables)

    @property
    def analyses(self) -> list[str]:
        return [a.name for a in self.diagram.analyses]

    def d_separated(
        self, xs: Iterable[str], ys: Iterable[str], given: Iterable[str] = ()
    ) -> bool:
        """True when every path between `xs` and `ys` is blocked by `given` (d-separation)."""
        from .causal import d_separated

        xs, ys, zs = set(xs), set(ys), set(given)
        self._known(xs | ys | zs)
        return d_separated(self.diagram.graph, xs, ys, zs)

    def adjustment_sets(self, analysis: str | None = None, max_sets: int = 20) -> list[list[str]]:
        """Minimal valid adjustment sets of measured variables, smallest first."""
        from .causal import minimal_adjustment_sets

        a = self._analysis(analysis)
        sets = minimal_adjustment_sets(
            self.diagram.graph, a.exposure_set, a.outcome_set, self.diagram.measured, max_sets
        )
        return sorted((sorted(s) for s in sets), key=lambda s: (len(s), s))

    def is_valid_adjustment(self, analysis: str | None, covariates: Iterable[str]) -> bool:
        from .causal import is_valid_adjustment

        a = self._analysis(analysis)
        zs = set(covariates)
        self._known(zs)
        return zs <= self.diagram.measured and is_valid_adjustment(
            self.diagram.graph, a.exposure_set, a.outcome_set, zs
        )

    def _analysis(self, name: str | None) -> Analysis:
        analyses = self.diagram.analyses
        if name is None:
            if len(analyses) != 1:
                raise ValueError(
                    f"{self.diagram.path} has {len(analyses)} analyses; name one "
                    f"({', '.join(a.name for a in analyses)})"
                )
            return analyses[0]
        return self.diagram.analysis(name)

    def _known(self, names: set[str]) -> None:
        unknown = sorted(names - set(self.diagram.variables))
        if unknown:
            raise ValueError(f"not variables of {self.diagram.path}: {', '.join(unknown)}")


# Together these decide whether a declared set is valid (rules.md, completeness).
VALIDITY_RULES = frozenset(
    {
        "adjusted-unmeasured",
        "adjusted-mediator",
        "adjusted-descendant",
        "collider-adjusted",
        "open-biasing-path",
        "unmeasured-confounding",
    }
)


def load_diagram(path: str | os.PathLike, settings: Settings | None = None) -> CheckedDiagram:
    """Parse a `.dag` file; raise `DiagramError` (with the findings) if it has errors."""
    file = os.fspath(path)
    with open(file, "rb") as handle:
        data = handle.read()
    result = lint_source(data, file, settings or Settings())
    errors = [f for f in result.findings if f.severity == "error" and not _is_causal(f)]
    if result.diagram is None or errors:
        raise DiagramError(errors or result.findings)
    return CheckedDiagram(result.diagram)


def _is_causal(finding: Finding) -> bool:
    from .rules import CAUSAL_RULES

    return finding.rule in {r.name for r in CAUSAL_RULES}


def check_covariates(
    path: str | os.PathLike,
    analysis: str | None = None,
    covariates: Iterable[str] = (),
    settings: Settings | None = None,
) -> list[Finding]:
    """Findings for one analysis as if its `adjust:` line listed `covariates`.

    Returns the findings about that analysis, warnings included (an
    instrument-like covariate, say). The covariates form a valid adjustment set
    under the diagram exactly when none of the findings comes from the rules
    in `VALIDITY_RULES`; an empty list means valid and nothing to warn about.
    Raises DiagramError when the file itself has errors.
    """
    checked = load_diagram(path, settings)
    diagram = checked.diagram
    target = checked._analysis(analysis)
    names = tuple(covariates)
    checked._known(set(names))
    # Replace the analysis's adjust entries by the given covariates; they have no
    # place in the file, so findings about them point at the analysis header.
    header = target.header
    entry = Entry(
        "adjust",
        header,
        tuple(Name(n, header) for n in names),
        not names,
        header,
    )
    new_analysis = replace(
        target, entries=tuple(e for e in target.entries if e.key != "adjust") + (entry,)
    )
    statements = [new_analysis if s is target else s for s in diagram.statements]
    patched = Diagram(
        path=diagram.path,
        source=diagram.source,
        statements=statements,
        comments=diagram.comments,
        line_count=diagram.line_count,
    )
    result = lint_diagram(patched, diagram.path, settings or Settings())
    return [f for f in result.findings if f.analysis == new_analysis.name or f.severity == "error"]


__all__ = ["CheckedDiagram", "check_covariates", "load_diagram", "Span"]
