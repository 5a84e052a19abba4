"""Sun position, sunrise and sunset: the NOAA solar calculator (after Meeus).

The position of the sun follows the NOAA Global Monitoring Laboratory solar
calculator, which implements the low-accuracy solar coordinates of Meeus,
*Astronomical Algorithms* (2nd ed., 1998, ch. 25), the mean obliquity of
ch. 22 and Smart's series for the equation of time of ch. 28.  It is good to
about 0.01° in declination and a few seconds in the equation of time for
dates within a few centuries of 2000.

Sunrise and sunset are the instants at which the centre of the sun passes a
zenith distance of 90.833° (standard refraction at the horizon plus the
sun's semi-diameter) for an observer at sea level with a flat horizon.  The
NOAA calculator evaluates the sun's position once per day; here the position
is re-evaluated at each estimated event time until the estimate settles on
the instant the model sun crosses that zenith distance (the first refinement
brings it within a second).  The model itself is good to about a minute for
latitudes within ±72° (NOAA).

Times in are aware datetimes (any zone, converted to UTC); the Julian day is
taken from UTC, as the NOAA calculator does.  Meeus's formulas are written in
dynamical time (TD), which ran about a minute ahead of UTC around 2000; the
difference moves the sun by less than 0.001° and is ignored.
"""

from __future__ import annotations

import math
import numbers
from dataclasses import dataclass
from datetime import date, datetime, time, timedelta, timezone, tzinfo
from typing import Literal, Sequence

import numpy as np
from scipy.optimize import brentq

from planner.errors import InputError
from planner.world.localtime import zone

UTC = timezone.utc
SECONDS_PER_DAY = 86_400.0
MINUTES_PER_DAY = 1440.0
SECONDS_PER_HOUR = 3600.0

#: Julian day of the epoch J2000.0, 2000 January 1, 12h [d]: Meeus, Astronomical Algorithms, ch. 7 and 22.
J2000_JD = 2_451_545.0
J2000 = datetime(2000, 1, 1, 12, tzinfo=UTC)
#: Days in a Julian century [d]: Meeus, Astronomical Algorithms, ch. 22 (T = (JD − 2451545.0) / 36525).
DAYS_PER_JULIAN_CENTURY = 36_525.0
#: Zenith distance of the sun's centre at sunrise and sunset [deg]: NOAA solar calculator; Meeus ch. 15
#: gives the same altitude h0 = −0°50' (34' refraction at the horizon + 16' semi-diameter).
SUNRISE_ZENITH_DEG = 90.833
#: Minutes of time per degree of hour angle [min/deg]: the sun's hour angle runs 360° in a 1440-min solar day.
MINUTES_PER_DEGREE = MINUTES_PER_DAY / 360.0
#: Most iterations of the event-time refinement; after the first the estimate moves by under a second.
MAX_ITERATIONS = 5
#: The event-time refinement stops when the estimate moves less than this [d] (about 0.01 s).
CONVERGENCE_DAYS = 1e-7

SunState = Literal["normal", "polar_day", "polar_night"]


# --------------------------------------------------------------------------- time scales

def _require_aware(moment, field: str) -> datetime:
    if not isinstance(moment, datetime):
        raise InputError(f"expected a datetime, got {type(moment).__name__}", field=field)
    if moment.tzinfo is None or moment.utcoffset() is None:
        raise InputError("the time carries no time zone (a floating local time is ambiguous); "
                         "give an aware datetime, e.g. with planner.world.localtime.resolve_local()", field=field)
    return moment.astimezone(UTC)


def _jd_of(moment_utc: datetime) -> float:
    return J2000_JD + (moment_utc - J2000).total_seconds() / SECONDS_PER_DAY


def _datetime_of_jd(jd: float) -> datetime:
    return J2000 + timedelta(days=float(jd) - J2000_JD)


