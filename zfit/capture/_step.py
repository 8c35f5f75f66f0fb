"""Time-domain figures of a step or square-wave capture, after IEEE Std 181.

State levels by the histogram method, edges found with hysteresis at the
10 % and 90 % reference levels, the 10-90 % transition duration, overshoot,
the dominant time constant (of ``H = V_out/V_in`` with two channels),
the ringing frequency by the matrix-pencil method, the stray capacitance
from the ringing, and the whole analysis `analyse_capture` that also
estimates the frequency response and, with a sense resistor, the part's
impedance and equivalent circuit.

References
----------
IEEE Std 181-2011, *IEEE Standard for Transitions, Pulses, and Related
Waveforms*, doi:10.1109/IEEESTD.2011.6016198 (state levels by histogram,
reference levels, transition duration, overshoot).

Y. Hua and T. K. Sarkar, "Matrix pencil method for estimating parameters of
exponentially damped/undamped sinusoids in noise", IEEE Trans. Acoustics,
Speech and Signal Processing 38(5), 814-824, 1990, doi:10.1109/29.56027.
"""

from __future__ import annotations

import math
import warnings
from dataclasses import dataclass, field

import numpy as np

from .._errors import FitError, MeasurementWarning, ZfitInputError
from ._response import (
    DEFAULT_COHERENCE_MIN, DEFAULT_ENERGY_MIN_DB, FrequencyResponse, edge_response, impedance_sweep, prev_fast_len,
)
from .._units import format_eng

__all__ = [
    "Levels", "state_levels", "find_edges", "matrix_pencil", "Ringing", "StrayCapacitance",
    "stray_capacitance_from_inductance", "stray_capacitance_two_resonances",
    "EdgeWaveform", "StepResult", "analyse_capture", "STEP_SCHEMA",
]

STEP_SCHEMA = "zfit.step/1"
LN2 = math.log(2.0)
LN9 = math.log(9.0)
# State levels and noise are judged on at most this many samples.
_LEVEL_SAMPLES = 1 << 21
# Rows are gathered into blocks of at most this many samples.
_BLOCK_SAMPLES = 1 << 21
# The first-order fit uses at most this many samples (rows x length): a few
# hundred edges fix a time constant far better than the model holds anyway.
_FIT_SAMPLES = 1 << 18
# Part of the time constant skipped after the input edge before the fit, so
# that a fast parasitic transient (a coil's stray C passing the edge straight
# to the sense resistor) does not pull the dominant time constant.
_FIT_SKIP_TAU = 0.2
# The fit spans this many time constants after the edge (or up to the next edge).
_FIT_SPAN_TAU = 7.0


# --------------------------------------------------------------------------- levels and edges

@dataclass(frozen=True)
class Levels:
    """The two state levels of a bilevel waveform (IEEE Std 181-2011, 5.2).

    Attributes
    ----------
    low, high : float
        Low and high state levels in V.
    low_noise, high_noise : float
        Standard deviation of the samples settled at each level (V): the
        noise and quantisation of the channel.
    """

    low: float
    high: float
    low_noise: float
    high_noise: float

    @property
    def amplitude(self) -> float:
        """``high - low`` in V."""
        return self.high - self.low

    def reference(self, fraction: float) -> float:
        """Return the reference level at `fraction` of the amplitude.

        Parameters
        ----------
        fraction : float
            0.1, 0.5 and 0.9 give the 10 %, 50 % and 90 % reference levels.
        """
        return self.low + fraction * self.amplitude

    @property
    def noise(self) -> float:
        """The larger of the two level noises."""
        return max(self.low_noise, self.high_noise)


