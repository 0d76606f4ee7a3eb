"""The report's figures, drawn with matplotlib's object API on the Agg/SVG canvases (no GUI, no pyplot).

No backend is chosen: a ``Figure`` made without pyplot has no GUI canvas, and saving it as SVG
switches to the SVG canvas for that call. So importing sweepaudit in a notebook leaves the
notebook's own backend (inline, widget) as it was.

Every function takes the audit JSON document and the raw material it plots
(:class:`~sweepaudit.results.FigureMaterial`) and returns a :class:`~sweepaudit.render.report.model.Figure`
(SVG bytes with ``svg.fonttype: none``, so text stays text and files stay small; dense point clouds are
rasterised inside the SVG). Functions whose raw material is absent return None and the report leaves
the figure out. The numbers come from the document or the material; drawing only transforms them for
display (percent units, cumulative sums of a return series, histogram bins, annualized axes).

Figures are readable in grey-scale print: series differ by line style, hatching and marker, not only
by colour. The palette is our own, restrained: ink, rust, steel and sand.
"""

from __future__ import annotations

import io
import math
from dataclasses import dataclass
from typing import Any

import matplotlib
import numpy as np
from matplotlib.colors import LinearSegmentedColormap
from matplotlib.figure import Figure as MplFigure
from matplotlib.patches import Patch, Rectangle

from ...format import figure, level, pct, probability, statistic
from ...results import DeflatedCurve, FigureMaterial
from ..safe import visible
from .model import Figure

__all__ = [
    "PALETTE",
    "bootstrap_mean",
    "sharpe_ranking",
    "sharpe_surface",
    "logit_histogram",
    "degradation_scatter",
    "deflated_by_trials",
    "cumulative_excess",
    "edge_over_time",
    "walk_forward_curve",
]

PALETTE = {
    "ink": "#222b33",
    "rust": "#a4471f",
    "steel": "#5e7d92",
    "sand": "#d9c9a8",
    "mist": "#c8cdd2",
    "paper": "#ffffff",
}

# Light to dark with monotone lightness, so the heat map reads in grey-scale print.
SURFACE_MAP = LinearSegmentedColormap.from_list(
    "sweepaudit_surface", ["#f6f1e7", "#d9c9a8", "#8fa3b0", "#4d6475", "#222b33"]
)

_STYLE = {
    "svg.fonttype": "none",
    "svg.hashsalt": "sweepaudit",  # stable element ids: same audit, same bytes
    "font.family": "sans-serif",
    "font.size": 9,
    "axes.titlesize": 10,
    "axes.labelsize": 9,
    "axes.edgecolor": PALETTE["ink"],
    "axes.labelcolor": PALETTE["ink"],
    "axes.spines.top": False,
    "axes.spines.right": False,
    "xtick.color": PALETTE["ink"],
    "ytick.color": PALETTE["ink"],
    "hatch.color": PALETTE["ink"],
    "hatch.linewidth": 0.6,
    "legend.frameon": True,  # a white box keeps legends readable over lines and bars
    "legend.framealpha": 0.92,
    "legend.edgecolor": "#ffffff",
    "legend.fontsize": 8,
    "savefig.dpi": 110,  # for rasterised point clouds inside the SVG
}

# Beyond these sizes labels are thinned or cells left unlabelled, so 1,000 configurations stay fast.
_NAMED_RANKING_LIMIT = 20
_ANNOTATED_CELLS_LIMIT = 150
_RASTERISE_POINTS = 1_000


def _new(width: float, height: float, *, fitted: bool = False, left: float = 0.1, bottom: float = 0.14) -> MplFigure:
    """A figure; ``fitted`` lays it out around labels of unknown length (slower: measures text)."""
    if fitted:
        return MplFigure(figsize=(width, height), layout="constrained", facecolor=PALETTE["paper"])
    fig = MplFigure(figsize=(width, height), facecolor=PALETTE["paper"])
    fig.subplots_adjust(left=left, right=0.97, bottom=bottom, top=0.9)
    return fig


def _svg(fig: MplFigure) -> bytes:
    buffer = io.BytesIO()
    fig.savefig(buffer, format="svg", metadata={"Date": None, "Creator": "sweepaudit"})
    return buffer.getvalue()


def _figure(name: str, title: str, caption: str, alt: str, draw) -> Figure:
    with matplotlib.rc_context(_STYLE):
        fig = draw()
        svg = _svg(fig)
    return Figure(name=name, title=title, caption=caption, alt=alt, svg=svg, plot=fig)