def _as_jd_array(when_utc, field: str) -> tuple[np.ndarray, bool]:
    """Julian days of one aware datetime or a sequence of them; also whether the input was scalar."""
    if isinstance(when_utc, datetime):
        return np.asarray(_jd_of(_require_aware(when_utc, field))), True
    if isinstance(when_utc, (str, bytes)) or not hasattr(when_utc, "__iter__"):
        raise InputError(f"expected an aware datetime or a sequence of them, got {type(when_utc).__name__}",
                         field=field)
    items = list(np.asarray(when_utc, dtype=object).ravel()) if isinstance(when_utc, np.ndarray) else list(when_utc)
    shape = np.shape(when_utc) if isinstance(when_utc, np.ndarray) else (len(items),)
    jd = np.array([_jd_of(_require_aware(m, f"{field}[{i}]")) for i, m in enumerate(items)], dtype=float)
    return jd.reshape(shape), False


def julian_day(when_utc: datetime | Sequence[datetime]) -> float | np.ndarray:
    """Julian day of an instant, counted in UTC [d].

    Parameters
    ----------
    when_utc : datetime or sequence of datetime
        Aware datetimes (any zone).  Dates are proleptic Gregorian, so Julian
        days before the Gregorian reform of 1582 differ from Meeus's, which
        uses the Julian calendar there.

    Returns
    -------
    float or ndarray
        Julian day [d]; JD 2451545.0 is 2000-01-01 12:00 (Meeus ch. 7).
    """
    jd, scalar = _as_jd_array(when_utc, "when_utc")
    return float(jd) if scalar else jd


def julian_century(jd: float | np.ndarray) -> float | np.ndarray:
    """Julian centuries since J2000.0 [cy]: T = (JD − 2451545.0) / 36525 (Meeus ch. 22)."""
    return (np.asarray(jd, dtype=float) - J2000_JD) / DAYS_PER_JULIAN_CENTURY


# --------------------------------------------------------------------------- sun position

@dataclass(frozen=True)
class SolarPosition:
    """Apparent geocentric position of the sun (NOAA solar calculator / Meeus ch. 25).

    Attributes
    ----------
    julian_day : float or ndarray
        Julian day of the instant, from UTC [d].
    geometric_mean_longitude_deg : float or ndarray
        Geometric mean longitude L0 referred to the mean equinox of the date, in [0, 360) [deg].
    geometric_mean_anomaly_deg : float or ndarray
        Mean anomaly M [deg].
    eccentricity : float or ndarray
        Eccentricity of the earth's orbit e [1].
    equation_of_center_deg : float or ndarray
        Equation of the centre C [deg].
    true_longitude_deg : float or ndarray
        True longitude L0 + C [deg].
    apparent_longitude_deg : float or ndarray
        Apparent longitude λ (nutation and aberration applied) [deg].
    mean_obliquity_deg : float or ndarray
        Mean obliquity of the ecliptic ε0 [deg].
    obliquity_deg : float or ndarray
        Obliquity corrected for nutation ε [deg].
    right_ascension_deg : float or ndarray
        Apparent right ascension α, in [0, 360) [deg].
    declination_deg : float or ndarray
        Apparent declination δ [deg].
    equation_of_time_min : float or ndarray
        Equation of time, apparent minus mean solar time [min].
    """

    julian_day: float | np.ndarray
    geometric_mean_longitude_deg: float | np.ndarray
    geometric_mean_anomaly_deg: float | np.ndarray
    eccentricity: float | np.ndarray
    equation_of_center_deg: float | np.ndarray
    true_longitude_deg: float | np.ndarray
    apparent_longitude_deg: float | np.ndarray
    mean_obliquity_deg: float | np.ndarray
    obliquity_deg: float | np.ndarray
    right_ascension_deg: float | np.ndarray
    declination_deg: float | np.ndarray
    equation_of_time_min: float | np.ndarray


