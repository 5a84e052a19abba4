"""Daylight at the eye from the sun's elevation: the IES (1984) daylight availability model.

The sky gives a mean horizontal illuminance from the sun's beam and from the sky for three sky
types (IES 1984, "Recommended practice for the calculation of daylight availability", J Illum Eng
Soc 13(4):381-392; parameter data in ``models/daylight/ies1984.toml``):

- direct normal illuminance ``E_dn = E_xn exp(-c m)``, with the extraterrestrial illuminance
  ``E_xn = E_sc (1 + 0.034 cos(2π (J − 2) / 365))`` and the relative optical air mass ``m``;
- diffuse horizontal (sky) illuminance ``E_kh = A + B sin(h)^C`` [klux].

The air mass is that of Kasten & Young (1989, Appl Opt 28:4735), which stays finite down to the
horizon, so the beam fades smoothly at sunrise and sunset.

The eye looks roughly horizontally, so what reaches it is the illuminance on a *vertical* plane,
averaged over the directions a person faces while outdoors (a stated simplification of this
planner):

- beam: ``E_dn cos(h) / π`` — a vertical plane facing azimuth φ from the sun gets
  ``E_dn cos(h) max(cos φ, 0)``, whose mean over φ is ``E_dn cos(h) / π``;
- sky: ``E_kh / 2`` — a vertical plane sees half of an isotropic sky dome;
- ground: ``ρ (E_dn sin h + E_kh) / 2`` — half of the light reflected by the ground (albedo ρ).

How the person spends the time (``exposure``) removes or dims parts: ``open`` keeps everything,
``shade`` blocks the beam, ``window`` blocks the beam and passes the rest through glazing.

Below the horizon the IES formulas do not apply.  The level at a solar elevation of 0° is carried
down log-linearly to the illuminance at the end of civil twilight (sun 6° below the horizon) and
then linearly to zero at the end of nautical twilight (12° below), so the light is continuous
through sunrise and sunset and zero at night.

All illuminances are in lux; elevations in degrees; times are aware datetimes (UTC inside).
"""

from __future__ import annotations

import math
from dataclasses import dataclass
from datetime import date, datetime, time, timedelta, timezone
from functools import lru_cache
from typing import Literal, Sequence

import numpy as np

from planner.errors import InputError
from planner.shipped import read_shipped_toml
from planner.world.light import DEFAULT_EXPOSURE, DEFAULT_SKY, LightLayer, LightOptions, ambient, hours_between
from planner.world.localtime import zone
from planner.world.sun import _check_coordinate, _elevation_from_jd, _jd_of, solar_elevation_deg

UTC = timezone.utc
Sky = Literal["clear", "partly", "overcast"]
Exposure = Literal["open", "shade", "window"]
SKIES: tuple[Sky, ...] = ("clear", "partly", "overcast")
EXPOSURES: tuple[Exposure, ...] = ("open", "shade", "window")

#: Kasten & Young (1989), Appl Opt 28:4735, eq. 3: m = 1 / (sin h + a (h + b)^-c), h in degrees.
KASTEN_YOUNG_A = 0.50572
KASTEN_YOUNG_B_DEG = 6.07995
KASTEN_YOUNG_C = 1.6364
#: Ground reflectance (albedo) for the reflected part: 0.2 is the usual default for grass, soil and
#: pavement (Liu & Jordan 1963, Solar Energy 7:53; common practice in daylighting tools).
GROUND_REFLECTANCE = 0.2
#: Horizontal illuminance when the sun's centre is 6° below the horizon (end of civil twilight)
#: [lux]: about 3.4 lux (Explanatory Supplement to the Astronomical Almanac, Seidelmann 1992,
#: ch. 9; from memory).
CIVIL_TWILIGHT_LUX = 3.4
#: End of civil twilight: sun 6° below the horizon [deg] (definition; Explanatory Supplement).
CIVIL_TWILIGHT_DEG = -6.0
#: End of nautical twilight: sun 12° below the horizon [deg] (definition); the sun then gives
#: well under 0.1 lux, less than a full moon, and is counted as none.
NAUTICAL_TWILIGHT_DEG = -12.0
#: Visible transmittance of clear double glazing: about 0.78 (typical EN 410 values for two clear
#: 4-mm panes; from memory).
GLAZING_TRANSMITTANCE = 0.78
#: Share of the time a person sitting by a window faces out of it rather than into the dim room:
#: one half (this planner's assumption; it makes "window" a rough middle, not a measurement).
WINDOW_VIEW_FRACTION = 0.5
#: Daylight windows are laid out in pieces of this length [min], each at the mean of its ends
#: and middle (Simpson's rule): the sun's elevation changes by at most 2.5° in 10 min, so the
#: pieces follow the light closely while keeping the schedule small (a numerical choice).
PIECE_MINUTES = 10.0

