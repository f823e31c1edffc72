"""Where reports go: regular files replaced atomically with ordinary modes, everything else
written in place, failures to write reported as output errors (exit 2), no temporary file left
behind by an error or a signal.

The expectations are the semantics of the calls involved (POSIX.1-2017: rename(), open(),
umask(); docs/references.md): ``rename`` replaces a directory entry, so a device or FIFO must
be opened and written, never renamed over; ``open(…, O_CREAT)`` gives mode 0666 less the
umask; a write to /dev/full fails with ENOSPC (Linux null(4)/full(4) manual page); a write to
a pipe whose reader has gone fails with EPIPE.
The real /dev/null is only ever written to here, never replaced or changed otherwise.
"""

from __future__ import annotations

import os
import shutil
import stat
import subprocess
import sys
import threading
from pathlib import Path

import pytest

from airgate.cli import main
from airgate.writers import output

from conftest import DEMO, subprocess_env


def _env() -> dict[str, str]:
    env = subprocess_env()
    env.pop("AIRGATE_DEBUG", None)
    return env


def _leftovers(folder: Path) -> list[str]:
    return sorted(p.name for p in folder.iterdir() if p.name.endswith(".tmp"))


def test_dev_null_is_written_not_replaced(capsys):
    before = os.stat("/dev/null")
    assert stat.S_ISCHR(before.st_mode)
    assert main(["check", str(DEMO), "--format", "json:/dev/null", "--format", "sarif"]) == 1
    out = capsys.readouterr()
    assert out.err == "" and '"version": "2.1.0"' in out.out
    after = os.stat("/dev/null")
    assert stat.S_ISCHR(after.st_mode) and after.st_rdev == before.st_rdev
    assert stat.S_IMODE(after.st_mode) == stat.S_IMODE(before.st_mode)
    assert (after.st_ino, after.st_dev) == (before.st_ino, before.st_dev)


@pytest.mark.skipif(not os.path.exists("/dev/full"), reason="no /dev/full on this system")
def test_dev_full_is_an_output_error(tmp_path, capsys, monkeypatch):
    monkeypatch.chdir(tmp_path)
    code = main(["check", str(DEMO), "--format", "json:/dev/full", "--format", "text:r.txt"])
    err = capsys.readouterr().err
    assert code == 2
    assert "output error: cannot write /dev/full: No space left on device (ENOSPC)" in err
    assert "Traceback" not in err
    assert list(tmp_path.iterdir()) == []  # the regular file of the run is not written either
    assert stat.S_ISCHR(os.stat("/dev/full").st_mode)


def test_fifo_is_written_in_place(tmp_path, capsys):
    fifo = tmp_path / "report.fifo"
    os.mkfifo(fifo)
    received: list[bytes] = []
    reader = threading.Thread(target=lambda: received.append(fifo.read_bytes()))
    reader.start()
    try:
        code = main(["check", str(DEMO), "--format", f"json:{fifo}"])
    finally:
        if reader.is_alive():  # a failed open: unblock the reader
            # without blocking: had the reader just finished, a plain open for writing would
            # wait for a reader forever (POSIX open(2): O_NONBLOCK on a FIFO with no reader
            # fails with ENXIO)
            try:
                os.close(os.open(fifo, os.O_WRONLY | os.O_NONBLOCK))
            except OSError:
                pass
        reader.join(30)
    assert code == 1 and capsys.readouterr().err == ""
    assert stat.S_ISFIFO(os.stat(fifo).st_mode)
    assert received[0].startswith(b"{\n") and received[0].endswith(b"}\n")
    assert main(["check", str(DEMO), "--format", "json"]) == 1
    assert capsys.readouterr().out.encode("utf-8") == received[0]


def test_dash_is_standard_output(capsys):
    assert main(["check", str(DEMO), "--format", "junit:-"]) == 1
    via_dash = capsys.readouterr().out
    assert main(["check", str(DEMO), "--format", "junit"]) == 1
    assert capsys.readouterr().out == via_dash and via_dash.startswith("<?xml")
    assert main(["check", str(DEMO), "--format", "junit:-", "--format", "json:-"]) == 2
    assert "at most one format can go to standard output" in capsys.readouterr().err


def test_dev_stdout_appends_where_standard_output_is(tmp_path):
    # /dev/stdout is written through the process's own standard output, so a file opened for
    # appending (the shell's >>) keeps what it held (POSIX O_APPEND)
    log = tmp_path / "log.txt"
    log.write_text("previous line\n", encoding="utf-8")
    with open(log, "ab") as out:
        done = subprocess.run([sys.executable, "-m", "airgate", "check", str(DEMO), "--format",
                               "json:/dev/stdout"], stdout=out, stderr=subprocess.PIPE,
                              env=_env(), timeout=120)
    assert done.returncode == 1, done.stderr
    text = log.read_text(encoding="utf-8")
    assert text.startswith("previous line\n{\n") and text.endswith("}\n")
    assert stat.S_ISREG(log.stat().st_mode) and not log.is_symlink()


