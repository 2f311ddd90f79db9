"""A progress bar for long batch runs, on stderr, only on a terminal.

The bar (files done of the total, files per second, time left) appears once a run
has lasted :data:`SHOW_AFTER_SECONDS`, so short runs and pre-commit hooks print
nothing extra; it never writes to stdout (which carries the results), and it shows
nothing at all when stderr is not a terminal. Drawn with rich (a dependency of
typer), and cleared when the run ends.
"""

from __future__ import annotations

import sys
import time
from typing import TextIO

#: A run shows its bar only once it has lasted this long (seconds).
SHOW_AFTER_SECONDS = 1.5


def _rich_columns():
    from rich.progress import (
        BarColumn,
        MofNCompleteColumn,
        ProgressColumn,
        TextColumn,
        TimeRemainingColumn,
    )
    from rich.text import Text

    class RateColumn(ProgressColumn):
        """Files per second over the run so far."""

        def render(self, task) -> Text:
            elapsed = task.elapsed or 0.0
            rate = task.completed / elapsed if elapsed > 0 else 0.0
            return Text(f"{rate:,.1f} files/s")

    return (
        TextColumn("{task.description}"),
        BarColumn(),
        MofNCompleteColumn(),
        TextColumn("files"),
        RateColumn(),
        TextColumn("left"),
        TimeRemainingColumn(),
    )


class BatchProgress:
    """Progress of a run over ``total`` files; use as a context manager and call :meth:`advance`.

    Parameters
    ----------
    total
        Number of files in the run.
    description
        Short text before the bar (``"check"``, ``"measure"``).
    stream
        Where to draw (default ``sys.stderr``); nothing is drawn unless it is a terminal.
    show_after
        Seconds before the bar appears (default :data:`SHOW_AFTER_SECONDS`).
    enabled
        ``False`` turns the bar off whatever the stream is.
    """

    def __init__(
        self,
        total: int,
        *,
        description: str = "",
        stream: TextIO | None = None,
        show_after: float = SHOW_AFTER_SECONDS,
        enabled: bool = True,
    ) -> None:
        self.total = int(total)
        self.description = description
        self.stream = stream if stream is not None else sys.stderr
        self.show_after = float(show_after)
        self.completed = 0
        self._enabled = bool(enabled) and _is_terminal(self.stream)
        self._started = time.monotonic()
        self._progress = None
        self._task = None

    @property
    def shown(self) -> bool:
        """Whether the bar is on screen."""
        return self._progress is not None

    def advance(self, count: int = 1) -> None:
        """Count ``count`` more files as done."""
        self.completed += count
        if not self._enabled:
            return
        if self._progress is None:
            if time.monotonic() - self._started < self.show_after or self.completed >= self.total:
                return
            self._show()
        self._progress.update(self._task, completed=self.completed)

    def _show(self) -> None:
        from rich.console import Console
        from rich.progress import Progress

        console = Console(file=self.stream, stderr=self.stream is sys.stderr)
        # stdout carries the results (--json-lines streams them while the bar runs): never redirect it.
        self._progress = Progress(
            *_rich_columns(),
            console=console,
            transient=True,
            refresh_per_second=4,
            redirect_stdout=False,
            redirect_stderr=False,
        )
        self._progress.start()
        # The bar's clock starts with the run, not when the bar appears, so rate and time left are right.
        self._task = self._progress.add_task(self.description, start=False, total=self.total, completed=self.completed)
        self._progress.tasks[0].start_time = self._progress.get_time() - (time.monotonic() - self._started)
        self._progress.refresh()

    def close(self) -> None:
        if self._progress is not None:
            self._progress.stop()
            self._progress = None

    def __enter__(self) -> BatchProgress:
        return self

    def __exit__(self, *exception) -> None:
        self.close()


def _is_terminal(stream) -> bool:
    try:
        return bool(stream.isatty())
    except (AttributeError, ValueError):  # no isatty, or a closed stream
        return False
