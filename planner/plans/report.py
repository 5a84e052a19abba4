"""A plan as one self-contained HTML page, and its phase chart.

:func:`report_html` gives a page with inline CSS and the chart embedded as an SVG data URI (no
file, font or script from anywhere else), print rules for A4 and Letter, and every text from
the user (names, places, descriptions) escaped.  :func:`phase_chart` draws, with matplotlib's
Agg/SVG backends, one row per local date: the sleep, bright-light, light-avoidance and work
windows as horizontal bars on the local clock of where the person is, the predicted CBTmin and
its target as markers and, for a population, the 10th–90th percentile spread of CBTmin.

The colours are this planner's own and stay apart in greyscale: sleep dark, bright light very
light, light avoidance and work mid-grey told apart by hatching; markers differ in shape.
"""

from __future__ import annotations

import base64
import html
import io
import math
import os
from datetime import date, datetime, time, timedelta, timezone, tzinfo
from pathlib import Path

import matplotlib

matplotlib.use("Agg")  # no display: reports are made on servers and in CI
import matplotlib.pyplot as plt  # noqa: E402  (after choosing the backend)
from matplotlib.lines import Line2D  # noqa: E402
from matplotlib.patches import Patch  # noqa: E402

from planner._version import __version__  # noqa: E402
from planner.errors import InputError  # noqa: E402
from planner.plans.document import (  # noqa: E402
    KIND_LABELS,
    DayRow,
    PlanDocument,
    PlanEvent,
    clock_text,
)
from planner.world.localtime import clock_hours, zone_label

UTC = timezone.utc

#: Fill, edge and hatch of each event kind (this planner's scheme; lightness decides greyscale).
STYLE = {
    "sleep": {"color": "#27344f", "edgecolor": "#27344f", "hatch": None, "height": 0.72},
    "bright_light": {"color": "#f6d65c", "edgecolor": "#8a6d00", "hatch": None, "height": 0.5},
    "light_avoidance": {"color": "#a891c9", "edgecolor": "#4b3a66", "hatch": "////", "height": 0.5},
    "work": {"color": "#7fb8ad", "edgecolor": "#2f5c54", "hatch": "...", "height": 0.72},
}
#: Fixed periods the plan works around (flights): an empty dashed outline, drawn under the events.
CONTEXT_STYLE = {"color": "#ffffff", "edgecolor": "#333333", "height": 0.86}
CBTMIN_STYLE = {"marker": "D", "color": "#c2402e", "markeredgecolor": "black", "markersize": 5.5}
TARGET_STYLE = {"marker": "o", "markerfacecolor": "white", "markeredgecolor": "black", "markersize": 6.5,
                "markeredgewidth": 1.3}
BAND_COLOR = "#555555"
#: The sleepiness band along shifts: KSS from 3 (alert, green) to 9 (fighting sleep, red); KSS 7 is
#: "sleepy, but no effort to stay awake" (Åkerstedt & Gillberg 1990, Int J Neurosci 52:29).
KSS_COLORMAP = "RdYlGn_r"
KSS_RANGE = (3.0, 9.0)
KSS_BAND_OFFSET, KSS_BAND_HEIGHT = 0.40, 0.16

#: Chart size: width fits an A4 or Letter page with margins [inch]; height grows per day row [inch].
CHART_WIDTH_IN = 7.0
ROW_HEIGHT_IN = 0.3
CHART_EXTRA_IN = 1.6
CHART_FORMATS = ("png", "svg")
PNG_DPI = 150


# --------------------------------------------------------------------------- chart

def _pieces(start: datetime, end: datetime, zone: tzinfo) -> list[tuple[date, float, float]]:
    """A period cut at the local midnights of ``zone``: (local date, start hour, end hour) per piece."""
    pieces = []
    start, end = start.astimezone(zone), end.astimezone(zone)
    cursor = start
    while cursor < end:
        midnight = datetime.combine(cursor.date() + timedelta(days=1), time(0), zone)
        stop = min(end, midnight.astimezone(zone))
        hours = (stop.astimezone(UTC) - cursor.astimezone(UTC)).total_seconds() / 3600.0
        a = clock_hours(cursor)
        pieces.append((cursor.date(), a, min(24.0, a + hours)))
        cursor = stop
    return pieces


def _row_dates(document: PlanDocument) -> list[date]:
    first, last = document.first_date(), document.last_date()
    if document.days:
        last = max(last, max(row.date for row in document.days))
    return [first + timedelta(days=k) for k in range((last - first).days + 1)]


