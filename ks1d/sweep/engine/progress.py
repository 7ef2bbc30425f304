"""A progress line on stderr: bar, job count, failures, elapsed time and ETA.

On a terminal the line redraws in place; otherwise (logs, CI) a plain line
is printed every 10 % of the jobs or every 30 s, whichever comes first.
The ETA scales the elapsed time by the work left over the work done, where
each job's work is a rough relative cost (the runner starts expensive jobs
first, so counting jobs alone would overestimate the time left); without
costs every job weighs the same.
"""
from __future__ import annotations

import sys
import time
from typing import TextIO


def _clock(seconds: float) -> str:
    s = int(round(seconds))
    h, rem = divmod(s, 3600)
    m, s = divmod(rem, 60)
    return f"{h}:{m:02d}:{s:02d}" if h else f"{m:d}:{s:02d}"


def format_line(done: int, failed: int, total: int, elapsed: float, width: int = 24,
                work_fraction: float | None = None) -> str:
    """'[#########.......]  12/40  30%  2 failed  elapsed 0:12  ETA 0:28'.

    ETA = elapsed × (1 − w)/w with w the fraction of the work done
    (``work_fraction``, default done/total).
    """
    frac = done / total if total else 1.0
    fill = int(round(frac * width))
    w = frac if work_fraction is None else work_fraction
    eta = elapsed * (1 - w) / w if done and w > 0 else None
    parts = [f"[{'#' * fill}{'.' * (width - fill)}]", f"{done:>{len(str(total))}}/{total}", f"{100 * frac:3.0f}%"]
    if failed:
        parts.append(f"{failed} failed")
    parts.append(f"elapsed {_clock(elapsed)}")
    parts.append(f"ETA {_clock(eta)}" if eta is not None else "ETA --:--")
    return "  ".join(parts)


class Progress:
    """Tracks finished jobs and draws :func:`format_line` to ``stream``."""

    def __init__(self, total: int, stream: TextIO | None = None, enabled: bool = True, label: str = "sweep",
                 total_work: float | None = None):
        self.total = total
        self.total_work = total_work
        self.work_done = 0.0
        self.stream = stream or sys.stderr
        self.enabled = enabled and total > 0
        self.label = label
        self.done = 0
        self.failed = 0
        self.t0 = time.monotonic()
        self._tty = bool(getattr(self.stream, "isatty", lambda: False)())
        self._last_print = 0.0
        self._last_frac = -1.0
        if self.enabled:
            self._draw(force=True)

    def advance(self, failed: bool = False, work: float = 1.0) -> None:
        self.done += 1
        self.work_done += work
        self.failed += int(failed)
        if self.enabled:
            self._draw(force=self.done == self.total)

    def _draw(self, force: bool = False) -> None:
        now = time.monotonic()
        wf = self.work_done / self.total_work if self.total_work else None
        line = f"{self.label} " + format_line(self.done, self.failed, self.total, now - self.t0, work_fraction=wf)
        if self._tty:
            self.stream.write("\r" + line + ("\n" if self.done == self.total else ""))
            self.stream.flush()
            return
        frac = self.done / self.total
        if force or frac - self._last_frac >= 0.1 or now - self._last_print >= 30:
            self.stream.write(line + "\n")
            self.stream.flush()
            self._last_print, self._last_frac = now, frac

    def close(self) -> None:
        if self.enabled and self._tty and self.done < self.total:
            self.stream.write("\n")
            self.stream.flush()
