"""Published worked examples for the questions beyond the total effect, each in a
scenario of our own (invented variable names), with the source beside it.
Structures are recalled from the cited works (from memory)."""

from __future__ import annotations

import networkx as nx
from dagward.causal import hidden_node_name
from dagward.causal.questions import (
    EXPOSURE_MEDIATOR,
    EXPOSURE_OUTCOME,
    MEDIATOR_OUTCOME,
    controlled_direct_verdict,
    implied_stages,
    natural_effect_verdict,
    selection_verdict,
    sequential_verdict,
    stages_from_periods,
)


def diagram(*arrows: str) -> nx.DiGraph:
    """Arrows as 'a -> b' or 'a <-> b' (a hidden common parent)."""
    G = nx.DiGraph()
    for arrow in arrows:
        if "<->" in arrow:
            a, b = (s.strip() for s in arrow.split("<->"))
            h = hidden_node_name(a, b)
            G.add_node(h, hidden=True)
            G.add_edge(h, a)
            G.add_edge(h, b)
        else:
            a, b = (s.strip() for s in arrow.split("->"))
            G.add_edge(a, b)
    return nx.freeze(G)


def measured(G, *unmeasured: str) -> frozenset[str]:
    return frozenset(v for v in G if not G.nodes[v].get("hidden") and v not in unmeasured)


# ---------------------------------- selection bias (Hernan, Hernandez-Diaz & Robins 2004)


def test_selection_on_a_common_effect_of_exposure_and_outcome():
    # Hernan, Hernandez-Diaz & Robins 2004, Epidemiology 15:615-625, fig. 1a (from
    # memory): selection C is affected by both the exposure and the outcome; the
    # effect is null, yet restricting on C relates them.  Scenario: a survey of
    # people who phoned a helpline, about night-time screen use and insomnia.
    G = diagram("screen_use -> called_helpline", "insomnia -> called_helpline")
    v = selection_verdict(G, {"screen_use"}, {"insomnia"}, set(), {"called_helpline"}, measured(G))
    assert v.valid is False and v.caused_by_restriction
    # under the null there is no causal path, so nothing is forbidden: the bias
    # is the path the restriction opens
    assert v.forbidden == ()
    (o,) = v.opened
    assert (
        o.path == ("screen_use", "called_helpline", "insomnia") and o.collider == "called_helpline"
    )
    assert not v.recoverable and not v.fixable
    # the restriction depends on the exposure directly: not a case-control design,
    # so the odds ratio does not survive either
    assert not v.odds_ratio.survives
    # with an effect, the restriction is also an effect of the outcome
    G1 = diagram(
        "screen_use -> called_helpline", "insomnia -> called_helpline", "screen_use -> insomnia"
    )
    v1 = selection_verdict(
        G1, {"screen_use"}, {"insomnia"}, set(), {"called_helpline"}, measured(G1)
    )
    (f,) = v1.forbidden
    assert (f.variable, f.kind, f.via, f.path) == (
        "called_helpline",
        "outcome-descendant",
        "insomnia",
        ("insomnia", "called_helpline"),
    )


def test_selection_on_a_descendant_of_the_common_effect():
    # Hernan et al. 2004, fig. 1b (from memory): selection S is an effect of the
    # collider C.  Scenario: only those of the helpline callers who were
    # referred to a clinic are in the data.
    G = diagram(
        "screen_use -> called_helpline",
        "insomnia -> called_helpline",
        "called_helpline -> referred",
    )
    v = selection_verdict(G, {"screen_use"}, {"insomnia"}, set(), {"referred"}, measured(G))
    assert v.valid is False
    (o,) = v.opened
    assert o.variable == "referred" and o.collider == "called_helpline"