def _row_zone(document: PlanDocument, day: date) -> tzinfo | None:
    for row in document.days:
        if row.date == day:
            return row.zone
    for event in document.events:
        if event.local_start().date() == day:
            return event.zone
    return None


def _marker(moment: datetime | None, zone: tzinfo) -> tuple[date, float] | None:
    if moment is None:
        return None
    at = moment.astimezone(zone)
    return at.date(), clock_hours(at)


def _draw_kss(axes, document: PlanDocument, index: dict) -> bool:
    """A thin band under each work bar coloured by the forecast KSS; whether any was drawn."""
    colors = plt.get_cmap(KSS_COLORMAP)
    low, high = KSS_RANGE
    drawn = False
    for event in document.events:
        for (t0, k0), (t1, _) in zip(event.kss, event.kss[1:]):
            colour = colors(min(max((k0 - low) / (high - low), 0.0), 1.0))
            for day, a, b in _pieces(t0, t1, event.zone):
                if day in index and b > a:
                    axes.barh(index[day] + KSS_BAND_OFFSET, b - a, left=a, height=KSS_BAND_HEIGHT, color=colour,
                              linewidth=0, zorder=4)
                    drawn = True
    return drawn


def phase_figure(document: PlanDocument):
    """The phase chart as a matplotlib Figure (see the module docstring)."""
    dates = _row_dates(document)
    index = {day: k for k, day in enumerate(dates)}
    height = CHART_EXTRA_IN + ROW_HEIGHT_IN * len(dates)
    figure, axes = plt.subplots(figsize=(CHART_WIDTH_IN, height))
    kinds_drawn = []
    for period in document.context:
        for day, a, b in _pieces(period.start, period.end, period.zone):
            if day in index and b > a:
                axes.barh(index[day], b - a, left=a, height=CONTEXT_STYLE["height"], color=CONTEXT_STYLE["color"],
                          edgecolor=CONTEXT_STYLE["edgecolor"], linewidth=0.9, linestyle="--", zorder=1)
    for event in document.events:
        style = STYLE[event.kind]
        for day, a, b in _pieces(event.start, event.end, event.zone):
            if day not in index or b <= a:
                continue
            y = index[day]
            axes.barh(y, b - a, left=a, height=style["height"], color=style["color"], edgecolor=style["edgecolor"],
                      hatch=style["hatch"], linewidth=0.6, zorder=2 if event.kind in ("sleep", "work") else 3)
        if event.kind not in kinds_drawn:
            kinds_drawn.append(event.kind)
    has_kss = _draw_kss(axes, document, index)
    has_band = False
    for row in document.days:
        if row.band is not None and row.date in index and all(math.isfinite(v) for v in row.band):
            low, median, high = row.band
            y = index[row.date]
            spans = [(low, high)] if low <= high else [(low, 24.0), (0.0, high)]
            for a, b in spans:
                axes.plot([a, b], [y, y], color=BAND_COLOR, linewidth=2.4, alpha=0.8, zorder=4,
                          solid_capstyle="butt")
            axes.plot([median], [y], marker="|", color="black", markersize=9, zorder=5)
            has_band = True
    for row in document.days:
        for moment, style in ((row.target, TARGET_STYLE), (row.cbtmin, CBTMIN_STYLE)):
            spot = _marker(moment, row.marker_zone)
            if spot is not None and spot[0] in index:
                axes.plot([spot[1]], [index[spot[0]]], linestyle="none", zorder=6, **style)
    labels = []
    for day in dates:
        zone = _row_zone(document, day)
        noon = datetime.combine(day, time(12), zone) if zone is not None else None
        labels.append(f"{day:%a %d %b}" + (f"  {zone_label(noon).split()[0]}" if noon is not None else ""))
    axes.set_yticks(range(len(dates)), labels, fontsize=7.5)
    axes.set_ylim(len(dates) - 0.5, -0.5)
    axes.set_xlim(0, 24)
    axes.set_xticks(range(0, 25, 3), [f"{h:02d}:00" for h in range(0, 25, 3)], fontsize=7.5)
    axes.set_xticks(range(0, 25), minor=True)
    axes.grid(axis="x", which="major", color="#bbbbbb", linewidth=0.6, zorder=0)
    axes.grid(axis="x", which="minor", color="#e4e4e4", linewidth=0.4, zorder=0)
    axes.set_axisbelow(True)
    axes.set_xlabel("local time where the person is", fontsize=8)
    handles = [Patch(facecolor=STYLE[k]["color"], edgecolor=STYLE[k]["edgecolor"], hatch=STYLE[k]["hatch"],
                     label=KIND_LABELS[k]) for k in STYLE if k in kinds_drawn]
    labels_seen = list(dict.fromkeys(period.label.split()[0] for period in document.context))
    handles += [Patch(facecolor=CONTEXT_STYLE["color"], edgecolor=CONTEXT_STYLE["edgecolor"], linestyle="--",
                      label=f"{label} (not in calendars)") for label in labels_seen]
    handles.append(Line2D([], [], linestyle="none", label="predicted CBTmin", **CBTMIN_STYLE))
    handles.append(Line2D([], [], linestyle="none", label="target CBTmin", **TARGET_STYLE))
    if has_band:
        handles.append(Line2D([], [], color=BAND_COLOR, linewidth=2.4, label="CBTmin 10th–90th percentile"))
    if has_kss:
        colors = plt.get_cmap(KSS_COLORMAP)
        handles.append(Patch(facecolor=colors(0.9), edgecolor=colors(0.1), linewidth=2,
                             label="KSS along shift (3 green … 9 red)"))
    axes.legend(handles=handles, loc="lower center", bbox_to_anchor=(0.5, 1.0), ncol=min(4, len(handles)),
                fontsize=7.5, frameon=False)
    for side in ("top", "right"):
        axes.spines[side].set_visible(False)
    figure.tight_layout()
    return figure


