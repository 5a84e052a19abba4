"""Write the demo light log scenarios/rui-week-light.csv: an invented person's week before a trip.

Rui Cardoso (invented) lives in Porto and says he sleeps 23:30-07:30; his wrist light meter shows
later nights (00:45-08:15 on weekdays, 02:00-10:30 at the weekend), little morning light and an
afternoon outdoors at the weekend.  Samples every 10 min with the UTC offset, a sleep column, and
what real logs contain: sensor noise below zero, the meter off for 3 h while charging, one row
written twice and two rows out of order.  The output is fixed by the seed.

Usage: python tools/make_light_log.py [OUTPUT]
"""

from __future__ import annotations

import sys
from datetime import datetime, timedelta
from pathlib import Path
from zoneinfo import ZoneInfo

import numpy as np

PORTO = ZoneInfo("Europe/Lisbon")
FIRST_DAY = datetime(2027, 5, 10, tzinfo=PORTO)   # a Monday; the trip's plan starts 2027-05-17
DAYS = 7
STEP = timedelta(minutes=10)
SEED = 20270510


def sleeps() -> list[tuple[float, float]]:
    """Rui's sleep as (start, end) in hours after the first midnight: weeknights 00:45-08:15,
    Friday and Saturday nights 02:00-10:30."""
    spans = []
    for evening in range(-1, DAYS):
        late = evening % 7 in (4, 5)
        bed = evening * 24.0 + (26.0 if late else 24.75)
        spans.append((bed, bed + (8.5 if late else 7.5)))
    return spans


def level(day: int, hour: float) -> float:
    """Rui's light while awake [lux] at ``hour`` of ``day`` (0 = Monday)."""
    if day % 7 in (5, 6):
        return 5000.0 if 15.0 <= hour < 17.0 else (250.0 if hour < 20.0 else 120.0)
    if 8.6 <= hour < 9.0:
        return 4000.0     # walk to work
    if 13.0 <= hour < 13.5:
        return 8000.0     # lunch outdoors
    if 9.0 <= hour < 18.5:
        return 320.0      # office
    return 110.0          # home in the evening


def main() -> int:
    out = Path(sys.argv[1]) if len(sys.argv) > 1 else Path(__file__).resolve().parent.parent / "scenarios" / "rui-week-light.csv"
    rng = np.random.default_rng(SEED)
    rows = []
    moment = FIRST_DAY
    end = FIRST_DAY + timedelta(days=DAYS)
    spans = sleeps()
    while moment < end:
        local = moment.astimezone(PORTO)
        elapsed = (moment - FIRST_DAY).total_seconds() / 3600.0
        asleep = any(a <= elapsed < b for a, b in spans)
        day = (local.date() - FIRST_DAY.date()).days
        lux = 0.0 if asleep else level(day, local.hour + local.minute / 60)
        noise = float(np.exp(0.25 * rng.standard_normal()))
        reading = round(lux * noise, 1) if lux > 0 else round(float(rng.normal(0.2, 0.8)), 1)   # dark: noise around 0
        rows.append((local.isoformat(timespec="minutes"), reading, "sleep" if asleep else "wake"))
        moment += STEP
    # the meter off for three hours while charging (Wednesday afternoon)
    rows = [r for r in rows if not ("2027-05-12T14:00" <= r[0][:16] < "2027-05-12T17:00")]
    rows.insert(400, rows[399])                              # one row written twice
    rows[600], rows[601] = rows[601], rows[600]              # two rows out of order
    with open(out, "w", encoding="utf-8") as handle:
        handle.write("timestamp,lux,state\n")
        for stamp, lux, state in rows:
            handle.write(f"{stamp},{lux},{state}\n")
    print(f"wrote {len(rows)} rows to {out}")
    return 0


if __name__ == "__main__":
    raise SystemExit(main())