#: How each exposure passes the beam, the sky and the ground light (fractions).
EXPOSURE_FACTORS = {
    "open": (1.0, 1.0, 1.0),
    "shade": (0.0, 1.0, 1.0),
    "window": (0.0, GLAZING_TRANSMITTANCE * WINDOW_VIEW_FRACTION, GLAZING_TRANSMITTANCE * WINDOW_VIEW_FRACTION),
}


@dataclass(frozen=True)
class SkyType:
    """One IES sky type: beam extinction per air mass and the diffuse fit A + B sin(h)^C [klux]."""

    name: str
    extinction: float
    diffuse_a_klux: float
    diffuse_b_klux: float
    diffuse_exponent: float


@dataclass(frozen=True)
class DaylightModel:
    """Parameters of the IES (1984) daylight availability model (``models/daylight/ies1984.toml``)."""

    id: str
    citation: str
    doi: str
    solar_illuminance_constant_lux: float
    eccentricity_amplitude: float
    perihelion_day: float
    skies: dict


@lru_cache(maxsize=4)
def load_daylight_model(name: str = "ies1984") -> DaylightModel:
    """Read a shipped daylight parameter file."""
    data = read_shipped_toml("models/daylight", name, "daylight model")
    skies = {key: SkyType(key, float(v["extinction"]), float(v["diffuse_a_klux"]), float(v["diffuse_b_klux"]),
                          float(v["diffuse_exponent"])) for key, v in data["sky"].items()}
    return DaylightModel(data["id"], data["citation"], data["doi"], float(data["solar_illuminance_constant_lux"]),
                         float(data["eccentricity_amplitude"]), float(data["perihelion_day"]), skies)


def check_sky(sky: str) -> Sky:
    if sky not in SKIES:
        raise InputError(f"unknown sky {sky!r}; allowed: {', '.join(SKIES)}", field="sky")
    return sky  # type: ignore[return-value]


def check_exposure(exposure: str) -> Exposure:
    if exposure not in EXPOSURES:
        raise InputError(f"unknown exposure {exposure!r}; allowed: {', '.join(EXPOSURES)}", field="exposure")
    return exposure  # type: ignore[return-value]


def air_mass(elevation_deg: float | np.ndarray) -> np.ndarray:
    """Relative optical air mass (Kasten & Young 1989, eq. 3) [1]; elevations below 0° count as 0°."""
    h = np.maximum(np.asarray(elevation_deg, dtype=float), 0.0)
    return 1.0 / (np.sin(np.radians(h)) + KASTEN_YOUNG_A * (h + KASTEN_YOUNG_B_DEG) ** -KASTEN_YOUNG_C)


def extraterrestrial_illuminance(day_of_year: float | np.ndarray, model: DaylightModel | None = None) -> np.ndarray:
    """Solar illuminance outside the atmosphere on a surface facing the sun [lux] (IES 1984)."""
    model = model or load_daylight_model()
    angle = 2.0 * math.pi * (np.asarray(day_of_year, dtype=float) - model.perihelion_day) / 365.0
    return model.solar_illuminance_constant_lux * (1.0 + model.eccentricity_amplitude * np.cos(angle))


