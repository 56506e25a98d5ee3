"""The rule catalogue, listed explicitly in catalogue order."""

from __future__ import annotations

from . import (  # data rules (with --data)
    adjusted_descendant,
    adjusted_mediator,
    adjusted_unmeasured,
    arrow_against_time,
    arrow_without_reason,
    collider_adjusted,
    cycle,
    duplicate_analysis,
    duplicate_arrow,
    exposure_induced_confounder,
    independence_rejected,
    instrument_adjusted,
    isolated_variable,
    missing_column,
    needs_g_methods,
    no_causal_path,
    open_biasing_path,
    role_conflict,
    selection_bias,
    self_loop,
    syntax_error,
    unknown_rule_in_allow,
    unknown_variable,
    unmeasured_confounding,
    variable_outside_periods,
)
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
    variable_outside_periods.RULE,
    unknown_rule_in_allow.RULE,
    arrow_without_reason.RULE,
)
CAUSAL_RULES: tuple[Rule, ...] = (
    adjusted_unmeasured.RULE,
    adjusted_mediator.RULE,
    adjusted_descendant.RULE,
    collider_adjusted.RULE,
    open_biasing_path.RULE,
    unmeasured_confounding.RULE,
    selection_bias.RULE,
    exposure_induced_confounder.RULE,
    needs_g_methods.RULE,
    instrument_adjusted.RULE,
    no_causal_path.RULE,
)
DATA_RULES: tuple[Rule, ...] = (missing_column.RULE, independence_rejected.RULE)

# The rules whose findings together decide whether a declared set is valid
# (rules.md, "completeness"): the set is valid exactly when none of them fires.
VALIDITY_RULES: frozenset[str] = frozenset(
    {
        "adjusted-unmeasured",
        "adjusted-mediator",
        "adjusted-descendant",
        "collider-adjusted",
        "open-biasing-path",
        "unmeasured-confounding",
        "selection-bias",
        "exposure-induced-confounder",
        "needs-g-methods",
    }
)

ALL_RULES: tuple[Rule, ...] = STRUCTURE_RULES + CAUSAL_RULES + DATA_RULES
RULES_BY_NAME: dict[str, Rule] = {r.name: r for r in ALL_RULES}