def test_modes_follow_the_umask_and_a_replaced_file_keeps_its_mode(tmp_path, capsys):
    old = os.umask(0o027)
    try:
        assert main(["check", str(DEMO), "--format", f"json:{tmp_path / 'new.json'}"]) == 1
        assert main(["import", str(DEMO), "-o", str(tmp_path / "imported.yaml")]) == 0
        assert main(["template", "--format", "csv", "-o", str(tmp_path / "blank")]) == 0
        kept = tmp_path / "kept.json"
        kept.write_text("old\n", encoding="utf-8")
        kept.chmod(0o604)
        assert main(["check", str(DEMO), "--format", f"json:{kept}"]) == 1
    finally:
        os.umask(old)
    capsys.readouterr()
    modes = {p.name: stat.S_IMODE(p.stat().st_mode) for p in tmp_path.iterdir()}
    assert modes.pop("kept.json") == 0o604
    assert modes and set(modes.values()) == {0o640}, modes  # 0666 & ~0027
    assert _leftovers(tmp_path) == []


def test_a_link_to_a_file_is_followed_and_kept(tmp_path, capsys):
    real = tmp_path / "real.txt"
    real.write_text("old\n", encoding="utf-8")
    link = tmp_path / "link.txt"
    link.symlink_to(real)
    assert main(["check", str(DEMO), "--format", f"text:{link}"]) == 1
    capsys.readouterr()
    assert link.is_symlink() and "Fernhollow" in real.read_text(encoding="utf-8")


def test_a_read_only_folder_is_an_output_error(tmp_path):
    folder = tmp_path / "locked"
    folder.mkdir()
    folder.chmod(0o555)
    cmd = [sys.executable, "-m", "airgate", "check", str(DEMO),
           "--format", f"json:{folder / 'r.json'}"]
    if os.geteuid() == 0:  # root may write anywhere: drop its capabilities for this run
        if shutil.which("setpriv") is None:
            pytest.skip("running as root without setpriv to drop the capabilities")
        cmd = ["setpriv", "--inh-caps=-all", "--bounding-set=-all", *cmd]
    try:
        done = subprocess.run(cmd, capture_output=True, text=True, env=_env(), timeout=120)
    finally:
        folder.chmod(0o755)
    assert done.returncode == 2, done.stderr
    assert "output error: cannot write" in done.stderr and "Permission denied" in done.stderr
    assert "Traceback" not in done.stderr
    assert list(folder.iterdir()) == []


def test_a_closed_pipe_is_an_output_error_not_a_pass():
    # a gate piped into a reader that stops early must not pass: exit 2, said on stderr
    proc = subprocess.Popen([sys.executable, "-m", "airgate", "check", str(DEMO), "--format",
                             "json", "--series-step", "1"], stdout=subprocess.PIPE,
                            stderr=subprocess.PIPE, env=_env())
    proc.stdout.read(10)
    proc.stdout.close()
    err = proc.stderr.read().decode("utf-8")
    assert proc.wait(120) == 2, err
    assert "cannot write standard output: Broken pipe (EPIPE)" in err
    assert "Traceback" not in err and "Exception ignored" not in err


_SLOW_WRITER = """
import sys, time
from airgate.cli import main
from airgate.writers import formats

def slow(name, batch, series_step=0, trails=False):
    yield "{" + " " * 100000
    print("writing", flush=True)
    time.sleep(120)
    yield "}"

formats.stream = slow
sys.exit(main(["check", sys.argv[1], "--format", "json:" + sys.argv[2],
               "--format", "text:" + sys.argv[3]]))
"""


