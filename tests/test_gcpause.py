"""The cyclic garbage collector is paused while a schedule is read, evaluated and written, and
restored afterwards (common practice: gc.disable/gc.enable around allocation-heavy work)."""

from __future__ import annotations

import gc

import pytest

from conftest import DEMO

from airgate import gcpause
from airgate.api.core import check, evaluate, load_pack, load_schedule


def test_paused_restores_the_collector_even_when_raising():
    assert gc.isenabled()
    with pytest.raises(RuntimeError):
        with gcpause.paused():
            assert not gc.isenabled()
            raise RuntimeError("inside")
    assert gc.isenabled()


def test_nested_pauses_restore_once():
    with gcpause.paused():
        with gcpause.paused():
            assert not gc.isenabled()
        assert not gc.isenabled()  # the inner pause found it disabled: it leaves it so
    assert gc.isenabled()


def test_a_collector_disabled_by_the_caller_stays_disabled():
    gc.disable()
    try:
        with gcpause.paused():
            pass
        assert not gc.isenabled()
    finally:
        gc.enable()


def test_reading_and_evaluating_pause_it(monkeypatch):
    seen = []
    from airgate.evaluation import engine

    original = engine.evaluate

    def spying(*args, **kw):
        seen.append(gc.isenabled())
        return original(*args, **kw)

    monkeypatch.setattr(engine, "evaluate", spying)
    report = evaluate(load_schedule(DEMO), load_pack("ashrae-62.1-2019"))
    assert report.systems and seen == [False] and gc.isenabled()
    check(DEMO)
    assert seen == [False, False] and gc.isenabled()


def test_the_check_command_pauses_once_and_resumes_after_its_reports_are_freed(monkeypatch,
                                                                              tmp_path):
    # common practice (the standard library's gc module): the collector stays off from reading
    # to writing, and is on again when the command returns; nothing re-enables it in between
    from airgate.cli import main
    from airgate.writers import output

    seen = []
    original = output.write_all

    def spying(*args, **kw):
        seen.append(gc.isenabled())
        return original(*args, **kw)

    monkeypatch.setattr(output, "write_all", spying)
    toggles = []
    real_enable = gc.enable
    monkeypatch.setattr(gc, "enable", lambda: (toggles.append("on"), real_enable())[1])
    code = main(["check", str(DEMO), "--format", f"json:{tmp_path / 'r.json'}"])
    assert code in (0, 1) and seen == [False] and gc.isenabled()
    assert toggles == ["on"]  # once, at the end of the command
