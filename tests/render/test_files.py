"""Outputs as one transaction: sweepaudit.render.files, the report's figures folder
(sweepaudit.render.report.write) and their use by the command line (cli._published).

Internal consistency (no outside reference applies); the faults are real where the machine allows:

* a full disk: a 1 MiB tmpfs mounted for the test (needs root; skipped otherwise), and everywhere a
  fault-injecting writer (``os.write`` fails with ENOSPC once a byte budget is spent);
* kill -9: a forked child writes the outputs of a real audit (JSON, JUnit, Markdown report with its
  figures, then the ledger record) and sends itself SIGKILL just before its k-th file-system call,
  for every k until a run completes; after each kill the disk must hold every output old or new
  and whole, the report with all its figures, the user's files untouched, the ledger unchanged or
  with one whole new line, and that line only if every output is new; a later run must then clean
  exactly the hidden files the killed run left;
* stale hidden files: removed only when ours by name, owner and age;
* (slow) the command line itself, killed with SIGKILL at random moments of real runs.
"""

from __future__ import annotations

import errno
import itertools
import os
import re
import shutil
import signal
import subprocess
import sys
import time
from dataclasses import replace
from pathlib import Path

import pytest

from sweepaudit import AuditSettings, audit, sweep_from_array
from sweepaudit import cli
from sweepaudit.errors import OutputError
from sweepaudit.ledger import ledger_record, open_ledger
from sweepaudit.render.files import STALE_AFTER, FileStep, Transaction, check_target, remove_stale, write_atomic, write_terminal
from sweepaudit.render.json import dumps
from sweepaudit.render.report import MANIFEST, figures_folder, render_report, write_report

from ..helpers import run, synthetic_returns, write_wide

OURS = re.compile(r"\..{1,64}~sweepaudit-[0-9a-f]{16}\.(tmp|bak)")
USER_FILES = {"r_figures/trials.jsonl": b'{"kept": true}\n', "r_figures/notes.txt": b"notes\n",
              "r_figures/sweep.csv": b"a,b\n1,2\n", ".a.json~sweepaudit-x.tmp": b"not ours: no 16 hex digits\n",
              "r_figures/.stale~sweepaudit-0123.tmp": b"not ours either\n"}
RECORD = ledger_record(fingerprint="f" * 64, configurations=3, windows=60, selected="x", verdict="go",
                       input_path="s.csv", trials=3)


@pytest.fixture(scope="module")
def versions():
    """Two audits of the same sweep with different seeds: the old and the new outputs."""
    sweep = sweep_from_array(synthetic_returns(), periods_per_year=52)
    old, new = (audit(sweep, settings=AuditSettings(resamples=200, seed=s)) for s in (1, 2))
    return old, new, render_report("r.md", old.document, old.figure_material), render_report("r.md", new.document, new.figure_material)


def _outputs(folder: Path) -> list[tuple[str, Path]]:
    return [("JSON file", folder / "a.json"), ("JUnit file", folder / "a.xml"), ("report", folder / "r.md")]


def _old_state(folder: Path, versions) -> dict[str, bytes]:
    """The folder as a previous run and the user left it; returns every file's bytes."""
    old, _, old_report, _ = versions
    folder.mkdir(exist_ok=True)
    write_report(folder / "r.md", old.document, old.figure_material)
    (folder / "a.json").write_text(dumps(old.document))
    (folder / "a.xml").write_text("<old/>")
    (folder / "trials.jsonl").write_text('{"fingerprint": "' + "e" * 64 + '", "configurations": 2}\n')
    for name, data in USER_FILES.items():
        (folder / name).write_bytes(data)
    return _snapshot(folder)


def _snapshot(folder: Path) -> dict[str, bytes]:
    return {str(p.relative_to(folder)): p.read_bytes() for p in sorted(folder.rglob("*")) if p.is_file()}


def _publish(folder: Path, result, rendered, *, ledger: Path | None = None) -> None:
    """What the command line does after the audit: the outputs, and the record inside them."""
    with open_ledger(ledger or folder / "trials.jsonl") as book:
        with cli._published(result, outputs=_outputs(folder), started=0.0, quiet=True, before_print=lambda: None):
            book.append(RECORD)


def _linked_figures(md: bytes) -> list[str]:
    return re.findall(r"\]\(r_figures/([^)]+\.svg)\)", md.decode("utf-8"))