@pytest.mark.parametrize("signame", ["SIGTERM", "SIGINT"])
def test_a_signal_while_writing_leaves_no_temporary_file(tmp_path, signame):
    import signal

    out = tmp_path / "out"
    out.mkdir()
    (out / "old.txt").write_text("previous\n", encoding="utf-8")
    def default_handlers() -> None:  # a signal the test runner ignores is not inherited
        signal.signal(signal.SIGINT, signal.SIG_DFL)
        signal.signal(signal.SIGTERM, signal.SIG_DFL)

    proc = subprocess.Popen([sys.executable, "-c", _SLOW_WRITER, str(DEMO),
                             str(out / "r.json"), str(out / "old.txt")],
                            stdout=subprocess.PIPE, stderr=subprocess.PIPE, env=_env(),
                            preexec_fn=default_handlers)
    try:
        assert proc.stdout.readline() == b"writing\n"
        assert _leftovers(out)  # the writer is mid-write: its temporary file exists
        proc.send_signal(getattr(signal, signame))
        code = proc.wait(60)
    finally:
        proc.kill()
    err = proc.stderr.read().decode("utf-8")
    # SIGTERM: 128 + 15 (the shells' convention); SIGINT: KeyboardInterrupt, exit 2
    assert code == (143 if signame == "SIGTERM" else 2), err
    assert "Traceback" not in err
    assert sorted(p.name for p in out.iterdir()) == ["old.txt"]
    assert (out / "old.txt").read_text(encoding="utf-8") == "previous\n"


def test_write_all_keeps_regular_files_when_a_stream_fails(tmp_path):
    if not os.path.exists("/dev/full"):
        pytest.skip("no /dev/full on this system")
    with pytest.raises(output.OutputError, match="ENOSPC"):
        output.write_all([(tmp_path / "a.txt", "a\n"), ("/dev/full", "b\n")])
    assert list(tmp_path.iterdir()) == []
    assert output.is_stream("-") and output.is_stream("/dev/stdout")
    assert output.is_stream("/dev/fd/1") and output.is_stream("/proc/self/fd/1")
    assert not output.is_stream(tmp_path / "new.json")


@pytest.mark.skipif(not os.access("/dev/shm", os.W_OK), reason="no writable /dev/shm")
def test_a_regular_file_under_dev_is_still_written_atomically(capsys):
    # /dev/shm is an ordinary (memory) file system: its files are files, not devices
    import tempfile

    with tempfile.TemporaryDirectory(dir="/dev/shm") as folder:
        target = Path(folder) / "report.json"
        assert not output.is_stream(target)
        assert main(["check", str(DEMO), "--format", f"json:{target}"]) == 1
        assert target.read_text(encoding="utf-8").startswith("{\n")
        assert sorted(p.name for p in Path(folder).iterdir()) == ["report.json"]
    capsys.readouterr()


# --- JSON and SARIF are written zone by zone and result by result ------------------------------

def test_lazy_json_is_the_standard_indented_dump():
    # Python's json module (json.dumps, indent=2) as the outside reference
    import json

    data = output.Streamed(a=output.Lazy([]), b=output.Streamed(), c=output.Lazy(iter(
        [{}, [], 1.5, "x\ny ü", {"k": [1, {"z": None}]}, output.Streamed(n=output.Lazy([2]))])))
    ref = {"a": [], "b": {}, "c": [{}, [], 1.5, "x\ny ü", {"k": [1, {"z": None}]}, {"n": [2]}]}
    assert "".join(output.json_chunks(data)) == json.dumps(ref, indent=2,
                                                           ensure_ascii=False) + "\n"


@pytest.mark.parametrize("fmt", ["json", "sarif"])
def test_json_and_sarif_make_each_zone_and_result_while_writing(fmt, tmp_path, monkeypatch):
    # bounded memory: after the first pieces are written, only the first zones (or results)
    # have been made, at most one batch of them (made two at a time here, so the demo's lists
    # are several batches); the whole text equals the plain data dumped at once
    import json

    from airgate import check
    from airgate.evaluation.batch import gather
    from airgate.writers import formats, json_report, sarif

    report = check(DEMO)
    batch = gather([report, check(DEMO)], [], "fail")
    made = []
    name = "_zone_texts" if fmt == "json" else "_result"  # zones: a batch at a time
    module = json_report if fmt == "json" else sarif
    original = getattr(module, name)

    def counting(*args, **kw):
        made.extend(args[0] if fmt == "json" else [1])
        return original(*args, **kw)

    monkeypatch.setattr(module, name, counting)
    monkeypatch.setattr(output, "_BATCH", 2)
    pieces = iter(formats.stream(fmt, batch))
    text = []
    for piece in pieces:  # up to the first zone (result) written
        text.append(piece)
        if made:
            break
    total = (sum(len(s.zones) for r in batch.reports for s in r.systems) if fmt == "json"
             else sum(len(r.findings) for r in batch.reports))
    assert 1 <= len(made) <= 2 < total
    text += list(pieces)
    assert len(made) == total
    monkeypatch.setattr(module, name, original)
    plain = (json_report._batch_dict(batch, 0) if fmt == "json" else sarif.to_dict(batch))
    assert "".join(text) == json.dumps(plain, indent=2, ensure_ascii=False) + "\n"
