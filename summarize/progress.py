"""Progress on standard error for long commands: message lines, and a bar (tqdm) with one step
per candidate for each long stage.

A ``Progress`` is the ``progress`` callable the library takes (``progress("a message")``) and
also has ``step(stage, done, total)``, which the evaluator calls once per candidate when it is
there (``scoring.evaluate.Evaluator.evaluate``). A message of the form "what k/N" or "what k/N
(detail)", as the summarizer says "building candidate 3/8 (lead)", is taken as step k of N of
the stage "what" too. Bars are drawn only on a terminal; elsewhere (a log file, a pipe) the
messages alone are written, one a line.
"""

from __future__ import annotations

import re
import sys

_STEP = re.compile(r"^(?P<stage>.+?) (?P<k>\d+)/(?P<n>\d+)(?: \((?P<detail>.*)\))?$")


class Progress:
    """Messages as "boildown: ..." lines on ``stream`` (standard error by default) and a bar per
    stage; ``quiet`` writes nothing. ``bars`` forces bars on (True) or off (False); by default
    they are drawn when the stream is a terminal."""

    def __init__(self, quiet: bool = False, *, stream=None, bars: bool | None = None, prefix: str = "boildown: "):
        self.quiet = quiet
        self.stream = stream or sys.stderr
        isatty = getattr(self.stream, "isatty", lambda: False)
        self.bars = (not quiet) and (bars if bars is not None else bool(isatty()))
        self.prefix = prefix
        self._bar = None
        self._stage: str | None = None

    def __call__(self, message: str) -> None:
        if self.quiet:
            return
        found = _STEP.match(message)
        if found and self.bars:
            self.step(found["stage"], int(found["k"]) - 1, int(found["n"]), found["detail"])
            return
        self.finish()
        self.stream.write(f"{self.prefix}{message}\n")
        self.stream.flush()

    def step(self, stage: str, done: int, total: int, detail: str | None = None) -> None:
        """``done`` of ``total`` candidates of ``stage`` are through (the bar closes at the total)."""
        if not self.bars or total <= 0:
            return
        if self._bar is None or stage != self._stage:
            from tqdm import tqdm

            self.finish()
            self._bar = tqdm(total=total, desc=f"{self.prefix}{stage}", unit="cand", file=self.stream,
                             dynamic_ncols=True, mininterval=0.2, leave=True)
            self._stage = stage
        self._bar.n = min(done, total)
        if detail:
            self._bar.set_postfix_str(detail, refresh=False)
        self._bar.refresh()
        if done >= total:
            self._close()

    def finish(self) -> None:
        """Close an open bar, shown as complete (its stage is over when the next begins)."""
        if self._bar is not None:
            self._bar.n = self._bar.total
            self._bar.refresh()
            self._close()

    def _close(self) -> None:
        self._bar.close()
        self._bar, self._stage = None, None