def chart_bytes(document: PlanDocument, fmt: str = "svg") -> bytes:
    """The phase chart as SVG or PNG bytes (reproducible: no date or random ids in the file)."""
    if fmt not in CHART_FORMATS:
        raise InputError(f"chart format {fmt!r} is not supported; allowed: {', '.join(CHART_FORMATS)}",
                         field="chart")
    figure = phase_figure(document)
    buffer = io.BytesIO()
    with matplotlib.rc_context({"svg.hashsalt": document.plan_id, "svg.fonttype": "path"}):
        figure.savefig(buffer, format=fmt, dpi=PNG_DPI,
                       metadata={"Date": None} if fmt == "svg" else {"Software": f"phaseplan {__version__}"})
    plt.close(figure)
    return buffer.getvalue()


def chart_format(path: str | os.PathLike) -> str:
    """The chart format from a file name's suffix (``.png`` or ``.svg``)."""
    suffix = Path(path).suffix.lower().lstrip(".")
    if suffix not in CHART_FORMATS:
        raise InputError(f"the chart file must end in .png or .svg, not {Path(path).suffix or '(none)'!r}",
                         source=str(path))
    return suffix


# --------------------------------------------------------------------------- page

#: Page sizes the print rules can ask for: (CSS size keyword, width [mm], height [mm]).
PAPERS = {"A4": ("A4", 210.0, 297.0), "letter": ("letter", 215.9, 279.4)}
#: Page margins [mm]: the content box (186 mm × 251 mm) fits inside both A4 and Letter.
MARGIN_TOP_MM, MARGIN_SIDE_MM = 14.0, 12.0
#: Tallest printed chart [mm]: a chart and its heading fit on one page under it.
CHART_MAX_HEIGHT_MM = 205.0
#: Days of actions listed on the first page.
FIRST_DAYS = 3


def check_paper(paper: str) -> str:
    """The paper name, checked (InputError listing the allowed names)."""
    if paper not in PAPERS:
        raise InputError(f"paper {paper!r} is not supported; allowed: {', '.join(PAPERS)}", field="paper")
    return paper


