"""Validation study: false-go rate and power of the verdict on synthetic sweeps with known truth.

For each family of sweeps (sweepaudit.simulate.FAMILIES) and a few realistic sizes, the full audit
runs on many simulated sweeps. Null families have no edge: every go is false, and the false-go rate
should not exceed the policy's significance level. Alternatives plant an edge: the go rate is the
power. Beside the verdict, on the same sweeps:

* the plain yardstick, a Bonferroni max-t test (the best iid t-ratio against Phi^-1(1 - alpha/N)),
  the floor the verdict must beat on power at no worse size (it ignores serial dependence, so its
  size under autocorrelated nulls is shown too);
* the verdict under alternative choices, re-decided from the same evidence: the deflated Sharpe
  check at the paper's fixed 0.95, or advisory; CSCV required; SPA / StepM unscaled or scaled by
  the bootstrap standard deviation; the iid Sharpe variance; without the family-tails check; the
  previous release's defaults together; the walk-forward or the decay check required. This is the
  trade-off table behind the defaults;
* the evidence over time: how often the advisory ``edge_decay`` check flags a decayed edge and how
  often the ``walk_forward`` check passes, on every family, and the live / dead pair (an edge that
  came alive in the second half, and the very same sweeps reversed in time: an edge that has died),
  audited sweep by sweep in both directions.

All data are synthetic. Weekly windows (52 a year), per-window volatility 1% unless a family says
otherwise.

    python benchmarks/calibration.py                 # the full study, writes docs/validation.{md,json}
    python benchmarks/calibration.py --smoke         # a few minutes; prints, writes nothing
    python benchmarks/calibration.py --sweeps 500 --resamples 999 --jobs 2
"""

from __future__ import annotations

import argparse
import gc
import json
import os
import platform
import shlex
import subprocess
import sys
import time
from concurrent.futures import ProcessPoolExecutor
from dataclasses import replace
from datetime import datetime, timezone
from pathlib import Path

import numpy as np

ROOT = Path(__file__).resolve().parents[1]
sys.path.insert(0, str(ROOT / "src"))

from sweepaudit import __version__  # noqa: E402
from sweepaudit.audit import gather_evidence  # noqa: E402
from sweepaudit.calibration import binomial_rate  # noqa: E402
from sweepaudit.methods.snooping import bonferroni_max_t  # noqa: E402
from sweepaudit.policy import DEFAULT_POLICY  # noqa: E402
from sweepaudit.results import AuditSettings  # noqa: E402
from sweepaudit.simulate import FAMILIES  # noqa: E402
from sweepaudit.read import sweep_from_array  # noqa: E402
from sweepaudit.verdict import decide  # noqa: E402

PERIODS_PER_YEAR = 52.0

# (family, configurations N, windows T). The reference case is a 10 x 10 grid over four
# years of weekly windows (N = 100, T = 208); five years for the regime and crash families; the
# earlier 1-D families at their earlier sizes.
SCENARIOS: tuple[tuple[str, int, int], ...] = (
    ("grid", 100, 208),
    ("fat_tailed_grid", 100, 208),
    ("autoregressive_grid", 100, 208),
    ("persistent_grid", 100, 208),
    ("persistent_grid", 100, 520),
    ("clustered_grid", 100, 208),
    ("leveraged", 100, 208),
    ("crashes", 100, 260),
    ("regime", 100, 260),
    ("iid_normal", 10, 52),
    ("iid_normal", 500, 52),
    ("student_t", 50, 260),
    ("autoregressive", 50, 260),
    ("volatility_clustering", 50, 260),
    ("neighbour_grid", 50, 260),
    ("grid_plateau", 100, 208),
    ("grid_plateau_weaker", 100, 208),
    ("hill", 100, 208),
    ("quiet_edge", 50, 208),
    ("grid_plateau_dependent", 100, 208),
    ("grid_plateau_fat_tailed", 100, 208),
    ("grid_plateau_persistent", 100, 208),
    ("late_edge", 100, 208),
    ("dead_edge", 100, 208),
    ("dead_edge_dependent", 100, 208),
    ("one_edge", 50, 1000),
    ("edge_plateau", 50, 260),
    ("several_edges", 50, 260),
    ("short_record", 10, 52),
)
SMOKE_SCENARIOS: tuple[tuple[str, int, int], ...] = (
    ("grid", 36, 156),
    ("persistent_grid", 36, 156),
    ("grid_plateau", 36, 156),
    ("quiet_edge", 20, 156),
    ("late_edge", 36, 156),
    ("dead_edge", 36, 156),
)

