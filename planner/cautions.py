"""The cautions every plan carries, as data with their sources.

One place for the texts, so that the command line, calendar files and reports show
the same words.  Sources are those of the project's science reference (section 6).
"""

from __future__ import annotations

from dataclasses import dataclass


@dataclass(frozen=True)
class Caution:
    """One caution: a short title, the text and where it comes from."""

    key: str
    title: str
    text: str
    sources: tuple[str, ...]

    def as_dict(self) -> dict:
        return {"key": self.key, "title": self.title, "text": self.text, "sources": list(self.sources)}


CAUTIONS: dict[str, Caution] = {c.key: c for c in (
    Caution(
        "model",
        "Model predictions are for an average adult",
        "The parameter sets describe an average healthy adult; individuals differ in intrinsic period and "
        "light sensitivity, and the models have no sleep/wake (non-photic) drive. Treat days and times as "
        "estimates.",
        ("Forger, Jewett & Kronauer 1999, J Biol Rhythms 14:533 (model scope)",),
    ),
    Caution(
        "bright_light",
        "Bright light",
        "Use UV-filtered light boxes and do not stare at the lamp; a typical therapeutic dose is 10,000 lux at "
        "the eye for about 30 minutes. People with retinal disease, macular degeneration, porphyria, lupus or "
        "other photosensitive conditions, or who take photosensitising drugs, should see an eye or skin "
        "specialist first. Bright light can trigger hypomania or mania in bipolar disorder.",
        ("Terman & Terman 2005, CNS Spectrums", "consensus cautionary notes of light-therapy clinicians"),
    ),
    Caution(
        "dark_glasses",
        "Dark glasses",
        "Wear the light-avoidance glasses only where it is safe to see less: never while driving or cycling "
        "at night or in dim light, and take them off on stairs and in traffic.",
        ("common practice, no single source",),
    ),
    Caution(
        "sleep_loss",
        "Sleep loss",
        "Overnight flights and moved bedtimes cost sleep. Do not drive when drowsy: in a driving study, "
        "near-crashes occurred in 37.5% of drives after a night shift and in none after a night's sleep. "
        "Plan another way from the airport after a short night.",
        ("Lee et al. 2016, PNAS 113:176",),
    ),
    Caution(
        "melatonin",
        "Melatonin",
        "Melatonin is not planned by phaseplan. It is regulated as a medicine in some countries and sold as a "
        "supplement in others, and product content varies widely from the label. Do not drive after a dose; "
        "discuss it with a clinician, especially with epilepsy or anticoagulants.",
        ("Erland & Saxena 2017, J Clin Sleep Med",),
    ),
    Caution(
        "clinician",
        "Every plan defers to a clinician",
        "This plan is a model prediction, not medical advice. It defers to a licensed clinician, to the "
        "employer's fatigue-risk rules and to local regulations.",
        ("project policy",),
    ),
)}

#: The cautions a trip plan shows, in order.
TRIP_CAUTIONS: tuple[str, ...] = ("model", "bright_light", "dark_glasses", "sleep_loss", "melatonin", "clinician")


def cautions_for(keys: tuple[str, ...] = TRIP_CAUTIONS) -> list[Caution]:
    """The cautions with these keys, in the order given."""
    return [CAUTIONS[key] for key in keys]
