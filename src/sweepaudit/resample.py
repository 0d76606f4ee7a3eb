"""The shared resampling engine: block-bootstrap resamples drawn once per audit.

Every bootstrap-based method of an audit (confidence intervals, reality check, SPA, StepM) consumes
the same :class:`Resamples`. A batch of resamples is represented by *weights*: how often each window
is drawn in each resample. The resampled mean of every configuration is then one matrix product,
``weights @ returns / T``, computed chunk by chunk so memory stays bounded.

References
----------
Politis, D. N. and Romano, J. P. (1994). The stationary bootstrap. JASA 89(428), 1303-1313.
Kunsch, H. R. (1989). The jackknife and the bootstrap for general stationary observations.
    Annals of Statistics 17(3), 1217-1241 (moving block bootstrap).
Politis, D. N. and Romano, J. P. (1992). A circular block-resampling procedure for stationary data.
    In Exploring the Limits of Bootstrap, Wiley, 263-270 (circular block bootstrap).
Politis, D. N. and White, H. (2004). Automatic block-length selection for the dependent bootstrap.
    Econometric Reviews 23(1), 53-70; correction: Patton, A., Politis, D. N. and White, H. (2009),
    Econometric Reviews 28(4), 372-375.
"""

from __future__ import annotations

import math
from collections.abc import Iterable, Iterator
from dataclasses import dataclass, field
from typing import Literal, get_args

import numpy as np

from . import validate
from .errors import DegenerateDataError, InputError

__all__ = [
    "BootstrapKind",
    "Resamples",
    "ResampledMoments",
    "automatic_block_length",
    "politis_white_lengths",
    "draw_resamples",
    "indices_to_counts",
    "moment_chunk",
    "resampled_moments",
]

BootstrapKind = Literal["stationary", "circular", "moving-block"]
BOOTSTRAP_KINDS: tuple[str, ...] = get_args(BootstrapKind)

# Resamples are generated in fixed groups, each from its own child seed, so the draws do not depend
# on how a consumer chunks them (memory knobs never change a figure).
GENERATION_GROUP = 256