def _sharpe_label(doc: dict) -> tuple[str, bool]:
    annual = doc["input"].get("periods_per_year") is not None
    return ("annualized Sharpe ratio" if annual else "Sharpe ratio per window"), annual


# ---------------------------------------------------------------------------------------------
# (1) bootstrap distribution of the selected configuration's mean excess return
# ---------------------------------------------------------------------------------------------


def bootstrap_mean(doc: dict, material: FigureMaterial) -> Figure:
    """Histogram of the resampled mean excess return (percent per window) with its interval."""
    dist = np.asarray(material.mean_distribution, dtype=float) * 100
    sel = doc["results"]["bootstrap"]["selected"]["mean"]
    interval_level = level(doc["settings"]["confidence"])

    def draw():
        fig = _new(6.4, 3.4)
        ax = fig.add_subplot()
        lo, hi = sel["low"] * 100, sel["high"] * 100
        ax.axvspan(lo, hi, facecolor=PALETTE["sand"], alpha=0.45, hatch="///", edgecolor=PALETTE["ink"],
                   linewidth=0, label=f"{interval_level} interval [{pct(sel['low'])}, {pct(sel['high'])}]")
        ax.hist(dist, bins=60, color=PALETTE["steel"], edgecolor=PALETTE["paper"], linewidth=0.3,
                label=f"{len(dist):,} resampled means")
        ax.axvline(sel["estimate"] * 100, color=PALETTE["ink"], linewidth=1.8, linestyle="-",
                   label=f"observed mean {pct(sel['estimate'])}")
        for edge in (lo, hi):
            ax.axvline(edge, color=PALETTE["ink"], linewidth=1.0, linestyle="--")
        ax.axvline(0, color=PALETTE["rust"], linewidth=1.4, linestyle=":", label="zero: no edge")
        ax.set_xlabel("mean excess return per window (%)")
        ax.set_ylabel("resamples")
        ax.set_title("How much the mean excess return moves when the record is redrawn")
        ax.set_ylim(top=ax.get_ylim()[1] * 1.45)  # room for the legend above the bars
        ax.legend(loc="upper left", ncols=2)
        return fig

    return _figure(
        "bootstrap_mean",
        "Bootstrap distribution of the mean excess return",
        f"Each bar counts block-bootstrap resamples of the selected configuration's track record by their "
        f"mean excess return (percent per window). The hatched band is the {interval_level} interval; the dotted line "
        "is zero. A band that crosses zero means the data do not rule out no edge.",
        "Histogram of resampled mean excess returns with the confidence interval shaded and zero marked.",
        draw,
    )


# ---------------------------------------------------------------------------------------------
# (2) every configuration's Sharpe ratio with its interval, sorted
# ---------------------------------------------------------------------------------------------


@dataclass(frozen=True)
class _Ranked:
    """Every configuration's Sharpe ratio and interval, in the order of the ranking figure."""

    est: np.ndarray
    low: np.ndarray
    high: np.ndarray
    names: list
    order: np.ndarray
    selected: int
    position: int
    level: str
    label: str

    @property
    def n(self) -> int:
        return len(self.names)


def _ranked(doc: dict, material: FigureMaterial) -> _Ranked:
    label, annual = _sharpe_label(doc)
    key = "sharpe_annualized" if annual else "sharpe"
    configs = doc["results"]["bootstrap"]["configurations"]
    est = np.array([c[key]["estimate"] if c.get(key) else np.nan for c in configs], dtype=float)
    low = np.array([c[key]["low"] if c.get(key) and c[key]["low"] is not None else np.nan for c in configs], dtype=float)
    high = np.array([c[key]["high"] if c.get(key) and c[key]["high"] is not None else np.nan for c in configs], dtype=float)
    order = np.argsort(np.where(np.isfinite(est), est, -np.inf), kind="stable")
    names = [c["configuration"] for c in configs]
    # The JSON may list only some configurations (results.bootstrap.listing): find the selected by name.
    k = names.index(doc["selected"]["configuration"])
    return _Ranked(est, low, high, names, order, k,
                   int(np.flatnonzero(order == k)[0]), level(doc["settings"]["confidence"]), label)


