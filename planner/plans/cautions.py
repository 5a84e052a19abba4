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
        Where the text comes from (the project's science reference, section 6).
    short : str
        One line for places with little room (calendar event descriptions); it points to the
        full text.
    """

    key: str
    title: str
    text: str
    sources: tuple[str, ...]
    short: str

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
        ("Terman & Terman 2005, CNS Spectrums", "consensus cautionary notes of light-therapy clinicians"),
        "UV-filtered light box, do not stare into it; with eye disease, photosensitivity or bipolar disorder "
        "ask a specialist first.",
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
        "sleep_loss",
        "Sleep loss",
        "Overnight flights, night shifts and moved bedtimes cost sleep. Do not drive when drowsy: in a "
        "driving study, near-crashes occurred in 37.5% of drives after a night shift and in none after a "
        "night's sleep. Plan another way home (or from the airport) after a short night.",
        ("Lee et al. 2016, PNAS 113:176",),
        "Do not drive when drowsy; plan another way home after a short night.",
    ),
    Caution(
        "melatonin",
        "Melatonin",
        "Melatonin is not planned by phaseplan. It is regulated as a medicine in some countries and sold as a "
        "supplement in others, and product content varies widely from the label. Do not drive after a dose; "
        "discuss it with a clinician, especially with epilepsy or anticoagulants.",
        ("Erland & Saxena 2017, J Clin Sleep Med",),
        "Melatonin is not part of this plan; discuss it with a clinician and never drive after a dose.",
    ),
    Caution(
        "night_shift_driving",
        "Driving after night shifts",
        "In a driving study, near-crashes occurred in 37.5% of drives after a night shift and in none after a "
        "night's sleep. Plan another way home after a night shift (public transport, a lift, a nap before "
        "driving).",
        ("Lee et al. 2016, PNAS 113:176",),
        "After a night shift, plan another way home than driving yourself.",
    ),
    Caution(
        "clinician",
        "Every plan defers to a clinician",
        "This plan is a model prediction, not medical advice. It defers to a licensed clinician, to the "
        "employer's fatigue-risk rules and to local regulations.",
        ("project policy",),
        "A model prediction, not medical advice; a clinician and the employer's fatigue rules come first.",
    ),
    Caution(
        "fatigue_rules",
        "Employer's fatigue rules and local regulations",
        "A rotation plan is a model prediction for planning, not a fitness-for-duty assessment. The employer's "
        "fatigue-risk management rules, working-time regulations and occupational-health advice come first; "
        "workers with sleep disorders or health conditions see a clinician.",
        ("project policy",),
        "Fatigue-risk rules, working-time law and occupational-health advice come first.",
    ),
)}

#: The cautions a trip plan shows, in order.
TRIP_CAUTIONS: tuple[str, ...] = ("model", "bright_light", "dark_glasses", "sleep_loss", "melatonin", "clinician")

#: The cautions a shift-rotation plan shows, in order.
SHIFT_CAUTIONS: tuple[str, ...] = ("model", "bright_light", "dark_glasses", "sleep_loss", "night_shift_driving",
                                   "clinician", "fatigue_rules")

#: The caution a calendar event of each kind carries as its one-line warning.
EVENT_CAUTION: dict[str, str] = {"sleep": "sleep_loss", "bright_light": "bright_light",
                                 "light_avoidance": "dark_glasses", "work": "night_shift_driving"}


def cautions_for(keys: tuple[str, ...] = TRIP_CAUTIONS) -> list[Caution]:
    """The cautions with these keys, in the order given."""
    return [CAUTIONS[key] for key in keys]