@dataclass(frozen=True)
class Resamples:
    """A reproducible set of block-bootstrap resamples of ``windows`` time points.

    Build with :func:`draw_resamples` (from a seed) or :meth:`from_indices` (replaying indices drawn
    elsewhere, e.g. by a reference library in a test).

    Attributes
    ----------
    windows : int
        Number of windows T in the series being resampled.
    count : int
        Number of resamples B.
    kind : {"stationary", "circular", "moving-block"}
        The block bootstrap.
    block_length : float
        Mean block length (stationary) or the fixed block length (circular, moving-block).
    seed : int or None
        The seed the resamples were drawn from (None when replayed from explicit indices).
    """

    windows: int
    count: int
    kind: BootstrapKind
    block_length: float
    seed: int | None
    _indices: np.ndarray | None = field(default=None, repr=False, compare=False)

    @classmethod
    def from_indices(
        cls, indices: np.ndarray, *, kind: BootstrapKind = "stationary", block_length: float = 1.0
    ) -> Resamples:
        """Replay explicit resample indices, a ``B x T`` integer array of window positions."""
        idx = np.asarray(indices)
        if idx.ndim != 2 or not np.issubdtype(idx.dtype, np.integer):
            raise InputError(f"indices must be a 2-D integer array (B x T); got shape {idx.shape}")
        if idx.size and (idx.min() < 0 or idx.max() >= idx.shape[1]):
            raise InputError("indices must lie in [0, T)")
        return cls(
            windows=idx.shape[1],
            count=idx.shape[0],
            kind=kind,
            block_length=float(block_length),
            seed=None,
            _indices=idx.astype(np.int64, copy=False),
        )

    def index_chunks(self, chunk: int = GENERATION_GROUP) -> Iterator[np.ndarray]:
        """Yield the resample indices as ``b x T`` arrays, in order, ``b <= chunk``."""
        if self._indices is not None:
            for start in range(0, self.count, chunk):
                yield self._indices[start : start + chunk]
            return
        yield from self._generated(chunk, _draw_indices)

    def count_chunks(self, chunk: int = GENERATION_GROUP) -> Iterator[np.ndarray]:
        """Yield ``b x T`` counts as float64: how often each window is drawn in each resample.

        The counts come straight from the blocks (a difference array per resample), without
        listing every drawn index, from the same random numbers as :meth:`index_chunks`.
        """
        if self._indices is not None:
            for idx in self.index_chunks(chunk):
                yield indices_to_weights(idx, self.windows)
            return
        yield from self._generated(chunk, _draw_counts)

    def _generated(self, chunk: int, draw) -> Iterator[np.ndarray]:
        """Rows of ``draw(rng, size, T, kind, block_length)`` over the generation groups, in chunks."""
        groups = math.ceil(self.count / GENERATION_GROUP)
        children = np.random.SeedSequence(self.seed).spawn(groups)
        buffer: list[np.ndarray] = []
        buffered = 0
        for g, child in enumerate(children):
            size = min(GENERATION_GROUP, self.count - g * GENERATION_GROUP)
            rng = np.random.default_rng(child)
            buffer.append(draw(rng, size, self.windows, self.kind, self.block_length))
            buffered += size
            while buffered >= chunk:
                block = np.concatenate(buffer) if len(buffer) > 1 else buffer[0]
                yield block[:chunk]
                rest = block[chunk:]
                buffer = [rest] if len(rest) else []
                buffered = len(rest)
        if buffered:
            yield np.concatenate(buffer) if len(buffer) > 1 else buffer[0]

    def weight_chunks(self, chunk: int = GENERATION_GROUP) -> Iterator[np.ndarray]:
        """Yield ``b x T`` float64 weights: how often each window is drawn in each resample.

        Each row sums to T, so ``weights @ x / T`` is the resampled mean of ``x``.
        """
        yield from self.count_chunks(chunk)

    def indices(self) -> np.ndarray:
        """All ``B x T`` indices at once (for tests and small problems)."""
        return np.concatenate(list(self.index_chunks()), axis=0)


def indices_to_weights(indices: np.ndarray, windows: int) -> np.ndarray:
    """Count how often each window appears in each row of a ``b x T`` index array (as float64)."""
    return indices_to_counts(indices, windows).astype(np.float64)


def indices_to_counts(indices: np.ndarray, windows: int) -> np.ndarray:
    """Count how often each window appears in each row of a ``b x T`` index array (as int64)."""
    b = indices.shape[0]
    flat = indices + windows * np.arange(b, dtype=np.int64)[:, None]
    return np.bincount(flat.ravel(), minlength=b * windows).reshape(b, windows)


def _draw_indices(
    rng: np.random.Generator, size: int, windows: int, kind: str, block_length: float
) -> np.ndarray:
    """Draw ``size`` resamples of ``windows`` indices with the given block bootstrap."""
    t = np.arange(windows, dtype=np.int64)
    if kind == "stationary":
        # Politis and Romano (1994): a new block starts at each position with probability
        # p = 1 / mean block length, at a uniform start; otherwise the previous block continues,
        # wrapping around the end. Block lengths are therefore geometric with mean 1/p.
        p = 1.0 / block_length
        new_block = rng.random((size, windows)) < p
        new_block[:, 0] = True
        starts = rng.integers(0, windows, size=(size, windows))
        # The position of the block each window belongs to (int32 halves the memory traffic), then
        # its start read through flat indices (faster than take_along_axis); a block wraps around
        # the end at most once, since start and offset are both below T.
        position = np.where(new_block, t.astype(np.int32), np.int32(0))
        np.maximum.accumulate(position, axis=1, out=position)
        offset = t.astype(np.int32) - position
        position += (np.arange(size, dtype=np.int32) * np.int32(windows))[:, None]
        index = np.take(starts.ravel(), position.astype(np.int64, copy=False))
        index += offset
        index[index >= windows] -= windows
        return index
    length = int(block_length)
    blocks = math.ceil(windows / length)
    offsets = np.arange(length, dtype=np.int64)
    if kind == "circular":
        starts = rng.integers(0, windows, size=(size, blocks))
        idx = (starts[:, :, None] + offsets) % windows
    else:  # moving-block: blocks lie inside the sample, no wrapping (Kunsch 1989)
        starts = rng.integers(0, windows - length + 1, size=(size, blocks))
        idx = starts[:, :, None] + offsets
    return idx.reshape(size, blocks * length)[:, :windows]