def _assert_consistent(folder: Path, before: dict[str, bytes], versions) -> bool:
    """Each output old or new and whole; the report's figures all there; user files untouched;
    the ledger unchanged or with one whole new line, only after every output. True if new."""
    _, new, _, new_report = versions
    now = _snapshot(folder)
    for name, data in USER_FILES.items():
        assert now[name] == data, name
    states = {}
    for name, fresh in (("a.json", dumps(new.document).encode()), ("r.md", new_report.text.encode())):
        assert now[name] in (before[name], fresh), name
        states[name] = now[name] == fresh
    assert now["a.xml"] == before["a.xml"] or now["a.xml"].startswith(b"<?xml")
    states["a.xml"] = now["a.xml"] != before["a.xml"]
    figures = new_report.figures if states["r.md"] else {}
    for name in _linked_figures(now["r.md"]):
        assert f"r_figures/{name}" in now, name  # every figure of the report in place
        if figures:
            assert now[f"r_figures/{name}"] == figures[name]
    lines = now["trials.jsonl"].splitlines(keepends=True)
    old_lines = before["trials.jsonl"].splitlines(keepends=True)
    assert lines[: len(old_lines)] == old_lines and len(lines) - len(old_lines) in (0, 1)
    recorded = len(lines) > len(old_lines)
    if recorded:
        assert lines[-1].endswith(b"\n") and b'"fingerprint":"' + b"f" * 64 in lines[-1]
        assert all(states.values()), states  # the record follows every output
    return recorded


def _age_hidden_files(folder: Path) -> list[Path]:
    hidden = [p for p in folder.rglob(".*") if OURS.fullmatch(p.name)]
    past = time.time() - STALE_AFTER - 60
    for p in hidden:
        os.utime(p, (past, past))
    return hidden


# ---------------------------------------------------------------------------------------------
# the steps


def test_a_transaction_commits_together_and_rolls_back_together(tmp_path):
    (tmp_path / "b.txt").write_text("previous b")
    with Transaction() as outputs:
        outputs.add(FileStep(tmp_path / "a.txt", "new a", what="file"))
        outputs.add(FileStep(tmp_path / "b.txt", "new b", what="file"))
        assert sorted(p.name for p in tmp_path.iterdir() if not OURS.fullmatch(p.name)) == ["b.txt"]
        outputs.commit()
    assert (tmp_path / "a.txt").read_text() == "new a" and (tmp_path / "b.txt").read_text() == "new b"
    assert sorted(p.name for p in tmp_path.iterdir()) == ["a.txt", "b.txt"]  # backups removed
    with pytest.raises(RuntimeError):
        with Transaction() as outputs:
            outputs.add(FileStep(tmp_path / "b.txt", "newer b", what="file"))
            outputs.add(FileStep(tmp_path / "c.txt", "new c", what="file"))
            outputs.commit()
            raise RuntimeError("the ledger append failed")
    assert (tmp_path / "b.txt").read_text() == "new b"
    assert sorted(p.name for p in tmp_path.iterdir()) == ["a.txt", "b.txt"]  # c.txt was created here: gone


def test_a_failing_commit_puts_every_earlier_output_back(tmp_path, monkeypatch):
    for name in ("a.txt", "b.txt"):
        (tmp_path / name).write_text(f"previous {name}")
    real = os.replace

    def replace(src, dst, *args, **kwargs):
        if str(dst).endswith("b.txt"):
            raise OSError(errno.EIO, "Input/output error")
        return real(src, dst, *args, **kwargs)

    monkeypatch.setattr(os, "replace", replace)
    with pytest.raises(OutputError, match=r"cannot write the file .*b\.txt: input/output error"):
        with Transaction() as outputs:
            outputs.add(FileStep(tmp_path / "a.txt", "new a", what="file"))
            outputs.add(FileStep(tmp_path / "b.txt", "new b", what="file"))
            outputs.commit()
    monkeypatch.setattr(os, "replace", real)
    assert {p.name: p.read_text() for p in tmp_path.iterdir()} == {"a.txt": "previous a.txt", "b.txt": "previous b.txt"}


