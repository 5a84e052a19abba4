"""Hash values kept on records (planner.hashing): equal records still hash equal, everywhere."""

from __future__ import annotations

import pickle
import subprocess
import sys
from datetime import datetime, timedelta, timezone

from planner.world.light import Window


def test_a_kept_hash_is_the_records_own_and_equal_records_hash_equal():
    # Python language reference, data model, object.__hash__ (docs.python.org; from memory): objects that
    # compare equal must have the same hash
    start = datetime(2027, 3, 1, 6, 0, tzinfo=timezone.utc)
    window = Window(start, start + timedelta(hours=1), 10_000.0, "light box")
    twin = Window(start, start + timedelta(hours=1), 10_000.0, "light box")
    assert hash(window) == hash(twin) == hash((window.start, window.end, window.lux, window.source))
    assert hash(window) == hash(window)   # the kept value, asked again
    assert {window: 1}[twin] == 1


def test_a_pickled_record_leaves_its_kept_hash_behind():
    # Python documentation, PYTHONHASHSEED (docs.python.org; from memory): a string's hash differs between
    # processes, so a hash carried in a pickle into a worker process would not match the records made there.
    start = datetime(2027, 3, 1, 6, 0, tzinfo=timezone.utc)
    window = Window(start, start + timedelta(hours=1), 10_000.0, "light box")
    hash(window)
    data = pickle.dumps(window)
    assert pickle.loads(data) == window
    code = ("import pickle, sys; from datetime import datetime, timedelta, timezone; "
            "from planner.world.light import Window; w = pickle.loads(sys.stdin.buffer.read()); "
            "s = datetime(2027, 3, 1, 6, 0, tzinfo=timezone.utc); "
            "print(w in {Window(s, s + timedelta(hours=1), 10_000.0, 'light box')})")
    other = subprocess.run([sys.executable, "-c", code], input=data, capture_output=True, check=True,
                           env={"PYTHONHASHSEED": "12345", "PATH": ""})
    assert other.stdout.decode().strip() == "True"