@dataclass(frozen=True)
class SkyIlluminance:
    """Daylight components at a solar elevation [lux]."""

    direct_normal: np.ndarray
    direct_horizontal: np.ndarray
    diffuse_horizontal: np.ndarray

    @property
    def global_horizontal(self) -> np.ndarray:
        return self.direct_horizontal + self.diffuse_horizontal


def sky_illuminance(elevation_deg, sky: Sky = DEFAULT_SKY, day_of_year=80.0,
                    model: DaylightModel | None = None) -> SkyIlluminance:
    """IES (1984) beam and sky illuminance for the sun at ``elevation_deg`` (0 at and below 0°).

    Parameters
    ----------
    elevation_deg : float or ndarray
        Solar elevation [deg].
    sky : {"clear", "partly", "overcast"}
    day_of_year : float or ndarray
        Day of the year J for the orbit's eccentricity [d].

    Returns
    -------
    SkyIlluminance
        Direct normal ``E_dn`` (IES 1984 eq. for E_dn), direct horizontal ``E_dn sin h`` and diffuse
        horizontal ``A + B sin(h)^C`` [lux].
    """
    model = model or load_daylight_model()
    kind = model.skies[check_sky(sky)]
    h = np.asarray(elevation_deg, dtype=float)
    sin_h = np.sin(np.radians(np.maximum(h, 0.0)))
    with np.errstate(over="ignore", invalid="ignore"):
        beam = extraterrestrial_illuminance(day_of_year, model) * np.exp(-kind.extinction * air_mass(h))
    beam = np.where(np.isfinite(beam), beam, 0.0)
    diffuse = 1000.0 * (kind.diffuse_a_klux + kind.diffuse_b_klux * sin_h ** kind.diffuse_exponent)
    above = h >= 0.0
    return SkyIlluminance(np.where(above, beam, 0.0), np.where(above, beam * sin_h, 0.0),
                          np.where(above, diffuse, 0.0))


def _eye_above_horizon(h, sky, exposure, day_of_year, model):
    parts = sky_illuminance(np.maximum(h, 0.0), sky, day_of_year, model)
    beam_f, sky_f, ground_f = EXPOSURE_FACTORS[check_exposure(exposure)]
    cos_h = np.cos(np.radians(np.maximum(h, 0.0)))
    beam = parts.direct_normal * cos_h / math.pi
    ground = GROUND_REFLECTANCE * (parts.direct_horizontal + parts.diffuse_horizontal) / 2.0
    return beam_f * beam + sky_f * parts.diffuse_horizontal / 2.0 + ground_f * ground


def eye_illuminance(elevation_deg, sky: Sky = DEFAULT_SKY, exposure: Exposure = DEFAULT_EXPOSURE,
                    day_of_year=80.0, model: DaylightModel | None = None) -> np.ndarray:
    """Daylight at the eye [lux] for a solar elevation (module docstring), continuous at the horizon.

    Parameters
    ----------
    elevation_deg : float or ndarray
        Solar elevation [deg] (geometric, as :func:`planner.world.sun.solar_elevation_deg`).
    sky : {"clear", "partly", "overcast"}
    exposure : {"open", "shade", "window"}
    day_of_year : float or ndarray
        Day of the year [d] (orbit eccentricity).

    Returns
    -------
    ndarray
        Illuminance at the eye [lux]; 0 with the sun 12° or more below the horizon.
    """
    h = np.asarray(elevation_deg, dtype=float)
    at_horizon = _eye_above_horizon(np.zeros_like(h), sky, exposure, day_of_year, model)
    day = _eye_above_horizon(h, sky, exposure, day_of_year, model)
    # Twilight: log-linear from the horizon level to the civil-twilight level, scaled by the
    # exposure's share of the sky light (the sky is all there is after sunset).
    share = EXPOSURE_FACTORS[exposure][1]
    civil = CIVIL_TWILIGHT_LUX * share / 2.0 * (1.0 + GROUND_REFLECTANCE)
    fraction = np.clip(h / CIVIL_TWILIGHT_DEG, 0.0, 1.0)
    with np.errstate(divide="ignore"):
        twilight = np.exp(np.log(np.maximum(at_horizon, 1e-12)) * (1.0 - fraction) + math.log(civil) * fraction)
    deep = civil * np.clip((h - NAUTICAL_TWILIGHT_DEG) / (CIVIL_TWILIGHT_DEG - NAUTICAL_TWILIGHT_DEG), 0.0, 1.0)
    return np.where(h >= 0.0, day, np.where(h >= CIVIL_TWILIGHT_DEG, twilight, deep))