def test_targets_are_checked_before_any_work(tmp_path):
    loop = tmp_path / "loop.json"
    os.symlink(loop, loop)
    with pytest.raises(OutputError, match="symbolic-link loop"):
        check_target(loop, "JSON file")
    with pytest.raises(OutputError, match="file name too long"):
        check_target(tmp_path / ("a" * 300 + ".json"), "JSON file")
    with pytest.raises(OutputError, match="not a regular file"):
        check_target("/dev/null", "JSON file")
    with pytest.raises(OutputError, match="folder .* does not exist"):
        check_target(tmp_path / "no" / "a.json", "JSON file")
    real = tmp_path / "real.json"
    os.symlink(real, tmp_path / "link.json")
    assert check_target(tmp_path / "link.json", "JSON file") == real  # written through the link
    write_atomic(tmp_path / "link.json", "{}")
    assert os.path.islink(tmp_path / "link.json") and real.read_text() == "{}"


def test_a_255_character_name_is_written(tmp_path):
    target = tmp_path / ("a" * 250 + ".json")
    write_atomic(target, "{}")
    assert [p.name for p in tmp_path.iterdir()] == [target.name]


def test_only_our_stale_hidden_files_are_removed(tmp_path):
    ours = tmp_path / ".a.json~sweepaudit-0123456789abcdef.tmp"
    fresh = tmp_path / ".a.json~sweepaudit-fedcba9876543210.tmp"
    other_target = tmp_path / ".b.json~sweepaudit-0123456789abcdef.bak"
    lookalikes = [tmp_path / ".a.json~sweepaudit-0123.tmp", tmp_path / ".a.json~sweepaudit-0123456789abcdef.old",
                  tmp_path / "a.json~sweepaudit-0123456789abcdef.tmp"]
    for p in [ours, fresh, other_target, *lookalikes]:
        p.write_text("x")
    link = tmp_path / ".a.json~sweepaudit-aaaaaaaaaaaaaaaa.tmp"
    os.symlink(tmp_path / "a.json", link)
    folder = tmp_path / ".a.json~sweepaudit-bbbbbbbbbbbbbbbb.tmp"
    folder.mkdir()
    past = time.time() - STALE_AFTER - 1
    for p in [ours, other_target, *lookalikes, folder]:
        os.utime(p, (past, past))
    assert remove_stale(tmp_path, target="a.json") == [ours]
    assert remove_stale(tmp_path) == [other_target]
    assert all(p.exists() for p in [fresh, *lookalikes, folder]) and os.path.islink(link)
    if os.geteuid() == 0:  # a file of another user is not ours, however old
        os.chown(fresh, 65534, 65534)
        os.utime(fresh, (past, past))
        assert remove_stale(tmp_path) == [] and fresh.exists()


def test_terminal_output_errors(tmp_path):
    read, write = os.pipe()
    os.close(read)
    with os.fdopen(write, "w") as closed_pipe:
        write_terminal("Verdict: GO\n" * 10_000, closed_pipe)  # the reader went away: not an error
    with open("/dev/full", "w") as full, pytest.raises(OutputError, match="standard output: no space left"):
        write_terminal("Verdict: GO\n", full)


# ---------------------------------------------------------------------------------------------
# the report's figures


def test_a_markdown_report_never_touches_what_it_did_not_write(versions, tmp_path):
    old, new, _, _ = versions
    folder = figures_folder(tmp_path / "r.md")
    folder.mkdir()
    for name, data in USER_FILES.items():
        if name.startswith("r_figures/"):
            (tmp_path / name).write_bytes(data)
    write_report(tmp_path / "r.md", old.document, old.figure_material)
    first = set(_linked_figures((tmp_path / "r.md").read_bytes()))
    write_report(tmp_path / "r.md", new.document, new.figure_material)
    second = set(_linked_figures((tmp_path / "r.md").read_bytes()))
    users = {Path(n).name for n in USER_FILES if n.startswith("r_figures/")}
    assert {p.name for p in folder.iterdir()} == users | second | {MANIFEST}
    assert first - second  # some figures changed, and the old files went
    for name in users:
        assert (folder / name).read_bytes() == USER_FILES[f"r_figures/{name}"]


