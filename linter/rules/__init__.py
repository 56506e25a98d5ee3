"""The rule catalogue, listed explicitly in catalogue order."""

from __future__ import annotations

from . import (
    arrow_against_time,
    arrow_without_reason,
    cycle,
    duplicate_analysis,
    duplicate_arrow,
    isolated_variable,
    role_conflict,
    self_loop,
    syntax_error,
    unknown_rule_in_allow,
    unknown_variable,
)
from . import independence_rejected, missing_column  # data rules (with --data)
from .base import Rule

STRUCTURE_RULES: tuple[Rule, ...] = (
    syntax_error.RULE,
    cycle.RULE,
    self_loop.RULE,
    duplicate_arrow.RULE,
    unknown_variable.RULE,
    isolated_variable.RULE,
    duplicate_analysis.RULE,
    role_conflict.RULE,
    arrow_against_time.RULE,
    unknown_rule_in_allow.RULE,
    arrow_without_reason.RULE,
)
CAUSAL_RULES: tuple[Rule, ...] = ()
DATA_RULES: tuple[Rule, ...] = (missing_column.RULE, independence_rejected.RULE)

ALL_RULES: tuple[Rule, ...] = STRUCTURE_RULES + CAUSAL_RULES + DATA_RULES
RULES_BY_NAME: dict[str, Rule] = {r.name: r for r in ALL_RULES}
