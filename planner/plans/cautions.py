"""The cautions every plan carries, as data with their sources.

One place for the texts, so that the command line, calendar files and reports show
the same words.  Sources are those of the project's science reference (section 6).
"""

from __future__ import annotations

from dataclasses import dataclass


@dataclass(frozen=True)
class Caution:
    """One caution: a short title, the text, a one-line form and where it comes from.

    Attributes
    ----------
    key : str
        Stable identifier (``"bright_light"``...).
    title : str
    text : str
        The full caution.
    sources : tuple of str
        Where the text comes from (the project's science reference, section 6); empty for a plain
        statement of what the plan is and whom it defers to.
    short : str
        One line for places with little room (calendar event descriptions); it points to the
        full text.
    """

    key: str
    title: str
    text: str
    sources: tuple[str, ...]
    short: str

    @property
    def source_note(self) -> str:
        """The sources in brackets, e.g. ``"(Lee ML et al. 2016, ...)"``; empty without sources."""
        return f"({'; '.join(self.sources)})" if self.sources else ""

    def as_dict(self) -> dict:
        return {"key": self.key, "title": self.title, "text": self.text, "short": self.short,
                "sources": list(self.sources)}


CAUTIONS: dict[str, Caution] = {c.key: c for c in (
    Caution(
        "model",
        "Model predictions are for an average adult",
        "The parameter sets describe an average healthy adult; individuals differ in intrinsic period and "
        "light sensitivity, and the models have no sleep/wake (non-photic) drive. Treat days and times as "
        "estimates.",
        ("Forger, Jewett & Kronauer 1999, J Biol Rhythms 14:533 (model scope)",),
        "Times are model estimates for an average adult, not measurements of you.",
    ),
    Caution(
        "bright_light",
        "Bright light",
        "Use UV-filtered light boxes and do not stare at the lamp; a typical therapeutic dose is 10,000 lux at "
        "the eye for about 30 minutes. People with retinal disease, macular degeneration, porphyria, lupus or "
        "other photosensitive conditions, or who take photosensitising drugs, should see an eye or skin "
        "specialist first. Bright light can trigger hypomania or mania in bipolar disorder.",
        ("Terman M, Terman JS 2005, Light therapy for seasonal and nonseasonal depression: efficacy, protocol, "
         "safety, and side effects. CNS Spectrums 10(8)",),
        "UV-filtered light box, do not stare into it; with eye disease, photosensitivity or bipolar disorder "
        "ask a specialist first.",
    ),
    Caution(
        "daylight",
        "Daylight outdoors",
        "Daylight reaches the eye without looking at the sun: never look straight at it. Protect the skin as "
        "usual in strong sun. The plan asks for no sunglasses during these minutes; keep them on wherever glare "
        "makes it unsafe to see (driving, snow, water). The same eye and photosensitivity cautions as for a light "
        "box apply.",
        ("common practice, no single source",),
        "Do not look at the sun; keep sunglasses on wherever glare is unsafe (driving, snow, water).",
    ),
    Caution(
        "dark_glasses",
        "Dark glasses",
        "Wear the light-avoidance glasses only where it is safe to see less: never while driving or cycling "
        "at night or in dim light, and take them off on stairs and in traffic.",
        ("common practice, no single source",),
        "Never wear the dark glasses while driving or cycling at night or in dim light.",
    ),
    Caution(
        "eye_mask",
        "Eye mask on a flight",
        "Wear the eye mask only while seated (on a plane, or resting in a seat on a layover): take it off before "
        "standing up, walking about, on stairs and for the crew's safety instructions, and never wear it while "
        "driving.",
        ("common practice, no single source",),
        "Eye mask only while seated; take it off to stand up or walk about.",
    ),
    Caution(
        "sleep_loss",
        "Sleep loss",
        "Overnight flights, night shifts and moved bedtimes cost sleep. Do not drive when drowsy: in a "
        "driving study, near-crashes occurred in 37.5% of drives after a night shift and in none after a "
        "night's sleep. Plan another way home (or from the airport) after a short night.",
        ("Lee ML et al. 2016, High risk of near-crash driving events following night-shift work. PNAS "
         "113(1):176-181",),
        "Do not drive when drowsy; plan another way home after a short night.",
    ),
    Caution(
        "melatonin",
        "Melatonin",
        "Melatonin is not planned by phaseplan. It is regulated as a medicine in some countries and sold as a "
        "supplement in others, and product content varies widely from the label. Do not drive after a dose; "
        "discuss it with a clinician, especially with epilepsy or anticoagulants.",
        ("Erland LAE, Saxena PK 2017, Melatonin natural health products and supplements: presence of serotonin "
         "and significant variability of melatonin content. J Clin Sleep Med 13(2)",),
        "Melatonin is not part of this plan; discuss it with a clinician and never drive after a dose.",
    ),
    Caution(
        "night_shift_driving",
        "Driving after night shifts",
        "In a driving study, near-crashes occurred in 37.5% of drives after a night shift and in none after a "
        "night's sleep. Plan another way home after a night shift (public transport, a lift, a nap before "
        "driving).",
        ("Lee ML et al. 2016, High risk of near-crash driving events following night-shift work. PNAS "
         "113(1):176-181",),
        "After a night shift, plan another way home than driving yourself.",
    ),
    Caution(
        "sleepiness_forecast",
        "Sleepiness forecasts",
        "The sleepiness figures (KSS, hours at KSS 7 or more, sleepy drives home) come from the three-process "
        "model of alertness for an average worker with the planned sleep: a population model for comparing "
        "rosters, not a fitness-for-duty test. A worker who feels sleepy is sleepy whatever the forecast says. "
        "The employer's fatigue-risk management, working-time rules and local regulations come first.",
        ("Åkerstedt & Folkard 1997, Chronobiol Int 14:115",),
        "Sleepiness forecast for an average worker, not a fitness-for-duty test; fatigue rules come first.",
    ),
    Caution(
        "daylight_model",
        "Daylight is a model mean",
        "Daylight in the plan follows the sun's height and the chosen sky (IES daylight availability model); a "
        "real day can give half or twice as much, and much less under heavy cloud or in deep shade.",
        ("IES 1984, J Illum Eng Soc 13:381",),
        "Daylight levels are model means for the chosen sky; real days vary.",
    ),
    Caution(
        "clinician",
        "Every plan defers to a clinician",
        "This plan is a model prediction, not medical advice. It defers to a licensed clinician, to the "
        "employer's fatigue-risk rules and to local regulations.",
        (),
        "A model prediction, not medical advice; a clinician and the employer's fatigue rules come first.",
    ),
    Caution(
        "fatigue_rules",
        "Employer's fatigue rules and local regulations",
        "A rotation plan is a model prediction for planning, not a fitness-for-duty assessment. The employer's "
        "fatigue-risk management rules, working-time regulations and occupational-health advice come first; "
        "workers with sleep disorders or health conditions see a clinician.",
        (),
        "Fatigue-risk rules, working-time law and occupational-health advice come first.",
    ),
)}