def _named_ranking(r: _Ranked):
    """Few configurations: one named row each."""
    shown = [_short(r.names[i]) for i in r.order]
    # margin for the longest label (about 0.0085 of the width per character at 7-8 pt)
    left = min(0.6, 0.05 + 0.0085 * max(len(t) for t in shown))
    height = min(1.4 + 0.2 * r.n, 11.0)
    fig = _new(6.8, height, left=left, bottom=0.5 / height)
    fig.subplots_adjust(top=1 - 0.35 / height)
    ax = fig.add_subplot()
    y = np.arange(r.n)
    ax.hlines(y, r.low[r.order], r.high[r.order], color=PALETTE["steel"], linewidth=1.6, label=f"{r.level} interval")
    ax.plot(r.est[r.order], y, linestyle="none", marker="o", markersize=3.5, color=PALETTE["ink"], label="estimate")
    ax.plot(r.est[r.selected], r.position, linestyle="none", marker="D", markersize=8, markerfacecolor=PALETTE["rust"],
            markeredgecolor=PALETTE["ink"], label="selected")
    ax.set_yticks(y, shown, fontsize=7 if r.n > 25 else 8)
    ax.get_yticklabels()[r.position].set_fontweight("bold")
    ax.axvline(0, color=PALETTE["ink"], linestyle=":", linewidth=1)
    ax.set_xlabel(r.label)
    ax.set_ylim(-0.7, r.n - 0.3)
    return fig, ax


def _dense_ranking(r: _Ranked):
    """Many configurations: a ranked curve, only the selected one named."""
    fig = _new(7.2, 3.8, left=0.1)
    ax = fig.add_subplot()
    x = np.arange(1, r.n + 1)
    many = r.n > _RASTERISE_POINTS // 2
    ax.vlines(x, r.low[r.order], r.high[r.order], color=PALETTE["mist"] if many else PALETTE["steel"],
              linewidth=0.8 if many else 1.2, label=f"{r.level} interval", rasterized=many)
    ax.plot(x, r.est[r.order], linestyle="-", linewidth=1.2, color=PALETTE["ink"], label="estimate")
    ax.plot(r.position + 1, r.est[r.selected], linestyle="none", marker="D", markersize=8,
            markerfacecolor=PALETTE["rust"], markeredgecolor=PALETTE["ink"], label="selected")
    ax.annotate(_short(r.names[r.selected]), (r.position + 1, r.est[r.selected]), xytext=(-8, 12),
                textcoords="offset points", ha="right", fontsize=8,
                arrowprops={"arrowstyle": "-", "color": PALETTE["ink"]})
    ax.axhline(0, color=PALETTE["ink"], linestyle=":", linewidth=1)
    ax.set_xlabel(f"rank of {r.n:,} configurations (worst to best)")
    ax.set_ylabel(r.label)
    ax.set_xlim(0, r.n + 1)
    return fig, ax


def sharpe_ranking(doc: dict, material: FigureMaterial) -> Figure:
    """Every configuration's Sharpe ratio (annualized when possible) with its interval, sorted."""
    r = _ranked(doc, material)

    def draw():
        fig, ax = _named_ranking(r) if r.n <= _NAMED_RANKING_LIMIT else _dense_ranking(r)
        ax.set_title(f"{r.label[0].upper() + r.label[1:]} of every configuration, sorted")
        ax.legend(loc="lower right")
        return fig

    return _figure(
        "sharpe_ranking",
        "Sharpe ratio of every configuration",
        f"Every configuration's {r.label} with its {r.level} block-bootstrap interval, sorted from worst "
        "to best; the diamond marks the selected configuration. When most intervals overlap, the ranking "
        "is mostly noise.",
        "Sorted Sharpe ratios of all configurations with interval bars and the selected one marked.",
        draw,
    )


# ---------------------------------------------------------------------------------------------
# (3) two-parameter heat map
# ---------------------------------------------------------------------------------------------


def _plain(text: object) -> str:
    """A user string as matplotlib text: control characters visible, ``$`` not read as mathtext."""
    return visible(text).replace("$", r"\$")


def _short(name: str, limit: int = 60) -> str:
    """A configuration name short enough for an axis label (the tables keep the full name)."""
    name = visible(name)
    return _plain(name if len(name) <= limit else name[: limit - 1] + "\u2026")


def _tick(v: Any) -> str:
    return figure(v) if isinstance(v, (int, float, np.integer, np.floating)) and not isinstance(v, bool) else _plain(v)


