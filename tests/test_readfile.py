"""Every input opened safely: sweepaudit.readfile, and through it the sweep and benchmark files
(read.formats.read_table), the policy, the baseline and the trial ledger.

Internal consistency (no outside reference applies). Real devices and paths are used: /dev/zero
and /dev/full (reading them never ends), /dev/null, a FIFO with no writer (opening it for
reading would block), a symbolic-link loop, a file the user cannot read (a file of mode 000 read
by an unprivileged user: when the tests run as root, the command runs in a child process as
``nobody``), a sparse file larger than the limit, a 300-character name. Each gives exit status 2
and one line naming the file, quickly and without the process growing.
"""

from __future__ import annotations

import ctypes
import json
import os
import stat
import subprocess
import sys
import tempfile
from pathlib import Path

import pytest

from sweepaudit.readfile import FileTooLarge, NotARegularFile, describe, read_bytes, read_stream

from .helpers import run, synthetic_returns, write_wide

ROOT = Path(__file__).resolve().parents[1]
EDGE = ROOT / "fixtures" / "demo_edge_long.csv"


@pytest.fixture()
def fifo(tmp_path):
    path = tmp_path / "pipe.csv"
    os.mkfifo(path)
    return path


@pytest.fixture()
def loop(tmp_path):
    path = tmp_path / "loop.csv"
    os.symlink(path, path)
    return path


def test_read_bytes_refuses_what_is_not_a_regular_file(tmp_path, fifo, loop):
    for device in ("/dev/zero", "/dev/full", "/dev/null"):
        with pytest.raises(NotARegularFile, match="character device"):
            read_bytes(device, limit=1 << 20)
    with pytest.raises(NotARegularFile, match="FIFO"):
        read_bytes(fifo, limit=1 << 20)  # refused before it is opened: no writer needed, no block
    with pytest.raises(IsADirectoryError):
        read_bytes(tmp_path, limit=1 << 20)
    with pytest.raises(OSError) as info:
        read_bytes(loop, limit=1 << 20)
    assert describe(info.value) == "too many levels of symbolic links (a symbolic-link loop?)"
    link = tmp_path / "zero.csv"
    os.symlink("/dev/zero", link)
    with pytest.raises(NotARegularFile):
        read_bytes(link, limit=1 << 20)


def test_read_bytes_holds_its_limit(tmp_path):
    sparse = tmp_path / "huge.csv"
    with open(sparse, "wb") as handle:
        handle.truncate(1 << 40)  # a terabyte that takes no disk
    with pytest.raises(FileTooLarge, match="larger than the 1 MiB limit"):
        read_bytes(sparse, limit=1 << 20)
    small = tmp_path / "small.csv"
    small.write_bytes(b"x" * 1000)
    assert read_bytes(small, limit=1000) == b"x" * 1000
    with pytest.raises(FileTooLarge):
        read_bytes(small, limit=999)
    with open("/dev/zero", "rb") as endless, pytest.raises(FileTooLarge, match="1 MiB"):
        read_stream(endless, limit=1 << 20, where="<stdin>")


def _one_line(result, *needles):
    assert result.exit_code == 2, (result.stdout, result.stderr)
    assert result.stderr.count("\n") == 1 and result.stderr.startswith("sweepaudit: error: "), result.stderr
    for needle in needles:
        assert needle in result.stderr, result.stderr
    assert result.stdout == "" and "Traceback" not in result.stderr


def _kinds(tmp_path):
    pipe = tmp_path / "pipe.x"
    os.mkfifo(pipe)
    loop = tmp_path / "loop.x"
    os.symlink(loop, loop)
    return {"/dev/zero": "character device", "/dev/full": "character device", "/dev/null": "character device",
            str(pipe): "FIFO", str(loop): "symbolic-link loop"}


@pytest.mark.parametrize("role", ["sweep", "benchmark file", "policy", "baseline", "ledger"])
def test_devices_fifos_and_loops_as_every_input(tmp_path, role):
    sweep = write_wide(tmp_path / "s.csv", synthetic_returns())
    out = tmp_path / "a.json"
    for path, words in _kinds(tmp_path).items():
        args = {"sweep": [path], "benchmark file": [str(sweep), "--benchmark-file", path],
                "policy": [str(sweep), "--policy", path], "baseline": [str(sweep), "--baseline", path],
                "ledger": [str(sweep), "--ledger", path]}[role]
        _one_line(run(["audit", *args, "--quick", "--json", str(out)]), path, words)
        assert not out.exists()


def test_a_sparse_sweep_beyond_the_limit_is_refused(tmp_path, monkeypatch):
    import sweepaudit.read.formats as formats

    monkeypatch.setattr(formats, "SWEEP_FILE_LIMIT", 1 << 20)
    sparse = tmp_path / "huge.csv"
    with open(sparse, "wb") as handle:
        handle.truncate(1 << 40)
    _one_line(run(["audit", str(sparse), "--quick"]), "huge.csv", "larger than the 1 MiB limit")


def test_standard_input_without_end_is_cut_at_the_limit(tmp_path):
    code = ("import sys, sweepaudit.read.formats as f; f.SWEEP_FILE_LIMIT = 1 << 20; "
            "from sweepaudit.cli import main; sys.argv = ['sweepaudit', 'audit', '-', '--quick']; main()")
    with open("/dev/zero", "rb") as endless:
        done = subprocess.run([sys.executable, "-c", code], stdin=endless, capture_output=True, text=True, timeout=60)
    assert done.returncode == 2 and done.stderr.count("\n") == 1
    assert "<stdin>: cannot read it: it is larger than the 1 MiB limit" in done.stderr


