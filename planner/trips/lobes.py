"""The two response lobes of the body clock to light, and the limits of a prescribed window.

Light in the hours after CBTmin advances the clock and light in the hours before it delays, with the
crossover at CBTmin (the type 1 human PRC to bright light, Khalsa et al. 2003, J Physiol 549:945,
Fig. 2).  A plan puts bright light in the lobe that moves the clock its way and keeps light out of
the other lobe (dark glasses, an eye mask, or sleep).  The trip search (:mod:`planner.trips.search`)
and the travel-day sleep (:mod:`planner.trips.travel_sleep`) share these rules.
"""

from __future__ import annotations

from datetime import datetime, timedelta
from typing import Literal, Sequence

from planner.world.light import hours_between

Strategy = Literal["advance", "delay"]

#: Width of each response lobe around CBTmin [h]: light in the LOBE_H hours after CBTmin advances
#: the clock and light in the LOBE_H hours before it delays (the advance and delay regions of the
#: human PRC to bright light, Khalsa et al. 2003, J Physiol 549:945, Fig. 2). A bright-light window
#: sits in the lobe that moves the clock the planned way, a light-avoidance window in the other.
LOBE_H = 10.0
_LOBE = timedelta(hours=LOBE_H)
#: Shortest prescribed window [min]: shorter ones are dropped, as too short to be worth doing (a
#: practicality limit of this planner).
MIN_WINDOW_MINUTES = 15.0
#: Longest prescribed light-avoidance window [h] (a practicality limit of this planner).
MAX_AVOIDANCE_H = 4.0


def lobe(cbtmin: datetime, kind: Literal["bright", "avoid"], strategy: Strategy) -> tuple[datetime, datetime]:
    """The hours around ``cbtmin`` where a window of ``kind`` moves the clock the ``strategy``'s way.

    Bright light for an advance goes in the ``LOBE_H`` hours after CBTmin, for a delay in the
    ``LOBE_H`` hours before it; light-avoidance takes the other lobe, where light would push the
    clock the wrong way (Khalsa et al. 2003, J Physiol 549:945).
    """
    after = (kind == "bright") == (strategy == "advance")
    return (cbtmin, cbtmin + _LOBE) if after else (cbtmin - _LOBE, cbtmin)


def nearest_cbtmin(cbtmins: Sequence[datetime], moment: datetime) -> datetime | None:
    """The simulated CBTmin closest to ``moment``; None without any."""
    return min(cbtmins, key=lambda c: abs(hours_between(c, moment))) if cbtmins else None


def whole_minute(moment: datetime, *, up: bool) -> datetime:
    """``moment`` moved to the whole minute after it (``up``) or before it."""
    floor = moment.replace(second=0, microsecond=0)
    return floor + timedelta(minutes=1) if up and floor < moment else floor