def test_a_file_in_the_figures_folders_place_is_refused_and_kept(versions, tmp_path):
    old = versions[0]
    (tmp_path / "r_figures").write_text("precious")
    with pytest.raises(Exception, match="a file of that name exists"):
        write_report(tmp_path / "r.md", old.document, old.figure_material)
    assert sorted(p.name for p in tmp_path.iterdir()) == ["r_figures"]
    assert (tmp_path / "r_figures").read_text() == "precious"
    result = run(["audit", str(write_wide(tmp_path / "s.csv", synthetic_returns())), "--quick",
                  "--report", str(tmp_path / "r.md")])
    assert result.exit_code == 2 and "a file of that name exists" in result.stderr
    assert sorted(p.name for p in tmp_path.iterdir()) == ["r_figures", "s.csv"]


def test_a_figure_name_taken_by_a_user_file_is_refused(versions, tmp_path):
    old, _, rendered, _ = versions
    folder = figures_folder(tmp_path / "r.md")
    folder.mkdir()
    taken = next(iter(rendered.figures))
    (folder / taken).write_text("the user's own file")
    with pytest.raises(OutputError, match="was not written by sweepaudit"):
        write_report(tmp_path / "r.md", old.document, old.figure_material)
    assert [p.name for p in folder.iterdir()] == [taken] and not (tmp_path / "r.md").exists()


def test_a_forged_manifest_cannot_make_it_delete(versions, tmp_path):
    old = versions[0]
    folder = figures_folder(tmp_path / "r.md")
    folder.mkdir()
    (tmp_path / "keep.txt").write_text("outside")
    (folder / MANIFEST).write_text('{"schema": "sweepaudit.figures/1", "files": {"../keep.txt": "' + "0" * 64 + '"}}')
    with pytest.raises(Exception, match="not a list of figures written by sweepaudit"):
        write_report(tmp_path / "r.md", old.document, old.figure_material)
    assert (tmp_path / "keep.txt").read_text() == "outside"


# ---------------------------------------------------------------------------------------------
# faults: a full disk, a failing ledger, kill -9


def _full_disk(monkeypatch, folder: Path, budget: int, only: str | None = None) -> None:
    """``os.write`` into files under ``folder`` (whose name matches ``only``, when given) fails with
    ENOSPC once ``budget`` bytes are written to them (a short write first, as a disk does)."""
    real = os.write
    left = [budget]

    def write(fd, data):
        try:
            path = os.readlink(f"/proc/self/fd/{fd}")
        except OSError:
            path = ""
        if not path.startswith(str(folder)) or (only is not None and not re.search(only, Path(path).name)):
            return real(fd, data)
        if left[0] <= 0:
            raise OSError(errno.ENOSPC, "No space left on device")
        done = real(fd, bytes(data[: left[0]]))
        left[0] -= done
        return done

    monkeypatch.setattr(os, "write", write)


def _audit_into(folder: Path, sweep: Path, *extra: str):
    return run(["audit", str(sweep), "--resamples", "200", "--json", str(folder / "a.json"),
                "--junit", str(folder / "a.xml"), "--report", str(folder / "r.md"),
                "--ledger", str(folder / "trials.jsonl"), *extra])


@pytest.mark.parametrize(("only", "budget", "message"), [
    (r"^\.\.sweepaudit-figures\.json~", 10, "report's figures"),  # the manifest
    (r"^\.sharpe_ranking\.", 2_000, "report's figures"),  # a figure, midway
    (r"^\.a\.json~", 0, "the JSON file"),
    (r"^\.a\.xml~", 500, "the JUnit file"),  # the last output, after the report and the JSON
    (r"^trials\.jsonl$", 40, "cannot append to the trial ledger"),  # a short write of the record
], ids=["manifest", "figure", "json", "junit", "ledger"])
def test_a_full_disk_leaves_every_output_and_the_ledger_as_they_were(versions, tmp_path, monkeypatch, only,
                                                                      budget, message):
    """The disk fills up while one file is written: a staged output, or the ledger record."""
    sweep = write_wide(tmp_path / "s.csv", synthetic_returns())
    before = _old_state(tmp_path / "out", versions)
    _full_disk(monkeypatch, tmp_path / "out", budget, only)
    result = _audit_into(tmp_path / "out", sweep)
    assert result.exit_code == 2, result.stdout
    assert result.stderr.count("\n") == 1 and message in result.stderr and "no space left on device" in result.stderr
    assert result.stdout == ""  # no verdict printed for a run whose outputs failed
    assert _snapshot(tmp_path / "out") == before


