"""The three demo sites' figures, pinned: a change of code layout (or any
refactoring) must leave every figure the same.  The values were recorded from a
run of the engine after the scheduling-model and embedded-shell changes
(README, "What the figures mean"; illustrative shells mid-49, high-64,
sunsync-745), over each site file's own [window] (2026-06-01, 24 h at 15 s).
A deliberate change of the model or the shells updates them, and says so in
its commit."""

from __future__ import annotations

import pytest

from survey.pipeline import run_site
from survey.site import load_site

from .helpers import DEMO

PINNED = {
    "alder-brook-farm": dict(usable=95479, blocked=6857, availability=1.0, interruption=0.0, outages=0,
                             sectors=[(107.676125, 165.633268, 5104), (230.150915, 262.974444, 1753)]),
    "mill-lane-terrace": dict(usable=89382, blocked=49310, availability=1.0, interruption=0.10208333333333333,
                              outages=225, sectors=[(22.307692, 161.153846, 26518), (201.0, 338.75, 22792)]),
    "tussock-ridge-croft": dict(usable=95514, blocked=315, availability=1.0, interruption=0.0, outages=0,
                                sectors=[(225.2, 238.0, 315)]),
}


@pytest.mark.parametrize("demo", sorted(PINNED))
def test_demo_figures_are_pinned(demo):
    want = PINNED[demo]
    a = run_site(load_site(DEMO / demo / "site.toml")).assessment
    assert (a.usable_samples, a.blocked_samples) == (want["usable"], want["blocked"])
    assert a.blocked_fraction == want["blocked"] / want["usable"]
    assert a.availability == want["availability"]
    assert a.interruption == pytest.approx(want["interruption"], abs=1e-15)
    assert len(a.outages) == want["outages"]
    got = [(s.from_deg, s.to_deg, s.blocked_samples) for s in a.sectors]
    assert len(got) == len(want["sectors"])
    for (f, t, n), (wf, wt, wn) in zip(got, want["sectors"]):
        assert (f, t) == pytest.approx((wf, wt), abs=1e-6) and n == wn
