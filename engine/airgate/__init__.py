"""airgate: check building ventilation schedules against declarative rule packs.

Layers (data flows one way): ``readers`` → ``models`` → ``procedures`` (pure math on SI
floats/arrays) → ``evaluation`` (findings with calculation trails) → ``writers`` → ``cli``.
"""

__version__ = "0.1.0"