def test_a_failing_ledger_append_rolls_the_outputs_back(versions, tmp_path, monkeypatch):
    before = _old_state(tmp_path / "out", versions)
    (tmp_path / "book").mkdir()
    ledger = tmp_path / "book" / "trials.jsonl"
    ledger.write_bytes(before["trials.jsonl"])
    sweep = write_wide(tmp_path / "s.csv", synthetic_returns())
    _full_disk(monkeypatch, tmp_path / "book", 40)  # the record starts, then the disk is full
    result = run(["audit", str(sweep), "--resamples", "200", "-q", "--json", str(tmp_path / "out" / "a.json"),
                  "--report", str(tmp_path / "out" / "r.md"), "--ledger", str(ledger)])
    assert result.exit_code == 2 and "cannot append to the trial ledger" in result.stderr
    assert ledger.read_bytes() == before["trials.jsonl"]  # the partial line was cut back
    assert _snapshot(tmp_path / "out") == before


@pytest.fixture()
def small_disk(tmp_path):
    """A 1 MiB tmpfs (root only): a real file system that fills up."""
    mount = tmp_path / "disk"
    mount.mkdir()
    if os.geteuid() != 0 or subprocess.run(["mount", "-t", "tmpfs", "-o", "size=1m", "tmpfs", str(mount)],
                                           capture_output=True).returncode != 0:
        pytest.skip("mounting a tmpfs needs root")
    yield mount
    subprocess.run(["umount", "-l", str(mount)], check=False)


def _fill(mount: Path, leave: int) -> None:
    free = os.statvfs(mount).f_bavail * os.statvfs(mount).f_frsize
    with open(mount / "filler", "wb") as handle:
        handle.write(b"\0" * max(free - leave, 0))
        handle.flush()
        os.fsync(handle.fileno())


def test_a_real_full_disk(versions, small_disk, tmp_path):
    before = _old_state(small_disk / "out", versions)
    sweep = write_wide(tmp_path / "s.csv", synthetic_returns())
    _fill(small_disk, 64 * 1024)
    result = run(["audit", str(sweep), "--resamples", "200", "--json", str(small_disk / "out" / "a.json"),
                  "--junit", str(small_disk / "out" / "a.xml"), "--report", str(small_disk / "out" / "r.md"),
                  "--ledger", str(small_disk / "out" / "trials.jsonl")])
    assert result.exit_code == 2 and result.stderr.count("\n") == 1 and "no space left" in result.stderr
    assert _snapshot(small_disk / "out") == before
    (small_disk / "filler").unlink()
    # A ledger that ends 10 bytes short of a 4 KiB page: the record needs a new page of the disk.
    line = '{"fingerprint": "' + "e" * 64 + '", "configurations": 2, "note": "'
    (small_disk / "out" / "trials.jsonl").write_text(line + "x" * (4096 - 10 - len(line) - 3) + '"}\n')
    before = _snapshot(small_disk / "out")
    _fill(small_disk, 0)  # the outputs fit elsewhere; the ledger's disk is full
    result = run(["audit", str(sweep), "--resamples", "200", "-q", "--json", str(tmp_path / "a.json"),
                  "--ledger", str(small_disk / "out" / "trials.jsonl")])
    assert result.exit_code == 2 and "cannot append to the trial ledger" in result.stderr
    assert _snapshot(small_disk / "out") == before and not (tmp_path / "a.json").exists()


_CALLS = ("open", "write", "fsync", "replace", "rename", "link", "unlink", "mkdir", "rmdir", "ftruncate")


def _run_killed_at(k: int, folder: Path, versions) -> bool:
    """Publish the new outputs in a forked child that SIGKILLs itself before its k-th call; True if
    it was killed (False: it finished)."""
    _, new, _, new_report = versions
    pid = os.fork()
    if pid == 0:  # the child: never returns into pytest
        try:
            count = itertools.count(1)
            for name in _CALLS:
                def wrapped(*args, _real=getattr(os, name), **kwargs):
                    if next(count) == k:
                        os.kill(os.getpid(), signal.SIGKILL)
                    return _real(*args, **kwargs)
                setattr(os, name, wrapped)
            cli.render_report = lambda path, *args: replace(new_report, path=Path(path))  # rendered in the parent
            _publish(folder, new, new_report)
            os._exit(0)
        except BaseException:
            os._exit(3)
    _, status = os.waitpid(pid, 0)
    if os.WIFSIGNALED(status):
        assert os.WTERMSIG(status) == signal.SIGKILL
        return True
    assert os.WEXITSTATUS(status) == 0
    return False