def _day_of_year(jd: np.ndarray) -> np.ndarray:
    # JD 2451544.5 is 2000-01-01 00:00 UTC; the fractional day of the year is close enough for the
    # eccentricity term (which changes by 0.06 % a day at most).
    return np.mod(jd - 2451544.5, 365.2425) + 1.0


def daylight_at(when_utc: datetime | Sequence[datetime], latitude_deg: float, longitude_deg: float,
                sky: Sky = DEFAULT_SKY, exposure: Exposure = DEFAULT_EXPOSURE) -> float | np.ndarray:
    """Daylight at the eye at instants and a place [lux] (NOAA sun elevation, then :func:`eye_illuminance`)."""
    elevation = np.asarray(solar_elevation_deg(when_utc, latitude_deg, longitude_deg), dtype=float)
    jd = _jd_array(when_utc)
    lux = eye_illuminance(elevation, check_sky(sky), check_exposure(exposure), _day_of_year(jd))
    return float(lux) if lux.ndim == 0 else lux


def _jd_array(when_utc) -> np.ndarray:
    if isinstance(when_utc, datetime):
        return np.asarray(_jd_of(when_utc.astimezone(UTC)))
    return np.array([_jd_of(m.astimezone(UTC)) for m in when_utc])


#: Mean daylight of each piece [lux] by (start, end, place and sky); cleared past _PIECE_MEANS_KEPT entries.
_PIECE_MEANS: dict = {}
_PIECE_MEANS_KEPT = 200_000


@lru_cache(maxsize=4096)
def _pieces(start: datetime, end: datetime, latitude: float, longitude: float, sky: Sky, exposure: Exposure,
            cap_lux: float | None) -> tuple[tuple[datetime, datetime, float], ...]:
    piece = timedelta(minutes=PIECE_MINUTES)
    # Pieces on a fixed UTC grid (multiples of PIECE_MINUTES since midnight), so that windows of
    # different plans share edges and the integrator's steps split as little as possible.
    midnight = datetime.combine(start.date(), time(0), UTC)
    first = midnight + piece * math.floor((start - midnight) / piece)
    bounds = [start]
    cursor = first + piece
    while cursor < end:
        bounds.append(cursor)
        cursor += piece
    bounds.append(end)
    # Each piece's mean is remembered: windows of many plans cover the same pieces of the grid.
    rest = (latitude, longitude, sky, exposure, cap_lux)
    keys = [(bounds[k], bounds[k + 1], rest) for k in range(len(bounds) - 1)]
    missing = [k for k, key in enumerate(keys) if key not in _PIECE_MEANS]
    if missing:
        if len(_PIECE_MEANS) + len(missing) > _PIECE_MEANS_KEPT:
            _PIECE_MEANS.clear()
            missing = list(range(len(keys)))
        # Simpson's rule over each piece, from its own start: ends and middle.
        length = np.array([hours_between(bounds[k], bounds[k + 1]) for k in missing])
        jd = np.array([_jd_of(bounds[k]) for k in missing])[:, None] + np.stack(
            [np.zeros_like(length), 0.5 * length, length], axis=1) / 24.0
        elevation = _elevation_from_jd(jd, latitude, longitude)
        lux = eye_illuminance(elevation, sky, exposure, _day_of_year(jd))
        mean = (lux[:, 0] + 4.0 * lux[:, 1] + lux[:, 2]) / 6.0
        if cap_lux is not None:
            mean = np.minimum(mean, cap_lux)
        for k, value in zip(missing, mean.tolist()):
            _PIECE_MEANS[keys[k]] = value
    mean = [_PIECE_MEANS[key] for key in keys]
    return tuple((bounds[k], bounds[k + 1], mean[k]) for k in range(len(mean)))