def _draw_counts(
    rng: np.random.Generator, size: int, windows: int, kind: str, block_length: float
) -> np.ndarray:
    """:func:`_draw_indices` as counts per window, from the blocks: each block of start s and length
    m adds one to windows s .. s + m - 1 (wrapping for the stationary and circular bootstraps),
    written as +1 at s and -1 at s + m in a difference array, then summed along the row."""
    if kind == "stationary":
        new_block = rng.random((size, windows)) < 1.0 / block_length
        new_block[:, 0] = True
        starts = rng.integers(0, windows, size=(size, windows))
        rows, columns = np.nonzero(new_block)
        first = starts[rows, columns]
        following = np.empty_like(columns)
        following[:-1] = columns[1:]
        following[np.append(rows[1:] != rows[:-1], True)] = windows
        return _counts_from_blocks(size, windows, rows, first, following - columns)
    length = int(block_length)
    blocks = math.ceil(windows / length)
    if kind == "circular":
        first = rng.integers(0, windows, size=(size, blocks))
    else:  # moving-block: blocks inside the sample
        first = rng.integers(0, windows - length + 1, size=(size, blocks))
    lengths = np.full((size, blocks), length, dtype=np.int64)
    lengths[:, -1] = windows - (blocks - 1) * length  # the last block is cut at T
    rows = np.repeat(np.arange(size), blocks)
    return _counts_from_blocks(size, windows, rows, first.ravel(), lengths.ravel())


def _counts_from_blocks(size: int, windows: int, rows, first, lengths) -> np.ndarray:
    """Counts per window of blocks (row, first window, length), wrapping past the end once."""
    width = windows + 1
    end = first + lengths
    wraps = end > windows
    base = rows * width
    plus = np.concatenate([base + first, base[wraps]])
    minus = np.concatenate([base + np.minimum(end, windows), base[wraps] + end[wraps] - windows])
    # One bincount of +1 and -1 weights; its float64 sums of small integers are exact.
    signs = np.concatenate([np.ones(plus.size), np.full(minus.size, -1.0)])
    diff = np.bincount(np.concatenate([plus, minus]), weights=signs, minlength=size * width)
    return np.cumsum(diff.reshape(size, width), axis=1)[:, :windows]