def state_levels(x, *, bins: int | None = None) -> Levels:
    """Return the state levels of a bilevel waveform by the histogram method.

    The histogram of the samples (every k-th of a record longer than two
    million) is split at the middle of the range; the mode of each half is a
    state level (IEEE Std 181-2011, 5.2.1.1, the histogram mode method),
    refined by the mean of the samples within 2 % of the range around the
    mode, which keeps the resolution of the samples rather than that of the
    bins.  The noise of each level is the RMS difference of consecutive
    samples inside that window, over sqrt 2 (the first two million samples).

    Parameters
    ----------
    x : array_like
        Samples in V.
    bins : int, optional
        Histogram bins (default: 4 per expected 8-bit code, fewer for short
        records so that each bin holds enough samples).

    References
    ----------
    IEEE Std 181-2011, doi:10.1109/IEEESTD.2011.6016198, 5.2.1.
    """
    x = np.asarray(x, dtype=float)
    lo, hi = float(x.min()), float(x.max())
    if hi <= lo:
        return Levels(lo, hi, 0.0, 0.0)
    # The histogram of a long record from every k-th sample (at most 2
    # million): the modes and the means around them are then known to far
    # better than the noise, and the pass costs a fraction.
    k = max(1, int(math.ceil(x.size / _LEVEL_SAMPLES)))
    xs = x[::k]
    nb = bins or int(np.clip(xs.size // 40, 32, 1024))
    scale = nb / (hi - lo)
    idx = np.minimum(((xs - lo) * scale).astype(np.intp), nb - 1)
    counts = np.bincount(idx, minlength=nb)
    sums = np.bincount(idx, weights=xs, minlength=nb)
    half = nb // 2
    w = max(1, int(round(0.02 * nb)))

    def level(lo_bin, hi_bin):
        m = lo_bin + int(np.argmax(counts[lo_bin:hi_bin]))
        a, b = max(lo_bin, m - w), min(hi_bin, m + w + 1)
        c = counts[a:b].sum()
        return sums[a:b].sum() / c, (lo + a / scale, lo + b / scale)

    low, (la, lb) = level(0, half)
    high, (ha, hb) = level(half, nb)
    # The noise from differences of consecutive settled samples: a slow
    # approach to the level (an R-C tail) inflates the spread of the samples
    # around the level, but not their differences.
    xn = x[:_LEVEL_SAMPLES]  # consecutive samples for the differences
    d = np.diff(xn)

    def noise(a, b):
        inside = (xn >= a) & (xn <= b)
        pair = inside[:-1] & inside[1:]
        k = int(np.count_nonzero(pair))
        return math.sqrt(float(np.dot(d[pair], d[pair])) / (2.0 * k)) if k else 0.0

    return Levels(float(low), float(high), noise(la, lb), noise(ha, hb))


def find_edges(x, levels: Levels, *, low_ref: float = 0.1, high_ref: float = 0.9):
    """Return the transitions of `x` between its states, with hysteresis.

    A transition is counted only when the waveform leaves one reference
    level and reaches the other (10 % and 90 % by default), so noise near
    either level makes no false edge.

    Parameters
    ----------
    x : numpy.ndarray
        Samples in V.
    levels : Levels
        The state levels.
    low_ref, high_ref : float
        Reference levels as fractions of the amplitude.

    Returns
    -------
    polarity : numpy.ndarray of int
        +1 for a rising, -1 for a falling edge.
    t_first, t_mid, t_last : numpy.ndarray of float
        Fractional sample indices where the edge crosses the reference level
        it leaves, the 50 % level, and the reference level it reaches.
    """
    x = np.asarray(x, dtype=float)
    lref, href, mid = levels.reference(low_ref), levels.reference(high_ref), levels.reference(0.5)
    state = (x >= href).view(np.int8) - (x <= lref).view(np.int8)
    # Run-length form: the state changes only a few times per edge, so the
    # runs are few even in a record of ten million samples.
    c = np.flatnonzero(state[1:] != state[:-1]) + 1
    run_start = np.concatenate([[0], c])
    run_end = np.concatenate([c, [x.size]]) - 1
    run_val = state[run_start]
    kept = run_val != 0
    run_start, run_end, run_val = run_start[kept], run_end[kept], run_val[kept]
    change = np.flatnonzero(run_val[1:] != run_val[:-1])
    d = run_end[change]          # last sample in the old state
    a = run_start[change + 1]    # first sample in the new state
    pol = run_val[change + 1].astype(int)
    if d.size == 0:
        empty = np.zeros(0)
        return np.zeros(0, dtype=int), empty, empty, empty
    r_first = np.where(pol > 0, lref, href)
    r_last = np.where(pol > 0, href, lref)
    t_first = d + (r_first - x[d]) / (x[d + 1] - x[d])
    t_last = (a - 1) + (r_last - x[a - 1]) / (x[a] - x[a - 1])
    # The 50 % crossing: the first one after the waveform left its old state.
    below = x < mid
    cross = np.flatnonzero(below[:-1] != below[1:])
    j = np.searchsorted(cross, d)
    j = np.minimum(j, cross.size - 1)
    i = cross[j]
    t_mid = i + (mid - x[i]) / (x[i + 1] - x[i])
    return pol, t_first, t_mid, t_last


# --------------------------------------------------------------------------- matrix pencil

def matrix_pencil(y, dt: float, *, noise: float = 0.0, max_order: int = 12):
    """Return the damped exponential modes of `y` by the matrix-pencil method.

    ``y[k] = sum_i R_i z_i^k`` with ``z_i = exp((-alpha_i + j 2 pi f_i) dt)``.
    The model order is the number of singular values of the Hankel data
    matrix above twice the level white noise would give.

    Parameters
    ----------
    y : array_like
        Uniform samples.
    dt : float
        Sample interval in s.
    noise : float
        Standard deviation of the white noise in `y` (sets the order).
    max_order : int
        Largest model order.

    Returns
    -------
    freq_hz, alpha, amplitude : numpy.ndarray
        Frequency (Hz, >= 0), damping (1/s) and peak amplitude (V) of each
        mode; a conjugate pair is one mode with twice the residue's modulus.
    energy : numpy.ndarray
        Energy of each mode over the record (sum of squares), for ranking.

    References
    ----------
    Y. Hua and T. K. Sarkar, IEEE Trans. ASSP 38(5), 814-824, 1990,
    doi:10.1109/29.56027 (the SVD-based pencil, section IV).
    """
    y = np.asarray(y, dtype=float)
    n = y.size
    L = max(2, n // 3)  # the pencil parameter between N/3 and N/2 minimises the variance (Hua & Sarkar)
    rows = n - L
    idx = np.arange(rows)[:, None] + np.arange(L + 1)[None, :]
    Y = y[idx]
    # The right singular vectors and singular values of Y from the eigen-
    # decomposition of the small Gram matrix Y^T Y: several times faster than
    # the SVD of Y, and exact enough for singular values above 1e-7 of the largest.
    lam, vec = np.linalg.eigh(Y.T @ Y)
    order = np.argsort(lam)[::-1]
    s = np.sqrt(np.maximum(lam[order], 0.0))
    vh = vec[:, order].T
    floor = 2.0 * noise * (math.sqrt(rows) + math.sqrt(L + 1))
    m = int(np.count_nonzero(s > max(floor, s[0] * 1e-7)))
    m = int(np.clip(m, 1, min(max_order, L - 1)))
    v = vh[:m]
    v1, v2 = v[:, :-1], v[:, 1:]
    # v2 pinv(v1) with pinv(v1) = v1^T (v1 v1^T)^-1 (v1 has full row rank).
    z = np.linalg.eigvals(np.linalg.solve((v1 @ v1.T).T, (v2 @ v1.T).T).T)
    k = np.arange(n)
    with np.errstate(divide="ignore", invalid="ignore", over="ignore"):
        V = z[None, :] ** k[:, None]
        res, *_ = np.linalg.lstsq(V, y.astype(complex), rcond=None)
    ang = np.angle(z)
    mag = np.abs(z)
    keep = ang >= -1e-12  # one of each conjugate pair (and the real modes)
    pair = ang > 1e-9
    freq = ang[keep] / (2 * np.pi * dt)
    with np.errstate(divide="ignore"):
        alpha = -np.log(np.maximum(mag[keep], 1e-300)) / dt
    amp = np.abs(res[keep]) * np.where(pair[keep], 2.0, 1.0)
    with np.errstate(over="ignore", invalid="ignore"):
        r2 = np.maximum(mag[keep], 1e-300) ** 2
        geo = np.where(np.abs(r2 - 1) < 1e-12, n, (1 - r2**n) / (1 - r2))
    energy = amp**2 * np.abs(geo) * np.where(pair[keep], 0.5, 1.0)
    return freq, alpha, amp, energy


@dataclass(frozen=True)
class Ringing:
    """A damped oscillation after the edges.

    Attributes
    ----------
    frequency_hz : float
        Damped (observed) ringing frequency.
    frequency_std_hz : float
        Its standard uncertainty.
    natural_hz : float
        Undamped natural frequency ``sqrt(f^2 + (alpha/2pi)^2)``: the
        resonance ``1/(2 pi sqrt(L C))`` of the tank that rings.
    natural_std_hz : float
        Its standard uncertainty.
    damping_ratio : float
        ``alpha / (2 pi natural_hz)``.
    amplitude_v : float
        Peak amplitude of the oscillation in the averaged edge (V).
    """

    frequency_hz: float
    frequency_std_hz: float
    natural_hz: float
    natural_std_hz: float
    damping_ratio: float
    amplitude_v: float


def _strongest_oscillation(y, dt, noise, window_s):
    f, alpha, amp, energy = matrix_pencil(y, dt, noise=noise)
    nyq = 0.5 / dt
    # An oscillation: at least a cycle and a half in the window, clear of
    # the Nyquist limit, Q above about 1, and well above the noise.
    ok = (f > 1.5 / window_s) & (f < 0.8 * nyq) & (alpha >= -0.1 / window_s)
    with np.errstate(divide="ignore", invalid="ignore"):
        zeta = alpha / np.hypot(2 * np.pi * f, alpha)
    ok &= (zeta < 0.5) & (amp > 4.0 * noise)
    if not ok.any():
        return None
    i = int(np.argmax(np.where(ok, energy, -1.0)))
    return float(f[i]), float(alpha[i]), float(amp[i])


def _ringing_of(avg: np.ndarray, dt: float, noise: float, groups: list[np.ndarray], group_noise: float):
    """Ringing of an averaged, edge-aligned waveform that starts where the edge arrives."""
    n = avg.size
    if n < 24:
        return None
    q = max(1, int(math.ceil(n / 400)))

    def decimate(v, q):
        m = (v.size // q) * q
        return v[:m].reshape(-1, q).mean(axis=1)

    first = _strongest_oscillation(decimate(avg, q), dt * q, noise / math.sqrt(q), n * dt)
    if first is None:
        return None
    f, alpha, amp = first
    # Zoom in: about eight decay times (or the whole window), at a rate that
    # gives at least 16 samples per cycle, for the accurate estimate.
    span = n if alpha <= 0 else min(n, int(8.0 / (alpha * dt)) + 8)
    q2 = max(1, min(q, int(1.0 / (16 * f * dt))))
    span = min(span, 400 * q2)
    res = _strongest_oscillation(decimate(avg[:span], q2), dt * q2, noise / math.sqrt(q2), span * dt)
    if res is None:
        res = first
        span, q2 = n, q
    f, alpha, amp = res
    fn = math.hypot(f, alpha / (2 * np.pi))
    # Uncertainty: the spread of the same estimate on independent groups of edges.
    est = []
    for g in groups:
        r = _strongest_oscillation(decimate(g[:span], q2), dt * q2, group_noise / math.sqrt(q2), span * dt)
        if r is not None and abs(r[0] - f) < 0.2 * f:
            est.append((r[0], math.hypot(r[0], r[1] / (2 * np.pi))))
    if len(est) >= 3:
        e = np.array(est)
        sf = float(np.std(e[:, 0], ddof=1) / math.sqrt(len(est)))
        sn = float(np.std(e[:, 1], ddof=1) / math.sqrt(len(est)))
    else:
        # Cramér-Rao-like bound of a sinusoid's frequency in white noise,
        # var(omega dt) ~ 24 sigma^2 / (A^2 N^3), with N the samples within one
        # decay time (from memory; rough for strongly damped ringing).
        neff = span / q2 if alpha <= 0 else min(span / q2, 1.0 / (alpha * dt * q2))
        sd = math.sqrt(24.0) * (noise / math.sqrt(q2)) / (max(amp, 1e-300) * max(neff, 3.0) ** 1.5)
        sf = sn = sd / (2 * np.pi * dt * q2)
    return Ringing(f, sf, fn, sn, float(alpha / (2 * np.pi * fn)), amp)


# --------------------------------------------------------------------------- stray capacitance

@dataclass(frozen=True)
class StrayCapacitance:
    """Stray (self-) capacitance of a coil from its ringing.

    Attributes
    ----------
    value_f, std_f : float
        Capacitance and its standard uncertainty in F.
    method : str
        ``"ringing with known inductance"`` or ``"two resonances"``.
    inductance_h, inductance_std_h : float or None
        The inductance the two-resonance method implies (None for the other).
    added_ringing_hz : float or None
        Natural frequency with the added capacitor (two-resonance method).
    """

    value_f: float
    std_f: float
    method: str
    inductance_h: float | None = None
    inductance_std_h: float | None = None
    added_ringing_hz: float | None = None


def stray_capacitance_from_inductance(f_hz: float, f_std_hz: float, inductance_h: float) -> StrayCapacitance:
    """Return ``C = 1 / ((2 pi f)^2 L)`` with its uncertainty ``2 C sigma_f / f``.

    Parameters
    ----------
    f_hz, f_std_hz : float
        The natural (undamped) ringing frequency and its uncertainty.
    inductance_h : float
        The coil's inductance, taken as exact.

    References
    ----------
    The resonance of an L-C tank, f = 1/(2 pi sqrt(L C)) (Thomson's formula;
    any circuits text, e.g. Terman, *Radio Engineers' Handbook*, McGraw-Hill,
    1943, section 3).
    """
    if not (inductance_h > 0 and math.isfinite(inductance_h)):
        raise ZfitInputError(f"the inductance must be positive, not {inductance_h!r} H")
    c = 1.0 / ((2 * np.pi * f_hz) ** 2 * inductance_h)
    return StrayCapacitance(float(c), float(2.0 * c * f_std_hz / f_hz), "ringing with known inductance")


def stray_capacitance_two_resonances(f1_hz: float, f1_std_hz: float, f2_hz: float, f2_std_hz: float,
                                     added_f: float) -> StrayCapacitance:
    """Return a coil's stray capacitance from its resonance alone and with a known added C.

    With ``f1 = 1/(2 pi sqrt(L C0))`` and ``f2 = 1/(2 pi sqrt(L (C0 + Ca)))``,
    ``(f1/f2)^2 = (C0 + Ca)/C0``, so ``C0 = Ca / ((f1/f2)^2 - 1)`` without
    knowing L, and then ``L = 1/((2 pi f1)^2 C0)``.  The uncertainty follows
    from first-order propagation of those of f1 and f2 (Ca taken as exact).

    Parameters
    ----------
    f1_hz, f1_std_hz : float
        Natural ringing frequency of the coil alone, and its uncertainty.
    f2_hz, f2_std_hz : float
        With the capacitor `added_f` across it, and its uncertainty.
    added_f : float
        The added capacitance in F.

    References
    ----------
    The two-frequency (substitution) method for the self-capacitance of a
    coil: F. E. Terman, *Radio Engineers' Handbook*, McGraw-Hill, 1943,
    section on the distributed capacitance of coils (from memory); it is
    the elimination of L between the two resonance conditions above.
    """
    if not (added_f > 0 and math.isfinite(added_f)):
        raise ZfitInputError(f"the added capacitance must be positive, not {added_f!r} F")
    if not f2_hz < f1_hz:
        raise FitError(
            f"with the capacitor added the coil rings at {format_eng(f2_hz, 'Hz', 6)}, not below {format_eng(f1_hz, 'Hz', 6)} without it: "
            "check the added capacitance and the captures")
    r2 = (f1_hz / f2_hz) ** 2
    c0 = added_f / (r2 - 1.0)
    dc_dr2 = -added_f / (r2 - 1.0) ** 2
    s_r2 = r2 * 2.0 * math.hypot(f1_std_hz / f1_hz, f2_std_hz / f2_hz)
    s_c0 = abs(dc_dr2) * s_r2
    L = 1.0 / ((2 * np.pi * f1_hz) ** 2 * c0)
    # L = (r2 - 1) / ((2 pi f1)^2 Ca): propagate f1 and f2 directly.
    dl_df1 = L * (2.0 * r2 / (r2 - 1.0) - 2.0) / f1_hz
    dl_df2 = L * (-2.0 * r2 / (r2 - 1.0)) / f2_hz
    s_l = math.hypot(dl_df1 * f1_std_hz, dl_df2 * f2_std_hz)
    return StrayCapacitance(float(c0), float(s_c0), "two resonances", float(L), float(s_l), float(f2_hz))


# --------------------------------------------------------------------------- the analysis

@dataclass(frozen=True)
class EdgeWaveform:
    """The average of all edges, aligned at the reference edge and made rising.

    Attributes
    ----------
    t_s : numpy.ndarray
        Time from the reference edge's 50 % instant in s.
    input_v : numpy.ndarray or None
        Averaged input (None for a single channel).
    output_v : numpy.ndarray
        Averaged output.
    fit_v : numpy.ndarray or None
        The fitted first-order response over the fit window (NaN outside).
    """

    t_s: np.ndarray
    input_v: np.ndarray | None
    output_v: np.ndarray
    fit_v: np.ndarray | None = None


@dataclass(frozen=True)
class StepResult:
    """Everything `analyse_capture` found in a capture.

    Attributes
    ----------
    source : str
        The capture file.
    sample_rate_hz : float
        ``1/dt``.
    n_samples : int
        Samples per channel.
    input_name, output_name : str or None
        The channels used (input None for a single channel).
    edges : int
        Edges analysed (those whose whole segment lies in the record).
    edges_rising, edges_falling : int
        Of which rising / falling.
    edge_times_s : numpy.ndarray
        50 % instants of the reference edges (input, or output alone) in s.
    levels_v : tuple of float
        Output (low, high) state levels in V.
    levels_noise_v : tuple of float
        Noise (standard deviation) of the output at each level.
    input_levels_v : tuple of float or None
        Input state levels.
    transition_10_90_s, transition_10_90_std_s : float or None
        Output 10-90 % transition duration (mean over edges) and its uncertainty.
    overshoot_pct, overshoot_std_pct : float or None
        Output overshoot of the averaged edge, percent of the amplitude.
    time_constant_s, time_constant_std_s : float or None
        Dominant time constant (of H with two channels) and its uncertainty.
    time_constant_method : str
        How it was obtained.
    midpoint_time_constant_s, midpoint_time_constant_std_s : float or None
        The cross-check: low-to-midpoint time / ln 2.
    ringing : Ringing or None
        The ringing after the edges.
    stray_capacitance : StrayCapacitance or None
        From the ringing with ``inductance_h`` or the two-resonance method.
    response : FrequencyResponse
        H(f) with uncertainty and coherence.
    usable_band_hz : tuple of float
        The band the capture supports.
    shunt_ohm : float or None
        The sense resistor.
    sweep : Sweep or None
        The impedance derived with the sense resistor.
    impedance : Identification or None
        The identification of that sweep.
    edge_waveform : EdgeWaveform
        The averaged edge, for plots.
    capture : Capture
        The capture analysed (for plots of the record).
    warnings : tuple of str
        What the user should know (also issued as MeasurementWarning).
    notes : tuple of str
        What was assumed or done.
    """

    source: str
    sample_rate_hz: float
    n_samples: int
    input_name: str | None
    output_name: str
    edges: int
    edges_rising: int
    edges_falling: int
    edge_times_s: np.ndarray
    levels_v: tuple[float, float]
    levels_noise_v: tuple[float, float]
    input_levels_v: tuple[float, float] | None
    transition_10_90_s: float | None
    transition_10_90_std_s: float | None
    overshoot_pct: float | None
    overshoot_std_pct: float | None
    time_constant_s: float | None
    time_constant_std_s: float | None
    time_constant_method: str
    midpoint_time_constant_s: float | None
    midpoint_time_constant_std_s: float | None
    ringing: Ringing | None
    stray_capacitance: StrayCapacitance | None
    response: FrequencyResponse
    usable_band_hz: tuple[float, float]
    shunt_ohm: float | None
    sweep: object | None
    impedance: object | None
    edge_waveform: EdgeWaveform
    capture: object = field(repr=False, default=None)
    warnings: tuple[str, ...] = ()
    notes: tuple[str, ...] = ()

    @property
    def ringing_hz(self) -> float | None:
        """The damped ringing frequency in Hz, or None."""
        return None if self.ringing is None else self.ringing.frequency_hz

    def to_dict(self) -> dict:
        """Return the ``zfit.step/1`` JSON object (SI units, floats as numbers).

        The keys of the contract come first: ``schema``, ``source``,
        ``sample_rate_hz``, ``edges``, ``levels_v``, ``transition_10_90_s``,
        ``overshoot_pct``, ``time_constant_s``, ``time_constant_std_s``,
        ``ringing_hz``, ``usable_band_hz`` and, with a sense resistor,
        ``impedance`` (the ``zfit.identify/1`` object).  Further keys add the
        uncertainties and the cross-checks.
        """

        def num(v):
            return None if v is None or not math.isfinite(v) else float(v)

        r = self.ringing
        d = {
            "schema": STEP_SCHEMA,
            "source": self.source,
            "sample_rate_hz": float(self.sample_rate_hz),
            "edges": int(self.edges),
            "levels_v": [float(self.levels_v[0]), float(self.levels_v[1])],
            "transition_10_90_s": num(self.transition_10_90_s),
            "overshoot_pct": num(self.overshoot_pct),
            "time_constant_s": num(self.time_constant_s),
            "time_constant_std_s": num(self.time_constant_std_s),
            "ringing_hz": None if r is None else float(r.frequency_hz),
            "usable_band_hz": [num(self.usable_band_hz[0]), num(self.usable_band_hz[1])],
        }
        if self.impedance is not None:
            d["impedance"] = self.impedance.to_dict()
        d.update({
            "input": self.input_name,
            "output": self.output_name,
            "n_samples": int(self.n_samples),
            "edges_rising": int(self.edges_rising),
            "edges_falling": int(self.edges_falling),
            "levels_noise_v": [float(self.levels_noise_v[0]), float(self.levels_noise_v[1])],
            "input_levels_v": None if self.input_levels_v is None else [float(v) for v in self.input_levels_v],
            "transition_10_90_std_s": num(self.transition_10_90_std_s),
            "overshoot_std_pct": num(self.overshoot_std_pct),
            "time_constant_method": self.time_constant_method,
            "midpoint_time_constant_s": num(self.midpoint_time_constant_s),
            "midpoint_time_constant_std_s": num(self.midpoint_time_constant_std_s),
            "ringing": None if r is None else {
                "frequency_hz": float(r.frequency_hz), "frequency_std_hz": num(r.frequency_std_hz),
                "natural_hz": float(r.natural_hz), "natural_std_hz": num(r.natural_std_hz),
                "damping_ratio": float(r.damping_ratio), "amplitude_v": float(r.amplitude_v),
            },
            "stray_capacitance": None if self.stray_capacitance is None else {
                "value_f": float(self.stray_capacitance.value_f), "std_f": num(self.stray_capacitance.std_f),
                "method": self.stray_capacitance.method,
                "inductance_h": num(self.stray_capacitance.inductance_h),
                "inductance_std_h": num(self.stray_capacitance.inductance_std_h),
                "added_ringing_hz": num(self.stray_capacitance.added_ringing_hz),
            },
            "response": {
                "method": self.response.method,
                "averages": int(self.response.n_averages),
                "bin_hz": float(1.0 / self.response.segment_s),
                "dc_gain": num(self.response.dc_gain),
                "coherence_min_in_band": num(float(self.response.coherence[self.response.usable].min())
                                             if self.response.usable.any() else None),
            },
            "shunt_ohm": num(self.shunt_ohm),
            "warnings": list(self.warnings),
            "notes": list(self.notes),
        })
        return d


def _aligned(x, starts, length, pol, levels: Levels):
    """Rows of `x` from each start, flipped so that every edge rises."""
    rows = x[starts[:, None] + np.arange(length)[None, :]]
    flip = pol < 0
    if flip.any():
        rows[flip] = (levels.low + levels.high) - rows[flip]
    return rows


def _row_crossing(rows, idx, level):
    """Fractional index where each row crosses `level` between idx and idx + 1."""
    r = np.arange(rows.shape[0])
    i = np.clip(idx, 0, rows.shape[1] - 2)
    v0, v1 = rows[r, i], rows[r, i + 1]
    with np.errstate(divide="ignore", invalid="ignore"):
        return i + (level - v0) / (v1 - v0)


def _output_edges(rows, levels: Levels, begin: int):
    """Per row: (t10, t50, t90, arrival index) of the final transition into the high state.

    The last sample at or below 10 % (from `begin` on) starts the edge and the
    first sample at or above 90 % after it ends it, so a fast spike ahead of
    the main transition (stray C passing the edge) does not count as the edge.
    """
    n, m = rows.shape
    lref, mid, href = levels.reference(0.1), levels.reference(0.5), levels.reference(0.9)
    col = np.arange(m)[None, :]
    low = (rows <= lref) & (col >= begin)
    has_low = low.any(axis=1)
    last_low = np.where(has_low, m - 1 - np.argmax(low[:, ::-1], axis=1), begin)
    high = (rows >= href) & (col > last_low[:, None])
    has_high = high.any(axis=1)
    arrive = np.argmax(high, axis=1)
    ok = has_high & (arrive > 0)
    below_mid = (rows < mid) & (col < arrive[:, None]) & (col >= last_low[:, None])
    last_below = np.where(below_mid.any(axis=1), m - 1 - np.argmax(below_mid[:, ::-1], axis=1), last_low)
    t10 = _row_crossing(rows, last_low, lref)
    t50 = _row_crossing(rows, last_below, mid)
    t90 = _row_crossing(rows, arrive - 1, href)
    bad = ~ok | ~has_low
    for t in (t10, t50, t90):
        t[bad] = np.nan
    return t10, t50, t90, np.where(bad, -1, arrive)


def _exp_fit(rows, dt, tau0, fit_from, fit_to):
    """Per-row time constants of ``v = b + c exp(-n dt / tau)`` (grid search in log tau).

    The sum of squares counts samples ``fit_from[row] <= n < fit_to``.  The
    grid spans a factor of 6 either side of `tau0`, then zooms twice on where
    the rows' minima lie; a parabola in log tau through the three best grid
    points of each row gives its estimate, and its curvature the variance.

    Returns
    -------
    tau, tau_std, rms, at_edge, (b, c)
        Per-row estimates, their uncertainties, the RMS residual, whether the
        minimum sat on the grid's end, and the linear coefficients at the
        median tau.
    """
    nrow, m = rows.shape
    col = np.arange(m)
    mask = ((col[None, :] >= fit_from[:, None]) & (col[None, :] < fit_to)).astype(float)
    npts = mask.sum(axis=1)
    s0 = npts
    r0 = np.einsum("rm,rm->r", mask, rows)

    def sse(tau):
        e = np.exp(-col * (dt / tau))
        me = mask * e[None, :]
        s1 = me.sum(axis=1)
        s2 = me @ e
        r1 = np.einsum("rm,rm->r", me, rows)
        det = s0 * s2 - s1 * s1
        with np.errstate(divide="ignore", invalid="ignore"):
            b = (r0 * s2 - r1 * s1) / det
            c = (s0 * r1 - s1 * r0) / det
        # The residual itself, not |v|^2 - r.theta, which cancels to nothing
        # when the fit is good to a part in 1e10.
        res = mask * (rows - b[:, None] - c[:, None] * e[None, :])
        return np.einsum("rm,rm->r", res, res), (b, c)

    table = {float(t): sse(float(t))[0] for t in np.geomspace(tau0 / 6.0, tau0 * 6.0, 25)}
    for span in (1.3, 1.06):
        grid = np.array(sorted(table))
        best = grid[np.argmin(np.stack([table[t] for t in grid]), axis=0)]
        lo, hi = np.percentile(best, 5) / span, np.percentile(best, 95) * span
        for t in np.geomspace(lo, hi, 13):
            table.setdefault(float(t), sse(float(t))[0])
    grid = np.array(sorted(table))
    s = np.stack([table[t] for t in grid])
    jmin = np.argmin(s, axis=0)
    j = np.clip(jmin, 1, grid.size - 2)
    r = np.arange(nrow)
    lt = np.log(grid)
    x0, x1, x2 = lt[j - 1], lt[j], lt[j + 1]
    y0, y1, y2 = s[j - 1, r], s[j, r], s[j + 1, r]
    d01, d12, d02 = x1 - x0, x2 - x1, x2 - x0
    a2 = ((y2 - y1) / d12 - (y1 - y0) / d01) / d02
    a1 = (y1 - y0) / d01 - a2 * (x0 + x1)
    with np.errstate(divide="ignore", invalid="ignore"):
        xm = np.where(a2 > 0, -a1 / (2 * a2), x1)
    xm = np.clip(xm, x0, x2)
    tau = np.exp(xm)
    smin = np.maximum(a2 * xm**2 + a1 * xm + (y1 - a2 * x1**2 - a1 * x1), 0.0)
    s2 = smin / np.maximum(npts - 3, 1)
    with np.errstate(divide="ignore", invalid="ignore"):
        # SSE ~ SSE_min + a2 (ln tau - ln tau_hat)^2 and var(ln tau) = s^2 / a2.
        std = np.where(a2 > 0, tau * np.sqrt(s2 / a2), np.nan)
    at_edge = (jmin == 0) | (jmin == grid.size - 1)
    _, coef = sse(float(np.median(tau)))
    return tau, std, np.sqrt(s2), at_edge, coef


def _first_order_response(x, tau, dt):
    """Response of 1/(1 + s tau) to `x` (linear between samples), settled at x[0] before.

    The first-order-hold recursion ``y[n+1] = a y[n] + b0 x[n+1] + b1 x[n]``
    as a convolution with its impulse response, by FFT.
    """
    a = math.exp(-dt / tau)
    k = tau / dt * (1.0 - a)
    b0, b1 = 1.0 - k, k - a
    n = x.size
    # Settled before the start: the input's first value held long enough that
    # its response has decayed (40 time constants, or the segment's length).
    pad = int(min(40.0 * tau / dt, 4 * n)) + 1
    xp = np.concatenate([np.full(pad, x[0]), x])
    h = np.empty(xp.size)
    h[0] = b0
    h[1:] = (b1 + a * b0) * a ** np.arange(xp.size - 1)
    m = 1 << int(math.ceil(math.log2(2 * xp.size)))
    y = np.fft.irfft(np.fft.rfft(xp, m) * np.fft.rfft(h, m), m)[: xp.size]
    return y[pad:]


def _deconvolved_steps(x, y, starts, seg_len, dt, noise_x, f_cut):
    """Rows of the response of H = V_out/V_in to an ideal step at sample 0.

    Each edge's output derivative spectrum is divided by its input's
    (regularised where the input sinks into its noise) and tapered to zero
    between `f_cut` and twice that; the inverse transform, summed, is the
    step response of H band-limited to the input's band.  The generator's
    output resistance and the input's sag under load divide out.
    """
    f = np.fft.rfftfreq(seg_len, dt)
    w = np.ones_like(f)
    top = min(2.0 * f_cut, 0.5 / dt)
    ramp = (f > f_cut) & (f < top)
    w[ramp] = 0.5 * (1.0 + np.cos(np.pi * (f[ramp] - f_cut) / (top - f_cut)))
    w[f >= top] = 0.0
    lam = seg_len * 4.0 * np.sin(np.pi * f * dt) ** 2 * noise_x**2
    out = np.empty((starts.size, seg_len))
    idx = np.arange(seg_len + 1)
    for b0, b1 in _gather_blocks(starts.size, seg_len + 1):
        st = starts[b0:b1]
        X = np.fft.rfft(np.diff(x[st[:, None] + idx[None, :]], axis=1), axis=1)
        Y = np.fft.rfft(np.diff(y[st[:, None] + idx[None, :]], axis=1), axis=1)
        Hk = Y * np.conj(X) / (X.real**2 + X.imag**2 + lam[None, :])
        out[b0:b1] = np.cumsum(np.fft.irfft(Hk * w[None, :], n=seg_len, axis=1), axis=1)
    return out


def _gather_blocks(n_rows, length):
    per = max(1, _BLOCK_SAMPLES // max(length, 1))
    return [(i, min(n_rows, i + per)) for i in range(0, n_rows, per)]


def analyse_capture(
    capture,
    input=None,
    output=None,
    shunt_ohm: float | None = None,
    *,
    inductance_h: float | None = None,
    added_capture=None,
    added_capacitance_f: float | None = None,
    model: str = "auto",
    coherence_min: float = DEFAULT_COHERENCE_MIN,
    energy_min_db: float = DEFAULT_ENERGY_MIN_DB,
    max_points: int = 300,
) -> StepResult:
    """Return the time-domain figures, the frequency response and (with a sense resistor) the part's circuit.

    Parameters
    ----------
    capture : Capture
        The record (see `read_capture`).
    input : str or int, optional
        The drive channel (name or 1-based file column); omit for a
        single-channel capture, whose output is then compared with an ideal
        step between its measured state levels.
    output : str or int, optional
        The response channel; may be omitted when the capture has one channel.
    shunt_ohm : float, optional
        Sense resistor in ohm: the output is the voltage across it at the
        part's return, the input the drive at the part's other terminal.
        The impedance ``Z = R (V_in - V_out)/V_out`` is identified like a
        sweep (`zfit.identify`).
    inductance_h : float, optional
        The coil's inductance, to turn the ringing frequency into its stray
        capacitance.
    added_capture : Capture, optional
        A second capture of the same coil with a known capacitor across it
        (same channels), for the two-resonance method.
    added_capacitance_f : float, optional
        That capacitor in F.
    model : str
        Passed to `zfit.identify` with a sense resistor.
    coherence_min : float
        Lowest coherence inside the usable band.
    energy_min_db : float
        Lowest input level (relative to its peak) inside the usable band.
    max_points : int
        Largest number of points of the impedance sweep (bins are averaged
        on a log grid).

    Returns
    -------
    StepResult

    Raises
    ------
    ZfitInputError
        When a channel is unknown, the reference channel has no two states
        or no edge, or the options do not fit together.
    FitError
        When the usable band is too narrow for the impedance.

    Warns
    -----
    MeasurementWarning
        Clipped channels, few edges, a response that has not settled before
        the next edge, a response that is not first order, a time constant
        and its midpoint cross-check that disagree.

    References
    ----------
    IEEE Std 181-2011, doi:10.1109/IEEESTD.2011.6016198.
    J. S. Bendat and A. G. Piersol, *Random Data*, 4th ed., Wiley, 2010,
    doi:10.1002/9781118032428, ch. 9.
    Y. Hua and T. K. Sarkar, IEEE Trans. ASSP 38(5), 814-824, 1990,
    doi:10.1109/29.56027.
    A. S. Sedra and K. C. Smith, *Microelectronic Circuits*, 7th ed., Oxford
    University Press, 2015, appendix E (single-time-constant networks: 10-90 %
    rise time tau ln 9 ~ 2.2 tau, 50 % time tau ln 2).
    """
    src = capture.source
    warn_list: list[str] = []
    notes: list[str] = list(capture.notes)

    def warn(text):
        warn_list.append(text)
        warnings.warn(f"{src}: {text}" if src else text, MeasurementWarning, stacklevel=3)

    # ---- channels
    if output is None:
        others = [n for n in capture.names if input is None or n != capture.channel_name(input)]
        if len(others) != 1:
            raise ZfitInputError(f"give the output channel (one of {', '.join(capture.names)})", src)
        out_name = others[0]
    else:
        out_name = capture.channel_name(output)
    in_name = None if input is None else capture.channel_name(input)
    if in_name == out_name:
        raise ZfitInputError(f"the input and the output are the same channel ({out_name})", src)
    if shunt_ohm is not None and in_name is None:
        raise ZfitInputError("--shunt needs both channels: the drive (--input) and the sense resistor (--output)", src)
    if (added_capture is None) != (added_capacitance_f is None):
        raise ZfitInputError("the two-resonance method needs both the added capture and the added capacitance", src)
    y = capture.channels[out_name]
    x = None if in_name is None else capture.channels[in_name]
    dt = capture.dt
    n = capture.n_samples

    for name, v in ((in_name, x), (out_name, y)):
        if v is None:
            continue
        lo_f, hi_f = _clipped(v)
        if lo_f or hi_f:
            warn(f"channel {name} looks clipped ({100 * max(lo_f, hi_f):.2g} % of samples flat at the "
                 f"{'top' if hi_f >= lo_f else 'bottom'} rail): widen the vertical range")

    # ---- the reference edges (input, or the output alone)
    ref = x if x is not None else y
    ref_name = in_name if x is not None else out_name
    ref_lv = state_levels(ref)
    spread = float(ref.max() - ref.min())
    if not (ref_lv.amplitude > 0.5 * spread and ref_lv.amplitude > 6.0 * max(ref_lv.noise, 1e-300)):
        raise ZfitInputError(
            f"channel {ref_name} has no two settled states (levels {format_eng(ref_lv.low, 'V')} and {format_eng(ref_lv.high, 'V')} "
            f"over a range of {format_eng(spread, 'V')}): it is not a square wave or a step", src)
    pol, t_first, t_mid, _t_last = find_edges(ref, ref_lv)
    if pol.size == 0:
        raise ZfitInputError(
            f"no edge in channel {ref_name}: it never goes from below 10 % to above 90 % of its levels", src)

    # ---- segments: from 1/8 of the edge spacing before each edge to the next
    if pol.size >= 2:
        spacing = int(np.floor(np.min(np.diff(t_mid))))
    else:
        spacing = int(n - np.floor(t_mid[0]) + min(np.floor(t_mid[0]), (n - t_mid[0]) / 8))
    pre = max(2, spacing // 8)
    starts = np.floor(t_mid).astype(np.intp) - pre
    seg_len = prev_fast_len(max(spacing - 1, 8))
    fits = (starts >= 0) & (starts + seg_len + 1 <= n)
    if not fits.any() and pol.size == 1:
        pre = int(min(np.floor(t_mid[0]), pre))
        starts = np.floor(t_mid).astype(np.intp) - pre
        seg_len = prev_fast_len(max(n - starts[0] - 2, 8))
        fits = (starts >= 0) & (starts + seg_len + 1 <= n)
    if not fits.any():
        raise ZfitInputError(f"no edge of channel {ref_name} has a whole segment inside the record", src)
    pol, t_mid, starts, t_first = pol[fits], t_mid[fits], starts[fits], t_first[fits]
    n_edges = int(pol.size)
    if seg_len < 32:
        raise ZfitInputError(f"the edges are only {spacing} samples apart: sample faster or use a slower square wave", src)
    length = seg_len + 1
    edge_frac = t_mid - starts  # the reference edge's 50 % instant within its row

    out_lv = state_levels(y)
    yspread = float(y.max() - y.min())
    has_states = out_lv.amplitude > 0.15 * yspread and out_lv.amplitude > 6.0 * max(out_lv.noise, 1e-300)
    in_lv = state_levels(x) if x is not None else None
    if not has_states:
        notes.append(f"the output {out_name} does not settle to two states (a differentiating response): "
                     "no transition duration, overshoot or time constant")

    noise_y = out_lv.noise if has_states else float(np.std(np.diff(y[: min(n, 1 << 16)]))) / math.sqrt(2.0)
    resp = None

    # ---- response segments: one period (two edges) each, where Y = H X holds
    # exactly in periodic steady state whether or not the response settles
    # between edges; one edge each for a record of one or two edges.
    r_idx = np.zeros(0, dtype=int)
    if n_edges >= 3:
        per = t_mid[2:] - t_mid[:-2]
        r_len = int(round(float(np.median(per))))
        if np.max(np.abs(per - r_len)) > 0.01 * r_len:
            notes.append(f"the square wave's period varies by up to {100 * np.max(np.abs(per - r_len)) / r_len:.2g} %")
        r_idx = np.arange(0, n_edges - 1, 2)
        r_idx = r_idx[starts[r_idx] + r_len + 1 <= n]
    if r_idx.size:
        r_starts = starts[r_idx]
    else:
        r_len, r_starts, r_idx = seg_len, starts, np.arange(n_edges)
    per_period = r_len != seg_len
    what = "periods" if per_period else "edges"
    if r_idx.size == 1:
        warn(f"only 1 {what[:-1]} to average ({n_edges} edge(s)): the per-bin uncertainties rest on the noise alone")
    elif r_idx.size < 4:
        warn(f"only {r_idx.size} {what} to average ({n_edges} edges): the coherence and the uncertainties are rough")
    dc_gain = out_lv.amplitude / in_lv.amplitude if (has_states and x is not None) else None
    # One-edge segments start and end on settled levels: their end values are
    # taken as the mean of the samples before the edge starts (and as many at
    # the end), since the noise of a single end sample is common to every bin
    # and, for one edge, dominates the lowest bins.  The edge is taken to start
    # twice its 10-to-50 % time before its 50 % instant (a first-order edge
    # starts 1.2 times that time before).
    lead = float(np.max(t_mid - t_first)) if t_first.size else 0.0
    end_average = 1 if per_period else int(max(1, min(pre - 2 * math.ceil(lead) - 1, length // 20)))

    def two_channel_response():
        return edge_response(y, dt, r_starts, r_len, x=x, noise_x=in_lv.noise, noise_y=noise_y, dc_gain=dc_gain,
                             end_average=end_average, coherence_min=coherence_min, energy_min_db=energy_min_db)

    # ---- per-edge output figures and the averaged edge, block by block
    t10 = np.full(n_edges, np.nan)
    t50 = np.full(n_edges, np.nan)
    t90 = np.full(n_edges, np.nan)
    over = np.full(n_edges, np.nan)
    sum_y = np.zeros(length)
    sum_x = np.zeros(length) if x is not None else None
    in_t10 = np.full(n_edges, np.nan)
    in_t90 = np.full(n_edges, np.nan)
    # Rows flipped by the reference edge's sign: a passive part's output steps the same way as its input.
    for b0, b1 in _gather_blocks(n_edges, length):
        st = starts[b0:b1]
        p = pol[b0:b1]
        if x is not None:
            rx = _aligned(x, st, length, p, in_lv)
            sum_x += rx.sum(axis=0)
            a10, _, a90, _ = _output_edges(rx, in_lv, 0)
            in_t10[b0:b1], in_t90[b0:b1] = a10, a90
        ry = _aligned(y, st, length, p, out_lv)
        sum_y += ry.sum(axis=0)
        if has_states:
            e10, e50, e90, arr = _output_edges(ry, out_lv, 0)
            t10[b0:b1], t50[b0:b1], t90[b0:b1] = e10, e50, e90
            col = np.arange(length)[None, :]
            post = np.where(col >= np.maximum(arr, 0)[:, None], ry, -np.inf)
            peak = post.max(axis=1)
            over[b0:b1] = np.where(arr > 0, (peak - out_lv.high) / out_lv.amplitude * 100.0, np.nan)
    avg_y = sum_y / n_edges
    avg_x = None if sum_x is None else sum_x / n_edges
    if avg_x is not None:
        # The output's step against the input's on the averaged edge: a ratio
        # above one or below zero means swapped or inverted channels.
        k_end, k_pre = max(3, length // 20), max(1, pre // 2)
        step_in = float(np.mean(avg_x[-k_end:]) - np.mean(avg_x[:k_pre]))
        step_out = float(np.mean(avg_y[-k_end:]) - np.mean(avg_y[:k_pre]))
        if step_in != 0 and step_out / step_in < -0.05:
            warn(f"the output {out_name} steps the other way from the input {in_name}: an inverted channel or probe")
        elif step_in != 0 and step_out / step_in > 1.05:
            warn(f"the output {out_name} steps {step_out / step_in:.3g} times as far as the input {in_name}: "
                 "a passive part cannot do that; are --input and --output swapped, or the probe factors unequal?")
    t_axis = (np.arange(length) - float(np.mean(edge_frac))) * dt

    transition = transition_std = overshoot = overshoot_std = None
    tau = tau_std = tau_mid = tau_mid_std = None
    tau_method = ""
    fit_curve = None
    step_at = None
    ringing = None
    if has_states:
        good = np.isfinite(t10) & np.isfinite(t90)
        if not good.any():
            warn(f"the output {out_name} never settles at its high level before the next edge")
        else:
            dur = (t90[good] - t10[good]) * dt
            transition = float(np.mean(dur))
            ov = over[good]
            if dur.size > 1:
                transition_std = float(np.std(dur, ddof=1) / math.sqrt(dur.size))
                overshoot_std = float(np.std(ov, ddof=1) / math.sqrt(ov.size))
            else:
                # One edge: each crossing time is off by the noise over the slope there.
                slope = np.diff(avg_y)
                k = np.flatnonzero(good)[0]
                s10 = abs(float(np.interp(t10[k] - 0.5, np.arange(slope.size), slope)))
                s90 = abs(float(np.interp(t90[k] - 0.5, np.arange(slope.size), slope)))
                if s10 > 0 and s90 > 0:
                    transition_std = dt * math.hypot(out_lv.low_noise / s10, out_lv.high_noise / s90)
                overshoot_std = 100.0 * out_lv.high_noise / out_lv.amplitude
            ov_i = _output_edges(avg_y[None, :], out_lv, 0)[3][0]
            if ov_i > 0:
                overshoot = float((avg_y[ov_i:].max() - out_lv.high) / out_lv.amplitude * 100.0)
            settle = avg_y[-max(3, length // 20):]
            if abs(float(np.mean(settle)) - out_lv.high) > 0.01 * out_lv.amplitude + 3 * out_lv.high_noise / math.sqrt(n_edges * settle.size):
                warn("the output has not settled before the next edge: the state levels, the transition "
                     "duration and the time constant refer to an unsettled waveform (use a slower square wave)")

            # ---- dominant time constant
            if x is not None:
                mid_ok = good & np.isfinite(t50)
                dmid = (t50[mid_ok] - edge_frac[mid_ok]) * dt
                tau0 = float(np.median(dmid)) / LN2 if dmid.size else float("nan")
                if dmid.size:
                    tau_mid = float(np.mean(dmid)) / LN2
                    tau_mid_std = float(np.std(dmid, ddof=1) / math.sqrt(dmid.size)) / LN2 if dmid.size > 1 else None
            else:
                tau0 = transition / LN9
            if not (math.isfinite(tau0) and tau0 > 2.0 * dt):
                if x is None or not math.isfinite(tau0):
                    tau0 = max(transition / LN9, 3.0 * dt)
                else:
                    tau0 = max(tau0, transition / LN9, 3.0 * dt)
            follows = False
            if x is not None:
                resp = two_channel_response()
                in_dur = (in_t90 - in_t10)[good]
                in_dur = in_dur[np.isfinite(in_dur)]
                # An output as fast as its input has no time constant of its own to resolve.
                follows = in_dur.size > 0 and transition < 1.5 * float(np.median(in_dur)) * dt
            if follows:
                tc = (None, None, "", None, None)
                tau_mid = tau_mid_std = None
                notes.append("the output follows the input's edge (10-90 % within 1.5 times the input's): "
                             "no time constant longer than the input's transition to fit")
            else:
                tc = _time_constant(x, y, starts, pol, seg_len, edge_frac, t10, good, tau0, dt, in_lv, out_lv, warn,
                                    resp)
            tau, tau_std, tau_method, fit_curve, extra = tc
            if x is None and extra is not None:
                step_at, mid1 = extra
                if mid1 is not None:
                    tau_mid, tau_mid_std = mid1
            if tau is not None and tau_mid is not None and abs(tau_mid - tau) > 0.1 * tau:
                warn(f"the time constant of the fit ({format_eng(tau, 's')}) and the low-to-midpoint time / ln 2 "
                     f"({format_eng(tau_mid, 's')}) differ by more than 10 %: the response is not a single time constant")

        # ---- ringing on the averaged output after the edge arrives
        arr_avg = _output_edges(avg_y[None, :], out_lv, 0)[3][0]
        if arr_avg > 0:
            groups = []
            ng = min(4, n_edges // 2)
            if ng >= 3:
                gsum = [np.zeros(length - arr_avg) for _ in range(ng)]
                gcnt = [0] * ng
                for b0, b1 in _gather_blocks(n_edges, length):
                    ry = _aligned(y, starts[b0:b1], length, pol[b0:b1], out_lv)
                    for k in range(b0, b1):
                        gsum[k % ng] += ry[k - b0, arr_avg:]
                        gcnt[k % ng] += 1
                groups = [g / c for g, c in zip(gsum, gcnt)]
            noise_avg = out_lv.high_noise / math.sqrt(n_edges)
            gnoise = out_lv.high_noise / math.sqrt(max(1, n_edges // max(ng, 1)))
            # Remove the settled level so that the pencil spends no order on it.
            ringing = _ringing_of(avg_y[arr_avg:] - out_lv.high, dt, noise_avg,
                                  [g - out_lv.high for g in groups], gnoise)

    # ---- frequency response
    if x is not None:
        if resp is None:
            resp = two_channel_response()
    else:
        if step_at is None:
            step_at = np.where(np.isfinite(t10), t10, edge_frac)
            notes.append("the ideal step is placed at each edge's 10 % instant (no first-order fit)")
        if per_period:
            # The two steps of each period, from the row starts of their own edges.
            absolute = starts + np.asarray(step_at, dtype=float)
            at = np.stack([absolute[r_idx], absolute[r_idx + 1]], axis=1) - r_starts[:, None]
            sign = np.stack([pol[r_idx], pol[r_idx + 1]], axis=1)
            resp = edge_response(y, dt, r_starts, r_len, step_at=at, step_sign=sign, step_size=ref_lv.amplitude,
                                 noise_y=noise_y, dc_gain=1.0, coherence_min=coherence_min,
                                 energy_min_db=energy_min_db)
        else:
            resp = edge_response(y, dt, starts, seg_len, step_at=step_at, step_size=ref_lv.amplitude,
                                 noise_y=noise_y, end_average=end_average, coherence_min=coherence_min,
                                 energy_min_db=energy_min_db)
    band = resp.band_hz
    if x is not None and resp.nyquist_level_db > -40.0:
        warn(f"the input still has energy near the Nyquist frequency ({-resp.nyquist_level_db:.0f} dB below its peak): "
             "its edges are faster than the sample rate resolves, and the aliases bias the response wherever "
             "|H| is small; sample faster or limit the scope's bandwidth")
    if not resp.usable.any():
        warn("no usable band: the coherence or the input energy is too low in every bin")

    # ---- stray capacitance
    stray = None
    if inductance_h is not None or added_capture is not None:
        if ringing is None:
            warn("no ringing after the edges: the stray capacitance cannot be estimated from it")
        elif added_capture is not None:
            other = analyse_capture(added_capture, input=in_name, output=out_name, coherence_min=coherence_min,
                                    energy_min_db=energy_min_db)
            if other.ringing is None:
                warn(f"no ringing in the capture with the added capacitor ({added_capture.source})")
            else:
                stray = stray_capacitance_two_resonances(
                    ringing.natural_hz, ringing.natural_std_hz, other.ringing.natural_hz,
                    other.ringing.natural_std_hz, float(added_capacitance_f))
        else:
            stray = stray_capacitance_from_inductance(ringing.natural_hz, ringing.natural_std_hz, float(inductance_h))

    # ---- impedance with a sense resistor
    sweep = ident = None
    if shunt_ohm is not None:
        from ..identification._pipeline import identify

        shunt_ohm = float(shunt_ohm)
        sweep = impedance_sweep(resp, shunt_ohm, source=src, max_points=max_points)
        ident = identify(sweep, model=model)

    if fit_curve is not None:
        fit_curve = np.asarray(fit_curve)
    ew = EdgeWaveform(t_axis, avg_x, avg_y, fit_curve)
    return StepResult(
        source=src, sample_rate_hz=capture.sample_rate_hz, n_samples=n, input_name=in_name, output_name=out_name,
        edges=n_edges, edges_rising=int(np.count_nonzero(pol > 0)), edges_falling=int(np.count_nonzero(pol < 0)),
        edge_times_s=capture.t0 + t_mid * dt, levels_v=(out_lv.low, out_lv.high),
        levels_noise_v=(out_lv.low_noise, out_lv.high_noise),
        input_levels_v=None if in_lv is None else (in_lv.low, in_lv.high),
        transition_10_90_s=transition, transition_10_90_std_s=transition_std,
        overshoot_pct=overshoot, overshoot_std_pct=overshoot_std,
        time_constant_s=tau, time_constant_std_s=tau_std, time_constant_method=tau_method,
        midpoint_time_constant_s=tau_mid, midpoint_time_constant_std_s=tau_mid_std,
        ringing=ringing, stray_capacitance=stray, response=resp, usable_band_hz=band, shunt_ohm=shunt_ohm,
        sweep=sweep, impedance=ident, edge_waveform=ew, capture=capture,
        warnings=tuple(warn_list), notes=tuple(notes),
    )


def _clipped(v):
    from ..io._capture import clipped_fraction

    return clipped_fraction(v)


def _time_constant(x, y, starts, pol, seg_len, edge_frac, t10, good, tau0, dt, in_lv, out_lv, warn, resp):
    """Dominant time constant by an exponential fitted to each edge.

    Two channels: to each edge's step response of H = V_out/V_in (the
    output deconvolved by the measured input, `_deconvolved_steps`).  One
    channel: to the output itself from its 10 % instant, the response to the
    generator's (ideal) step, which includes the generator's resistance.
    """
    idx = np.flatnonzero(good)
    two = x is not None
    length = seg_len + 1
    if two:
        # Band for the deconvolution: where the input is well above its noise.
        lvl = resp.input_level_db
        strong = resp.f_hz[lvl >= -20.0]
        f_cut = float(min(strong.max() if strong.size else resp.f_hz[-1], 0.2 / dt))
        skip = max(_FIT_SKIP_TAU * tau0, 2.0 / f_cut) / dt
        span = int(min(seg_len, math.ceil(skip + _FIT_SPAN_TAU * tau0 / dt) + 2))
        max_rows = max(4, _FIT_SAMPLES // seg_len)
        if idx.size > max_rows:
            idx = idx[np.linspace(0, idx.size - 1, max_rows).round().astype(int)]
        rows = _deconvolved_steps(x, y, starts[idx], seg_len, dt, in_lv.noise, f_cut)[:, :span]
        fit_from = np.full(idx.size, int(math.ceil(skip)))
        amplitude = float(np.median(np.abs(rows[:, -max(3, span // 20):].mean(axis=1)))) * in_lv.amplitude
        rows = rows * in_lv.amplitude  # in volts of output per input step, for the residual check
        method = ("exponential fitted to each edge's step response of H = V_out/V_in "
                  "(the output deconvolved by the measured input)")
        if f_cut < 5.0 / (2 * np.pi * tau0):
            warn("the input's bandwidth is too low to resolve the time constant")
    else:
        span = int(min(length, math.ceil(np.nanmax(t10[idx]) + _FIT_SPAN_TAU * tau0 / dt) + 2))
        max_rows = max(4, _FIT_SAMPLES // max(span, 1))
        if idx.size > max_rows:
            idx = idx[np.linspace(0, idx.size - 1, max_rows).round().astype(int)]
        rows = _aligned(y, starts[idx], span, pol[idx], out_lv)
        fit_from = np.ceil(t10[idx]).astype(int)
        amplitude = out_lv.amplitude
        method = "exponential fitted to each edge from its 10 % instant (single channel: includes the source resistance)"
    if np.any(span - fit_from < 8):
        warn("the time constant is too long for the edge spacing (or too short for the sample rate) to be fitted")
        return None, None, method, None, None
    tau_k, std_k, rms_k, at_edge, (bb, cc) = _exp_fit(rows, dt, tau0, fit_from, span)
    if np.mean(at_edge) > 0.5:
        warn("the exponential fit found no time constant within a factor of 6 of the midpoint estimate")
        return None, None, method, None, None
    quality = float(np.median(rms_k)) / max(abs(amplitude), 1e-300)
    if quality > 0.05:
        warn(f"the edges are not first order (fit residual {100 * quality:.2g} % of the amplitude): "
             "no dominant time constant")
        return None, None, method, None, None
    tau = float(np.mean(tau_k))
    if tau_k.size >= 3:
        tau_std = float(np.std(tau_k, ddof=1) / math.sqrt(tau_k.size))
    else:
        s = std_k[np.isfinite(std_k)]
        tau_std = float(1.0 / math.sqrt(np.sum(1.0 / s**2))) if s.size else None
    # The fitted curve on the averaged output edge, for plots.
    fit_curve = np.full(length, np.nan)
    col = np.arange(span)
    a = math.exp(-dt / tau)
    if two:
        # The first-order response to the averaged input, scaled to the output.
        mx = _aligned(x, starts[idx], span, pol[idx], in_lv).mean(axis=0)
        my = _aligned(y, starts[idx], span, pol[idx], out_lv).mean(axis=0)
        fx = _first_order_response(mx, tau, dt)
        lo_fit = int(math.ceil(np.mean(edge_frac[idx]) + fit_from[0]))
        if lo_fit < span - 2:
            sel = slice(lo_fit, span)
            A = np.stack([fx[sel], np.ones(span - lo_fit)], axis=1)
            coef, *_ = np.linalg.lstsq(A, my[sel], rcond=None)
            fit_curve[sel] = A @ coef
    else:
        lo_fit = int(np.min(fit_from))
        fit_curve[lo_fit:span] = float(np.median(bb)) + float(np.median(cc)) * a ** col[lo_fit:span]
    mid = None
    if not two:
        # Single channel: each fitted exponential leaves the low level at the
        # instant of the generator's step; it anchors the phase of H and the
        # low-to-midpoint cross-check.
        with np.errstate(divide="ignore", invalid="ignore"):
            n_start = np.log((out_lv.low - bb) / cc) / math.log(a)
        step_at = np.where(np.isfinite(t10), t10, edge_frac).astype(float)
        ok = np.isfinite(n_start)
        step_at[idx[ok]] = n_start[ok]
        t50_rows = _output_edges(rows, out_lv, 0)[1]
        dmid = (t50_rows - n_start) * dt
        dmid = dmid[np.isfinite(dmid)]
        if dmid.size:
            mid = (float(np.mean(dmid)) / LN2,
                   float(np.std(dmid, ddof=1) / math.sqrt(dmid.size)) / LN2 if dmid.size > 1 else None)
        return tau, tau_std, method, fit_curve, (step_at, mid)
    return tau, tau_std, method, fit_curve, None
