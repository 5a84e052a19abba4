"""Hash values kept on immutable records that searches use as dictionary keys many thousand times.

A frozen dataclass hashes all its fields again at every lookup; for a record holding aware
datetimes (whose hash asks the zone for its offset) or other records, that is most of the cost
of a cache lookup in the trip search.  :func:`hash_once` keeps the first value on the instance.
"""

from __future__ import annotations

_KEPT = "_kept_hash"


def hash_once(cls: type) -> type:
    """Class decorator for a frozen dataclass: its hash is computed on first use and kept.

    The kept value is left out of pickles and copies: a string's hash differs from one process to
    the next, and worker processes receive these records pickled.
    """
    plain = cls.__hash__
    if plain is None:
        raise TypeError(f"{cls.__name__} is not hashable")

    def __hash__(self) -> int:
        kept = self.__dict__.get(_KEPT)
        if kept is None:
            kept = self.__dict__[_KEPT] = plain(self)   # frozen: written past __setattr__
        return kept

    def __getstate__(self) -> dict:
        state = dict(self.__dict__)
        state.pop(_KEPT, None)
        return state

    cls.__hash__ = __hash__
    cls.__getstate__ = __getstate__
    return cls
