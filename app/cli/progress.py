"""Progress bars on stderr for long commands, drawn only while stderr is a terminal.

When stderr is a file or a pipe (scripts, tests, CI) nothing at all is written, so the output of
a command is the same with or without a person watching.
"""

from __future__ import annotations

import sys
from contextlib import ExitStack

import click


def on_terminal() -> bool:
    """True when stderr is a terminal (a person is watching)."""
    try:
        return sys.stderr.isatty()
    except (AttributeError, ValueError):  # replaced or closed stream
        return False


class Progress:
    """A bar labelled ``label`` on stderr, made on the first report of progress.

    Used as a context manager; :attr:`callback` is the ``progress(done, total)`` function to hand
    to a core function, or None when stderr is not a terminal (the core then reports nothing).
    """

    def __init__(self, label: str):
        self.label = label
        self.shown = on_terminal()
        self._stack = ExitStack()
        self._bar = None

    def __enter__(self) -> Progress:
        return self

    def __exit__(self, *exc) -> None:
        self._stack.close()

    @property
    def callback(self):
        """``self`` when a bar can be drawn, else None."""
        return self if self.shown else None

    def __call__(self, done: int, total: int, item: str | None = None) -> None:
        """Show ``done`` of ``total`` steps (``item``: what is being done now)."""
        if not self.shown:
            return
        if self._bar is None:
            self._bar = self._stack.enter_context(
                click.progressbar(
                    length=max(total, 1),
                    label=self.label,
                    file=sys.stderr,
                    show_pos=True,
                    item_show_func=lambda current: current,
                )
            )
        self._bar.update(done - self._bar.pos, item)
