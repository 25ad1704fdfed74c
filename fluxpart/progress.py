"""A small progress indicator for long command-line steps.

:class:`Progress` writes one self-overwriting line (``\\r``) to a terminal and
nothing at all anywhere else: a log file, a pipe or a CI run stays clean. It
counts steps from any thread; a pipeline loop receives its bound ``advance``
as a plain callback and knows nothing of terminals.
"""

from __future__ import annotations

import sys
import threading

__all__ = ["Progress", "progress_enabled"]


def _is_terminal(stream) -> bool:
    """Return whether `stream` is an interactive terminal (False when it cannot tell)."""
    isatty = getattr(stream, "isatty", None)
    if isatty is None:
        return False
    try:
        return bool(isatty())
    except (OSError, ValueError):
        return False


def progress_enabled(quiet: bool, stream=None) -> bool:
    """Return whether progress should be shown.

    Parameters
    ----------
    quiet : bool
        The user asked for no progress output (``--quiet``).
    stream : file-like, optional
        Where progress would go; standard error when omitted.

    Returns
    -------
    bool
        True only when not `quiet` and `stream` is a terminal.
    """
    return not quiet and _is_terminal(sys.stderr if stream is None else stream)


class Progress:
    """Count steps of a task and show ``label: done/total (percent)`` on a terminal.

    Parameters
    ----------
    total : int
        Number of steps the task has (0 or more).
    label : str
        Short name of the task, shown before the count.
    stream : file-like, optional
        Where to write; standard error by default.
    enabled : bool, optional
        Force output on (True) or off (False). By default (None) output is on only
        when `stream` is a terminal.

    Raises
    ------
    ValueError
        If `total` is negative or not a whole number.

    Notes
    -----
    The line is rewritten only when the whole percentage changes or the task
    completes, so a loop of a million steps writes at most about a hundred
    updates. Leaving the ``with`` block ends the line with a newline.

    Examples
    --------
    >>> with Progress(3, "figures", enabled=False) as progress:
    ...     for _ in range(3):
    ...         progress.advance()
    >>> progress.done
    3
    """

    def __init__(self, total: int, label: str, *, stream=None, enabled: bool | None = None):
        if isinstance(total, bool) or not isinstance(total, int) or total < 0:
            raise ValueError(f"Progress total = {total!r}: expected a whole number >= 0")
        self.total = total
        self.label = str(label)
        self.stream = sys.stderr if stream is None else stream
        self.enabled = _is_terminal(self.stream) if enabled is None else bool(enabled)
        self.done = 0
        self._shown = None
        self._width = 0
        self._wrote = False
        self._lock = threading.Lock()

    def __enter__(self) -> Progress:
        self._show(force=True)
        return self

    def __exit__(self, *exc_info) -> None:
        self.close()

    def advance(self, n: int = 1) -> None:
        """Count `n` more steps done and refresh the line where shown."""
        with self._lock:
            self.done += n
            self._show()

    def close(self) -> None:
        """End the progress line (a newline), if anything was written."""
        with self._lock:
            if self.enabled and self._wrote:
                self._show(force=True)
                self.stream.write("\n")
                self.stream.flush()
                self._wrote = False

    def _text(self) -> str:
        if self.total == 0:
            return f"\r{self.label}: {self.done}"
        percent = int(100 * min(self.done, self.total) / self.total)
        return f"\r{self.label}: {self.done}/{self.total} ({percent:3d} %)"

    def _show(self, force: bool = False) -> None:
        if not self.enabled:
            return
        key = (self.done if self.total == 0 else
               int(100 * min(self.done, self.total) / self.total), self.done >= self.total)
        if not force and key == self._shown:
            return
        self._shown = key
        text = self._text()
        # a shorter line (a label changed: "processing: budgets" after "processing: gap
        # filling and partitioning (ustar_p84)") is padded over the longer one before it,
        # which \r alone leaves standing at its end (review46)
        self.stream.write(text.ljust(self._width))
        self._width = max(self._width, len(text))
        self.stream.flush()
        self._wrote = True