def test_informative_loss_to_follow_up_is_corrected_through_a_measured_cause():
    # Hernan et al. 2004, the loss-to-follow-up structures (fig. 4-6, from memory):
    # A -> C <- L <- U -> Y, C = remaining in the study.  Restricting to those
    # who stayed opens A -> C <- L <- U -> Y; adjusting for (or weighting by) L
    # closes it.  Scenario: a cycling-to-work scheme, staying in a follow-up,
    # knee pain, and an unmeasured joint frailty.
    G = diagram(
        "cycling -> stayed",
        "knee_pain_early -> stayed",
        "frailty -> knee_pain_early",
        "frailty -> knee_pain_late",
        "cycling -> knee_pain_late",
    )
    M = measured(G, "frailty")
    v = selection_verdict(G, {"cycling"}, {"knee_pain_late"}, set(), {"stayed"}, M)
    assert v.valid is False and not v.forbidden
    (o,) = v.opened
    assert o.path == ("cycling", "stayed", "knee_pain_early", "frailty", "knee_pain_late")
    assert v.sets == (frozenset({"knee_pain_early"}),)
    assert v.recoverable and v.recovery_set == frozenset({"knee_pain_early"})
    ok = selection_verdict(G, {"cycling"}, {"knee_pain_late"}, {"knee_pain_early"}, {"stayed"}, M)
    assert ok.valid is True and not ok.caused_by_restriction


def test_restriction_on_a_confounder_is_stratification_not_bias():
    # Common practice (Hernan et al. 2004 discuss restriction as a way to control
    # confounding): restricting on a common cause of exposure and outcome blocks
    # the path.  Scenario: only non-smokers enrolled; exposure coffee, outcome reflux.
    G = diagram("smoker -> coffee", "smoker -> reflux", "coffee -> reflux")
    v = selection_verdict(G, {"coffee"}, {"reflux"}, set(), {"smoker"}, measured(G))
    assert v.valid is True and not v.caused_by_restriction
    assert v.sets == (frozenset(),)
    assert not v.recoverable  # the whole population's effect needs smokers' data


def test_case_control_sampling_keeps_the_odds_ratio():
    # Bareinboim & Pearl 2012 (AISTATS), odds-ratio recoverability (from memory):
    # when selection depends on the outcome only, the odds ratio survives though
    # the risks do not.  Scenario: cases of hay fever and controls, sampled by
    # diagnosis; exposure: a garden near the home; confounder: rural living.
    G = diagram(
        "rural -> garden", "rural -> hay_fever", "garden -> hay_fever", "hay_fever -> sampled"
    )
    v = selection_verdict(G, {"garden"}, {"hay_fever"}, {"rural"}, {"sampled"}, measured(G))
    assert v.valid is False and v.outcome_only
    assert v.forbidden[0].kind == "outcome-descendant"
    assert not v.recoverable
    assert v.odds_ratio.survives and v.odds_ratio.adjusted == frozenset({"rural"})
    assert v.case_control


def test_berkson_bias_among_hospital_patients():
    # Berkson 1946 (Biometrics Bulletin 2:47-53), from memory: two conditions that
    # each lead to admission appear related among admitted patients.  Scenario:
    # gallstones and a skin rash, no arrow between them.
    G = diagram("gallstones -> admitted", "rash -> admitted")
    v = selection_verdict(G, {"gallstones"}, {"rash"}, set(), {"admitted"}, measured(G))
    assert v.valid is False and v.opened[0].collider == "admitted"


def test_index_event_bias():
    # Index-event bias (Dahabreh & Kent 2011, JAMA 305:822-823, from memory):
    # restricting to people who had a first event, caused by the exposure and by
    # an unmeasured risk factor of recurrence.  Scenario: a pollen allergy, a
    # first asthma attack, a genetic risk, and a second attack.
    G = diagram(
        "allergy -> first_attack",
        "genes -> first_attack",
        "genes -> second_attack",
        "allergy -> second_attack",
    )
    v = selection_verdict(
        G, {"allergy"}, {"second_attack"}, set(), {"first_attack"}, measured(G, "genes")
    )
    assert v.valid is False
    assert v.opened[0].path == ("allergy", "first_attack", "genes", "second_attack")
    assert not v.fixable and not v.recoverable


def test_birth_weight_paradox_as_restriction_on_a_collider():
    # Hernandez-Diaz, Schisterman & Hernan 2006, Am J Epidemiol 164:1115-1120 (from
    # memory): restricting to low-birth-weight infants, birth weight being both
    # on the causal path and a collider with unmeasured causes of death, makes the
    # exposure look protective.  Scenario: maternal night shifts, small babies,
    # an unmeasured congenital anomaly, neonatal death.
    G = diagram(
        "night_shifts -> small_baby",
        "anomaly -> small_baby",
        "anomaly -> neonatal_death",
        "small_baby -> neonatal_death",
        "night_shifts -> neonatal_death",
    )
    v = selection_verdict(
        G, {"night_shifts"}, {"neonatal_death"}, set(), {"small_baby"}, measured(G, "anomaly")
    )
    assert v.valid is False
    assert v.forbidden[0].kind == "mediator"
    assert v.forbidden[0].path == ("night_shifts", "small_baby", "neonatal_death")
    (o,) = v.opened
    assert o.collider == "small_baby"
    assert o.path == ("night_shifts", "small_baby", "anomaly", "neonatal_death")
    assert not v.recoverable and not v.fixable


