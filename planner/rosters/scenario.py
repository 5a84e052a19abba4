"""Roster scenario files: the TOML an occupational-health planner writes for one crew and its drafts.

:func:`load_roster` reads a file, validates it (every problem with its file, field and
line, as :mod:`planner.tomlfile` reports them) and builds a :class:`planner.rosters.model.Roster`.

Layout (``[light]`` and ``[countermeasures]`` are optional; the values shown are the defaults)::

    kind = "roster"
    name = "Harbour crane crew B"
    description = "..."
    model = "jewett1999"                   # a built-in id or a model file (relative to this file)
    start_date = "2027-03-01"              # first day of every draft (local date at the site)

    [site]
    name = "Rotterdam"
    time_zone = "Europe/Amsterdam"
    latitude = 51.95
    longitude = 4.05

    [workers]
    count = 40                             # crew size (informative)
    sleep = { bed = "23:00", wake = "07:00" }   # habitual sleep on free days
    sleep_hours = 7.5                      # main sleep aimed for on work days (4..10)
    commute_minutes = 30                   # each way (0..180)

    [shifts.D]                             # a shift type; its code is the table name
    start = "07:00"
    end = "19:00"
    label = "day"
    [shifts.N]
    start = "19:00"
    end = "07:00"
    ends_next_day = true                   # required when the end is on the next day
    sleep = { bed = "08:00", wake = "15:00" }   # optional: the crew's usual sleep after this shift

    [light]
    indoor_lux = 150                       # at home while awake
    work_lux = 300                         # at work
    sky = "overcast"                       # daylight model's sky: clear, partly or overcast
    daylight_exposure = "open"             # outdoors in the open, in shade, or behind a window
    # daylight_lux = 20000                 # optional cap on daylight at the eye
    night_outdoor_lux = 10                 # outdoors after dark (street lighting)

    [countermeasures]
    light_box = true                       # a light box (or bright task light) at work
    box_lux = 10000
    box_max_minutes = 120                  # per shift
    dark_glasses = true                    # for the way home after night shifts
    glasses_transmission = 0.1
    blackout_bedroom = true
    daylight = true                        # may the plan prescribe time outdoors?
    daylight_max_minutes = 60              # per day

    [[drafts]]                             # one or more rotations to compare
    name = "2 days, 2 nights, 4 off"
    pattern = ["D", "D", "N", "N", "off", "off", "off", "off"]
    cycles = 3

    [rules]                                # working-time limits every draft is checked against
    daily_rest_h = 11                      # between shifts (Directive 2003/88/EC, Art. 3)
    weekly_rest_h = 24                     # plus the daily rest, per period (Art. 5)
    weekly_rest_days = 7
    max_consecutive_nights = 4
    max_consecutive_work_days = 7

    [[crews]]                              # optional staggered groups, one calendar each
    name = "A"
    offset_days = 0                        # days into the pattern the crew starts
    [[crews]]
    name = "B"
    offset_days = 2
    draft_offsets = { "2 days, 2 nights, 4 off" = 3 }   # optional: another offset on a named draft
"""

from __future__ import annotations

from dataclasses import dataclass
from datetime import date
from pathlib import Path
from typing import Annotated, Literal

from pydantic import Field, field_validator

from planner import tomlfile
from planner.engine.markers import HOURS_PER_DAY
from planner.rosters.model import Countermeasures, Crew, Draft, Roster, ShiftType, WorkingTimeRules
from planner.scenariofile import (
    DEFAULT_MODEL,
    PlaceEntry,
    Problems,
    SleepEntry,
    StrictEntry,
    checked,
    model_reference,
)
from planner.shipped import shipped_toml_files
from planner.world.localtime import check_date_range, parse_clock, zone
from planner.world.places import Place

#: The pattern entry for a day off.
OFF = "off"
#: Longest shift accepted [h] (a longer one is almost surely a typing error; a design limit).
MAX_SHIFT_H = 16.0
#: Longest draft accepted [days] (simulation cost grows with the days; a design limit).
MAX_DRAFT_DAYS = 180


class ShiftEntry(StrictEntry):
    start: str
    end: str
    ends_next_day: bool = False
    label: str = Field("", max_length=40)
    sleep: SleepEntry | None = None

    @field_validator("start", "end")
    @classmethod
    def _clock(cls, value: str) -> str:
        return checked(parse_clock, value)


class WorkersEntry(StrictEntry):
    count: int = Field(1, ge=1, le=100_000)
    sleep: SleepEntry
    sleep_hours: float = Field(7.5, ge=4.0, le=10.0, allow_inf_nan=False)
    commute_minutes: float = Field(30.0, ge=0.0, le=180.0, allow_inf_nan=False)


