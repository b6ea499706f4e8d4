"""A one-line progress display on stderr for long work (big drawers, Monte Carlo, kits).

It shows only when a person can see it: never with ``quiet=True`` and never when stderr is not
a terminal (a pipe, a file, a CI log, click's CliRunner), so scripted output stays clean.
Pure standard library, so any module may import it at start-up.

How a command hooks in::

    from drawerfit.progress import progress

    with progress("scoring candidates", total=len(chunks), quiet=quiet) as tick:
        for chunk in chunks:
            score(chunk)
            tick()                  # one step done
    # or, for named phases without a count:
    with progress("report", quiet=quiet) as tick:
        tick(note="Monte Carlo")    # shows the phase now under way

Library functions that run long take an optional ``on_step`` callable and call it as
``on_step()`` or ``on_step(note="...")``; the command passes the ``tick`` it got here (or
nothing, and the library runs silently).
"""

from __future__ import annotations

import sys
import time
from typing import IO, Callable

__all__ = ["Progress", "progress", "wants_progress", "NO_PROGRESS"]


def wants_progress(stream: IO[str] | None = None, quiet: bool = False) -> bool:
    """True when a progress line should be drawn on ``stream`` (stderr by default)."""
    if quiet:
        return False
    stream = sys.stderr if stream is None else stream
    isatty = getattr(stream, "isatty", None)
    try:
        return bool(isatty and isatty())
    except (ValueError, OSError):  # a closed or odd stream
        return False


class Progress:
    """Draws ``label  done/total  pct  note`` on one line, redrawn in place, at most every
    ``interval`` seconds; the line is wiped when the work ends.  Disabled, it does nothing.
    """

    def __init__(self, label: str, total: int | None = None, *, enabled: bool = True,
                 stream: IO[str] | None = None, interval: float = 0.1):
        self.label = label
        self.total = total
        self.enabled = enabled
        self.stream = sys.stderr if stream is None else stream
        self.interval = interval
        self.done = 0
        self.note = ""
        self._last = 0.0
        self._width = 0

    def __enter__(self) -> "Progress":
        self._draw(force=True)
        return self

    def __exit__(self, *exc) -> None:
        self.close()

    def __call__(self, steps: int = 1, *, note: str | None = None) -> None:
        """Count ``steps`` more steps done; ``note`` names what is under way now."""
        self.done += steps
        if note is not None:
            self.note = note
        self._draw(force=note is not None)

    def _text(self) -> str:
        parts = [self.label]
        if self.total:
            shown = min(self.done, self.total)
            parts.append(f"{shown}/{self.total} ({100 * shown // self.total} %)")
        elif self.done:
            parts.append(f"step {self.done}")
        if self.note:
            parts.append(self.note)
        return " · ".join(parts)

    def _draw(self, force: bool = False) -> None:
        if not self.enabled:
            return
        now = time.monotonic()
        if not force and now - self._last < self.interval:
            return
        self._last = now
        text = self._text()
        pad = max(0, self._width - len(text))
        self.stream.write("\r" + text + " " * pad)
        self.stream.flush()
        self._width = len(text)

    def close(self) -> None:
        if self.enabled and self._width:
            self.stream.write("\r" + " " * self._width + "\r")
            self.stream.flush()
            self._width = 0


def progress(label: str, total: int | None = None, *, quiet: bool = False,
             stream: IO[str] | None = None) -> Progress:
    """A ``Progress`` that is on only when ``stream`` (stderr) is a terminal and not ``quiet``."""
    return Progress(label, total, enabled=wants_progress(stream, quiet), stream=stream)


def _nothing(steps: int = 1, *, note: str | None = None) -> None:
    return None


NO_PROGRESS: Callable[..., None] = _nothing  # the ``on_step`` to pass when nobody is watching