# ------------------------------------------------- natural effects


def _mediation(with_induced: bool):
    # VanderWeele 2015, Explanation in Causal Inference, ch. 2 and 5 (from memory):
    # A -> M -> Y with baseline confounders C, and a mediator-outcome confounder L
    # that the exposure affects.  Scenario: a school meal programme (exposure),
    # afternoon concentration (mediator), test score (outcome), household income
    # (baseline confounder) and, when present, breakfast skipping (L).
    arrows = [
        "meals -> concentration",
        "concentration -> score",
        "meals -> score",
        "income -> meals",
        "income -> concentration",
        "income -> score",
    ]
    if with_induced:
        arrows += [
            "meals -> skips_breakfast",
            "skips_breakfast -> concentration",
            "skips_breakfast -> score",
        ]
    return diagram(*arrows)


def test_mediation_without_exposure_induced_confounder_is_identified():
    G = _mediation(False)
    v = natural_effect_verdict(G, {"meals"}, {"concentration"}, {"score"}, {"income"})
    assert v.identified and not v.induced
    bad = natural_effect_verdict(G, {"meals"}, {"concentration"}, {"score"}, set())
    assert [c.valid for c in bad.conditions] == [False, False, False]
    assert [c.name for c in bad.conditions] == [
        EXPOSURE_OUTCOME,
        EXPOSURE_MEDIATOR,
        MEDIATOR_OUTCOME,
    ]
    assert bad.conditions[2].path == ("concentration", "income", "score")


def test_mediation_with_exposure_induced_confounder_is_not_identified():
    # Avin, Shpitser & Pearl 2005 (IJCAI), the recanting witness (from memory).
    G = _mediation(True)
    v = natural_effect_verdict(G, {"meals"}, {"concentration"}, {"score"}, {"income"})
    assert not v.identified
    (i,) = v.induced
    assert i.variable == "skips_breakfast"
    assert i.from_exposure == ("meals", "skips_breakfast")
    assert i.to_mediator == ("skips_breakfast", "concentration")
    assert i.to_outcome == ("skips_breakfast", "score")
    # adjusting for L satisfies the three conditions, yet the natural effects stay
    # unidentified: L is affected by the exposure
    w = natural_effect_verdict(
        G, {"meals"}, {"concentration"}, {"score"}, {"income", "skips_breakfast"}
    )
    assert w.conditions[2].valid and w.induced and not w.identified


def test_exposure_induced_confounding_through_an_unmeasured_common_cause():
    # The <-> form (our extension, see linter/causal/questions.py): the exposure
    # affects L, L affects the mediator, and L shares an unmeasured cause with the
    # outcome.  Same scenario.
    G = diagram(
        "meals -> concentration",
        "concentration -> score",
        "meals -> skips_breakfast",
        "skips_breakfast -> concentration",
        "skips_breakfast <-> score",
    )
    v = natural_effect_verdict(G, {"meals"}, {"concentration"}, {"score"}, set())
    (i,) = v.induced
    assert i.to_outcome == (
        "skips_breakfast",
        hidden_node_name("skips_breakfast", "score"),
        "score",
    )


def test_controlled_direct_effect_with_exposure_induced_confounder_needs_g_methods():
    # VanderWeele 2015, ch. 2 (from memory): the controlled direct effect stays
    # identified when L is measured, by g-methods over the joint exposure (A, M).
    G = _mediation(True)
    v = controlled_direct_verdict(
        G, {"meals"}, {"concentration"}, {"score"}, {"income"}, measured(G)
    )
    assert not v.condition.valid
    assert v.sequential is not None and v.sequential.needs_g_methods
    assert [s.covariates for s in v.sequential.stages] == [
        frozenset({"income"}),
        frozenset({"skips_breakfast"}),
    ]
    (fb,) = v.sequential.feedback
    assert (fb.variable, fb.earlier, fb.later) == ("skips_breakfast", "meals", "concentration")
    # without L a single set works: the mediator is not over-adjustment
    G0 = _mediation(False)
    v0 = controlled_direct_verdict(
        G0, {"meals"}, {"concentration"}, {"score"}, {"income"}, measured(G0)
    )
    assert v0.condition.valid and v0.sequential is None