def _position_from_jd(jd: np.ndarray) -> dict[str, np.ndarray]:
    """The NOAA solar calculator's chain of quantities at Julian days ``jd``; vectorised."""
    jd = np.asarray(jd, dtype=float)
    t = (jd - J2000_JD) / DAYS_PER_JULIAN_CENTURY
    # Geometric mean longitude L0 [deg]: Meeus eq. 25.2 (NOAA solar calculator, column I).
    l0 = np.mod(280.46646 + t * (36000.76983 + t * 0.0003032), 360.0)
    # Mean anomaly M [deg]: Meeus eq. 25.3 (NOAA column J).
    m = 357.52911 + t * (35999.05029 - 0.0001537 * t)
    # Eccentricity of the earth's orbit e: Meeus eq. 25.4 (NOAA column K).
    e = 0.016708634 - t * (0.000042037 + 0.0000001267 * t)
    m_rad = np.radians(m)
    # Equation of the centre C [deg]: Meeus ch. 25, after eq. 25.4 (NOAA column L).
    c = (np.sin(m_rad) * (1.914602 - t * (0.004817 + 0.000014 * t))
         + np.sin(2.0 * m_rad) * (0.019993 - 0.000101 * t)
         + np.sin(3.0 * m_rad) * 0.000289)
    true_long = l0 + c
    # Longitude of the moon's ascending node Ω [deg], low accuracy: Meeus ch. 25 (NOAA columns P and R).
    omega_rad = np.radians(125.04 - 1934.136 * t)
    # Apparent longitude λ = ☉ − 0.00569 − 0.00478 sin Ω [deg]: Meeus ch. 25 (NOAA column P).
    apparent_long = true_long - 0.00569 - 0.00478 * np.sin(omega_rad)
    # Mean obliquity ε0 = 23°26'21.448" − 46.8150" T − 0.00059" T² + 0.001813" T³: Meeus eq. 22.2 (NOAA column Q).
    mean_obliq = 23.0 + (26.0 + (21.448 - t * (46.815 + t * (0.00059 - t * 0.001813))) / 60.0) / 60.0
    # Obliquity for the apparent position ε = ε0 + 0.00256 cos Ω [deg]: Meeus eq. 25.8 (NOAA column R).
    obliq = mean_obliq + 0.00256 * np.cos(omega_rad)
    obliq_rad = np.radians(obliq)
    lam_rad = np.radians(apparent_long)
    # Right ascension and declination: Meeus eqs. 25.6 and 25.7 with λ and ε (NOAA columns S and T).
    ra = np.mod(np.degrees(np.arctan2(np.cos(obliq_rad) * np.sin(lam_rad), np.cos(lam_rad))), 360.0)
    dec = np.degrees(np.arcsin(np.sin(obliq_rad) * np.sin(lam_rad)))
    # Equation of time, Smart's series: Meeus eq. 28.3 with y = tan²(ε/2) (NOAA columns U and V);
    # 4 min of time per degree.
    y = np.tan(obliq_rad / 2.0) ** 2
    l0_rad = np.radians(l0)
    eot_rad = (y * np.sin(2.0 * l0_rad) - 2.0 * e * np.sin(m_rad)
               + 4.0 * e * y * np.sin(m_rad) * np.cos(2.0 * l0_rad)
               - 0.5 * y * y * np.sin(4.0 * l0_rad) - 1.25 * e * e * np.sin(2.0 * m_rad))
    eot = MINUTES_PER_DEGREE * np.degrees(eot_rad)
    return {
        "julian_day": jd, "geometric_mean_longitude_deg": l0, "geometric_mean_anomaly_deg": m,
        "eccentricity": e, "equation_of_center_deg": c, "true_longitude_deg": true_long,
        "apparent_longitude_deg": apparent_long, "mean_obliquity_deg": mean_obliq, "obliquity_deg": obliq,
        "right_ascension_deg": ra, "declination_deg": dec, "equation_of_time_min": eot,
    }


def _scalar_or_array(values: np.ndarray, scalar: bool):
    return float(values) if scalar else values


def solar_position(when_utc: datetime | Sequence[datetime]) -> SolarPosition:
    """Apparent position of the sun at one or more instants (NOAA solar calculator).

    Parameters
    ----------
    when_utc : datetime or sequence of datetime
        Aware datetimes (any zone).

    Returns
    -------
    SolarPosition
        Floats for one datetime, arrays shaped like the input for a sequence.
    """
    jd, scalar = _as_jd_array(when_utc, "when_utc")
    parts = _position_from_jd(jd)
    return SolarPosition(**{k: _scalar_or_array(v, scalar) for k, v in parts.items()})


