"""The solver's answers: limit names, flags, the :class:`Ceilings` container and the best so far.

Altitudes are pressure altitudes in m, one element per case. NaN: the model cannot give a value
(``flags`` says why); +inf: the limit does not exist for the case or lies above the model top.
"""

from __future__ import annotations

from dataclasses import dataclass

import numpy as np

from .finders import nan_as_lowest

LIMITS = ("thrust", "buffet", "stall", "certified", "cabin")

# Flags (bit mask) explaining results the model cannot give as a number.
CANNOT_CLIMB = 1  # no altitude with the required residual climb at this speed
THRUST_DATA_TOP = 2  # still climbing at the top of the engine's thrust table
THRUST_DATA_MACH = 4  # Mach outside the engine's thrust table
NO_BUFFET_AT_MACH = 8  # variant has buffet data, but not at this Mach
ABOVE_MMO = 16
BELOW_VMO_FLOOR = 32  # at this Mach the ceiling lies where CAS would exceed VMO
NO_COMMON_ALTITUDE = 64  # thrust only works above the ceiling the other limits allow
ABOVE_MODEL_TOP = 128  # no limit binds below the top of the atmosphere model
BELOW_FLOOR = 256  # the limits cross below -2,000 ft
PROPELLER_DATA_MACH = 512  # Mach outside the propeller efficiency table
#: Flags of a speed that cannot be flown at all (no maximum altitude there).
UNFLYABLE = ABOVE_MMO | BELOW_VMO_FLOOR | NO_COMMON_ALTITUDE | BELOW_FLOOR


@dataclass
class Ceilings:
    """Solver output, one element per case (see the module docstring).

    At a fixed Mach every field is that Mach's. At the best speed, ``mach`` is the speed of the
    highest maximum altitude, and ``max_altitude_m``, ``limit``, ``flags``, ``vmo_floor_m`` and
    ``co_limit`` are the fixed-Mach answer there (solving at ``mach`` gives them again); each
    limit's column (``thrust_m``, ``buffet_m``, ``stall_m``, ...) is that limit's own best over
    the speed range, which may lie at another speed (``thrust_mach`` for the thrust ceiling's).
    """

    thrust_m: np.ndarray
    buffet_m: np.ndarray
    stall_m: np.ndarray
    certified_m: np.ndarray
    cabin_m: np.ndarray
    max_altitude_m: np.ndarray
    mach: np.ndarray
    limit: np.ndarray  # index into LIMITS, -1 for none
    flags: np.ndarray
    vmo_floor_m: np.ndarray  # lowest altitude where the Mach stays within VMO (-inf: no VMO)
    co_limit: np.ndarray  # a second limit binding within CO_LIMIT_M of the first (band closure), -1 none
    thrust_mach: np.ndarray  # the speed of ``thrust_m`` (best speed: of the thrust ceiling's own best; NaN: none)

    @classmethod
    def allocate(cls, n: int, make=np.empty) -> "Ceilings":
        """Uninitialised arrays for n cases, from ``make(n, dtype)``."""
        small = {"limit": np.int8, "co_limit": np.int8, "flags": np.int32}
        return cls(**{name: make(n, small.get(name, float)) for name in cls.__dataclass_fields__})

    @classmethod
    def blank(cls, n: int, mach) -> "Ceilings":
        """Ceilings of cases not solved at a speed: nothing known (NaN), no flags."""
        nan = np.full(n, np.nan)
        return cls(nan.copy(), nan.copy(), nan.copy(), nan.copy(), nan.copy(), nan.copy(), np.array(mach, float),
                   np.full(n, -1, np.int8), np.zeros(n, np.int32), np.full(n, -np.inf), np.full(n, -1, np.int8),
                   np.array(mach, float))

    def take(self, index) -> "Ceilings":
        return Ceilings(**{n: getattr(self, n)[index] for n in self.__dataclass_fields__})

    def put(self, index, other: "Ceilings") -> None:
        """Overwrite the cases at ``index`` with ``other``'s (same order)."""
        for n in self.__dataclass_fields__:
            getattr(self, n)[index] = getattr(other, n)

    @classmethod
    def concat(cls, parts: list["Ceilings"]) -> "Ceilings":
        names = cls.__dataclass_fields__
        return cls(**{n: np.concatenate([getattr(p, n) for p in parts]) for n in names})

    @classmethod
    def stack(cls, columns: list["Ceilings"]) -> dict[str, np.ndarray]:
        """Per field, the cases x columns array of several results for the same cases."""
        return {k: np.stack([getattr(c, k) for c in columns], axis=1) for k in cls.__dataclass_fields__}


ROOM_WEIGHT = 1e-3  # m of score per m of room: a tie-break only (1 mm per metre)


def score(res: Ceilings, thrust_m=None):
    """A speed's merit for the best-speed search: its maximum altitude (unavailable: -inf), and,
    where a flat limit (certified, cabin) makes many speeds equal, the room under the aerodynamic
    and thrust limits (``thrust_m``, default the result's own) as a tie-break."""
    thrust_m = res.thrust_m if thrust_m is None else thrust_m
    room = np.fmin(np.fmin(thrust_m, res.buffet_m), res.stall_m)
    return nan_as_lowest(res.max_altitude_m) + ROOM_WEIGHT * np.where(np.isfinite(room), room, 0.0)


class Incumbent:
    """Per case, the best fixed-Mach result offered so far (by :func:`score`) and its Mach.

    Guarantees: the result kept scores no lower than any result offered for the case (of equal
    ones the first offered, as ``argmax``, unless an offer takes ties); every field comes from one fixed-Mach solve, so solving
    again at ``result.mach`` gives it again.
    """

    def __init__(self, n: int):
        self.result = Ceilings.blank(n, np.full(n, np.nan))
        self.score = np.full(n, -np.inf)
        self.filled = np.zeros(n, dtype=bool)

    def offer(self, rows, res: Ceilings, ties: bool = False) -> np.ndarray:
        """Keep ``res`` (the results of the cases ``rows``) where it scores higher (``ties``: or
        as high); returns where."""
        s = score(res)
        better = (s >= self.score[rows]) if ties else (s > self.score[rows])
        win = np.flatnonzero(better | ~self.filled[rows])
        if win.size:
            self.result.put(rows[win], res.take(win))
            self.score[rows[win]] = s[win]
            self.filled[rows[win]] = True
        return win
