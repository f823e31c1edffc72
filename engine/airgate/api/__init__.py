"""The layer above the evaluation: entry points that read files and run the engine.

:mod:`airgate.api.core` holds the public functions (re-exported as ``airgate.load_schedule``,
``airgate.load_pack``, ``airgate.evaluate``, ``airgate.check``); :mod:`airgate.api.packtests`
and :mod:`airgate.api.packdiff` run a pack's test cases and compare two packs.
"""