@lru_cache(maxsize=4096)
def _layers(start: datetime, end: datetime, latitude: float, longitude: float, sky: Sky, exposure: Exposure,
            cap_lux: float | None, source: str) -> tuple[LightLayer, ...]:
    # Layers are immutable: the search builds the same windows for many candidate plans.
    return tuple(ambient(a, b, lux, source) for a, b, lux in _pieces(start, end, latitude, longitude, sky, exposure,
                                                                      cap_lux))


def daylight_layers(start: datetime, end: datetime, latitude_deg: float, longitude_deg: float, *,
                    sky: Sky = DEFAULT_SKY, exposure: Exposure = DEFAULT_EXPOSURE, cap_lux: float | None = None,
                    source: str = "daylight") -> list[LightLayer]:
    """Outdoor daylight from ``start`` to ``end`` as ``set`` layers that follow the sun.

    The span is cut into pieces of :data:`PIECE_MINUTES` on a fixed UTC grid; each piece carries the
    mean daylight at the eye over it (Simpson's rule), capped at ``cap_lux`` when given [lux].
    """
    arguments = _piece_arguments(start, end, latitude_deg, longitude_deg, sky, exposure, cap_lux)
    return [] if arguments is None else list(_layers(*arguments, source))


def _piece_arguments(start: datetime, end: datetime, latitude_deg: float, longitude_deg: float, sky: Sky,
                     exposure: Exposure, cap_lux: float | None) -> tuple | None:
    """The checked arguments of :func:`_pieces` for a span and place; None for an empty span."""
    lat = _check_coordinate(latitude_deg, "latitude", 90.0, "latitude")
    lon = _check_coordinate(longitude_deg, "longitude", 180.0, "longitude")
    if cap_lux is not None and (not math.isfinite(cap_lux) or cap_lux < 0):
        raise InputError(f"the daylight cap must be a finite number >= 0 lux, got {cap_lux}", field="daylight_lux")
    start, end = start.astimezone(UTC), end.astimezone(UTC)
    if end <= start:
        return None
    return start, end, lat, lon, check_sky(sky), check_exposure(exposure), None if cap_lux is None else float(cap_lux)


def mean_daylight(start: datetime, end: datetime, latitude_deg: float, longitude_deg: float, *,
                  sky: Sky = DEFAULT_SKY, exposure: Exposure = DEFAULT_EXPOSURE,
                  cap_lux: float | None = None) -> float:
    """Time-weighted mean daylight at the eye over [start, end] [lux]."""
    return _mean_daylight(start, end, latitude_deg, longitude_deg, sky, exposure, cap_lux)


@lru_cache(maxsize=16384)
def _mean_daylight(start: datetime, end: datetime, latitude_deg: float, longitude_deg: float, sky: Sky,
                   exposure: Exposure, cap_lux: float | None) -> float:
    # remembered: the trip search asks for the same windows of many candidate plans
    arguments = _piece_arguments(start, end, latitude_deg, longitude_deg, sky, exposure, cap_lux)
    if arguments is None:
        return 0.0
    pieces = _pieces(*arguments)   # those of daylight_layers, without making layers of them
    total = sum(hours_between(a, b) for a, b, _ in pieces)
    if total <= 0:
        return 0.0
    return sum(lux * hours_between(a, b) for a, b, lux in pieces) / total


