"""Keys before the scan: while a key is being answered, the scan thread stands aside.

The first pass runs in the app's scan thread, in the same process as the event loop, so
the two take turns with the GIL; a key then needs many turns (event, binding, redraw) and
each may wait for the scan's column in progress. The app marks a key as outstanding when
it arrives and answered once the screen has refreshed after it; the scan thread checks
between columns and sleeps while a key is outstanding, up to ``LONGEST_WAIT`` so a key
that never refreshes anything cannot stall the scan.
"""

from __future__ import annotations

import time
from collections.abc import Callable

LONGEST_WAIT = 0.5
"""The scan waits at most this long for one key to be answered."""
SLICE = 0.005
"""The scan thread sleeps in slices this long (the GIL is free meanwhile)."""
QUIET_AFTER = 0.5
"""A key this recent still counts as typing (the list's timed redraw waits for a pause)."""


class KeyGate:
    """Whether a key is outstanding, and for how long; shared by the UI and scan threads
    (a float written by one and read by the other: no lock needed)."""

    def __init__(self, clock: Callable[[], float] = time.monotonic) -> None:
        self._clock = clock
        self._pressed = -1e9  # when the outstanding key arrived
        self._answered = -1e9  # when the last key was answered
        self.waited = 0.0
        """Seconds the scan thread has stood aside so far."""

    def pressed(self) -> None:
        """A key arrived (UI thread)."""
        self._pressed = self._clock()

    def answered(self) -> None:
        """The screen refreshed after the key (UI thread)."""
        self._answered = self._clock()

    def outstanding(self) -> bool:
        """A key arrived and the screen has not refreshed since."""
        return self._pressed > self._answered

    def typing(self) -> bool:
        """A key is outstanding or arrived less than ``QUIET_AFTER`` ago."""
        return self.outstanding() or self._clock() - self._pressed < QUIET_AFTER

    def stand_aside(self, cancelled: Callable[[], bool] = lambda: False) -> None:
        """Sleep while a key is outstanding (scan thread), at most ``LONGEST_WAIT``."""
        start = self._clock()
        while self.outstanding() and not cancelled():
            if self._clock() - self._pressed >= LONGEST_WAIT:
                break
            time.sleep(SLICE)
        self.waited += self._clock() - start