class RosterLightEntry(StrictEntry):
    indoor_lux: float = Field(150.0, ge=0.0, allow_inf_nan=False)
    work_lux: float = Field(300.0, ge=0.0, allow_inf_nan=False)
    daylight_lux: float | None = Field(None, ge=0.0, allow_inf_nan=False)   # cap; None: as the sky gives it
    sky: Literal["clear", "partly", "overcast"] = "overcast"
    daylight_exposure: Literal["open", "shade", "window"] = "open"
    night_outdoor_lux: float = Field(10.0, ge=0.0, allow_inf_nan=False)


class CountermeasuresEntry(StrictEntry):
    light_box: bool = True
    box_lux: float = Field(10_000.0, ge=0.0, allow_inf_nan=False)
    box_max_minutes: float = Field(120.0, ge=0.0, le=16 * 60, allow_inf_nan=False)
    dark_glasses: bool = True
    glasses_transmission: float = Field(0.1, ge=0.0, le=1.0, allow_inf_nan=False)
    blackout_bedroom: bool = True
    daylight: bool = True
    daylight_max_minutes: float = Field(60.0, ge=0.0, le=24 * 60, allow_inf_nan=False)


class RulesEntry(StrictEntry):
    daily_rest_h: float = Field(11.0, ge=0.0, le=24.0, allow_inf_nan=False)
    weekly_rest_h: float = Field(24.0, ge=0.0, le=168.0, allow_inf_nan=False)
    weekly_rest_days: int = Field(7, ge=1, le=28)
    max_consecutive_nights: int = Field(4, ge=1, le=60)
    max_consecutive_work_days: int = Field(7, ge=1, le=60)


class CrewEntry(StrictEntry):
    name: str = Field(min_length=1, max_length=40)
    offset_days: int = Field(0, ge=0, le=365)
    draft_offsets: dict[str, Annotated[int, Field(ge=0, le=365)]] = Field(default_factory=dict)


class DraftEntry(StrictEntry):
    name: str = Field(min_length=1, max_length=80)
    pattern: list[str] = Field(min_length=1)
    cycles: int = Field(ge=1)
    description: str = ""


class RosterFile(StrictEntry):
    """The whole roster file (see the module docstring)."""

    kind: Literal["roster"]
    name: str = Field(min_length=1, max_length=120)
    description: str = ""
    model: str = Field(DEFAULT_MODEL, min_length=1)
    start_date: date

    @field_validator("start_date")
    @classmethod
    def _date(cls, value: date) -> date:
        return checked(check_date_range, value)
    site: PlaceEntry
    workers: WorkersEntry
    shifts: dict[str, ShiftEntry] = Field(min_length=1)
    light: RosterLightEntry = Field(default_factory=RosterLightEntry)
    countermeasures: CountermeasuresEntry = Field(default_factory=CountermeasuresEntry)
    drafts: list[DraftEntry] = Field(min_length=1)
    crews: list[CrewEntry] = Field(default_factory=list)
    rules: RulesEntry = Field(default_factory=RulesEntry)


@dataclass(frozen=True)
class RosterInfo:
    """What a roster file says about itself (``model`` made absolute when given relative to the file)."""

    name: str
    description: str
    model: str
    path: str


def builtin_roster_paths() -> dict[str, Path]:
    """The demo rosters shipped with the package (invented crews), keyed by file stem."""
    return {key: path for key, path in shipped_toml_files("scenarios").items()
            if tomlfile.declared_kind(path) == "roster"}


def load_roster(path: str | Path) -> tuple[Roster, RosterInfo]:
    """Read, validate and build a roster scenario.

    Raises
    ------
    InputFileError
        Listing every problem of the file, each with file, field and line.
    """
    path = Path(path)
    spec, text = tomlfile.load_scenario(RosterFile, path, "roster")
    return build_roster(spec, Problems(str(path), text), path)


def _shift(code: str, entry: ShiftEntry, commute_h: float, problems: Problems) -> ShiftType | None:
    start, end = parse_clock(entry.start), parse_clock(entry.end)
    field = ("shifts", code)
    if code == OFF:
        problems.add(field, f'"{OFF}" marks a day off in patterns and cannot name a shift')
        return None
    if start == end:
        problems.add(field + ("end",), f"the shift starts and ends at {entry.start}: it has no length")
        return None
    if end < start and not entry.ends_next_day:
        problems.add(field + ("end",), f"the shift ends at {entry.end}, before it starts at {entry.start}, without "
                                       "crossing midnight; a shift that ends the next day needs ends_next_day = true")
        return None
    if end > start and entry.ends_next_day:
        problems.add(field + ("ends_next_day",), f"a shift from {entry.start} to {entry.end} the next day would last "
                                                 f"{24 + end - start:g} h; ends_next_day = true is only for shifts "
                                                 "whose end clock time is earlier than their start")
        return None
    hours = (end - start) % HOURS_PER_DAY
    if hours > MAX_SHIFT_H:
        problems.add(field + ("end",), f"the shift lasts {hours:g} h; at most {MAX_SHIFT_H:g} h is allowed")
        return None
    sleep = None
    if entry.sleep is not None:
        sleep = (entry.sleep.bed_h, entry.sleep.wake_h)
        # Sleep and the shift with its commutes, as intervals on a two-day clock from the shift's start day.
        busy = (start - commute_h, start + hours + commute_h)
        bed = entry.sleep.bed_h
        for base in (-HOURS_PER_DAY, 0.0, HOURS_PER_DAY):
            a, b = bed + base, bed + base + entry.sleep.hours
            if a < busy[1] and busy[0] < b:
                problems.add(field + ("sleep",),
                             f"sleep {entry.sleep.bed}–{entry.sleep.wake} overlaps the shift {entry.start}–{entry.end} "
                             f"(with {commute_h * 60:g} min of commute each way); sleep must fall outside work "
                             "and travel")
                break
    return ShiftType(code, start, end, entry.label or code, sleep)