# ------------------------------------------------- sequential treatments


def _two_stage(with_u: bool):
    # Robins 1986 (Math Modelling 7:1393-1512); Hernan & Robins, Causal Inference:
    # What If, ch. 19-21 (from memory): A0 -> L1 -> A1 -> Y, A0 -> Y, with L1 and Y
    # sharing an unmeasured cause U (treatment-confounder feedback).  Scenario: two
    # rounds of a physiotherapy programme, pain score between them, mobility at
    # the end, unmeasured frailty.
    arrows = [
        "physio_0 -> pain_1",
        "pain_1 -> physio_1",
        "physio_0 -> mobility",
        "physio_1 -> mobility",
    ]
    arrows += ["frailty -> pain_1", "frailty -> mobility"] if with_u else ["pain_1 -> mobility"]
    return diagram(*arrows)


def test_two_stage_treatment_with_feedback_needs_g_methods():
    for with_u in (True, False):
        G = _two_stage(with_u)
        M = measured(G, "frailty")
        stages = implied_stages(G, {"physio_0", "physio_1"})
        assert stages == (("physio_0",), ("physio_1",))
        v = sequential_verdict(G, stages, {"mobility"}, M)
        assert v.sequential and not v.single_set_exists and v.needs_g_methods
        assert [s.covariates for s in v.stages] == [frozenset(), frozenset({"pain_1"})]
        (fb,) = v.feedback
        assert fb.variable == "pain_1" and fb.affected_path == ("physio_0", "pain_1")
        assert fb.confounds_path == ("pain_1", "physio_1")


def test_two_stage_treatment_with_unmeasured_confounding_of_the_second_stage():
    # What If, ch. 19 (from memory): if U also affects the later treatment,
    # sequential exchangeability fails and g-methods do not help either.
    G = diagram(
        "physio_0 -> pain_1",
        "pain_1 -> physio_1",
        "physio_0 -> mobility",
        "physio_1 -> mobility",
        "frailty -> pain_1",
        "frailty -> mobility",
        "frailty -> physio_1",
    )
    v = sequential_verdict(G, (("physio_0",), ("physio_1",)), {"mobility"}, measured(G, "frailty"))
    assert not v.sequential and not v.needs_g_methods
    assert [s.holds for s in v.stages] == [True, False]


def test_stages_from_periods_follow_the_periods():
    G = _two_stage(True)
    assert stages_from_periods(G, {"physio_0", "physio_1"}, {"physio_0": 0, "physio_1": 2}) == (
        ("physio_0",),
        ("physio_1",),
    )
    # an exposure outside the periods: the implied order is used
    assert stages_from_periods(G, {"physio_0", "physio_1"}, {"physio_1": 0}) == (
        ("physio_0",),
        ("physio_1",),
    )


def test_no_feedback_means_a_single_set_suffices():
    # Common practice: with only baseline confounding, ordinary adjustment works.
    G = diagram(
        "age -> physio_0",
        "age -> physio_1",
        "age -> mobility",
        "physio_0 -> physio_1",
        "physio_0 -> mobility",
        "physio_1 -> mobility",
    )
    v = sequential_verdict(G, (("physio_0",), ("physio_1",)), {"mobility"}, measured(G))
    assert v.sequential and v.single_set_exists and not v.needs_g_methods


def test_overlapping_roles_are_refused():
    import pytest

    G = _two_stage(True)
    M = measured(G, "frailty")
    with pytest.raises(ValueError):
        selection_verdict(G, {"physio_0"}, {"mobility"}, set(), {"mobility"}, M)
    with pytest.raises(ValueError):
        natural_effect_verdict(G, {"physio_0"}, {"physio_0"}, {"mobility"}, set())
    with pytest.raises(ValueError):
        controlled_direct_verdict(G, {"physio_0"}, set(), {"mobility"}, set(), M)
    with pytest.raises(ValueError):
        sequential_verdict(G, [("physio_0",), ("physio_0",)], {"mobility"}, M)