def politis_white_lengths(x: np.ndarray) -> tuple[np.ndarray, np.ndarray]:
    """Politis and White (2004) automatic block lengths of each column, with the Patton, Politis and
    White (2009) correction: ``(stationary, circular)``, unclipped below (NaN for a constant column).

    ``b = (2 g^2 / d)^(1/3) T^(1/3)`` with ``g = sum_k h(k/m) |k| gamma_k``, ``d = c sigma^4``,
    ``sigma^2 = sum_k h(k/m) gamma_k`` over ``|k| <= m``, the flat-top kernel ``h(x) = min(1, 2(1 - |x|))``,
    ``c = 2`` (stationary) or ``4/3`` (circular) (Politis and White 2004, eqs. 9-13; the constant of
    the stationary case as corrected by Patton et al. 2009). The bandwidth ``m`` is twice the first lag
    after which ``k_n = max(5, log10 T)`` autocorrelations in a row lie within
    ``2 sqrt(log10 T / T)`` (Politis and White 2004, section 3.2), at most ``sqrt(T) + k_n``; the
    length is capped at ``min(3 sqrt(T), T / 3)``. These tuning rules and the order of the sums over
    lags are those of ``arch.bootstrap.optimal_block_length`` (documented there as Patton's); every
    column is computed at once (lag products summed per column, sums of squares from cumulative
    sums), so the lengths agree with arch's within 1e-12 relative (``tests/test_resample.py``),
    without importing arch, whose import costs more than a second.
    """
    x = np.asarray(x, dtype=np.float64)
    columns = x[:, None] if x.ndim == 1 else x
    nobs = columns.shape[0]
    eps = columns - columns.mean(0)
    b_max = np.ceil(min(3 * np.sqrt(nobs), nobs / 3))
    kn = max(5, int(np.log10(nobs)))
    m_max = int(np.ceil(np.sqrt(nobs))) + kn
    band = 2 * np.sqrt(np.log10(nobs) / nobs)
    acv = _autocovariances(eps, m_max)
    with np.errstate(divide="ignore", invalid="ignore"):
        # |autocorrelation| at lag i as arch forms it: the lag-i cross product over the sums of
        # squares of the series without its first and without its last i + 1 windows.
        prefix = np.concatenate([np.zeros((1, eps.shape[1])), np.cumsum(eps * eps, axis=0)])
        lags = np.arange(m_max + 1)
        v1 = prefix[nobs] - prefix[np.minimum(lags + 1, nobs)]
        v2 = prefix[np.maximum(nobs - lags - 1, 0)]
        below = np.abs(acv * nobs) / np.sqrt(v1 * v2) < band  # NaN (a zero sum of squares) is not below
    # The bandwidth: the first lag after which kn autocorrelations in a row lie inside the band.
    run = np.concatenate([np.zeros((1, below.shape[1]), dtype=np.int64), np.cumsum(below, axis=0)])
    ends = np.arange(kn, m_max + 1)
    inside = (run[ends] - run[ends - kn]) == kn
    found = inside.any(axis=0)
    first = np.argmax(inside, axis=0)  # i - kn for the first such i
    m = np.where(found, np.minimum(2 * np.maximum(first, 1), m_max), m_max)
    g = np.zeros(eps.shape[1])
    long_run = acv[0].copy()
    with np.errstate(divide="ignore", invalid="ignore"):
        for k in range(1, m_max + 1):  # in lag order, as arch adds them; lags beyond m add nothing
            ratio = k / m
            weight = np.where(ratio <= 1 / 2, 1.0, 2 * (1 - ratio))
            weight[k > m] = 0.0
            g += 2 * weight * k * acv[k]
            long_run += 2 * weight * acv[k]
        stationary = ((2 * g**2) / (2 * long_run**2)) ** (1 / 3) * nobs ** (1 / 3)
        circular = ((2 * g**2) / (4 / 3 * long_run**2)) ** (1 / 3) * nobs ** (1 / 3)
    return np.minimum(stationary, b_max), np.minimum(circular, b_max)


def _autocovariances(eps: np.ndarray, lags: int) -> np.ndarray:
    """``(lags + 1) x N`` autocovariances (divisor T) of the centred columns, lag by lag."""
    nobs = eps.shape[0]
    out = np.zeros((lags + 1, eps.shape[1]))
    for i in range(min(lags, nobs - 1) + 1):
        out[i] = np.einsum("ij,ij->j", eps[i:], eps[: nobs - i]) / nobs
    return out


