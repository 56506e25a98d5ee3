"""The Python API: load a diagram, ask it questions, check a covariate list."""

from __future__ import annotations

import os
from collections.abc import Iterable
from dataclasses import dataclass, replace
from pathlib import Path
from typing import TYPE_CHECKING

from .config import Settings, load_settings
from .engine import lint_diagram, lint_source
from .findings import DiagramError, Finding
from .model import Analysis, Diagram, Entry, Name, Span
from .rules import CAUSAL_RULES, VALIDITY_RULES

if TYPE_CHECKING:  # the verdict loads networkx: only when a question is asked
    from .verdict import Verdict


@dataclass(frozen=True)
class CheckedDiagram:
    """A diagram that parsed and passed the structure rules with no error."""

    diagram: Diagram

    @property
    def variables(self) -> list[str]:
        return list(self.diagram.variables)

    @property
    def graph(self):
        """The causal graph as a frozen `networkx.DiGraph`: every variable and arrow,
        each `A <-> B` as a hidden parent (node attribute `hidden=True`). Copy it
        (`networkx.DiGraph(diagram.graph)`) to edit it."""
        return self.diagram.graph

    @property
    def analyses(self) -> list[str]:
        return [a.name for a in self.diagram.analyses]

    def d_separated(self, xs: Iterable[str], ys: Iterable[str], given: Iterable[str] = ()) -> bool:
        """True when every path between `xs` and `ys` is blocked by `given` (d-separation)."""
        from .causal import d_separated

        xs, ys, zs = set(xs), set(ys), set(given)
        self._known(xs | ys | zs)
        return d_separated(self.diagram.graph, xs, ys, zs)

    def adjustment_sets(self, analysis: str | None = None, max_sets: int = 20) -> list[list[str]]:
        """Minimal valid adjustment sets of measured variables, smallest first."""
        sets, _cut = self.verdict(analysis).list_minimal_sets(max_sets)
        return [list(s) for s in sets]

    def verdict(self, analysis: str | None = None) -> Verdict:
        """The verdict on one analysis (the same object every command reads)."""
        from .verdict import verdict_of

        return verdict_of(self.diagram, self._analysis(analysis))

    def is_valid_adjustment(self, analysis: str | None, covariates: Iterable[str]) -> bool:
        """Whether `covariates` would be a valid adjustment set for the analysis."""
        target = self._analysis(analysis)
        zs = set(covariates)
        self._known(zs)
        from .verdict import Verdict

        patched = _with_adjust(self.diagram, target, tuple(sorted(zs)))
        return bool(Verdict(patched, patched.analysis(target.name)).declared_valid)

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


def load_diagram(path: str | os.PathLike, settings: Settings | None = None) -> CheckedDiagram:
    """Parse a `.dag` file; raise `DiagramError` (with the findings) if it has errors
    that stop the causal reasoning (syntax, structure)."""
    file = os.fspath(path)
    with open(file, "rb") as handle:
        data = handle.read()
    result = lint_source(data, file, settings if settings is not None else _settings_for(file))
    errors = [f for f in result.findings if f.severity == "error" and f.rule not in _CAUSAL]
    if result.diagram is None or errors or not result.causal_ran:
        raise DiagramError(errors or result.findings)
    return CheckedDiagram(result.diagram)


def _settings_for(file: str) -> Settings:
    """The configuration `dagward check FILE` would use for this file."""
    return load_settings(cwd=Path(file).resolve().parent)


def check_covariates(
    path: str | os.PathLike,
    analysis: str | None = None,
    covariates: Iterable[str] = (),
    settings: Settings | None = None,
) -> list[Finding]:
    """Findings about one analysis as if its `adjust:` line listed `covariates`.

    Only that analysis's findings are returned (a sibling analysis with an error,
    a deliberate sensitivity analysis say, does not leak in), warnings included
    (an instrument-like covariate, say). The covariates form a valid adjustment
    set under the diagram exactly when no finding comes from the rules in
    `VALIDITY_RULES`; an empty list means valid and nothing to warn about.

    `settings` defaults to the configuration `dagward check` would use for that
    file (the `[tool.dagward]` table of the nearest `pyproject.toml` above it):
    a rule disabled there is disabled here too. Pass `Settings()` for the
    built-in defaults. A covariate the diagram does not have is returned as an
    `unknown-variable` finding with the closest name. Each finding prints as
    the one line `dagward check` shows. Raises DiagramError when the file
    itself has errors.
    """
    file = os.fspath(path)
    settings = settings if settings is not None else _settings_for(file)
    checked = load_diagram(file, settings)
    diagram = checked.diagram
    target = checked._analysis(analysis)
    names = tuple(covariates)
    unknown = [n for n in dict.fromkeys(names) if n not in diagram.variables]
    if unknown:
        return [_unknown_covariate(diagram, target, n) for n in unknown]
    patched = _with_adjust(diagram, target, names)
    result = lint_diagram(patched, diagram.path, settings)
    return [f for f in result.findings if f.analysis == target.name]


def _unknown_covariate(diagram: Diagram, analysis: Analysis, name: str) -> Finding:
    from .rules.unknown_variable import RULE
    from .wording import did_you_mean

    return Finding(
        rule=RULE.name,
        severity="error",
        file=diagram.path,
        span=analysis.header,
        message=f"the covariate `{name}` is not a variable of the diagram"
        f"{did_you_mean(name, diagram.variables)}",
        analysis=analysis.name,
    )


def _with_adjust(diagram: Diagram, target: Analysis, names: tuple[str, ...]) -> Diagram:
    """The diagram with the analysis's `adjust:` entries replaced by `names`; they
    have no place in the file, so findings about them point at the analysis header."""
    header = target.header
    entry = Entry("adjust", header, tuple(Name(n, header) for n in names), not names, header)
    new_analysis = replace(
        target, entries=tuple(e for e in target.entries if e.key != "adjust") + (entry,)
    )
    statements = [new_analysis if s is target else s for s in diagram.statements]
    return Diagram(
        path=diagram.path,
        source=diagram.source,
        statements=statements,
        comments=diagram.comments,
        line_count=diagram.line_count,
    )


_CAUSAL = frozenset(r.name for r in CAUSAL_RULES)

__all__ = ["CheckedDiagram", "VALIDITY_RULES", "check_covariates", "load_diagram", "Span"]