#: Families simulated from the same seeds as a partner, so each sweep is its partner's read backwards.
PAIRED: dict[str, str] = {"dead_edge": "late_edge"}
#: Per-sweep outcomes kept for the paired families (the pair table compares them sweep by sweep).
PER_SWEEP = ("go", "edge_decay_failed", "walk_forward_passed")

FAMILY = {f.name: f for f in FAMILIES}

#: The verdict under alternative choices, re-decided from the same evidence (see :func:`_variants`).
VARIANTS: dict[str, str] = {
    "default": "the default policy",
    "dsr_fixed": "deflated Sharpe check at the paper's fixed 0.95 instead of the calibrated level",
    "dsr_advisory": "deflated Sharpe check advisory",
    "cscv_required": "CSCV overfitting check required",
    "scale_none": "SPA / StepM unscaled (the previous default)",
    "scale_bootstrap": "SPA / StepM scaled by the bootstrap standard deviation",
    "sharpe_iid": "PSR, DSR and minimum track record on the iid Sharpe variance",
    "no_tails": "without the family-tails check",
    "previous": "the previous defaults together: unscaled snooping on its p-value alone, DSR at 0.95 "
    "on the iid variance, CSCV required, iid minimum track record, no family-tails check",
    "walk_forward_required": "the walk-forward check required (its mean above zero out of sample)",
    "edge_decay_required": "the decay check required (no significant fall of the recent mean)",
}


def _variants(evidence, verdict, policy) -> dict[str, bool]:
    """Go or not under each variant, from the checks the verdict ran and the evidence's other figures."""
    passed = {c.id: c.passed for c in verdict.checks}
    required = {c.id for c in verdict.checks if c.required}
    inf, sn, k = evidence.sharpe, evidence.snooping, evidence.selected_index
    level = policy.significance

    def go(overrides: dict[str, bool], add: tuple[str, ...] = (), drop: tuple[str, ...] = ()) -> bool:
        need = (required | set(add)) - set(drop)
        return all(overrides.get(c, passed.get(c, True)) for c in need)

    def snooping(scale: str, stepm: bool = True) -> bool:
        ok = sn.spa(scale).pvalue <= level
        return ok and (k in sn.stepm(scale).significant) if stepm else ok

    iid_track = inf.min_track_record_iid_observations
    track_iid = iid_track is not None and evidence.sweep.n_windows >= iid_track
    out = {
        "default": verdict.decision == "go",
        "dsr_fixed": go({"deflated_sharpe": inf.deflated.probability >= 0.95}),
        "dsr_advisory": go({}, drop=("deflated_sharpe",)),
        "cscv_required": go({}, add=("overfitting",)),
        "scale_none": go({"data_snooping": snooping("none")}),
        "scale_bootstrap": go({"data_snooping": snooping("bootstrap")}),
        "sharpe_iid": go({"deflated_sharpe": inf.deflated_iid.probability >= inf.deflated_level,
                          "track_record": track_iid}),
        "no_tails": go({}, drop=("family_tails",)),
        "previous": go({"data_snooping": snooping("none", stepm=False),
                        "deflated_sharpe": inf.deflated_iid.probability >= 0.95, "track_record": track_iid},
                       add=("overfitting",), drop=("family_tails",)),
        "walk_forward_required": go({}, add=("walk_forward",)),
        "edge_decay_required": go({}, add=("edge_decay",)),
    }
    return out