def solar_declination_deg(when_utc: datetime | Sequence[datetime]) -> float | np.ndarray:
    """Apparent declination of the sun δ [deg] (NOAA solar calculator, Meeus eq. 25.7)."""
    jd, scalar = _as_jd_array(when_utc, "when_utc")
    return _scalar_or_array(_position_from_jd(jd)["declination_deg"], scalar)


def solar_right_ascension_deg(when_utc: datetime | Sequence[datetime]) -> float | np.ndarray:
    """Apparent right ascension of the sun α in [0, 360) [deg] (NOAA solar calculator, Meeus eq. 25.6)."""
    jd, scalar = _as_jd_array(when_utc, "when_utc")
    return _scalar_or_array(_position_from_jd(jd)["right_ascension_deg"], scalar)


def equation_of_time_min(when_utc: datetime | Sequence[datetime]) -> float | np.ndarray:
    """Equation of time, apparent minus mean solar time [min] (Smart's series, Meeus eq. 28.3).

    Positive when the sundial is ahead of the clock (early November, about +16 min).
    """
    jd, scalar = _as_jd_array(when_utc, "when_utc")
    return _scalar_or_array(_position_from_jd(jd)["equation_of_time_min"], scalar)


def _cos_hour_angle(latitude_deg, declination_deg, zenith_deg):
    lat = np.radians(latitude_deg)
    dec = np.radians(declination_deg)
    # cos H0 = (cos z − sin φ sin δ) / (cos φ cos δ): Meeus eq. 15.1 with h0 = 90° − z; equal to the NOAA
    # form cos z / (cos φ cos δ) − tan φ tan δ but finite at the poles (cos φ is never exactly 0 in floats).
    with np.errstate(divide="ignore", invalid="ignore"):
        return ((np.cos(np.radians(zenith_deg)) - np.sin(lat) * np.sin(dec)) / (np.cos(lat) * np.cos(dec)))


def sunrise_hour_angle_deg(latitude_deg: float | np.ndarray, declination_deg: float | np.ndarray,
                           zenith_deg: float = SUNRISE_ZENITH_DEG) -> float | np.ndarray:
    """Hour angle of sunrise H0 [deg]: the sun is up for hour angles in (−H0, H0).

    Parameters
    ----------
    latitude_deg : float or ndarray
        Geographic latitude, north positive [deg].
    declination_deg : float or ndarray
        Declination of the sun [deg].
    zenith_deg : float
        Zenith distance of the sun's centre at the event [deg]; 90.833 for sunrise.

    Returns
    -------
    float or ndarray
        H0 in [0, 180] [deg]; NaN where the sun stays above (polar day) or below
        (polar night) that zenith distance all day.
    """
    ratio = _cos_hour_angle(latitude_deg, declination_deg, zenith_deg)
    with np.errstate(invalid="ignore"):
        h0 = np.where(np.abs(ratio) <= 1.0, np.degrees(np.arccos(np.clip(ratio, -1.0, 1.0))), np.nan)
    return float(h0) if np.ndim(h0) == 0 else h0


def _elevation_from_jd(jd, latitude_deg: float, longitude_deg: float) -> np.ndarray:
    """Geometric altitude of the sun's centre [deg] at Julian days ``jd``; vectorised."""
    jd = np.asarray(jd, dtype=float)
    pos = _position_from_jd(jd)
    # Hour angle H = true solar time / 4 − 180°, true solar time = UTC minutes of the day + E + 4λ
    # (NOAA solar calculator, columns AB and AC); the UTC day starts at JD n.5.
    hour_angle = 360.0 * np.mod(jd - 0.5, 1.0) + pos["equation_of_time_min"] / MINUTES_PER_DEGREE \
        + longitude_deg - 180.0
    lat = np.radians(latitude_deg)
    dec = np.radians(pos["declination_deg"])
    # sin h = sin φ sin δ + cos φ cos δ cos H: Meeus eq. 13.6.
    sin_h = np.sin(lat) * np.sin(dec) + np.cos(lat) * np.cos(dec) * np.cos(np.radians(hour_angle))
    return np.degrees(np.arcsin(np.clip(sin_h, -1.0, 1.0)))