def automatic_block_length(series: np.ndarray, kind: BootstrapKind = "stationary") -> float:
    """Politis and White (2004) automatic block length, with the Patton et al. (2009) correction
    (:func:`politis_white_lengths`). The result is clipped to ``[1, T / 2]``; circular and
    moving-block lengths are rounded up to a whole number.
    """
    x = np.asarray(series, dtype=np.float64)
    if x.ndim != 1 or len(x) < 8:
        raise DegenerateDataError(
            f"the automatic block length needs a series of at least 8 windows; got {len(x)}"
        )
    if np.std(x) == 0:
        raise DegenerateDataError("the automatic block length needs a non-constant series")
    stationary, circular = politis_white_lengths(x)
    value = float((stationary if kind == "stationary" else circular)[0])
    if not np.isfinite(value):
        value = 1.0
    value = min(max(value, 1.0), len(x) / 2)
    if kind != "stationary":
        value = float(math.ceil(value))
    return value


def draw_resamples(
    windows: int,
    *,
    count: int = 10_000,
    kind: BootstrapKind = "stationary",
    block_length: float,
    seed: int | None,
) -> Resamples:
    """Define ``count`` block-bootstrap resamples of ``windows`` time points from ``seed``.

    Nothing is drawn until a consumer iterates; the same seed always gives the same resamples,
    whatever chunk size the consumer uses.

    Parameters
    ----------
    windows : int
        Series length T (at least 2).
    count : int
        Number of resamples B (at least 1).
    kind : {"stationary", "circular", "moving-block"}
        Stationary bootstrap (Politis and Romano 1994), circular block bootstrap (Politis and
        Romano 1992) or moving block bootstrap (Kunsch 1989).
    block_length : float
        Mean block length for the stationary bootstrap; the fixed block length otherwise (a whole
        number). Must lie in ``[1, T]``.
    seed : int or None
        Seed of the random generator; ``None`` draws fresh entropy once (not reproducible from the
        call, but the returned definition regenerates the same resamples every time).
    """
    validate.choice(kind, "kind", BOOTSTRAP_KINDS)
    windows = validate.whole_number(windows, "windows")
    if windows < 2:
        raise DegenerateDataError(f"resampling needs at least 2 windows; got {windows}")
    count = validate.whole_number(count, "count", minimum=1)
    if not (1.0 <= float(block_length) <= windows):
        raise InputError(f"block_length must lie in [1, {windows}] windows; got {block_length}")
    if kind != "stationary" and float(block_length) != int(block_length):
        raise InputError(f"the {kind} bootstrap needs a whole block length; got {block_length}")
    if seed is not None:
        seed = validate.whole_number(seed, "seed", minimum=0)
    else:
        # Fresh entropy, drawn once: every consumer (each block of configurations, each worker)
        # must regenerate the same resamples.
        seed = int(np.random.SeedSequence().entropy)
    return Resamples(windows=windows, count=count, kind=kind, block_length=float(block_length), seed=seed)


@dataclass(frozen=True)
class ResampledMoments:
    """Resampled first and second moments of every configuration: the engine's shared output.

    Attributes
    ----------
    mean : ndarray, shape (B, N)
        ``mean[b, k]`` is the mean of configuration k's excess returns in resample b.
    second : ndarray, shape (B, N), or None
        The mean of squared excess returns in resample b (for resampled variances and Sharpe
        ratios); None when an audit streamed over configurations and kept only the means.
    windows : int
        T, the number of windows in each resample.
    """

    mean: np.ndarray
    second: np.ndarray | None
    windows: int

    def variance(self) -> np.ndarray:
        """Resampled sample variances (ddof = 1), clipped at zero against rounding."""
        if self.second is None:
            raise InputError("these resampled moments kept only the means (a streamed audit)")
        t = self.windows
        return np.maximum(self.second - self.mean**2, 0.0) * (t / (t - 1))

    def sharpe(self) -> np.ndarray:
        """Resampled Sharpe ratios per window; NaN where a resample has zero variance.

        The same operations as ``mean / sqrt(variance())``, in place in one ``B x N`` buffer.
        """
        if self.second is None:
            raise InputError("these resampled moments kept only the means (a streamed audit)")
        t = self.windows
        out = np.multiply(self.mean, self.mean)
        np.subtract(self.second, out, out=out)
        np.maximum(out, 0.0, out=out)
        out *= t / (t - 1)
        np.sqrt(out, out=out)
        zero = out == 0
        with np.errstate(divide="ignore", invalid="ignore"):
            np.divide(self.mean, out, out=out)
        if zero.any():
            out[zero] = np.nan
        return out