def run_scenario(job: tuple[int, str, int, int, int, int, int]) -> dict:
    """One scenario: ``sweeps`` audits of simulated sweeps (picklable for a process pool)."""
    index, family, n, t, sweeps, resamples, seed = job
    fam = FAMILY[family]
    policy = DEFAULT_POLICY
    scenario_seed = int(np.random.SeedSequence([seed, index]).generate_state(1, dtype=np.uint32)[0])
    children = np.random.SeedSequence(scenario_seed).spawn(sweeps)
    planted = set(fam.planted(n)) if fam.planted else None
    start = time.perf_counter()
    counts = {name: 0 for name in VARIANTS}
    failures: dict[str, list[int]] = {}
    bonferroni = picked = 0
    outcomes: dict[str, list[int]] = {key: [] for key in PER_SWEEP}
    gc.freeze()  # statsmodels' Holm adjustment collects garbage on every call (see calibration.py)
    try:
        for i, child in enumerate(children):
            rng = np.random.default_rng(child)
            x = fam.simulate(rng, n, t)
            sweep = sweep_from_array(x, periods_per_year=PERIODS_PER_YEAR)
            settings = AuditSettings(seed=int(child.generate_state(1)[0]), resamples=resamples)
            evidence = gather_evidence(sweep, settings=settings, policy=policy)
            verdict = decide(evidence, policy)
            for name, ok in _variants(evidence, verdict, policy).items():
                counts[name] += ok
            for c in verdict.checks:
                failures.setdefault(c.id, [0, 0, int(c.required)])
                failures[c.id][0] += not c.passed
                failures[c.id][1] += 1
            bonferroni += bonferroni_max_t(x, level=policy.significance).rejected
            picked += planted is not None and evidence.selected_index in planted
            passed = {c.id: c.passed for c in verdict.checks}
            for key, value in zip(PER_SWEEP, (verdict.decision == "go", not passed.get("edge_decay", True),
                                              passed.get("walk_forward", False))):
                outcomes[key].append(int(value))
    finally:
        gc.unfreeze()
    rate = lambda events, total=sweeps: vars(binomial_rate(int(events), int(total)))  # noqa: E731
    return {
        "family": family,
        "kind": fam.kind,
        "description": fam.description,
        "configurations": n,
        "windows": t,
        "years": t / PERIODS_PER_YEAR,
        "seed": scenario_seed,
        "seconds": round(time.perf_counter() - start, 1),
        "sweeps": sweeps,
        "go": rate(counts["default"]),
        "bonferroni_max_t": rate(bonferroni),
        "variants": {name: rate(v) for name, v in counts.items()},
        "checks": [{"id": cid, "required": bool(f[2]), "failure": rate(f[0], f[1])} for cid, f in failures.items()],
        "planted_selected": rate(picked) if planted is not None else None,
        "per_sweep": outcomes if family in PAIRED or family in PAIRED.values() else None,
    }


def _pct(r: dict | None, se: bool = True) -> str:
    if r is None or r["rate"] is None:
        return "n/a"
    if se:
        return f"{100 * r['rate']:.1f} ± {100 * r['standard_error']:.1f}"
    return f"{100 * r['rate']:.1f}"


def _git(*args: str) -> str | None:
    try:
        return subprocess.run(["git", *args], cwd=ROOT, capture_output=True, text=True, check=True).stdout.strip()
    except (OSError, subprocess.CalledProcessError):
        return None


def _where(r: dict) -> str:
    return f"{r['family']} (N = {r['configurations']}, T = {r['windows']})"


def findings(rows: list[dict], level: float) -> list[str]:
    """Plain statements from the figures alone: size against the level, power against the yardstick."""
    out = []
    short = [r for r in rows if r["kind"] == "null" and r["family"] != "regime"]
    if short:
        top = max(short, key=lambda r: r["go"]["rate"])
        out.append(
            f"Highest false-go rate over the {len(short)} null scenarios whose dependence is short against the "
            f"sample: {_where(top)}: {_pct(top['go'])}% (95% upper bound {100 * top['go']['upper_95']:.1f}%)."
        )
    for r in rows:
        go = r["go"]
        if r["kind"] == "null" and go["rate"] > level + 2 * go["standard_error"]:
            out.append(f"False-go rate above {100 * level:g}% by more than two Monte Carlo standard errors: "
                       f"{_where(r)}: {_pct(go)}%.")
        if r["kind"] == "alternative":
            yard = r["bonferroni_max_t"]
            gap = go["rate"] - yard["rate"]
            se = (go["standard_error"] ** 2 + yard["standard_error"] ** 2) ** 0.5
            if gap < -2 * se:
                out.append(f"Power below the Bonferroni max-t test's beyond Monte Carlo error: {_where(r)}: "
                           f"{_pct(go)}% against {_pct(yard)}%.")
    return out


#: Families whose mean changes over time by design: neither a constant edge nor a null for the decay
#: check (the regime family switches sign; the late and dead edges start or stop).
CHANGING = ("regime", "late_edge", "dead_edge", "dead_edge_dependent")


def _check_rate(r: dict, check_id: str, passed: bool = False) -> dict | None:
    """How often a check failed (or passed) in a scenario's sweeps, as a rate with its Monte Carlo error."""
    for c in r["checks"]:
        if c["id"] == check_id:
            f = c["failure"]
            events = f["trials"] - f["events"] if passed else f["events"]
            return vars(binomial_rate(int(events), int(f["trials"])))
    return None