def test_kill_9_at_every_step_leaves_old_or_new_outputs_and_a_true_ledger(versions, tmp_path, monkeypatch):
    template = tmp_path / "template"
    before = _old_state(template, versions)
    new_report = versions[3]
    monkeypatch.setattr(cli, "render_report", lambda path, *args: replace(new_report, path=Path(path)))
    outcomes = []
    for k in itertools.count(1):
        work = tmp_path / f"k{k}"
        shutil.copytree(template, work, symlinks=True)
        killed = _run_killed_at(k, work, versions)
        recorded = _assert_consistent(work, before, versions)
        outcomes.append(recorded)
        # A later run, once the killed run's hidden files are stale, cleans exactly those.
        _age_hidden_files(work)
        _publish(work, versions[1], new_report)
        assert not [p for p in work.rglob(".*") if OURS.fullmatch(p.name)]
        for name, data in USER_FILES.items():
            assert (work / name).read_bytes() == data
        linked = set(_linked_figures((work / "r.md").read_bytes()))
        users = {Path(n).name for n in USER_FILES if n.startswith("r_figures/")}
        assert {p.name for p in (work / "r_figures").iterdir()} == linked | users | {MANIFEST}
        shutil.rmtree(work)
        if not killed:
            break
    assert len(outcomes) > 40 and outcomes[-1] and not outcomes[0]  # many steps; both ends seen


def test_standard_output_on_a_full_disk_takes_everything_back(versions, tmp_path):
    """stdout is /dev/full (a real device that is always full): exit 2, one line, the outputs and
    the ledger as they were (the record, appended before the terminal text, is taken back)."""
    before = _old_state(tmp_path / "out", versions)
    sweep = write_wide(tmp_path / "s.csv", synthetic_returns())
    with open("/dev/full", "w") as full:
        done = subprocess.run([sys.executable, "-m", "sweepaudit", "audit", str(sweep), "--resamples", "200",
                               "--json", str(tmp_path / "out" / "a.json"), "--report", str(tmp_path / "out" / "r.md"),
                               "--ledger", str(tmp_path / "out" / "trials.jsonl")],
                              stdout=full, stderr=subprocess.PIPE, text=True)
    assert done.returncode == 2
    assert done.stderr == "sweepaudit: error: cannot write to standard output: no space left on device\n"
    assert _snapshot(tmp_path / "out") == before


@pytest.mark.slow
def test_kill_9_at_random_moments_of_a_real_run(versions, tmp_path):
    """The command line in a child process, SIGKILLed after a random delay (seeded), many times:
    each output old or whole and new, the report's figures all there, the ledger record only after
    every output."""
    import json
    import random
    import xml.etree.ElementTree as ET

    rng = random.Random(16)
    sweep = write_wide(tmp_path / "s.csv", synthetic_returns())
    template = tmp_path / "template"
    before = _old_state(template, versions)
    for run_number in range(12):
        work = tmp_path / f"run{run_number}"
        shutil.copytree(template, work, symlinks=True)
        child = subprocess.Popen([sys.executable, "-m", "sweepaudit", "audit", str(sweep), "--resamples", "200",
                                  "-q", "--json", str(work / "a.json"), "--junit", str(work / "a.xml"),
                                  "--report", str(work / "r.md"), "--ledger", str(work / "trials.jsonl")])
        time.sleep(rng.uniform(1.0, 6.0))
        child.send_signal(signal.SIGKILL)
        child.wait()
        now = _snapshot(work)
        for name, data in USER_FILES.items():
            assert now[name] == data
        json.loads(now["a.json"])
        if now["a.xml"] != before["a.xml"]:
            ET.fromstring(now["a.xml"])
        for figure in _linked_figures(now["r.md"]):
            assert f"r_figures/{figure}" in now
        lines, old = now["trials.jsonl"].splitlines(), before["trials.jsonl"].splitlines()
        assert lines[: len(old)] == old and len(lines) - len(old) in (0, 1)
        if len(lines) > len(old):
            assert all(now[k] != before[k] for k in ("a.json", "a.xml", "r.md"))
        shutil.rmtree(work)
