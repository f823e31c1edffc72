"""The gate of a run: what ``--fail-on`` may name (no imports, so the command line is built
without loading the engine)."""

from __future__ import annotations

from collections.abc import Sequence

#: what ``--fail-on`` may name: ``fail`` (always in force), ``warning`` (also live warnings and
#: stale waivers), ``declared`` (also limits the schedule declares and misses)
FAIL_ON = ("fail", "warning", "declared")


def fail_on_levels(given: str | Sequence[str] | None) -> tuple[str, ...]:
    """The ``--fail-on`` levels in force, in :data:`FAIL_ON` order; ``fail`` always is."""
    names = {given} if isinstance(given, str) else set(given or ())
    unknown = names - set(FAIL_ON)
    if unknown:
        raise ValueError(f"unknown --fail-on level(s): {', '.join(sorted(unknown))}")
    return tuple(n for n in FAIL_ON if n == "fail" or n in names)