def time_findings(rows: list[dict], level: float) -> list[str]:
    """The evidence-over-time targets, stated from the figures."""
    out = []
    for r in rows:
        if r["family"] in PAIRED:
            flagged = _check_rate(r, "edge_decay")
            out.append(f"`edge_decay` flags the dead edge in {_pct(flagged)}% of {_where(r)} sweeps (target: at "
                       "least 80%).")
    steady = [(r, _check_rate(r, "edge_decay")) for r in rows if r["family"] not in CHANGING]
    steady = [(r, f) for r, f in steady if f is not None]
    if steady:
        r, f = max(steady, key=lambda pair: pair[1]["rate"])
        out.append(f"Highest `edge_decay` flag rate over the {len(steady)} scenarios whose edge (or its absence) is "
                   f"constant in time: {_where(r)}: {_pct(f)}% (target: at most {100 * level:g}%).")
    nulls = [(r, _check_rate(r, "walk_forward", passed=True)) for r in rows
             if r["kind"] == "null" and r["family"] != "regime"]
    nulls = [(r, f) for r, f in nulls if f is not None]
    if nulls:
        r, f = max(nulls, key=lambda pair: pair[1]["rate"])
        out.append(f"Highest `walk_forward` pass rate over the {len(nulls)} null scenarios whose dependence is short "
                   f"against the sample: {_where(r)}: {_pct(f)}% (target: at most {100 * level:g}%).")
    return out


def pair_table(rows: list[dict]) -> list[str]:
    """The live / dead pairs audited sweep by sweep: do the verdicts and the two time checks tell them apart?"""
    lines = [
        "| pair | N | T | sweeps | identical verdicts % | go % (live / dead) | `edge_decay` flags % (live / dead) "
        "| `walk_forward` passes % (live / dead) | go % with `edge_decay` required (live / dead) |",
        "|---|---:|---:|---:|---:|---:|---:|---:|---:|",
    ]
    for dead in rows:
        live = next((r for r in rows if r["family"] == PAIRED.get(dead["family"])
                     and (r["configurations"], r["windows"]) == (dead["configurations"], dead["windows"])), None)
        if live is None or not live.get("per_sweep") or not dead.get("per_sweep"):
            continue
        same = np.mean(np.array(live["per_sweep"]["go"]) == np.array(dead["per_sweep"]["go"]))
        both = lambda f: f"{_pct(f(live), se=False)} / {_pct(f(dead), se=False)}"  # noqa: E731
        lines.append(
            f"| {live['family']} / {dead['family']} | {dead['configurations']} | {dead['windows']} | {dead['sweeps']} | "
            f"{100 * same:.1f} | {both(lambda r: r['go'])} | {both(lambda r: _check_rate(r, 'edge_decay'))} | "
            f"{both(lambda r: _check_rate(r, 'walk_forward', passed=True))} | "
            f"{both(lambda r: r['variants']['edge_decay_required'])} |"
        )
    return lines


def time_table(rows: list[dict]) -> list[str]:
    lines = ["| family | kind | N | T | `edge_decay` flags % | `walk_forward` passes % |",
             "|---|---|---:|---:|---:|---:|"]
    for r in rows:
        lines.append(f"| {r['family']} | {r['kind']} | {r['configurations']} | {r['windows']} | "
                     f"{_pct(_check_rate(r, 'edge_decay'))} | {_pct(_check_rate(r, 'walk_forward', passed=True))} |")
    return lines


def _check_table(rows: list[dict], kind: str, ids: list[str], required: dict[str, bool]) -> list[str]:
    head = " | ".join(f"`{i}`{'' if required[i] else ' (advisory)'}" for i in ids)
    first = "false go %" if kind == "null" else "power %"
    extra = "Bonferroni max-t %" + (" | picked edge %" if kind == "alternative" else "")
    lines = [
        f"| family | N | T (years) | {first} | {extra} | {head} |",
        "|---|---:|---:|---:|---:|" + ("---:|" if kind == "alternative" else "") + "---:|" * len(ids),
    ]
    for r in rows:
        if r["kind"] != kind:
            continue
        by = {c["id"]: c for c in r["checks"]}
        cells = " | ".join(_pct(by[i]["failure"], se=False) if i in by else "n/a" for i in ids)
        picked = f" | {_pct(r['planted_selected'], se=False)}" if kind == "alternative" else ""
        lines.append(
            f"| {r['family']} | {r['configurations']} | {r['windows']} ({r['years']:.1f}) | {_pct(r['go'])} | "
            f"{_pct(r['bonferroni_max_t'])}{picked} | {cells} |"
        )
    return lines


