"""The report's mounting-spot section: the best position of each candidate,
pole heights, the best spot as trees grow, one line of advice."""

from __future__ import annotations

from ..assess import verdict_for
from ..pipeline import SiteRun
from ..spots import rank_spots
from ..words import length, pct

GROWTH_YEARS = (5.0, 10.0)  # the best spot re-checked this far ahead when trees grow
MAX_SPOT_JSON = 50  # candidates listed in the JSON (best first); the count says how many there were


def spot_ranking(run: SiteRun):
    """The site plan's candidates ranked (spots.rank_spots), or None without any."""
    plan = run.site.plan
    if plan is None or not plan.has_candidates:
        return None
    return rank_spots(run)


def pole_text(p) -> str:
    """One sentence on a pole's lowest adequate height (spots.PoleHeight)."""
    if p.lowest is None:
        return (f"{p.pole} ({length(p.min_height_m)} to {length(p.max_height_m)}): no height in its range reaches "
                f"{pct(p.target_blocked)} blocked.")
    return (f"{p.pole}: {length(p.lowest.candidate.height_m)} is the lowest height with blocked at most "
            f"{pct(p.target_blocked)} ({pct(p.lowest.blocked_fraction)}).")


def spots_section(run: SiteRun, ranking) -> dict:
    """The report's mounting-spot section: the best position of each candidate,
    pole heights, how the best spot holds up as trees grow, one line of advice."""
    a, crit = run.assessment, run.site.criteria
    best = ranking.best
    rows = []
    for r in ranking.best_of_each():
        c = r.candidate
        rows.append({"spot": c.name, "kind": c.kind, "position": f"{length(c.east_m)} E, {length(c.north_m)} N",
                     "height": length(c.height_m), "blocked": pct(r.blocked_fraction, 2),
                     "interruption": pct(r.interruption, 2)})
    poles = [pole_text(p) for p in ranking.poles]
    growth = []
    plan = run.site.plan
    if any(t.growth_m_per_year > 0 for t in plan.trees):
        for y in GROWTH_YEARS:
            r = ranking.evaluator.evaluate([best.candidate], y)[0]
            growth.append(f"in {y:g} years: blocked {pct(r.blocked_fraction)}, "
                          f"interruption {pct(r.interruption)}")
    verdict, _ = verdict_for(best.blocked_fraction, best.interruption, best.availability, crit)
    c = best.candidate
    if best.blocked_fraction is not None and a.blocked_fraction is not None \
            and best.blocked_fraction < a.blocked_fraction:
        advice = (f"Best spot: {c.name} at {length(c.height_m)} ({length(c.east_m)} east, {length(c.north_m)} north of "
                  f"the survey point). It would cut blocked time from {pct(a.blocked_fraction)} to "
                  f"{pct(best.blocked_fraction)}; the verdict there would be {verdict}.")
    else:
        advice = "No candidate spot in the plan beats the survey point."
    as_json = ranking.as_dict()
    as_json["candidates_total"] = len(as_json["candidates"])
    as_json["candidates"] = as_json["candidates"][:MAX_SPOT_JSON]
    return {"count": len(ranking.results), "rows": rows, "poles": poles, "growth": growth, "advice": advice,
            "best_verdict": verdict, "warnings": list(ranking.warnings), "json": as_json}