@dataclass(frozen=True)
class DayProfile:
    """Solar elevation and daylight at the eye through one local day.

    Attributes
    ----------
    times : list of datetime
        Local instants (aware).
    elevation_deg : ndarray
        Geometric solar elevation [deg].
    lux : dict of str to ndarray
        Daylight at the eye per sky type, with ``exposure`` [lux].
    """

    day: date
    latitude: float
    longitude: float
    exposure: str
    times: list
    elevation_deg: np.ndarray
    lux: dict


def day_profile(day: date, latitude_deg: float, longitude_deg: float, tz, *, step_minutes: float = 30.0,
                skies: Sequence[str] = SKIES, exposure: Exposure = DEFAULT_EXPOSURE) -> DayProfile:
    """Solar elevation and daylight at the eye every ``step_minutes`` of a local day."""
    tzinfo = zone(tz) if isinstance(tz, str) else tz
    if not (0 < step_minutes <= 240):
        raise InputError(f"step must lie in (0, 240] minutes, got {step_minutes}", field="step")
    start = datetime.combine(day, time(0), tzinfo).astimezone(UTC)
    end = datetime.combine(day + timedelta(days=1), time(0), tzinfo).astimezone(UTC)
    count = int(round(hours_between(start, end) * 60.0 / step_minutes))
    times = [(start + timedelta(minutes=step_minutes * k)).astimezone(tzinfo) for k in range(count)]
    elevation = np.asarray(solar_elevation_deg(times, latitude_deg, longitude_deg), dtype=float)
    doy = _day_of_year(_jd_array(times))
    lux = {sky: eye_illuminance(elevation, check_sky(sky), check_exposure(exposure), doy) for sky in skies}
    return DayProfile(day, float(latitude_deg), float(longitude_deg), exposure, times, elevation, lux)


#: Hour angle of the sun per hour of time [deg/h] (360° in a 24-h solar day).
DEGREES_PER_HOUR = 15.0


def noon_daylight(latitude_deg: float, hours: float = 1.0, *, sky: Sky = DEFAULT_SKY,
                  exposure: Exposure = DEFAULT_EXPOSURE, cap_lux: float | None = None) -> float:
    """Mean daylight at the eye over ``hours`` centred on solar noon at an equinox [lux].

    The habitual day a person is entrained to (:func:`planner.engine.entrainment.place_pattern`) has no date, so its
    midday daylight is that of the equinox sun (declination 0: sin h = cos φ cos H, Meeus eq. 13.6),
    a season-neutral stand-in; Simpson's rule over the hour angles.
    """
    _check_coordinate(latitude_deg, "latitude", 90.0, "latitude")
    half = DEGREES_PER_HOUR * hours / 2.0
    angles = np.radians(np.array([-half, -half / 2, 0.0, half / 2, half]))
    elevation = np.degrees(np.arcsin(np.cos(np.radians(latitude_deg)) * np.cos(angles)))
    lux = eye_illuminance(elevation, check_sky(sky), check_exposure(exposure), 80.0)
    mean = float((lux[0] + 4 * lux[1] + 2 * lux[2] + 4 * lux[3] + lux[4]) / 12.0)
    return mean if cap_lux is None else min(mean, float(cap_lux))


def daylight_for(light: LightOptions, place, start: datetime, end: datetime, source: str = "daylight") -> list[LightLayer]:
    """Daylight at ``place`` from ``start`` to ``end`` with ``light``'s sky, exposure and cap, as layers."""
    return daylight_layers(start, end, place.latitude, place.longitude, sky=light.sky,
                           exposure=light.daylight_exposure, cap_lux=light.daylight_lux, source=source)


def mean_daylight_for(light: LightOptions, place, start: datetime, end: datetime) -> float:
    """Mean daylight at the eye at ``place`` over [start, end] with ``light``'s settings [lux]."""
    return mean_daylight(start, end, place.latitude, place.longitude, sky=light.sky,
                         exposure=light.daylight_exposure, cap_lux=light.daylight_lux)