def _variant_table(rows: list[dict]) -> list[str]:
    names = list(VARIANTS)
    lines = [
        "| family | N | T | " + " | ".join(f"`{n}`" for n in names) + " |",
        "|---|---:|---:|" + "---:|" * len(names),
    ]
    for kind in ("null", "alternative"):
        for r in rows:
            if r["kind"] == kind:
                cells = " | ".join(_pct(r["variants"][n], se=False) for n in names)
                lines.append(f"| {r['family']} ({'null' if kind == 'null' else 'power'}) | {r['configurations']} | "
                             f"{r['windows']} | {cells} |")
    return lines


def markdown(doc: dict) -> str:
    rows = doc["scenarios"]
    ids: list[str] = []
    required: dict[str, bool] = {}
    for r in rows:
        for c in r["checks"]:
            if c["id"] not in ids:
                ids.append(c["id"])
            required[c["id"]] = c["required"]
    level = doc["policy"]["significance"]
    lines = [
        "# Validation: is the verdict calibrated?",
        "",
        "Generated by `benchmarks/calibration.py`; do not edit by hand. All sweeps are synthetic.",
        "",
        f"- Command: `{doc['command']}`",
        f"- Code: sweepaudit {doc['version']}, commit `{doc['commit']}`",
        f"- Run: {doc['date']}, {doc['seconds'] / 60:.1f} minutes on {doc['machine']}",
        f"- Each scenario: {doc['sweeps']} simulated sweeps, each audited in full with {doc['resamples']} "
        "bootstrap resamples (default settings otherwise: stationary bootstrap, automatic block length).",
        f"- Policy: the default; significance level {100 * level:g}%; required checks: "
        + ", ".join(f"`{c}`" for c in doc["policy"]["required"]) + ".",
        "- Windows are weekly (52 a year), per-window volatility 1% (about 7% a year of tracking error).",
        "- ± is the Monte Carlo standard error sqrt(p (1 - p) / sweeps); at 0% it is 0, so the one-sided "
        "95% Clopper-Pearson upper bound is kept in `validation.json`.",
        "- Bonferroni max-t: the best iid t-ratio against Phi^-1(1 - 0.05 / N) on the same sweeps; it "
        "ignores serial dependence, so its rate on autocorrelated nulls is its own size, not a target.",
        "",
        "## Findings",
        "",
        *[f"- {s}" for s in findings(rows, level)],
        "",
        "## Null families: false-go rate (target: at most the significance level)",
        "",
        "Check columns: the share of sweeps in which each check failed (percent).",
        "",
        *_check_table(rows, "null", ids, required),
        "",
        "## Alternatives: power (go rate when an edge exists)",
        "",
        "'picked edge': the share of sweeps in which the audit judged a configuration that has the edge.",
        "",
        *_check_table(rows, "alternative", ids, required),
        "",
        "## The verdict under other choices (the trade-off behind the defaults)",
        "",
        "Go rate (percent) of the verdict re-decided from the same evidence with one choice changed:",
        "",
        *[f"- `{name}`: {words}" for name, words in VARIANTS.items()],
        "",
        *_variant_table(rows),
        "",
        "## The evidence over time: the decay and walk-forward checks",
        "",
        "Both checks are advisory by default. `edge_decay` fails (flags) when the recent half of the selected "
        "configuration's record earned significantly less than the half before it; `walk_forward` passes when "
        "the record of re-picking the best configuration before every window has a mean above zero beyond "
        "chance. On a null family a `walk_forward` pass is a false alarm; on a family whose edge is constant in "
        "time an `edge_decay` flag is one.",
        "",
        *[f"- {s}" for s in time_findings(rows, level)],
        "",
        "The live / dead pair: each `dead_edge` sweep is the `late_edge` sweep of the same seed read backwards, "
        "so every full-sample figure is the same in both; the two time checks are what can tell them apart.",
        "",
        *pair_table(rows),
        "",
        *time_table(rows),
        "",
        "## Families",
        "",
    ]
    seen = set()
    for r in rows:
        if r["family"] not in seen:
            seen.add(r["family"])
            lines.append(f"- `{r['family']}` ({r['kind']}): {r['description']}.")
    lines += ["", "Simulators: `sweepaudit.simulate` (also importable from `sweepaudit.calibration`). "
              "Machine-readable figures: `docs/validation.json`.", ""]
    return "\n".join(lines)