def sharpe_surface(doc: dict, material: FigureMaterial) -> Figure | None:
    """Heat map of the Sharpe ratio over a two-parameter grid, the selected cell outlined; else None."""
    g = material.sharpe_grid
    if g is None:
        return None
    xs, ys, grid, (r, c) = list(g.x_values), list(g.y_values), g.sharpe, g.selected_cell
    label, annual = _sharpe_label(doc)
    ppy = doc["input"].get("periods_per_year")
    values = grid * math.sqrt(ppy) if annual else grid
    a, b = visible(g.x_parameter), visible(g.y_parameter)

    def draw():
        width = min(9.0, max(4.8, 1.2 + 0.6 * len(xs)))
        height = min(7.0, max(3.4, 1.2 + 0.45 * len(ys)))
        fig = _new(width, height, left=0.12, bottom=0.8 / height)
        fig.subplots_adjust(right=0.84)  # room for the colour bar and its label
        ax = fig.add_subplot()
        masked = np.ma.masked_invalid(values)
        image = ax.imshow(masked, cmap=SURFACE_MAP, origin="lower", aspect="auto", interpolation="nearest")
        if values.size <= _ANNOTATED_CELLS_LIMIT:
            finite = values[np.isfinite(values)]
            mid = (finite.min() + finite.max()) / 2 if finite.size else 0
            for i in range(values.shape[0]):
                for j in range(values.shape[1]):
                    v = values[i, j]
                    if np.isfinite(v):
                        ax.text(j, i, f"{v:.2f}", ha="center", va="center", fontsize=7,  # cell labels: 2 decimals
                                color=PALETTE["paper"] if v > mid else PALETTE["ink"])
        ax.add_patch(Rectangle((c - 0.5, r - 0.5), 1, 1, fill=False, edgecolor=PALETTE["rust"], linewidth=3,
                               hatch="////", label="selected"))
        ax.add_patch(Rectangle((c - 0.5, r - 0.5), 1, 1, fill=False, edgecolor=PALETTE["ink"], linewidth=1))
        step_x = max(1, len(xs) // 15)
        step_y = max(1, len(ys) // 15)
        ax.set_xticks(range(0, len(xs), step_x), [_tick(v) for v in xs[::step_x]])
        ax.set_yticks(range(0, len(ys), step_y), [_tick(v) for v in ys[::step_y]])
        ax.set_xlabel(_plain(a))
        ax.set_ylabel(_plain(b))
        ax.set_title(f"{label[0].upper() + label[1:]} over the parameter grid")
        fig.colorbar(image, ax=ax, label=label, fraction=0.06, pad=0.03)
        ax.legend(handles=[Patch(fill=False, edgecolor=PALETTE["rust"], hatch="////", linewidth=2, label="selected")],
                  loc="upper left", bbox_to_anchor=(0, -0.14), ncols=1)
        return fig

    return _figure(
        "sharpe_surface",
        "Sharpe ratio over the parameter grid",
        f"The {label} of each combination of {a} and {b}; darker is higher. The hatched, outlined "
        "cell is the selected configuration. A real edge tends to sit on a plateau of similar cells; a lone "
        "dark cell among light ones is a warning sign.",
        f"Heat map of the Sharpe ratio over {a} and {b} with the selected cell outlined.",
        draw,
    )


# ---------------------------------------------------------------------------------------------
# (4) CSCV logits and (5) in-sample vs out-of-sample
# ---------------------------------------------------------------------------------------------


def logit_histogram(doc: dict, material: FigureMaterial) -> Figure | None:
    """Histogram of the CSCV split logits, the share at or below zero hatched and shaded."""
    if material.logits is None:
        return None
    values = np.asarray(material.logits, dtype=float)
    values = values[np.isfinite(values)]
    if values.size == 0:
        return None
    block = doc["results"].get("overfitting") or {}
    share = block.get("probability_of_overfitting")

    def draw():
        fig = _new(6.4, 3.4)
        ax = fig.add_subplot()
        lo, hi = float(values.min()), float(values.max())
        # Bins of one thirtieth of the range covering zero too; a fixed step when every split gives
        # the same logit (one configuration wins and ranks the same in every split).
        span = max(hi, 0.0) - min(lo, 0.0)
        step = span / 30 if span > 1e-6 else 0.1
        # bins with an edge at zero, so a bar never straddles the line
        edges = np.arange(math.floor(min(lo, 0) / step) * step, max(hi, 0) + 2 * step, step)
        ax.hist(values[values <= 0], bins=edges, color=PALETTE["rust"], hatch="///", edgecolor=PALETTE["ink"],
                linewidth=0.4, label=f"at or below zero: {probability(share)} of splits (probability of overfitting)")
        ax.hist(values[values > 0], bins=edges, color=PALETTE["mist"], edgecolor=PALETTE["ink"], linewidth=0.4,
                label="above zero: the in-sample winner stays in the top half")
        ax.axvline(0, color=PALETTE["ink"], linestyle="--", linewidth=1.2)
        ax.set_xlabel("logit of the in-sample winner's out-of-sample relative rank")
        ax.set_ylabel("splits")
        ax.set_title("Where the in-sample winner ranks out of sample")
        ax.legend(loc="upper left")
        ax.set_ylim(top=ax.get_ylim()[1] * 1.3)  # room for the legend above the bars
        return fig

    return _figure(
        "cscv_logits",
        "CSCV logits of the in-sample winner",
        "One count per split of the track record into two halves: the logit of the out-of-sample rank of "
        "the configuration that was best in sample. Negative values (hatched) mean it fell to the bottom "
        "half; their share is the probability of overfitting.",
        "Histogram of CSCV logits with the part at or below zero hatched.",
        draw,
    )


def degradation_scatter(doc: dict, material: FigureMaterial) -> Figure | None:
    """In-sample vs out-of-sample statistic of the in-sample winner per split, with the degradation line."""
    if material.in_sample is None or material.out_of_sample is None:
        return None
    x = np.asarray(material.in_sample, dtype=float)
    y = np.asarray(material.out_of_sample, dtype=float)
    ok = np.isfinite(x) & np.isfinite(y)
    x, y = x[ok], y[ok]
    if x.size == 0:
        return None
    deg = (doc["results"].get("overfitting") or {}).get("degradation") or {}
    slope = deg.get("slope")
    intercept = deg.get("intercept")
    unit = "Sharpe ratio per window" if material.split_statistic == "sharpe" else "mean excess return per window"

    def draw():
        fig = _new(5.6, 4.0, left=0.14, bottom=0.12)
        ax = fig.add_subplot()
        many = x.size > _RASTERISE_POINTS
        ax.scatter(x, y, s=6 if many else 14, marker="o", facecolors="none" if not many else PALETTE["steel"],
                   edgecolors=PALETTE["steel"], linewidths=0.6, alpha=0.5 if many else 0.9,
                   rasterized=many, label=f"{x.size:,} splits")
        if slope is not None and intercept is not None:
            grid = np.linspace(x.min(), x.max(), 50)
            ax.plot(grid, intercept + slope * grid, color=PALETTE["rust"], linestyle="--", linewidth=2,
                    label=f"degradation: out = {statistic(intercept)} {'-' if slope < 0 else '+'} {statistic(abs(slope))} x in")
        ax.axhline(0, color=PALETTE["ink"], linestyle=":", linewidth=1)
        ax.set_xlabel(f"in sample: {unit}")
        ax.set_ylabel(f"out of sample: {unit}")
        ax.set_title("The in-sample winner, in sample and out of sample")
        ax.legend(loc="best")
        return fig

    return _figure(
        "cscv_degradation",
        "In-sample against out-of-sample performance",
        "Each point is one split: the in-sample winner's statistic in the half where it was picked (across) "
        "and in the other half (up). The dashed line is the least-squares fit; a slope near zero or below "
        "means in-sample excellence does not carry over.",
        "Scatter of in-sample against out-of-sample statistics per split with a fitted dashed line.",
        draw,
    )


# ---------------------------------------------------------------------------------------------
# (6) deflated Sharpe probability as a function of the number of trials
# ---------------------------------------------------------------------------------------------


def deflated_by_trials(doc: dict, curve: DeflatedCurve | None) -> Figure | None:
    """Deflated Sharpe probability against the number of trials, the trials counted marked."""
    if curve is None:
        return None

    def draw():
        fig = _new(6.4, 3.6, left=0.15)
        ax = fig.add_subplot()
        used, at_used = curve.trials_counted, curve.at_trials_counted
        ax.plot(curve.trials, curve.probability, color=PALETTE["ink"], linewidth=1.8, linestyle="-",
                label="deflated Sharpe probability")
        ax.axhline(0.95, color=PALETTE["steel"], linestyle=":", linewidth=1.2, label="0.95 (conventional level)")
        ax.axvline(used, color=PALETTE["rust"], linestyle="--", linewidth=1.2)
        ax.plot(used, at_used, linestyle="none", marker="D", markersize=8, markerfacecolor=PALETTE["rust"],
                markeredgecolor=PALETTE["ink"], label=f"{figure(used)} trials counted: {probability(at_used)}")
        if curve.effective_trials is not None:
            eff, at_eff = curve.effective_trials, curve.at_effective_trials
            ax.plot(eff, at_eff, linestyle="none", marker="s", markersize=7, markerfacecolor=PALETTE["paper"],
                    markeredgecolor=PALETTE["ink"], label=f"{figure(eff)} effective trials: {probability(at_eff)}")
        ax.set_xscale("log")
        ax.set_ylim(-0.02, 1.02)
        ax.set_xlabel("number of trials assumed (log scale)")
        ax.set_ylabel("probability the true Sharpe ratio\nbeats the best of that many lucky trials")
        ax.set_title("The more settings were tried, the less a high Sharpe ratio proves")
        ax.legend(loc="lower left")
        return fig

    return _figure(
        "deflated_by_trials",
        "Deflated Sharpe probability against the number of trials",
        "How the deflated Sharpe probability of the selected configuration falls as the number of trials "
        "assumed grows. The diamond marks the trials the audit counted; a square marks the effective "
        "(independent) trials when they differ. Count every setting ever tried, not only this sweep's.",
        "Line of deflated Sharpe probability falling with the number of trials, trials counted marked.",
        draw,
    )


# ---------------------------------------------------------------------------------------------
# (7) cumulative excess return over time
# ---------------------------------------------------------------------------------------------


def cumulative_excess(doc: dict, material: FigureMaterial) -> Figure:
    """Cumulative sum of the selected configuration's excess returns (percent), dates on the x axis."""
    returns = material.returns
    configurations = returns.shape[1]
    path = np.cumsum(returns[:, material.selected_index]) * 100
    average = np.cumsum(returns.mean(axis=1)) * 100
    dated = material.dates is not None
    x = material.dates if dated else np.arange(1, returns.shape[0] + 1)

    def draw():
        fig = _new(6.8, 3.4)
        ax = fig.add_subplot()
        ax.plot(x, path, color=PALETTE["ink"], linewidth=1.6, linestyle="-", label="selected configuration")
        if configurations > 1:
            ax.plot(x, average, color=PALETTE["steel"], linewidth=1.3, linestyle="--",
                    label=f"average of all {configurations:,} configurations")
        ax.axhline(0, color=PALETTE["rust"], linestyle=":", linewidth=1)
        ax.set_xlabel("window end date" if dated else "window")
        ax.set_ylabel("cumulative excess return (%, summed)")
        ax.set_title("Cumulative excess return over the benchmark")
        ax.legend(loc="upper left")
        return fig

    return _figure(
        "cumulative_excess",
        "Cumulative excess return over time",
        "The running sum of the selected configuration's per-window excess returns, in percent (summed, "
        "not compounded), next to the average of every configuration of the sweep. A path that rises "
        "steadily is more convincing than one that owes its total to a few windows.",
        "Line chart of cumulative excess return of the selected configuration over time.",
        draw,
    )


# ---------------------------------------------------------------------------------------------
# (8) the edge over time: the rolling Sharpe ratio with the sub-periods marked
# ---------------------------------------------------------------------------------------------


def _time_axis(material: FigureMaterial, count: int):
    """Window end dates when the windows are dated, else window numbers (1-based)."""
    if material.dates is not None:
        return material.dates, "window end date"
    return np.arange(1, count + 1), "window"


def _draw_thirds(ax, x, thirds: list[dict], scale: float) -> None:
    """Each third as a band (hatched every other one, for grey-scale print) with its Sharpe ratio as a level."""
    for i, part in enumerate(thirds):
        a, b = part["start"], part["start"] + part["windows"] - 1
        ax.axvspan(x[a], x[b], facecolor=PALETTE["sand"] if i % 2 == 0 else PALETTE["mist"], alpha=0.35,
                   hatch="//" if i % 2 else None, edgecolor=PALETTE["ink"], linewidth=0)
        ax.hlines(part["sharpe"] * scale, x[a], x[b], colors=PALETTE["steel"], linestyles="--", linewidth=1.6,
                  label="Sharpe ratio of each third" if i == 0 else None)


def edge_over_time(doc: dict, material: FigureMaterial) -> Figure | None:
    """The selected configuration's rolling Sharpe ratio, the thirds shaded with their own Sharpe ratios,
    and the start of the recent period marked."""
    st, block = material.stability, doc["results"].get("stability")
    if st is None or block is None:
        return None
    label, annual = _sharpe_label(doc)
    scale = math.sqrt(doc["input"]["periods_per_year"]) if annual else 1.0
    length = st.rolling_windows
    x, axis = _time_axis(material, material.returns.shape[0])
    ends = x[length - 1:]
    recent = block["recent"]

    def draw():
        fig = _new(6.8, 3.6)
        ax = fig.add_subplot()
        _draw_thirds(ax, x, block["thirds"], scale)
        ax.plot(ends, st.rolling_sharpe * scale, color=PALETTE["ink"], linewidth=1.5, linestyle="-",
                label=f"rolling {length:,}-window Sharpe ratio")
        ax.axvline(x[recent["start"]], color=PALETTE["rust"], linestyle="-.", linewidth=1.3,
                   label=f"recent period from {recent['first_window']}")
        ax.axhline(0, color=PALETTE["rust"], linestyle=":", linewidth=1)
        ax.set_xlabel(axis)
        ax.set_ylabel(label)
        ax.set_title("Is the edge still alive? The selected configuration over time")
        ax.legend(loc="upper left", ncols=2)
        ax.set_ylim(top=ax.get_ylim()[1] + 0.35 * (ax.get_ylim()[1] - ax.get_ylim()[0]))
        return fig

    return _figure(
        "edge_over_time",
        "The edge over time",
        f"The selected configuration's Sharpe ratio over the trailing {length:,} windows ({label}), each point at "
        "the window that ends its stretch. The shaded bands are the thirds of the record with their own Sharpe "
        "ratio (dashed); the dash-dot line starts the recent period the decay test compares with the windows "
        "before it. An edge that has died shows a line that falls and stays near zero.",
        "Line of the rolling Sharpe ratio over time with the thirds shaded and the recent period marked.",
        draw,
    )


# ---------------------------------------------------------------------------------------------
# (9) the walk-forward record beside the selected configuration
# ---------------------------------------------------------------------------------------------


def walk_forward_curve(doc: dict, material: FigureMaterial) -> Figure | None:
    """Cumulative excess return of the walk-forward record and of the selected configuration, same windows."""
    walk, block = material.walk_forward, doc["results"].get("walk_forward")
    if walk is None or block is None:
        return None
    x, axis = _time_axis(material, material.returns.shape[0])
    x = x[walk.warmup:]
    record = np.cumsum(walk.record) * 100
    held = np.cumsum(walk.selected_record) * 100
    changed = np.flatnonzero(walk.picks[1:] != walk.picks[:-1]) + 1

    def draw():
        fig = _new(6.8, 3.4)
        ax = fig.add_subplot()
        ax.plot(x, record, color=PALETTE["ink"], linewidth=1.7, linestyle="-",
                label="walk-forward record (re-picked before each window)")
        # Drawn second, dashed: visible even where the record held the selected configuration throughout.
        ax.plot(x, held, color=PALETTE["steel"], linewidth=1.4, linestyle="--",
                label="selected configuration (chosen with hindsight)")
        if 0 < changed.size <= 200:
            ax.plot(x[changed], record[changed], linestyle="none", marker="|", markersize=8,
                    color=PALETTE["rust"], label=f"pick changed ({changed.size:,})")
        ax.axhline(0, color=PALETTE["rust"], linestyle=":", linewidth=1)
        ax.set_xlabel(axis)
        ax.set_ylabel("cumulative excess return (%, summed)")
        ax.set_title("Does re-picking the winner pay? The walk-forward record")
        ax.legend(loc="upper left")
        return fig

    return _figure(
        "walk_forward_curve",
        "Walk-forward record of re-picking the winner",
        f"The running sum (percent, not compounded) of the excess returns earned by picking, before each window "
        f"from {block['first_window']} on, the configuration with the best Sharpe ratio so far, next to the "
        "selected configuration over the same windows. The selected configuration was chosen knowing the whole "
        "sample; the walk-forward record knew only the past, so the gap between the two lines is part of what "
        "hindsight added.",
        "Two cumulative return lines: the walk-forward record and the selected configuration.",
        draw,
    )