def resampled_moments(
    returns: np.ndarray,
    resamples: Resamples,
    *,
    chunk: int = GENERATION_GROUP,
    progress=None,
    weights: Iterable[np.ndarray] | None = None,
    threads: int = 1,
) -> ResampledMoments:
    """Resampled means and second moments of every column: ``weights @ returns / T`` in chunks.

    Parameters
    ----------
    returns : ndarray, shape (T, N)
        Excess returns, windows in rows.
    resamples : Resamples
        Drawn for the same T.
    chunk : int
        Resamples per matrix product (memory knob only; never changes a figure).
    progress : callable, optional
        Called with the number of resamples finished after each chunk.
    weights : iterable of ndarray, optional
        The resamples' weights in chunks of ``chunk`` rows, when the caller keeps them drawn
        (default: ``resamples.weight_chunks(chunk)``).
    threads : int
        Chunks multiplied at once, each on its own thread (call with BLAS limited to one thread).

    Notes
    -----
    Each chunk's rows are computed by one single-threaded product, and a row of ``weights @ x``
    does not depend on the other rows in the call, so the figures are the same bits whatever the
    number of threads (a multi-threaded BLAS call may split a product so that they are not).
    """
    x = np.ascontiguousarray(returns, dtype=np.float64)
    if x.ndim != 2 or x.shape[0] != resamples.windows:
        raise InputError(
            f"returns must be T x N with T = {resamples.windows}; got shape {np.shape(returns)}"
        )
    t, n = x.shape
    mean = np.empty((resamples.count, n))
    second = np.empty((resamples.count, n))
    x2 = x * x

    def product(done: int, w: np.ndarray) -> int:
        b = w.shape[0]
        np.matmul(w, x, out=mean[done : done + b])
        np.matmul(w, x2, out=second[done : done + b])
        return done + b

    chunks = resamples.weight_chunks(chunk) if weights is None else weights
    if threads <= 1:
        done = 0
        for w in chunks:
            done = product(done, w)
            if progress is not None:
                progress(done)
    else:
        _in_threads(product, chunks, int(threads), progress)
    mean /= t
    second /= t
    return ResampledMoments(mean=mean, second=second, windows=t)


def _in_threads(product, chunks: Iterable[np.ndarray], threads: int, progress) -> None:
    """``product(first row, weights)`` for every chunk, at most ``threads`` chunks at once (numpy
    releases the GIL inside a product; the next chunk is drawn meanwhile)."""
    from concurrent.futures import FIRST_COMPLETED, ThreadPoolExecutor, wait

    with ThreadPoolExecutor(max_workers=threads) as pool:
        running: set = set()
        done = 0
        for w in chunks:
            if len(running) >= threads:
                finished, running = wait(running, return_when=FIRST_COMPLETED)
                for f in finished:
                    f.result()
            running.add(pool.submit(product, done, w))
            done += w.shape[0]
            if progress is not None:
                progress(done)
        for f in running:
            f.result()


def moment_chunk(windows: int) -> int:
    """Resamples per ``weights @ returns`` product: about 32 MB of weights, 256 to 4,096 rows.

    A memory knob only (the engine's figures do not depend on it), but OpenBLAS runs products of a
    few hundred rows markedly slower per row than products of 2,048 rows at T = 2,000 (see
    ``docs/snooping_performance.md``).
    """
    rows = (2**22 // max(int(windows), 1)) // 256 * 256
    return max(256, min(4096, rows))