def solar_elevation_deg(when_utc: datetime | Sequence[datetime], latitude_deg: float,
                        longitude_deg: float) -> float | np.ndarray:
    """Geometric elevation of the sun's centre above the horizon [deg], without refraction.

    Parameters
    ----------
    when_utc : datetime or sequence of datetime
        Aware datetimes (any zone).
    latitude_deg : float
        Geographic latitude in [-90, 90], north positive [deg].
    longitude_deg : float
        Geographic longitude in [-180, 180], east positive [deg].

    Returns
    -------
    float or ndarray
        Elevation in [-90, 90] [deg]; the sun is "up" in the sense of
        :func:`sun_times` above ``90 - SUNRISE_ZENITH_DEG`` = −0.833°.
    """
    lat = _check_coordinate(latitude_deg, "latitude_deg", 90.0, "latitude")
    lon = _check_coordinate(longitude_deg, "longitude_deg", 180.0, "longitude")
    jd, scalar = _as_jd_array(when_utc, "when_utc")
    return _scalar_or_array(_elevation_from_jd(jd, lat, lon), scalar)


# --------------------------------------------------------------------------- sun times

@dataclass(frozen=True)
class SunTimes:
    """Sunrise, solar noon and sunset of one local day.

    Attributes
    ----------
    date : date
        Local calendar date of the solar noon.
    sunrise, sunset : datetime or None
        Aware datetimes in the place's zone; ``None`` under the midnight sun
        (``state == "polar_day"``) and in the polar night (``"polar_night"``).
        Both belong to the solar day of ``solar_noon``, so ``sunset`` is after
        ``sunrise`` even where it falls after local midnight.
    solar_noon : datetime
        Upper transit of the sun, aware, in the place's zone.
    state : {"normal", "polar_day", "polar_night"}
        Whether the sun rises and sets on this day, stays up, or stays down,
        decided by the usual daily rule of the NOAA calculator: from the sun's
        declination at solar noon.  On the first or last day of a midnight-sun
        period the sun can still dip below the horizon for some minutes around
        the lower culmination; :func:`daylight_intervals` resolves such dips.
    """

    date: date
    sunrise: datetime | None
    sunset: datetime | None
    solar_noon: datetime
    state: SunState

    @property
    def daylight_hours(self) -> float:
        """Hours from sunrise to sunset [h]; 24 in polar day, 0 in polar night."""
        if self.state == "polar_day":
            return 24.0
        if self.state == "polar_night":
            return 0.0
        return (self.sunset - self.sunrise).total_seconds() / SECONDS_PER_HOUR


def _check_coordinate(value, field: str, limit: float, name: str) -> float:
    if isinstance(value, bool) or not isinstance(value, numbers.Real):
        raise InputError(f"{name} must be a number of degrees, got {type(value).__name__}", field=field)
    number = float(value)
    if not math.isfinite(number) or not -limit <= number <= limit:
        raise InputError(f"{name} must lie in [-{limit:g}, {limit:g}] degrees, got {value}", field=field)
    return number


def _check_date(day, field: str) -> date:
    if isinstance(day, datetime) or not isinstance(day, date):
        hint = " (use .date() of a local datetime)" if isinstance(day, datetime) else ""
        raise InputError(f"expected a calendar date, got {type(day).__name__}{hint}", field=field)
    return day


def _jd_at_utc_midnight(day: date) -> float:
    return _jd_of(datetime.combine(day, time(0), tzinfo=UTC))


