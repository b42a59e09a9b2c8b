"""kappa of parametric prediction limits with retesting, against the Unified Guidance's worked
examples (USEPA 2009, ch. 19; values as reproduced by the reference script named in
tests/data/usepa2009/README.md), scipy, and simulation."""

import numpy as np
import pytest
from hypothesis import given, settings
from hypothesis import strategies as st
from scipy import stats
from usepa2009_examples import example

from tracescreen.statistics.background.kappa import (
    bonferroni_factor,
    failure_probability,
    kappa,
    per_constituent_alpha,
    per_test_confidence,
)
from tracescreen.statistics.background.plans import FAILED, PASSED, RULES, RetestPlan, decide, parse_plan


def test_per_test_confidence_of_the_examples():
    """(1 - SWFPR)^(1 / (wells x constituents)): 0.9997893 (Ex. 19-1), 0.9999473 (19-3), 0.997895 (19-2)."""
    assert per_test_confidence(0.10, 50, 10) == pytest.approx(0.9997893, abs=5e-8)
    assert per_test_confidence(0.10, 100, 20) == pytest.approx(0.9999473, abs=5e-8)
    assert per_test_confidence(0.10, 10, 5) == pytest.approx(0.997895, abs=5e-7)
    assert per_constituent_alpha(0.10, 5) == pytest.approx(0.02085164, abs=5e-9)   # Ex. 19-5


def test_example_19_1_kappa_1_of_2_and_1_of_3():
    """Example 19-1 (n = 25, 10 constituents, 50 wells, 2 evaluations, SWFPR 10 %): kappa 2.773504
    (1-of-2) and 2.014364 (1-of-3); the reference computed them with adaptive integration to about
    1e-5, ours agrees with adaptive quadrature to 1e-12 (see below)."""
    pub = example("19_1_sulfate")["published"]
    conf = per_test_confidence(0.10, 50, 10)
    assert kappa(25, 24, parse_plan("1-of-2"), conf, 2) == pytest.approx(pub["kappa_1_of_2"], abs=2e-5)
    assert kappa(25, 24, parse_plan("1-of-3"), conf, 2) == pytest.approx(pub["kappa_1_of_3"], abs=2e-5)


def test_example_19_2_modified_california_own_and_pooled_sd():
    """Example 19-2 (n = 4 per well; 5 constituents, 10 wells, 1 evaluation): modified California
    kappa 4.356389 with each well's SD (3 df) and 1.980025 with the SD pooled over 10 wells (30 df)."""
    pub = example("19_2_chloride")["published"]
    conf = per_test_confidence(0.10, 10, 5)
    plan = parse_plan("modified-california")
    assert kappa(4, 3, plan, conf, 1) == pytest.approx(pub["kappa_modified_california_n4"], abs=2e-6)
    assert kappa(4, 30, plan, conf, 1) == pytest.approx(pub["kappa_modified_california_pooled"], abs=2e-6)


@pytest.mark.parametrize("plan,key", [("1-of-1", "kappa_mean2_1_of_1"), ("1-of-2", "kappa_mean2_1_of_2"),
                                      ("1-of-3", "kappa_mean2_1_of_3")])
def test_example_19_4_means_of_two(plan, key):
    """Example 19-4: means of 2 future values, pooled SD (n = 4, 30 df): 2.682613, 1.875368, 1.511350."""
    pub = example("19_2_chloride")["published"]
    conf = per_test_confidence(0.10, 10, 5)
    assert kappa(4, 30, parse_plan(plan, order=2), conf, 1) == pytest.approx(pub[key], abs=2e-5)


def test_example_19_3_single_value_plans_kappa_and_power():
    """Example 19-3 (n = 25, 20 constituents, 100 wells, 2 evaluations): kappa and power at +3 SD
    for 1-of-2, 1-of-3, 1-of-4 and modified California, printed to 2 decimals."""
    ex = example("19_3_design")
    conf = per_test_confidence(0.10, 100, 20)
    for plan, order, k_pub, power_pub in ex["published"]["plans"]:
        if order != 1:
            continue
        p = parse_plan(plan)
        k = kappa(25, 24, p, conf, 2)
        assert k == pytest.approx(k_pub, abs=0.005), plan
        assert failure_probability(k, 25, 24, p, 2, shift_sd=3.0) == pytest.approx(power_pub, abs=0.006), plan


def test_one_test_without_retest_is_the_student_t_factor():
    """1-of-1, one evaluation: kappa = t(conf; n - 1) sqrt(1 + 1/n) (scipy.stats.t), the textbook
    prediction limit for one future value; with means of w, sqrt(1/w + 1/n)."""
    for n, conf, w in [(8, 0.99, 1), (20, 0.95, 1), (12, 0.999, 2), (30, 0.9, 3)]:
        expected = stats.t.ppf(conf, n - 1) * np.sqrt(1 / w + 1 / n)
        assert kappa(n, n - 1, RetestPlan("k-of-m", 1, 1, w), conf, 1) == pytest.approx(expected, rel=1e-8)