CSS = """
@page { size: %(size)s portrait; margin: %(top)smm %(side)smm; }
* { box-sizing: border-box; }
body { font-family: "DejaVu Sans", "Liberation Sans", Arial, sans-serif; font-size: 10pt; color: #1b1b1b;
       margin: 0 auto; padding: 12px 16px; max-width: 190mm; line-height: 1.35; background: #ffffff; }
h1 { font-size: 16pt; margin: 0 0 2px 0; }
h2 { font-size: 12pt; margin: 14px 0 6px 0; border-bottom: 2px solid #27344f; padding-bottom: 2px; }
h3 { font-size: 10.5pt; margin: 8px 0 4px 0; }
.generated { color: #555; font-size: 8.5pt; margin: 0 0 8px 0; }
dl.summary { display: grid; grid-template-columns: max-content 1fr; gap: 2px 12px; margin: 0; }
dl.summary dt { font-weight: bold; }
dl.summary dd { margin: 0; overflow-wrap: anywhere; }
.message { border-left: 4px solid #27344f; padding: 4px 8px; background: #f1f3f7; font-weight: bold; }
ul.first-days { margin: 4px 0; padding-left: 18px; }
ul.first-days li { margin-bottom: 2px; }
figure { margin: 6px 0; }
figure img { width: 100%%; height: auto; display: block; }
figcaption, caption { font-size: 8.5pt; color: #444; text-align: left; }
table { border-collapse: collapse; width: 100%%; font-size: 8pt; table-layout: fixed; }
th, td { border: 1px solid #b9b9b9; padding: 2px 3px; vertical-align: top; text-align: left;
         overflow-wrap: anywhere; }
th { background: #e9ecf2; }
tr.recommended td { font-weight: bold; background: #fbf3cf; }
td.num { text-align: right; }
span.clock { white-space: nowrap; }
.side-by-side { display: grid; grid-template-columns: repeat(auto-fit, minmax(55mm, 1fr)); gap: 8px; }
.side-by-side section h3 { font-size: 10pt; margin: 4px 0; }
ul.cautions li { margin-bottom: 4px; }
.source { color: #555; font-size: 8.5pt; }
footer { margin-top: 16px; font-size: 8pt; color: #555; }
@media print {
  body { padding: 0; max-width: none; font-size: 9.5pt; }
  h2, h3 { break-after: avoid; page-break-after: avoid; }
  .keep { break-inside: avoid; page-break-inside: avoid; }
  figure img { width: auto; max-width: 100%%; max-height: %(chart)smm; margin: 0 auto; }
  figure, tr, .side-by-side section { break-inside: avoid; page-break-inside: avoid; }
  section.crew { break-before: page; page-break-before: always; }
  thead { display: table-header-group; }
}
"""


def _e(text: object) -> str:
    return html.escape(str(text), quote=True)


def _events_of(document: PlanDocument, row: DayRow, kind: str) -> list[PlanEvent]:
    return [e for e in document.events if e.day == row.date and e.kind == kind]


def _event_cell(events: list[PlanEvent], row_zone: tzinfo) -> str:
    parts = []
    for event in events:
        detail = ""
        if event.kind in ("bright_light", "light_avoidance"):
            amount = (f"{event.lux:,.0f} lx {event.source}" if event.transmission is None
                      else event.source if event.source == "eye mask" else f"{event.transmission:.0%} glasses")
            detail = f" ({event.minutes:.0f} min, {amount})"
        elif event.kind == "work":
            detail = f" ({event.source})"
        elif event.kind == "sleep" and event.summary.startswith("Sleep "):   # "Sleep in flight", "Sleep on the layover"
            detail = f" ({event.summary.removeprefix('Sleep ')})"
        parts.append(f"<span class='clock'>{_e(event.clock_text(row_zone))}</span>{_e(detail)}")
    return "<br>".join(parts) or "—"


def _error_text(error_h: float) -> str:
    if not math.isfinite(error_h):
        return "—"
    if abs(error_h) < 0.05:
        return "on target"
    return f"{abs(error_h):.1f} h {'late' if error_h > 0 else 'early'}"


def _band_text(row: DayRow) -> str:
    if row.band is None:
        return "—"
    low, median, high = row.band

    def hhmm(hours: float) -> str:
        minutes = round(hours * 60.0) % (24 * 60)
        return f"{minutes // 60:02d}:{minutes % 60:02d}"
    return f"{hhmm(low)}–{hhmm(high)} (median {hhmm(median)})"


