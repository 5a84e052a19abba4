"""The trip plan for narrow terminals: the recommendation first, then one block per day, one line per action.

Below :data:`AGENDA_BELOW_COLUMNS` the day-by-day table would squeeze its columns until words break, so
``phaseplan trip`` and ``phaseplan demo`` print this agenda instead; every line is plain text that rich
wraps at spaces, so no line is wider than the terminal and no word is cut.
"""

from __future__ import annotations

import math
from datetime import date, datetime, timedelta

from rich.console import Console
from rich.markup import escape

from planner.plans.entries import lux_text
from planner.trips.model import EYE_MASK, Trip, sleep_setting
from planner.trips.search import REENTRAINMENT_TOLERANCE_H, TripPlanResult
from planner.trips.views import DayView, local, movement, settling, strategy_name
from planner.world.light import Window
from planner.world.localtime import zone_label

#: Terminals narrower than this many columns get the agenda instead of the day-by-day table (the table's
#: seven columns need about this much to keep every word whole; measured on the demos).
AGENDA_BELOW_COLUMNS = 110


def _hhmm(trip: Trip, moment: datetime, row_zone: str, block_date: date | None = None) -> str:
    """Clock time on the row's clock (a zone name marks another clock); with ``block_date``, a
    time on another date than the block's carries its weekday ("Mon 00:30"), so a night that
    starts after midnight is not read as the block's first hours."""
    at = local(trip, moment)
    label = zone_label(at)
    weekday = at.strftime("%a ") if block_date is not None and at.date() != block_date else ""
    return weekday + at.strftime("%H:%M") + ("" if label == row_zone else f" {label.split()[0]}")


def _span(trip: Trip, a: datetime, b: datetime, row_zone: str, block_date: date | None = None) -> str:
    return f"{_hhmm(trip, a, row_zone, block_date)}–{_hhmm(trip, b, row_zone)}"


def _window_line(trip: Trip, window: Window, row_zone: str, block_date: date | None = None) -> tuple[datetime, str]:
    minutes = f"{window.minutes:.0f} min"
    if window.source == "dark glasses":
        what = f"light-avoidance, dark glasses {window.lux:.0%}, {minutes}"
    elif window.source == EYE_MASK:
        what = f"light-avoidance, eye mask (seated, in flight), {minutes}"
    else:
        what = f"bright light, {window.source} {lux_text(window.lux)} lx, {minutes}"
    return window.start, f"{_span(trip, window.start, window.end, row_zone, block_date)}  {what}"


def _error_text(view: DayView) -> str:
    error = view.error_h
    if not math.isfinite(error):
        return ""
    if abs(error) <= REENTRAINMENT_TOLERANCE_H:
        return f", on {view.target_place.name} time ✓"
    return f", {abs(error):.1f} h {'late' if error > 0 else 'early'} for {view.target_place.name}"


def print_agenda(console: Console, trip: Trip, views: list[DayView], title: str) -> None:
    """One block per day: its date, kind and clock, then its sleep, light and CBTmin in time order."""
    console.print(f"\n[bold]{title}[/bold]")
    console.print("[dim]Times on the local clock of where the traveller is (in flight: the departure airport's); "
                  "a zone name marks a time on another clock.[/dim]")
    for view in views:
        day = view.day
        start = local(trip, day.start)
        row_zone = zone_label(start)
        where = day.place.name if day.end_place == day.place else f"{day.place.name} → {day.end_place.name}"
        dates = start.strftime("%a %d %b")
        last = (day.end - timedelta(minutes=1)).astimezone(day.end_place.zone).strftime("%a %d %b")
        if last != dates:
            dates += f" → {last}"
        console.print(f"\n[bold]{dates}[/bold] · {day.kind} · {escape(where)} ({escape(row_zone)})")
        block = start.date()
        items = []
        for a, b in view.sleep:
            setting = sleep_setting(trip, a, b)
            items.append((a, f"{_span(trip, a, b, row_zone, block)}  sleep" + ("" if setting == "bed" else f" {setting}")))
        items += [_window_line(trip, w, row_zone, block) for w in view.bright + view.avoid]
        items += [(f.depart, f"{_span(trip, f.depart, f.arrive, row_zone, block)}  flight "
                             f"{f.origin.name} → {f.destination.name}")
                  for f in trip.flights if day.start <= f.depart < day.end]
        for _, text in sorted(items):
            console.print(f"  {escape(text)}")
        if view.cbtmin is not None:
            console.print(f"  [dim]CBTmin {escape(_hhmm(trip, view.cbtmin, row_zone, block))}"
                          f"{escape(_error_text(view))}[/dim]")
        if not items:
            console.print("  [dim]nothing planned[/dim]")


def print_comparison_lines(console: Console, plan: TripPlanResult) -> None:
    """The advance / delay / no-plan comparison as one paragraph per plan."""
    console.print("\n[bold]Advance, delay or no plan[/bold]")
    rows = [(name, result.outcome) for name, result in plan.alternatives.items()] + [("no plan", plan.baseline)]
    for name, outcome in rows:
        mark = " ✓" if name == plan.strategy else ""
        low = "; passes near low amplitude" if outcome.near_low_amplitude else ""
        console.print(f"  [bold]{escape(strategy_name(name))}[/bold]{mark}: re-entrains {escape(settling(outcome))}; "
                      f"light box {outcome.box_minutes:.0f} min; body clock "
                      f"{escape(movement(outcome, plan.alternatives, name))}{low}")