def test_example_18_1_bonferroni_limit_for_four_values():
    """Example 18-1: 95 % limit for the next 4 values, x̄ = 27.51667, s = 17.10119, n = 12 -> 73.67237."""
    pub = example("18_1_arsenic")["published"]
    x = np.array(example("18_1_arsenic")["background"])
    assert x.mean() == pytest.approx(pub["mean"], abs=5e-6)
    assert x.std(ddof=1) == pytest.approx(pub["sd"], abs=5e-6)
    upl = x.mean() + bonferroni_factor(12, 4, 0.95) * x.std(ddof=1)
    assert upl == pytest.approx(pub["upl_4_future_95"], abs=5e-5)
    assert not (np.array(example("18_1_arsenic")["compliance"]) > upl).any()


def test_integral_agrees_with_adaptive_quadrature():
    """The fixed Gauss-Legendre rule against scipy.integrate.quad at tight tolerance."""
    from scipy import integrate
    plan = parse_plan("1-of-3", order=2)
    g = plan.one_occasion()
    gd = g.deriv()
    n, df, r, k = 25, 24, 2, 2.3

    def f(z):
        v = stats.norm.cdf(z)
        return r * g(v) ** (r - 1) * gd(v) * stats.norm.pdf(z) * stats.nct.sf(np.sqrt(n) * k, df, np.sqrt(n) * z / np.sqrt(2))

    ref = integrate.quad(f, -12, 12, epsabs=0, epsrel=1e-12, limit=400, points=[0, k])[0]
    assert failure_probability(k, n, df, plan, r) == pytest.approx(ref, rel=1e-9)


def _simulated_false_positive_rate(n, plan, r, kap, sims, seed):
    """Share of simulated wells failing at least one of r evaluations when nothing changed."""
    rng = np.random.default_rng(seed)
    bg = rng.standard_normal((sims, n))
    limit = bg.mean(axis=1) + kap * bg.std(axis=1, ddof=1)
    future = rng.standard_normal((sims, r, plan.m, plan.order)).mean(axis=3)
    within = future <= limit[:, None, None]
    fails = np.zeros(sims, bool)
    for occ in range(r):
        n_pass = np.zeros(sims, int)
        n_fail = np.zeros(sims, int)
        first_failed = ~within[:, occ, 0]
        outcome = np.zeros(sims, int)
        for j in range(plan.m):
            live = outcome == 0
            n_pass += live & within[:, occ, j]
            n_fail += live & ~within[:, occ, j]
            o = decide(np.full(sims, RULES.index(plan.rule)), plan.k, plan.m, first_failed, n_pass, n_fail)
            outcome = np.where(live, o, outcome)
        fails |= outcome == FAILED
        assert ((outcome == PASSED) | (outcome == FAILED)).all()
    return fails.mean()


@settings(max_examples=6, deadline=None, derandomize=True)
@given(n=st.integers(8, 30), plan=st.sampled_from(["1-of-1", "1-of-2", "1-of-3", "modified-california",
                                                   "california-of-3"]),
       order=st.sampled_from([1, 2]), r=st.sampled_from([1, 2]), alpha=st.sampled_from([0.05, 0.1]))
def test_designed_plan_simulated_false_positive_rate_is_its_design_rate(n, plan, order, r, alpha):
    """Property: background and future values drawn from one normal distribution fail a designed
    plan at its design rate (20,000 simulated wells: 4.5 binomial standard errors allowed)."""
    p = parse_plan(plan, order)
    kap = kappa(n, n - 1, p, 1 - alpha, r)
    sims = 20_000
    rate = _simulated_false_positive_rate(n, p, r, kap, sims, seed=n * 100 + r)
    se = np.sqrt(alpha * (1 - alpha) / sims)
    assert abs(rate - alpha) < 4.5 * se


def test_means_plans_of_example_19_3_by_simulation():
    """Example 19-3's plans on means (order 2, 3) at a rate a simulation can check: the integral's
    design rate 0.05 for n = 25, r = 2 (the printed kappas of those plans differ from the
    integral in the second decimal; the design rate is what matters)."""
    for plan, order in [("1-of-1", 2), ("1-of-2", 2), ("1-of-1", 3)]:
        p = parse_plan(plan, order)
        kap = kappa(25, 24, p, 0.95, 2)
        rate = _simulated_false_positive_rate(25, p, 2, kap, 40_000, seed=order)
        assert abs(rate - 0.05) < 4.5 * np.sqrt(0.05 * 0.95 / 40_000)