def _day_table(document: PlanDocument) -> str:
    """The day-by-day table; a clock, place or target place shared by every row is said once in the header."""
    kinds = [k for k in ("work", "sleep", "bright_light", "light_avoidance")
             if any(e.kind == k for e in document.events) or k != "work"]
    banded = any(row.band is not None for row in document.days)
    one_clock = len({row.zone_text for row in document.days}) == 1
    one_place = len({row.place for row in document.days}) == 1
    one_target = len({row.target_place for row in document.days}) == 1
    head = ["date"] + ([] if one_clock else ["clock"]) + ["day"] + [KIND_LABELS[k].lower() for k in kinds]
    head += ["CBTmin", "target CBTmin" + (f" (aim: {document.days[0].target_place})" if one_target and document.days
                                          else " (on this row's clock)"), "CBTmin vs target"]
    if banded:
        head.append("CBTmin spread (10th–90th)")
    caption = ""
    if document.days and (one_clock or one_place):
        where = [document.days[0].place] if one_place else []
        where += [f"clock {document.days[0].zone_text}"] if one_clock else []
        caption = f"<caption>{_e(', '.join(where))}</caption>"
    lines = [f"<table class='days'>{caption}<thead><tr>" + "".join(f"<th>{_e(h)}</th>" for h in head)
             + "</tr></thead><tbody>"]
    for row in document.days:
        cells = [f"<td>{_e(f'{row.date:%a %d %b}')}</td>"]
        cells += [] if one_clock else [f"<td>{_e(row.zone_text)}</td>"]
        cells += [f"<td>{_e(row.label)}" + ("" if one_place else f"<br><span class='source'>{_e(row.place)}</span>")
                  + "</td>"]
        cells += [f"<td>{_event_cell(_events_of(document, row, k), row.zone)}</td>" for k in kinds]
        cbtmin = clock_text(row.cbtmin, row.marker_zone, row.zone) if row.cbtmin is not None else "—"
        target = clock_text(row.target, row.marker_zone, row.zone) if row.target is not None else "—"
        cells += [f"<td class='nowrap'>{_e(cbtmin)}</td>",
                  f"<td class='nowrap'>{_e(target)}"
                  + ("" if one_target else f"<br><span class='source'>aim: {_e(row.target_place)}</span>") + "</td>",
                  f"<td class='nowrap'>{_e(_error_text(row.error_h))}</td>"]
        if banded:
            cells.append(f"<td class='nowrap'>{_e(_band_text(row))}</td>")
        lines.append("<tr>" + "".join(cells) + "</tr>")
    lines.append("</tbody></table>")
    return "\n".join(lines)


def _comparison_table(document: PlanDocument) -> str:
    if not document.comparison:
        return ""
    columns = list(document.comparison[0])
    lines = ["<table class='comparison'><thead><tr>" + "".join(f"<th>{_e(c)}</th>" for c in columns)
             + "</tr></thead><tbody>"]
    for k, row in enumerate(document.comparison):
        mark = k == document.recommended
        cells = "".join(f"<td>{_e(row.get(c, ''))}{' ✓ recommended' if mark and i == 0 else ''}</td>"
                        for i, c in enumerate(columns))
        attribute = " class='recommended'" if mark else ""
        lines.append(f"<tr{attribute}>{cells}</tr>")
    lines.append("</tbody></table>")
    return "\n".join(lines)


def _sections(document: PlanDocument) -> str:
    if not document.sections:
        return ""
    parts = ["<div class='side-by-side'>"]
    for section in document.sections:
        head = "".join(f"<th>{_e(c)}</th>" for c in section.columns)
        body = "".join("<tr>" + "".join(f"<td>{_e(cell)}</td>" for cell in row) + "</tr>" for row in section.rows)
        note = f"<p class='source'>{_e(section.note)}</p>" if section.note else ""
        parts.append(f"<section><h3>{_e(section.title)}</h3><table><thead><tr>{head}</tr></thead>"
                     f"<tbody>{body}</tbody></table>{note}</section>")
    parts.append("</div>")
    return "\n".join(parts)


def _first_days(document: PlanDocument) -> str:
    """The actions of the plan's first days (or each group's), in words, for the first page."""
    lines = []
    for group, part in _parts(document):
        dates = sorted({e.day for e in part.events})[:FIRST_DAYS]
        prefix = f"{group}: " if group is not None else ""
        for day in dates:
            todo = [f"{KIND_LABELS[e.kind].lower()} {e.clock_text()}"
                    + (f" ({e.source})" if e.kind in ("bright_light", "work") else "")
                    for e in part.events if e.day == day]
            lines.append(f"<li><strong>{_e(prefix)}{_e(f'{day:%a %d %b}')}</strong>: {_e('; '.join(todo))}</li>")
    return "<ul class='first-days'>" + "".join(lines) + "</ul>" if lines else ""


def _parts(document: PlanDocument) -> list[tuple[str | None, PlanDocument]]:
    """(group, document) per section of the report: one per crew when the crews have their own rows."""
    if document.group_days:
        return [(name, document.for_group(name)) for name in document.groups]
    return [(None, document)]