def _transit(day: date, longitude_deg: float, tz: tzinfo) -> tuple[float, float]:
    """Julian day of the solar noon on local date ``day``, and of 0h UTC of the UTC day it is counted from."""
    local_noon = datetime.combine(day, time(12)).replace(tzinfo=tz).astimezone(UTC)
    target = _jd_of(local_noon)
    base = local_noon.date()
    # Mean solar noon at longitude λ is 720 − 4λ minutes after 0h UTC (east positive); pick the UTC day
    # whose mean noon is nearest the local clock's noon.
    mean_noon_min = 720.0 - MINUTES_PER_DEGREE * longitude_deg
    day0 = min((base + timedelta(days=k) for k in (-1, 0, 1)),
               key=lambda d: abs(_jd_at_utc_midnight(d) + mean_noon_min / MINUTES_PER_DAY - target))
    jd0 = _jd_at_utc_midnight(day0)
    jd = jd0 + mean_noon_min / MINUTES_PER_DAY
    for _ in range(MAX_ITERATIONS):
        eot = float(_position_from_jd(np.asarray(jd))["equation_of_time_min"])
        new = jd0 + (mean_noon_min - eot) / MINUTES_PER_DAY
        done = abs(new - jd) < CONVERGENCE_DAYS
        jd = new
        if done:
            break
    return jd, jd0


def _event(jd0: float, jd_start: float, latitude_deg: float, longitude_deg: float, sign: float) -> float:
    """Julian day of sunrise (sign −1) or sunset (+1), refined at the event time.

    The hour angle of the event H0 and the equation of time are evaluated at
    the current estimate, the event time recomputed from them, and so on until
    it settles.  If the sun stops reaching the horizon at the estimate (a day
    at the edge of polar day or night) the previous estimate is kept.
    """
    jd = jd_start
    for _ in range(MAX_ITERATIONS):
        pos = _position_from_jd(np.asarray(jd))
        h0 = sunrise_hour_angle_deg(latitude_deg, float(pos["declination_deg"]))
        if math.isnan(h0):
            break
        minutes = (720.0 - MINUTES_PER_DEGREE * (longitude_deg - sign * h0)
                   - float(pos["equation_of_time_min"]))
        new = jd0 + minutes / MINUTES_PER_DAY
        done = abs(new - jd) < CONVERGENCE_DAYS
        jd = new
        if done:
            break
    return jd


def _solar_day(day: date, latitude_deg: float, longitude_deg: float, tz: tzinfo):
    """(transit JD, state, sunrise JD or None, sunset JD or None) of the solar day with noon on ``day``."""
    transit, jd0 = _transit(day, longitude_deg, tz)
    dec = float(_position_from_jd(np.asarray(transit))["declination_deg"])
    ratio = float(_cos_hour_angle(latitude_deg, dec, SUNRISE_ZENITH_DEG))
    if ratio > 1.0:
        return transit, "polar_night", None, None
    if ratio < -1.0:
        return transit, "polar_day", None, None
    h0_days = math.degrees(math.acos(ratio)) * MINUTES_PER_DEGREE / MINUTES_PER_DAY
    rise = _event(jd0, transit - h0_days, latitude_deg, longitude_deg, -1.0)
    set_ = _event(jd0, transit + h0_days, latitude_deg, longitude_deg, +1.0)
    return transit, "normal", rise, set_


def sun_times(date: date, latitude_deg: float, longitude_deg: float, tz: str | tzinfo) -> SunTimes:
    """Sunrise, solar noon and sunset of a local day (NOAA solar calculator, refined at the events).

    Parameters
    ----------
    date : date
        Local calendar date at the place.
    latitude_deg : float
        Geographic latitude in [-90, 90], north positive [deg].
    longitude_deg : float
        Geographic longitude in [-180, 180], east positive [deg].
    tz : str or tzinfo
        IANA time-zone name of the place (e.g. ``"Europe/Berlin"``); results are
        given in this zone.

    Returns
    -------
    SunTimes
        The solar day whose noon falls on ``date`` in ``tz``.  Under the
        midnight sun or in the polar night ``sunrise`` and ``sunset`` are None
        and ``state`` says which.

    Raises
    ------
    InputError
        Latitude or longitude out of range, ``date`` not a date, unknown zone.
    """
    day = _check_date(date, "date")
    lat = _check_coordinate(latitude_deg, "latitude_deg", 90.0, "latitude")
    lon = _check_coordinate(longitude_deg, "longitude_deg", 180.0, "longitude")
    zone_info = zone(tz)
    transit, state, rise, set_ = _solar_day(day, lat, lon, zone_info)

    def local(jd):
        return None if jd is None else _datetime_of_jd(jd).astimezone(zone_info)

    return SunTimes(date=day, sunrise=local(rise), sunset=local(set_), solar_noon=local(transit), state=state)


