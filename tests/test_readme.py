"""The README's Python examples, executed: the blocks marked ``<!-- readme-test: run -->`` run in
order in one namespace, in a fresh folder, as a notebook would run them.

Internal consistency only: the examples run without error against the current code, and the facts
their comments state (the verdict's type, the forgiving selection, the ledger's constant count, the
files written) hold.
"""

from __future__ import annotations

import inspect
import re
from pathlib import Path

import matplotlib.figure

import sweepaudit
from sweepaudit.ledger import read_ledger
from sweepaudit.read import LoadOptions

ROOT = Path(__file__).resolve().parents[1]
MARK = "<!-- readme-test: run -->"


def readme_blocks() -> list[str]:
    """The marked Python blocks of the README, in order."""
    text = (ROOT / "README.md").read_text()
    blocks = re.findall(re.escape(MARK) + r"\n```python\n(.*?)```", text, re.S)
    return blocks


def test_the_marks_all_precede_python_blocks():
    text = (ROOT / "README.md").read_text()
    assert text.count(MARK) == len(readme_blocks()) >= 3


def test_the_python_examples_run(tmp_path, monkeypatch, capsys):
    monkeypatch.chdir(tmp_path)
    namespace: dict = {}
    for number, block in enumerate(readme_blocks(), start=1):
        exec(compile(block, f"README.md python block {number}", "exec"), namespace)
    result = namespace["result"]
    assert isinstance(result, sweepaudit.AuditResult) and result.decision in ("go", "no-go")
    assert namespace["chosen"].selected == "entry_z=1.5, train_days=42"
    printed = capsys.readouterr().out
    assert printed.count(" 12 trials") == 3  # 4, 5 and 6 years: the same 12 configurations
    assert (tmp_path / "audit.html").is_file() and (tmp_path / "audit.json").is_file()
    assert all(isinstance(f, matplotlib.figure.Figure) for f in namespace["figures"].values())
    assert len(read_ledger(tmp_path / "trials.jsonl")) == 3
    calibration = namespace["calibration"]
    assert isinstance(calibration, sweepaudit.CalibrationResult) and calibration.false_go.trials == 10


def test_the_documented_keywords_exist():
    """Every keyword the README's table names is a parameter of audit() or an input option."""
    text = (ROOT / "README.md").read_text()
    section = text[text.index("### Every option by keyword"):text.index("### What `audit` reads")]
    words = set(re.findall(r"`([a-z_]+)=", section))
    known = set(inspect.signature(sweepaudit.audit).parameters) | set(LoadOptions.__dataclass_fields__)
    assert len(words) >= 15 and words <= known, sorted(words - known)