def _plan_section(part: PlanDocument, group: str | None, crews: int, index: int = 0) -> str:
    chart = base64.b64encode(chart_bytes(part, "png")).decode("ascii")
    whose = f"crew {group}" if group is not None else "the person"
    heading = f"Crew {group}: body clock and plan, day by day" if group is not None else "Body clock and plan, day by day"
    klass = "crew" if group is not None and crews > 1 else "plan"
    return (f"<section class='{klass}'><div class='keep'><h2>{_e(heading)}</h2><figure>"
            f"<img class='phase-chart' id='phase-chart{'' if index == 0 else f'-{index + 1}'}' alt='Chart: predicted CBTmin of {_e(whose)} per day against the target, with "
            f"sleep, bright-light and light-avoidance windows on the local clock' "
            f"src='data:image/png;base64,{chart}'>"
            "<figcaption>One row per local date; bars are the plan's windows on the local clock of where the person "
            "is (on a travel day both clocks appear). Diamond: predicted CBTmin (core body temperature minimum); "
            "circle: where it should be (target).</figcaption></figure></div>"
            f"<h3>{_e('Crew ' + group + ': ' if group is not None else '')}day-by-day plan</h3>"
            f"{_day_table(part)}</section>")


def report_html(document: PlanDocument, *, generated: datetime | None = None, group: str | None = None,
                paper: str = "A4") -> str:
    """The plan as one self-contained HTML page (see the module docstring).

    The first page holds the recommendation and the first days' actions; then one chart and day
    table for the person or, for a roster with crews, one section per crew (only ``group``'s when
    given), each crew's rows and events its own; then the comparison, cautions and citations.

    Parameters
    ----------
    document : PlanDocument
    generated : datetime, optional
        When the report was made (shown in its header); default now.
    group : str, optional
        The one crew (worker group) to show.
    paper : {"A4", "letter"}
        The page size of the print rules (the content fits both).

    Returns
    -------
    str
    """
    generated = (generated or datetime.now(UTC)).astimezone(UTC)
    size = PAPERS[check_paper(paper)][0]
    if group is not None:
        document = document.for_group(group)
    noun = "rotation" if document.kind == "roster" else "trip"
    summary = "".join(f"<dt>{_e(label)}</dt><dd>{_e(value)}</dd>" for label, value in document.summary)
    cautions = "".join(f"<li><strong>{_e(c.title)}.</strong> {_e(c.text)} "
                       f"<span class='source'>{_e(c.source_note)}</span></li>" for c in document.cautions)
    citations = "".join(f"<li>{_e(c)}</li>" for c in document.citations)
    sections = _sections(document)
    comparison = _comparison_table(document)
    parts = _parts(document)
    css = CSS % {"size": size, "top": f"{MARGIN_TOP_MM:g}", "side": f"{MARGIN_SIDE_MM:g}",
                 "chart": f"{CHART_MAX_HEIGHT_MM:g}"}
    first_days = _first_days(document)
    page = [
        "<!DOCTYPE html>",
        "<html lang='en'><head><meta charset='utf-8'>",
        "<meta name='viewport' content='width=device-width, initial-scale=1'>",
        f"<title>{_e(document.title)} — light and sleep plan</title>",
        f"<style>{css}</style></head><body>",
        f"<header><h1>{_e(document.title)}</h1>",
        f"<p class='generated'>Light and sleep plan for this {noun}, made by phaseplan {_e(__version__)} on "
        f"{generated:%Y-%m-%d %H:%M} UTC. A model prediction, not medical advice: read the cautions.</p></header>",
        f"<section id='recommendation'><h2>Recommendation</h2>"
        + (f"<p class='message'>{_e(document.message)}</p>" if document.message else "")
        + f"<dl class='summary'>{summary}</dl></section>",
        f"<section id='first-days'><h2>What to do first</h2>{first_days}</section>" if first_days else "",
    ]
    page += [_plan_section(part, name, len(parts), k) for k, (name, part) in enumerate(parts)]
    page += [
        f"<section><h2>Strategy comparison</h2>{comparison}</section>" if comparison else "",
        f"<section><h2>Drafts side by side</h2>{sections}</section>" if sections else "",
        f"<section><h2>Cautions</h2><ul class='cautions'>{cautions}</ul></section>",
        f"<section><h2>Citations</h2><ol>{citations}</ol></section>",
        f"<footer>Plan id {_e(document.plan_id)}. Times are local where the person is, from the plan's own "
        "time zones.</footer>",
        "</body></html>",
    ]
    return "\n".join(p for p in page if p) + "\n"
