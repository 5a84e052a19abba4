"""Sleep and darkness on flights and layovers, placed where they help the plan's direction.

On a long flight the traveller chooses when to sleep (eyes shut: darkness) and when to stay awake in
cabin light.  Light in the hours before CBTmin delays the body clock and light in the hours after it
advances it, with the crossover at CBTmin (type 1 human PRC to bright light, Khalsa et al. 2003,
J Physiol 549:945, Fig. 2).  So an advance plan sleeps in the hours before the predicted CBTmin, where
light would push the clock later, and stays awake after it; a delay plan sleeps in the hours after
CBTmin and stays awake before it.  Awake hours of a flight that still fall in that wrong-way lobe get
an eye mask (light-avoidance worn in the seat).

:func:`travel_sleep_options` lists a few such placements for one travel day; the trip search simulates
each and keeps the best (:meth:`planner.trips.search.TripPlanner.greedy`).  Every placement keeps the
traveller's planned waking gaps within ``MAX_WAKE_H`` where a travel spot allows it
(:func:`planner.trips.model.fill_long_gaps`).
"""

from __future__ import annotations

from datetime import datetime, timedelta
from typing import Sequence

from planner.intervals import free_segments
from planner.trips.lobes import (
    MAX_AVOIDANCE_H,
    MIN_WINDOW_MINUTES,
    Strategy,
    lobe,
    whole_minute,
)
from planner.trips.model import (
    EYE_MASK,
    EYE_MASK_TRANSMISSION,
    MIN_TRAVEL_SLEEP_H,
    TravelSleep,
    Trip,
    sleep_spots,
)
from planner.world.light import Window

Span = tuple[datetime, datetime]

#: Planned travel sleep starts and ends on this grid [min], so a traveller reads "sleep 23:00-01:30"
#: (a presentation choice of this planner).
SLEEP_GRID_MINUTES = 15
#: The placements tried in each spot: which end of the wrong-way lobe the sleep keeps to ("near" CBTmin,
#: where the response to light is largest, or "far" from it) and its length as a fraction of the
#: traveller's habitual night; ("mask", 0) places no sleep, only the eye mask (a small set the simulator
#: chooses from; a design choice of this planner).
PLACEMENTS: tuple[tuple[str, float], ...] = (("near", 1.0), ("near", 0.5), ("far", 1.0), ("far", 0.5), ("mask", 0.0))


def spans_with_cbtmin(cbtmins: Sequence[datetime], strategy: Strategy, start: datetime,
                      end: datetime) -> list[tuple[Span, datetime]]:
    """The parts of [start, end] in the light-avoidance lobe (:func:`planner.trips.lobes.lobe`) of the
    nearest CBTmin, where light would move the clock against ``strategy`` (Khalsa et al. 2003, J Physiol
    549:945), each with its CBTmin: each CBTmin's lobe cut to the hours nearer to it than to the CBTmin
    before or after (the rule :func:`planner.trips.search.in_lobe` judges by)."""
    ordered = sorted(cbtmins)
    found = []
    for k, cbtmin in enumerate(ordered):
        lo, hi = lobe(cbtmin, "avoid", strategy)
        if k > 0:
            lo = max(lo, ordered[k - 1] + (cbtmin - ordered[k - 1]) / 2)
        if k + 1 < len(ordered):
            hi = min(hi, cbtmin + (ordered[k + 1] - cbtmin) / 2)
        lo, hi = max(lo, start), min(hi, end)
        if hi > lo:
            found.append(((lo, hi), cbtmin))
    return found


def _placed(span: Span, cbtmin: datetime, where: str, length: timedelta) -> Span:
    """A piece of ``length`` at the end of ``span`` nearer to its CBTmin ("near") or farther ("far")."""
    lo, hi = span
    near_end = abs((hi - cbtmin).total_seconds()) <= abs((lo - cbtmin).total_seconds())
    at_end = near_end if where == "near" else not near_end
    return (hi - length, hi) if at_end else (lo, lo + length)