#: The cautions a trip plan shows, in order.
TRIP_CAUTIONS: tuple[str, ...] = ("model", "bright_light", "daylight", "dark_glasses", "eye_mask", "sleep_loss",
                                  "melatonin", "daylight_model", "clinician")

#: The cautions a shift-rotation plan shows, in order.
SHIFT_CAUTIONS: tuple[str, ...] = ("model", "bright_light", "daylight", "dark_glasses", "sleep_loss",
                                   "night_shift_driving", "sleepiness_forecast", "daylight_model", "clinician",
                                   "fatigue_rules")

#: The caution a calendar event carries by default, by kind; bright light from daylight carries "daylight"
#: instead (:func:`event_caution`); a work event names its own (a night shift's driving caution).
EVENT_CAUTION: dict[str, str | None] = {"sleep": "sleep_loss", "bright_light": "bright_light",
                                        "light_avoidance": "dark_glasses", "work": "fatigue_rules"}


def event_caution(kind: str, source: str, chosen: str | None = None) -> Caution | None:
    """The caution that fits one calendar event: ``chosen`` when the planner named one, else by kind and
    light source (daylight is not a light box)."""
    if chosen is not None:
        return CAUTIONS[chosen]
    if kind == "bright_light" and "daylight" in source:
        return CAUTIONS["daylight"]
    key = EVENT_CAUTION.get(kind)
    return CAUTIONS[key] if key else None


def cautions_for(keys: tuple[str, ...] = TRIP_CAUTIONS) -> list[Caution]:
    """The cautions with these keys, in the order given."""
    return [CAUTIONS[key] for key in keys]