def _run(jobs: list[tuple], workers: int) -> list[dict]:
    rows: list[dict | None] = [None] * len(jobs)
    order = sorted(range(len(jobs)), key=lambda i: -jobs[i][2] * jobs[i][3])  # largest first

    def report(i: int) -> None:
        r = rows[i]
        print(f"{r['family']:>24} N={r['configurations']:<4} T={r['windows']:<5} go {_pct(r['go'])}%  "
              f"Bonferroni {_pct(r['bonferroni_max_t'])}%  ({r['seconds']} s)", file=sys.stderr, flush=True)

    if workers > 1:
        with ProcessPoolExecutor(max_workers=workers) as pool:
            futures = {i: pool.submit(run_scenario, jobs[i]) for i in order}
            for i in order:
                rows[i] = futures[i].result()
                report(i)
    else:
        for i in order:
            rows[i] = run_scenario(jobs[i])
            report(i)
    return rows  # type: ignore[return-value]


def _seed_index(scenarios, i: int) -> int:
    """The index a scenario's seed is drawn from: its partner's for a paired family (the same sweeps), its
    own otherwise. Indices count over the full list, so a subset run with --only draws the same sweeps."""
    family, n, t = scenarios[i]
    family = PAIRED.get(family, family)
    full = SCENARIOS if (family, n, t) in SCENARIOS else scenarios
    return full.index((family, n, t)) if (family, n, t) in full else i


def main(argv: list[str] | None = None) -> int:
    parser = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    parser.add_argument("--sweeps", type=int, default=None, help="simulated sweeps per scenario (default 200)")
    parser.add_argument("--resamples", type=int, default=None, help="bootstrap resamples per audit (default 499)")
    parser.add_argument("--seed", type=int, default=20261202)
    parser.add_argument("--jobs", type=int, default=2, help="worker processes (default 2)")
    parser.add_argument("--smoke", action="store_true", help="a few-minute run on small scenarios; writes nothing")
    parser.add_argument("--only", default=None, help="comma-separated family names to run (the rest are skipped)")
    parser.add_argument("--output-dir", type=Path, default=None, help="where validation.md/json go (default docs/)")
    args = parser.parse_args(argv)
    sweeps = args.sweeps or (40 if args.smoke else 200)
    resamples = args.resamples or (199 if args.smoke else 499)
    scenarios = SMOKE_SCENARIOS if args.smoke else SCENARIOS
    if args.only:
        keep = set(args.only.split(","))
        scenarios = tuple(s for s in scenarios if s[0] in keep)
    output = args.output_dir if args.output_dir is not None else (None if args.smoke or args.only else ROOT / "docs")
    words = ["python", "benchmarks/calibration.py"] + (["--smoke"] if args.smoke else [])
    words += ["--sweeps", str(sweeps), "--resamples", str(resamples), "--seed", str(args.seed)]
    jobs = [(_seed_index(scenarios, i), f, n, t, sweeps, resamples, args.seed) for i, (f, n, t) in enumerate(scenarios)]
    commit = _git("rev-parse", "--short", "HEAD")
    start = time.perf_counter()
    rows = _run(jobs, args.jobs)
    elapsed = time.perf_counter() - start
    doc = {
        "schema": "sweepaudit.validation/2",
        "command": " ".join(shlex.quote(w) for w in words),
        "version": __version__,
        "commit": commit,
        "date": datetime.now(timezone.utc).strftime("%Y-%m-%d %H:%M UTC"),
        "machine": f"{platform.machine()}, {os.cpu_count()} cores, Python {platform.python_version()}",
        "seconds": round(elapsed, 1),
        "sweeps": sweeps,
        "resamples": resamples,
        "periods_per_year": PERIODS_PER_YEAR,
        "policy": {"significance": DEFAULT_POLICY.significance, "required": list(DEFAULT_POLICY.required)},
        "variants": VARIANTS,
        "scenarios": rows,
    }
    text = markdown(doc)
    if output is None:
        print(text)
    else:
        output.mkdir(parents=True, exist_ok=True)
        (output / "validation.md").write_text(text)
        (output / "validation.json").write_text(json.dumps(doc, indent=2, allow_nan=False) + "\n")
        print(f"wrote {output / 'validation.md'} and {output / 'validation.json'} in {elapsed / 60:.1f} minutes",
              file=sys.stderr)
    return 0


if __name__ == "__main__":
    raise SystemExit(main())
