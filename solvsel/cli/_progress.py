"""A progress bar on stderr for long commands (a refit, a batch of targets)."""

from __future__ import annotations

import sys
import time

__all__ = ["ProgressBar"]


class ProgressBar:
    """``bar(done, total, message="")`` draws ``[#####.....] done/total message (rate, time left)``.

    On a terminal the bar is redrawn in place; otherwise (a log file) a line is printed at most
    every ``every`` seconds, and at the end.
    """

    def __init__(self, unit: str = "", stream=None, every: float = 2.0, width: int = 24):
        self.unit, self.stream, self.every, self.width = unit, stream or sys.stderr, every, width
        self.start = self.last = time.perf_counter()

    def __call__(self, done: int, total: int, message: str = "") -> None:
        now = time.perf_counter()
        tty = self.stream.isatty()
        if not tty and done < total and now - self.last < self.every:
            return
        self.last = now
        fill = self.width * done // max(total, 1)
        line = f"[{'#' * fill}{'.' * (self.width - fill)}] {done}/{total}{' ' + self.unit if self.unit else ''}"
        elapsed = now - self.start
        if self.unit and done and elapsed > 0:
            left = elapsed * (total - done) / done
            line += f"  {done / elapsed:.1f}/s, {left // 60:.0f}:{left % 60:02.0f} left"
        if message:
            line += f"  {message}"
        if tty:
            print("\r\033[K" + line, end="\n" if done >= total else "", file=self.stream, flush=True)
        else:
            print(line, file=self.stream, flush=True)