def _on_grid(moment: datetime, *, up: bool) -> datetime:
    """``moment`` moved to the ``SLEEP_GRID_MINUTES`` grid (of UTC, which every zone's quarter hours share)."""
    step = SLEEP_GRID_MINUTES * 60
    seconds = moment.timestamp()
    snapped = (-(-seconds // step) if up else seconds // step) * step
    return datetime.fromtimestamp(snapped, tz=moment.tzinfo)


def eye_mask_clear_of(windows: Sequence[Window], sleep: Sequence[Span]) -> tuple[Window, ...]:
    """The eye-mask ``windows`` without the hours of ``sleep`` (a nap the waking-gap rule added after
    them); pieces under ``MIN_WINDOW_MINUTES`` dropped."""
    kept = []
    for window in windows:
        for lo, hi in free_segments(window.start, window.end, sleep):
            lo, hi = whole_minute(lo, up=True), whole_minute(hi, up=False)
            if (hi - lo).total_seconds() / 60.0 >= MIN_WINDOW_MINUTES:
                kept.append(window if (lo, hi) == (window.start, window.end)
                            else Window(lo, hi, window.lux, window.source))
    return tuple(kept)


def _eye_mask(spot: Span, lobes: list[tuple[Span, datetime]], asleep: Sequence[Span]) -> list[Window]:
    """Eye-mask windows in the awake parts of a flight's wrong-way lobe: the piece nearest CBTmin of
    each, at most ``MAX_AVOIDANCE_H`` long, whole minutes, none under ``MIN_WINDOW_MINUTES``."""
    windows = []
    longest = timedelta(hours=MAX_AVOIDANCE_H)
    for span, cbtmin in lobes:
        for lo, hi in free_segments(max(span[0], spot[0]), min(span[1], spot[1]), asleep):
            if hi - lo > longest:
                lo, hi = _placed((lo, hi), cbtmin, "near", longest)
            lo, hi = whole_minute(lo, up=True), whole_minute(hi, up=False)
            if (hi - lo).total_seconds() / 60.0 >= MIN_WINDOW_MINUTES:
                windows.append(Window(lo, hi, EYE_MASK_TRANSMISSION, EYE_MASK))
    return windows


def travel_sleep_options(trip: Trip, bed: Sequence[Span], cbtmins: Sequence[datetime], strategy: Strategy,
                         day: Span, kept: TravelSleep | None = None) -> list[TravelSleep]:
    """Placements of sleep (and eye masks) in the travel spots starting within ``day`` (start, end).

    Parameters
    ----------
    trip : Trip
    bed : sequence of (datetime, datetime)
        The plan's sleep in a bed (:func:`planner.trips.model.bed_sleep`); travel sleep keeps clear of it.
    cbtmins : sequence of datetime
        Predicted CBTmin instants (UTC) of the plan so far.
    strategy : {"advance", "delay"}
    day : (datetime, datetime)
        The travel day whose spots are placed.
    kept : TravelSleep, optional
        The placement chosen for earlier travel days; kept as it is.

    Returns
    -------
    list of TravelSleep
        One per entry of ``PLACEMENTS`` that differs from the others (one without sleep or eye mask when
        no spot of the day meets the wrong-way lobe: the traveller stays awake there, but for a nap the
        waking-gap rule needs); empty when the day has no spot.  In each spot every piece of the lobe of at least
        ``MIN_TRAVEL_SLEEP_H`` gets a sleep of the placement's length (at most the traveller's habitual
        night); awake lobe hours on a flight get an eye mask (:func:`_eye_mask`).
    """
    spots = [(a, b, where) for a, b, where in sleep_spots(trip) if day[0] <= a < day[1]]
    if not spots:
        return []
    night = timedelta(hours=(trip.home.wake_h - trip.home.bed_h) % 24.0)
    least = timedelta(hours=MIN_TRAVEL_SLEEP_H)
    base_spots = kept.spots if kept else ()
    base_episodes = kept.episodes if kept else ()
    base_masks = kept.eye_mask if kept else ()
    base_preferred = kept.preferred if kept else ()
    options: dict[tuple, TravelSleep] = {}
    for where_in_lobe, fraction in PLACEMENTS:
        episodes, masks, preferred = [], [], []
        for a, b, setting in spots:
            lobes = spans_with_cbtmin(cbtmins, strategy, a, b)
            preferred += [span for span, _ in lobes]
            asleep = []
            for span, cbtmin in lobes:
                for piece in free_segments(*span, bed):
                    room = piece[1] - piece[0]
                    if room < least or fraction <= 0:
                        continue
                    lo, hi = _placed(piece, cbtmin, where_in_lobe, max(least, min(room, night * fraction)))
                    lo, hi = _on_grid(lo, up=True), _on_grid(hi, up=False)
                    if hi - lo >= least:
                        asleep.append((lo, hi))
            episodes += asleep
            if setting == "in flight":
                masks += _eye_mask((a, b), lobes, asleep)
        option = TravelSleep(base_spots + tuple((a, b) for a, b, _ in spots), base_episodes + tuple(episodes),
                             base_masks + tuple(masks), base_preferred + tuple(preferred),
                             f"{strategy}: sleep {where_in_lobe} CBTmin, {fraction:g} of a night" if fraction
                             else f"{strategy}: eye mask only")
        options.setdefault((option.episodes, option.eye_mask), option)
    return list(options.values())