def daylight_intervals(start_utc: datetime, end_utc: datetime, latitude: float, longitude: float,
                       tz: str | tzinfo) -> list[tuple[datetime, datetime]]:
    """Every interval with the sun up (centre above −0.833°, as for sunrise) between two instants.

    The sun's elevation is evaluated at every upper and lower culmination in
    the span; between two neighbouring culminations it changes monotonically,
    so a change of side there is one sunrise or sunset, located by root
    finding on the elevation.  Days at the edge of the midnight sun or the
    polar night (when the sun dips below or peeks above the horizon for
    minutes) therefore come out right as well; only within about 0.1° of a
    pole could a dip shorter than a day be missed.

    Parameters
    ----------
    start_utc, end_utc : datetime
        Aware datetimes (any zone), ``end_utc`` after ``start_utc``.
    latitude : float
        Geographic latitude in [-90, 90], north positive [deg].
    longitude : float
        Geographic longitude in [-180, 180], east positive [deg].
    tz : str or tzinfo
        IANA time-zone name of the place; it only decides which local days are
        looked at and does not change the result.

    Returns
    -------
    list of (datetime, datetime)
        Sorted, disjoint ``(start, end)`` pairs of aware UTC datetimes, clipped
        to the span: on ordinary days the sunrise-to-sunset intervals of
        :func:`sun_times`; a span inside the midnight sun gives the whole span,
        one inside the polar night none.

    Raises
    ------
    InputError
        Naive datetimes, ``end_utc`` not after ``start_utc``, coordinates out of range.
    """
    start = _require_aware(start_utc, "start_utc")
    end = _require_aware(end_utc, "end_utc")
    if end <= start:
        raise InputError(f"the span ends ({end.isoformat()}) at or before it starts ({start.isoformat()})",
                         field="end_utc")
    lat = _check_coordinate(latitude, "latitude", 90.0, "latitude")
    lon = _check_coordinate(longitude, "longitude", 180.0, "longitude")
    zone_info = zone(tz)
    # Noons from the local day before the span to the day after: the first is 12-36 h before the start.
    first = start.astimezone(zone_info).date() - timedelta(days=1)
    last = end.astimezone(zone_info).date() + timedelta(days=1)
    transits = [_transit(first + timedelta(days=k), lon, zone_info)[0] for k in range((last - first).days + 1)]
    # Upper culminations and, midway between them, the lower ones (the hour angle runs 180° in half a
    # solar day; the drift of the equation of time moves the midpoint by seconds).
    culminations = np.empty(2 * len(transits) - 1)
    culminations[0::2] = transits
    culminations[1::2] = 0.5 * (np.asarray(transits[:-1]) + np.asarray(transits[1:]))
    horizon = 90.0 - SUNRISE_ZENITH_DEG
    up = _elevation_from_jd(culminations, lat, lon) > horizon

    def above(jd: float) -> float:
        return float(_elevation_from_jd(jd, lat, lon)) - horizon

    intervals: list[tuple[float, float]] = []
    rise = float(culminations[0]) if up[0] else None
    for k in range(len(culminations) - 1):
        if up[k] == up[k + 1]:
            continue
        crossing = brentq(above, float(culminations[k]), float(culminations[k + 1]), xtol=CONVERGENCE_DAYS)
        if up[k + 1]:
            rise = crossing
        else:
            intervals.append((rise, crossing))
            rise = None
    if rise is not None:
        intervals.append((rise, float(culminations[-1])))

    jd_start, jd_end = _jd_of(start), _jd_of(end)
    out: list[tuple[datetime, datetime]] = []
    for a, b in intervals:
        if b <= jd_start or a >= jd_end:
            continue
        out.append((start if a <= jd_start else _datetime_of_jd(a), end if b >= jd_end else _datetime_of_jd(b)))
    return out
