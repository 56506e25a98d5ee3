"""dagward explain RULE: a rule's documentation in the terminal.

The text is the rule module's docstring (what the rule means, why it matters,
the sources, a bad and a good example), the same text as SARIF's help and
docs/rules.md (`dagward.report.ruledoc`). `dagward explain` with no rule lists
the rules. An unknown name exits 2 with the closest rule names suggested.
"""

from __future__ import annotations

import argparse

from .common import emit

HELP = (
    "Print a rule's documentation: what it means, why it matters, and a bad and a good "
    "example. With no RULE, list the rules."
)
FORMATS = ("text",)


def add_arguments(p: argparse.ArgumentParser) -> None:
    p.add_argument("rule", nargs="?", metavar="RULE", help="a rule name, e.g. collider-adjusted")


def run(args: argparse.Namespace) -> int:
    from ..errors import UsageProblem
    from ..report import ruledoc
    from ..rules import ALL_RULES, RULES_BY_NAME
    from ..wording import did_you_mean

    if args.rule is None:
        width = max(len(r.name) for r in ALL_RULES)
        rows = [f"{r.name:<{width}}  {r.summary}" for r in ALL_RULES]
        emit(args, "\n".join(rows) + "\n")
        return 0
    rule = RULES_BY_NAME.get(args.rule.strip().lower())
    if rule is None:
        raise UsageProblem(
            f"no rule named `{args.rule}`{did_you_mean(args.rule, sorted(RULES_BY_NAME))} "
            "(`dagward explain` lists them)"
        )
    emit(args, ruledoc.terminal(rule))
    return 0