def build_roster(spec: RosterFile, problems, path: Path) -> tuple[Roster, RosterInfo]:
    """A validated :class:`RosterFile` as a :class:`~planner.rosters.model.Roster` (shared by every roster reader).

    ``problems`` collects the semantic problems (``add(field, message)``, ``raise_if_any()``) and says where each
    field stands: a TOML line (:class:`planner.scenariofile.Problems`) or a spreadsheet cell
    (:mod:`planner.rosters.sheet`).  ``path`` is the file relative model paths are read from.
    """
    model = model_reference(spec.model, path, problems)
    commute_h = spec.workers.commute_minutes / 60.0
    shifts = [s for s in (_shift(code, entry, commute_h, problems) for code, entry in spec.shifts.items()) if s]
    allowed = ", ".join(f'"{code}"' for code in spec.shifts) + f', "{OFF}"'
    drafts = []
    names: set[str] = set()
    for k, entry in enumerate(spec.drafts):
        if entry.name in names:
            problems.add(("drafts", k, "name"), f'"{entry.name}" is used by another draft; each draft needs its own name')
        names.add(entry.name)
        codes = []
        for i, code in enumerate(entry.pattern):
            if code != OFF and code not in spec.shifts:
                problems.add(("drafts", k, "pattern", i), f'the pattern names an undefined shift "{code}"; '
                                                         f"allowed are {allowed}")
            codes.append(None if code == OFF else code)
        days = len(entry.pattern) * entry.cycles
        if days > MAX_DRAFT_DAYS:
            problems.add(("drafts", k, "cycles"), f"{entry.cycles} cycles of {len(entry.pattern)} days make {days} days; "
                                                  f"at most {MAX_DRAFT_DAYS} days are allowed")
        if all(code is None for code in codes):
            problems.add(("drafts", k, "pattern"), "the pattern has no shift at all; name at least one shift")
        drafts.append(Draft(entry.name, tuple(codes), entry.cycles, entry.description))
    crew_names: set[str] = set()
    for k, entry in enumerate(spec.crews):
        if entry.name in crew_names:
            problems.add(("crews", k, "name"), f'"{entry.name}" is used by another crew; each crew needs its own name')
        crew_names.add(entry.name)
        for draft_name in entry.draft_offsets:
            if draft_name not in names:
                problems.add(("crews", k, "draft_offsets"), f'no draft named "{draft_name}"; allowed: '
                                                            + ", ".join(f'"{d.name}"' for d in drafts))
    problems.raise_if_any()
    sleep = spec.workers.sleep
    site = Place(spec.site.name, zone(spec.site.time_zone), float(spec.site.latitude), float(spec.site.longitude),
                 sleep.bed_h, sleep.wake_h)
    c = spec.countermeasures
    measures = Countermeasures(light_box=c.light_box, box_lux=c.box_lux, box_max_minutes=c.box_max_minutes,
                               dark_glasses=c.dark_glasses, glasses_transmission=c.glasses_transmission,
                               blackout_bedroom=c.blackout_bedroom, daylight=c.daylight,
                               daylight_max_minutes=c.daylight_max_minutes)
    light = spec.light
    roster = Roster(spec.name, site, spec.start_date, tuple(shifts), tuple(drafts),
                    commute_minutes=spec.workers.commute_minutes, sleep_hours=spec.workers.sleep_hours,
                    work_lux=light.work_lux, indoor_lux=light.indoor_lux, daylight_lux=light.daylight_lux,
                    sky=light.sky, daylight_exposure=light.daylight_exposure,
                    night_outdoor_lux=light.night_outdoor_lux, measures=measures, crew_size=spec.workers.count,
                    crews=tuple(Crew(c.name, c.offset_days, tuple(c.draft_offsets.items())) for c in spec.crews),
                    rules=WorkingTimeRules(**spec.rules.model_dump()))
    return roster, RosterInfo(spec.name, spec.description, model, str(path))
