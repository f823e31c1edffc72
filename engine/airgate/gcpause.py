"""Python's cyclic garbage collector paused while a schedule is read, evaluated and written.

Reading, evaluating and reporting a portfolio makes millions of small objects (models, trail
steps, report dictionaries) that stay alive until the report is written. The cyclic collector
is triggered by allocations, and each of its full passes walks every live object; with a
portfolio's objects alive, those passes are a large share of the run (docs/performance.md: about
45 % of the evaluation of a 10,000-zone district). Reference counting frees what these steps
discard as usual; the collector only finds reference cycles, which these steps hardly make, and
it finds them at its next pass after the pause.

:func:`paused` pauses the collector and restores it on the way out, whatever was raised; nested
pauses restore only what the outermost one found, and a collector the caller had already
disabled stays disabled.
"""

from __future__ import annotations

import functools
import gc
from collections.abc import Callable, Iterator
from contextlib import contextmanager
from typing import TypeVar

F = TypeVar("F", bound=Callable)


@contextmanager
def paused() -> Iterator[None]:
    """The block runs with the cyclic garbage collector disabled (re-enabled after it if it
    was enabled before)."""
    if not gc.isenabled():
        yield
        return
    gc.disable()
    try:
        yield
    finally:
        gc.enable()


def pausing(function: F) -> F:
    """``function`` run inside :func:`paused`."""

    @functools.wraps(function)
    def run(*args, **kwargs):
        with paused():
            return function(*args, **kwargs)

    return run  # type: ignore[return-value]
