"""The evaluator: figures for any mask over one set of sky tracks.

The scheduling model's assignment (which satellite is assigned when, with its
handovers: ``assess.schedule_assignment``) does not depend on the mask, so it is
worked out once per set of tracks and scheduling period and reused by every
mask: a horizon edit in the text UI, each candidate spot of the ranking, each
"what if this sector were cleared" of the report (DEVELOPERS, "Spot search").
"""

from __future__ import annotations

import numpy as np

from .assess import (
    Assessment,
    Assignment,
    assess,
    availability_of,
    down_under,
    interruption_of,
    schedule_assignment,
)
from .horizon import HorizonMask
from .site import Criteria, Schedule
from .tracks import SkyTracks


class Evaluator:
    """One set of tracks, the site's criteria and scheduling period, and the
    assignment computed once."""

    def __init__(self, tracks: SkyTracks, criteria: Criteria = Criteria(), schedule: Schedule = Schedule(),
                 assignment: Assignment | None = None):
        self.tracks = tracks
        self.criteria = criteria
        self.schedule = schedule
        self.assignment = assignment if assignment is not None else schedule_assignment(tracks, schedule.reassign_s)

    def for_site(self, criteria: Criteria, schedule: Schedule) -> Evaluator:
        """This evaluator for another site's criteria and period (the assignment is
        kept when the period is the same)."""
        if (criteria, schedule) == (self.criteria, self.schedule):
            return self
        keep = self.assignment if schedule == self.schedule else None
        return Evaluator(self.tracks, criteria, schedule, keep)

    def assess(self, mask: HorizonMask) -> Assessment:
        """All figures for ``mask`` (assess.assess, with the assignment reused)."""
        return assess(self.tracks, mask, self.criteria, self.schedule, assignment=self.assignment)

    def figures(self, blocked: np.ndarray) -> tuple[float | None, float, float]:
        """(blocked_fraction, availability, interruption) given which stored
        samples are blocked: the cheap figures a ranking needs."""
        usable = len(self.tracks)
        bf = int(np.count_nonzero(blocked)) / usable if usable else None
        return bf, availability_of(self.tracks, blocked), interruption_of(down_under(self.assignment, blocked))