@pytest.fixture()
def unreadable():
    """A sweep, a policy, a baseline and a ledger of mode 000 in a folder anyone may enter."""
    folder = Path(tempfile.mkdtemp(prefix="sweepaudit-unreadable-"))
    os.chmod(folder, 0o755)
    files = {}
    for name in ("s.csv", "p.toml", "b.json", "l.jsonl"):
        files[name] = folder / name
        files[name].write_bytes(EDGE.read_bytes() if name == "s.csv" else b"")
        os.chmod(files[name], 0)
    yield files
    for path in files.values():
        path.unlink()
    folder.rmdir()


_PR_CAPBSET_DROP, _CAP_DAC_OVERRIDE, _CAP_DAC_READ_SEARCH = 24, 1, 2


def _as_user(cases):
    """Run the command line for each argument list in one child that cannot read a file of mode
    000: as root, without the two capabilities that let root ignore file permissions (dropped from
    the bounding set, so the program it executes never has them). Returns (status, stderr, stdout)."""
    def drop():
        if os.geteuid() == 0:
            libc = ctypes.CDLL(None, use_errno=True)
            for capability in (_CAP_DAC_OVERRIDE, _CAP_DAC_READ_SEARCH):
                if libc.prctl(_PR_CAPBSET_DROP, capability, 0, 0, 0) != 0:
                    raise OSError(ctypes.get_errno(), "prctl")

    code = ("import json, sys; from typer.testing import CliRunner; from sweepaudit.cli import app; "
            "runner = CliRunner(); results = [runner.invoke(app, args) for args in json.loads(sys.argv[1])]; "
            "print(json.dumps([[r.exit_code, r.stderr, r.stdout] for r in results]))")
    done = subprocess.run([sys.executable, "-c", code, json.dumps(cases)], preexec_fn=drop, capture_output=True,
                          text=True, timeout=120)
    assert done.returncode == 0, done.stderr
    return json.loads(done.stdout)


def test_unreadable_inputs_and_an_unwritable_folder_are_one_line_each(unreadable, tmp_path):
    edge = str(EDGE)
    locked = unreadable["s.csv"].parent / "locked"
    locked.mkdir(mode=0o555)
    report = unreadable["s.csv"].parent / "r.html"
    report.write_text("the previous report")
    cases = [([str(unreadable["s.csv"])], "s.csv"), ([edge, "--policy", str(unreadable["p.toml"])], "p.toml"),
             ([edge, "--baseline", str(unreadable["b.json"])], "b.json"),
             ([edge, "--ledger", str(unreadable["l.jsonl"])], "l.jsonl"),
             ([edge, "--report", str(report), "--json", str(locked / "a.json")], "is not writable")]
    try:
        results = _as_user([["audit", *args, "--quick"] for args, _ in cases])
        for (status, err, out), (_, name) in zip(results, cases):
            assert status == 2, err
            assert err.count("\n") == 1 and name in err
            assert "permission denied" in err or "not writable" in err or "is not readable" in err
            assert out == ""
        for path in unreadable.values():
            assert stat.S_IMODE(os.stat(path).st_mode) == 0
        assert report.read_text() == "the previous report" and list(locked.iterdir()) == []
    finally:
        report.unlink()
        locked.rmdir()


def test_long_names_and_loops_as_outputs(tmp_path):
    (tmp_path / "in").mkdir()
    sweep = write_wide(tmp_path / "in" / "s.csv", synthetic_returns())
    long_name = "a" * 300
    for option, suffix in (("--json", ".json"), ("--junit", ".xml"), ("--report", ".md"), ("--report", ".html")):
        _one_line(run(["audit", str(sweep), "--quick", option, str(tmp_path / (long_name + suffix))]),
                  "file name too long")
    loop = tmp_path / "loop.json"
    os.symlink(loop, loop)
    _one_line(run(["audit", str(sweep), "--quick", "--json", str(loop)]), "symbolic-link loop")
    assert sorted(p.name for p in tmp_path.iterdir()) == ["in", "loop.json"]
    # 250 characters is a legal name: written, and the hidden staging names stay short enough
    fine = tmp_path / ("b" * 245 + ".json")
    result = run(["audit", str(sweep), "--quick", "-q", "--json", str(fine), "--report",
                  str(tmp_path / ("c" * 240 + ".md"))])
    assert result.exit_code in (0, 1) and fine.is_file(), result.stderr
    assert (tmp_path / ("c" * 240 + "_figures")).is_dir()


def test_mixed_time_zone_offsets_are_one_line(tmp_path):
    lines = ["date,a,b"] + [f"2021-01-{d:02d}T00:00:00{'+01:00' if d % 2 else '+05:00'},0.0{d % 7},-0.0{d % 5}"
                            for d in range(1, 29)]
    path = tmp_path / "tz.csv"
    path.write_text("\n".join(lines) + "\n")
    result = run(["audit", str(path), "--quick"])
    assert result.exit_code == 2 and result.stderr.count("\n") == 1 and "Traceback" not in result.stderr
