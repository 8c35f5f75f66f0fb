"""The analysis of a step or square-wave capture, `analyse_capture`, as named steps.

channels -> reference edges and their segments -> output states -> response
segments -> per-edge figures and the averaged edge -> transition duration and
overshoot -> dominant time constant -> ringing -> frequency response ->
stray capacitance -> (with a sense resistor) impedance and identification.
Each step returns a frozen record; the warnings and notes are gathered in
the order the steps find them.

References
----------
IEEE Std 181-2011, *IEEE Standard for Transitions, Pulses, and Related
Waveforms*, doi:10.1109/IEEESTD.2011.6016198.
"""

from __future__ import annotations

import math
import warnings
from dataclasses import dataclass

import numpy as np

from .._errors import MeasurementWarning, ZfitInputError
from .._units import format_eng, format_value_std
from ..io._capture import Capture
from ._edges import aligned_rows, rising_edge_times, row_blocks
from ._levels import Levels, find_edges, state_levels
from ._response import (
    DEFAULT_COHERENCE_MIN, DEFAULT_ENERGY_MIN_DB, FrequencyResponse, edge_response, impedance_sweep, prev_fast_len,
)
from ._result import EdgeWaveform, StepResult
from ._ringing import Ringing, ringing_of
from ._stray import StrayCapacitance, stray_capacitance_from_inductance, stray_capacitance_two_resonances
from ._time_constant import LN2, LN9, TimeConstantFit, time_constant_fit

__all__ = ["analyse_capture"]


class _Log:
    """The warnings (also issued as MeasurementWarning) and notes of one analysis, in order."""

    def __init__(self, source: str, notes=()):
        self.source = source
        self.warnings: list[str] = []
        self.notes: list[str] = list(notes)

    def warn(self, text: str) -> None:
        self.warnings.append(text)
        warnings.warn(f"{self.source}: {text}" if self.source else text, MeasurementWarning, stacklevel=4)

    def note(self, text: str) -> None:
        self.notes.append(text)


@dataclass(frozen=True)
class _Channels:
    """The channels analysed: the drive (None for one channel) and the response."""

    in_name: str | None
    out_name: str
    x: np.ndarray | None
    y: np.ndarray


@dataclass(frozen=True)
class _EdgeSegments:
    """The reference edges and the segment of the record that belongs to each.

    Segments run from 1/8 of the edge spacing before each edge to the next;
    only edges whose whole segment lies in the record are kept.
    """

    ref_levels: Levels
    polarity: np.ndarray
    t_first: np.ndarray
    t_mid: np.ndarray
    starts: np.ndarray
    seg_len: int
    pre: int

    @property
    def n_edges(self) -> int:
        return int(self.polarity.size)

    @property
    def length(self) -> int:
        return self.seg_len + 1

    @property
    def edge_frac(self) -> np.ndarray:
        """The reference edge's 50 % instant within its row."""
        return self.t_mid - self.starts


@dataclass(frozen=True)
class _OutputStates:
    """The output's state levels (when it has two), the input's, and the output noise."""

    levels: Levels
    has_states: bool
    input_levels: Levels | None
    noise: float


@dataclass(frozen=True)
class _ResponseSegments:
    """The segments the frequency response averages: one period (two edges)
    each, where Y = H X holds exactly in periodic steady state whether or not
    the response settles between edges; one edge each for a record of one or
    two edges."""

    length: int
    starts: np.ndarray
    edges: np.ndarray
    per_period: bool
    end_average: int


@dataclass(frozen=True)
class _EdgeFigures:
    """Per-edge 10/50/90 % instants and overshoot of the output, the input's
    10/90 % instants, and the averaged edge (rows flipped to rise)."""

    t10: np.ndarray
    t50: np.ndarray
    t90: np.ndarray
    overshoot_pct: np.ndarray
    input_t10: np.ndarray
    input_t90: np.ndarray
    avg_x: np.ndarray | None
    avg_y: np.ndarray


@dataclass(frozen=True)
class _Transition:
    """The output's 10-90 % transition duration and overshoot (None when not found)."""

    duration_s: float | None = None
    duration_std_s: float | None = None
    overshoot_pct: float | None = None
    overshoot_std_pct: float | None = None
    good: np.ndarray | None = None


@dataclass(frozen=True)
class _TimeConstant:
    """The dominant time constant with its midpoint cross-check."""

    fit: TimeConstantFit
    midpoint_s: float | None
    midpoint_std_s: float | None


def _channels(capture: Capture, input, output, shunt_ohm, added_capture, added_capacitance_f) -> _Channels:
    """The drive and response channels, checked against the options."""
    src = capture.source
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
    return _Channels(in_name, out_name, x, y)


def _warn_clipping(ch: _Channels, log: _Log) -> None:
    from ..io._capture import clipped_fraction

    for name, v in ((ch.in_name, ch.x), (ch.out_name, ch.y)):
        if v is None:
            continue
        lo_f, hi_f = clipped_fraction(v)
        if lo_f or hi_f:
            log.warn(f"channel {name} looks clipped ({100 * max(lo_f, hi_f):.2g} % of samples flat at the "
                     f"{'top' if hi_f >= lo_f else 'bottom'} rail): widen the vertical range")


def _edge_segments(ch: _Channels, n: int, src: str) -> _EdgeSegments:
    """The reference edges (input, or the output alone) and their segments."""
    ref = ch.x if ch.x is not None else ch.y
    ref_name = ch.in_name if ch.x is not None else ch.out_name
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
    if seg_len < 32:
        raise ZfitInputError(f"the edges are only {spacing} samples apart: sample faster or use a slower square wave", src)
    return _EdgeSegments(ref_lv, pol[fits], t_first[fits], t_mid[fits], starts[fits], int(seg_len), int(pre))


def _output_states(ch: _Channels, n: int, log: _Log) -> _OutputStates:
    """The output's two states (a differentiating response has none) and its noise."""
    y = ch.y
    out_lv = state_levels(y)
    yspread = float(y.max() - y.min())
    has_states = out_lv.amplitude > 0.15 * yspread and out_lv.amplitude > 6.0 * max(out_lv.noise, 1e-300)
    in_lv = state_levels(ch.x) if ch.x is not None else None
    if not has_states:
        log.note(f"the output {ch.out_name} does not settle to two states (a differentiating response): "
                 "no transition duration, overshoot or time constant")
    noise_y = out_lv.noise if has_states else float(np.std(np.diff(y[: min(n, 1 << 16)]))) / math.sqrt(2.0)
    return _OutputStates(out_lv, bool(has_states), in_lv, noise_y)


def _response_segments(seg: _EdgeSegments, n: int, log: _Log) -> _ResponseSegments:
    """Periods (or edges) for the frequency response, and how many end samples to average."""
    n_edges, starts, t_mid = seg.n_edges, seg.starts, seg.t_mid
    r_idx = np.zeros(0, dtype=int)
    if n_edges >= 3:
        per = t_mid[2:] - t_mid[:-2]
        r_len = int(round(float(np.median(per))))
        if np.max(np.abs(per - r_len)) > 0.01 * r_len:
            log.note(f"the square wave's period varies by up to {100 * np.max(np.abs(per - r_len)) / r_len:.2g} %")
        r_idx = np.arange(0, n_edges - 1, 2)
        r_idx = r_idx[starts[r_idx] + r_len + 1 <= n]
    if r_idx.size:
        r_starts = starts[r_idx]
    else:
        r_len, r_starts, r_idx = seg.seg_len, starts, np.arange(n_edges)
    per_period = r_len != seg.seg_len
    what = "periods" if per_period else "edges"
    if r_idx.size == 1:
        log.warn(f"only 1 {what[:-1]} to average ({n_edges} edge(s)): the per-bin uncertainties rest on the noise alone")
    elif r_idx.size < 4:
        log.warn(f"only {r_idx.size} {what} to average ({n_edges} edges): the coherence and the uncertainties are rough")
    # One-edge segments start and end on settled levels: their end values are
    # taken as the mean of the samples before the edge starts (and as many at
    # the end), since the noise of a single end sample is common to every bin
    # and, for one edge, dominates the lowest bins.  The edge is taken to start
    # twice its 10-to-50 % time before its 50 % instant (a first-order edge
    # starts 1.2 times that time before).
    lead = float(np.max(t_mid - seg.t_first)) if seg.t_first.size else 0.0
    end_average = 1 if per_period else int(max(1, min(seg.pre - 2 * math.ceil(lead) - 1, seg.length // 20)))
    return _ResponseSegments(int(r_len), r_starts, r_idx, bool(per_period), end_average)


def _edge_figures(ch: _Channels, seg: _EdgeSegments, st: _OutputStates) -> _EdgeFigures:
    """Per-edge output figures and the averaged edge, block by block.

    Rows are flipped by the reference edge's sign: a passive part's output
    steps the same way as its input.
    """
    x, y = ch.x, ch.y
    n_edges, length = seg.n_edges, seg.length
    out_lv, in_lv = st.levels, st.input_levels
    t10 = np.full(n_edges, np.nan)
    t50 = np.full(n_edges, np.nan)
    t90 = np.full(n_edges, np.nan)
    over = np.full(n_edges, np.nan)
    sum_y = np.zeros(length)
    sum_x = np.zeros(length) if x is not None else None
    in_t10 = np.full(n_edges, np.nan)
    in_t90 = np.full(n_edges, np.nan)
    for b0, b1 in row_blocks(n_edges, length):
        starts = seg.starts[b0:b1]
        p = seg.polarity[b0:b1]
        if x is not None:
            rx = aligned_rows(x, starts, length, p, in_lv)
            sum_x += rx.sum(axis=0)
            a10, _, a90, _ = rising_edge_times(rx, in_lv, 0)
            in_t10[b0:b1], in_t90[b0:b1] = a10, a90
        ry = aligned_rows(y, starts, length, p, out_lv)
        sum_y += ry.sum(axis=0)
        if st.has_states:
            e10, e50, e90, arr = rising_edge_times(ry, out_lv, 0)
            t10[b0:b1], t50[b0:b1], t90[b0:b1] = e10, e50, e90
            col = np.arange(length)[None, :]
            post = np.where(col >= np.maximum(arr, 0)[:, None], ry, -np.inf)
            peak = post.max(axis=1)
            over[b0:b1] = np.where(arr > 0, (peak - out_lv.high) / out_lv.amplitude * 100.0, np.nan)
    avg_y = sum_y / n_edges
    avg_x = None if sum_x is None else sum_x / n_edges
    return _EdgeFigures(t10, t50, t90, over, in_t10, in_t90, avg_x, avg_y)


def _warn_channel_direction(ch: _Channels, seg: _EdgeSegments, ef: _EdgeFigures, log: _Log) -> None:
    """The output's step against the input's on the averaged edge: a ratio
    above one or below zero means swapped or inverted channels."""
    if ef.avg_x is None:
        return
    length = seg.length
    k_end, k_pre = max(3, length // 20), max(1, seg.pre // 2)
    step_in = float(np.mean(ef.avg_x[-k_end:]) - np.mean(ef.avg_x[:k_pre]))
    step_out = float(np.mean(ef.avg_y[-k_end:]) - np.mean(ef.avg_y[:k_pre]))
    if step_in != 0 and step_out / step_in < -0.05:
        log.warn(f"the output {ch.out_name} steps the other way from the input {ch.in_name}: an inverted channel or probe")
    elif step_in != 0 and step_out / step_in > 1.05:
        log.warn(f"the output {ch.out_name} steps {step_out / step_in:.3g} times as far as the input {ch.in_name}: "
                 "a passive part cannot do that; are --input and --output swapped, or the probe factors unequal?")


def _transition(ch: _Channels, seg: _EdgeSegments, st: _OutputStates, ef: _EdgeFigures, dt: float,
                log: _Log) -> _Transition:
    """The 10-90 % transition duration (mean over edges) and the overshoot of the averaged edge."""
    out_lv, avg_y, length, n_edges = st.levels, ef.avg_y, seg.length, seg.n_edges
    t10, t90 = ef.t10, ef.t90
    good = np.isfinite(t10) & np.isfinite(t90)
    if not good.any():
        log.warn(f"the output {ch.out_name} never settles at its high level before the next edge")
        return _Transition(good=good)
    transition_std = overshoot = overshoot_std = None
    dur = (t90[good] - t10[good]) * dt
    transition = float(np.mean(dur))
    ov = ef.overshoot_pct[good]
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
    ov_i = rising_edge_times(avg_y[None, :], out_lv, 0)[3][0]
    if ov_i > 0:
        overshoot = float((avg_y[ov_i:].max() - out_lv.high) / out_lv.amplitude * 100.0)
    settle = avg_y[-max(3, length // 20):]
    if abs(float(np.mean(settle)) - out_lv.high) > 0.01 * out_lv.amplitude + 3 * out_lv.high_noise / math.sqrt(n_edges * settle.size):
        log.warn("the output has not settled before the next edge: the state levels, the transition "
                 "duration and the time constant refer to an unsettled waveform (use a slower square wave)")
    return _Transition(transition, transition_std, overshoot, overshoot_std, good)


def _dominant_time_constant(ch: _Channels, seg: _EdgeSegments, st: _OutputStates, ef: _EdgeFigures,
                            tr: _Transition, resp: FrequencyResponse | None, dt: float, log: _Log) -> _TimeConstant:
    """The dominant time constant, started from the midpoint time (two
    channels) or the transition duration (one), and its midpoint cross-check."""
    x, good, transition = ch.x, tr.good, tr.duration_s
    edge_frac = seg.edge_frac
    tau_mid = tau_mid_std = None
    if x is not None:
        mid_ok = good & np.isfinite(ef.t50)
        dmid = (ef.t50[mid_ok] - edge_frac[mid_ok]) * dt
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
        in_dur = (ef.input_t90 - ef.input_t10)[good]
        in_dur = in_dur[np.isfinite(in_dur)]
        # An output as fast as its input has no time constant of its own to resolve.
        follows = in_dur.size > 0 and transition < 1.5 * float(np.median(in_dur)) * dt
    if follows:
        log.note("the output follows the input's edge (10-90 % within 1.5 times the input's): "
                 "no time constant longer than the input's transition to fit")
        return _TimeConstant(TimeConstantFit(None, None, ""), None, None)
    fit = time_constant_fit(x, ch.y, seg.starts, seg.polarity, seg.seg_len, edge_frac, ef.t10, good, tau0, dt,
                            st.input_levels, st.levels, log.warn, resp)
    if x is None and fit.midpoint is not None:
        tau_mid, tau_mid_std = fit.midpoint
    tau = fit.tau_s
    if tau is not None and tau_mid is not None and abs(tau_mid - tau) > 0.1 * tau:
        # Within 10 % the two agree as far as the midpoint method can tell: on an ideal single-pole
        # record it is off by about 1 %, many times its noise-only uncertainty (tests/test_step.py).
        log.warn(f"the time constant of the fit ({format_value_std(tau, fit.tau_std_s, 's')}) and the "
                 f"low-to-midpoint time / ln 2 ({format_value_std(tau_mid, tau_mid_std, 's')}) differ by more "
                 "than 10 %: the response is not a single time constant")
    return _TimeConstant(fit, tau_mid, tau_mid_std)


def _ringing_after_edges(ch: _Channels, seg: _EdgeSegments, st: _OutputStates, ef: _EdgeFigures,
                         dt: float) -> Ringing | None:
    """Ringing on the averaged output after the edge arrives, with groups of
    edges for its uncertainty."""
    out_lv, avg_y, length, n_edges = st.levels, ef.avg_y, seg.length, seg.n_edges
    arr_avg = rising_edge_times(avg_y[None, :], out_lv, 0)[3][0]
    if arr_avg <= 0:
        return None
    groups = []
    ng = min(4, n_edges // 2)
    if ng >= 3:
        gsum = [np.zeros(length - arr_avg) for _ in range(ng)]
        gcnt = [0] * ng
        for b0, b1 in row_blocks(n_edges, length):
            ry = aligned_rows(ch.y, seg.starts[b0:b1], length, seg.polarity[b0:b1], out_lv)
            for k in range(b0, b1):
                gsum[k % ng] += ry[k - b0, arr_avg:]
                gcnt[k % ng] += 1
        groups = [g / c for g, c in zip(gsum, gcnt)]
    noise_avg = out_lv.high_noise / math.sqrt(n_edges)
    gnoise = out_lv.high_noise / math.sqrt(max(1, n_edges // max(ng, 1)))
    # Remove the settled level so that the pencil spends no order on it.
    return ringing_of(avg_y[arr_avg:] - out_lv.high, dt, noise_avg, [g - out_lv.high for g in groups], gnoise)


def _one_channel_response(ch: _Channels, seg: _EdgeSegments, st: _OutputStates, ef: _EdgeFigures,
                          rs: _ResponseSegments, step_at, dt: float, coherence_min: float, energy_min_db: float,
                          log: _Log) -> FrequencyResponse:
    """H of a single channel against an ideal step between the reference levels."""
    if step_at is None:
        step_at = np.where(np.isfinite(ef.t10), ef.t10, seg.edge_frac)
        log.note("the ideal step is placed at each edge's 10 % instant (no first-order fit)")
    step_size = seg.ref_levels.amplitude
    if rs.per_period:
        # The two steps of each period, from the row starts of their own edges.
        absolute = seg.starts + np.asarray(step_at, dtype=float)
        r_idx, pol = rs.edges, seg.polarity
        at = np.stack([absolute[r_idx], absolute[r_idx + 1]], axis=1) - rs.starts[:, None]
        sign = np.stack([pol[r_idx], pol[r_idx + 1]], axis=1)
        return edge_response(ch.y, dt, rs.starts, rs.length, step_at=at, step_sign=sign, step_size=step_size,
                             noise_y=st.noise, dc_gain=1.0, coherence_min=coherence_min,
                             energy_min_db=energy_min_db)
    return edge_response(ch.y, dt, seg.starts, seg.seg_len, step_at=step_at, step_size=step_size,
                         noise_y=st.noise, end_average=rs.end_average, coherence_min=coherence_min,
                         energy_min_db=energy_min_db)


def _warn_response(resp: FrequencyResponse, two_channels: bool, log: _Log) -> None:
    if two_channels and resp.nyquist_level_db > -40.0:
        log.warn(f"the input still has energy near the Nyquist frequency ({-resp.nyquist_level_db:.0f} dB below its peak): "
                 "its edges are faster than the sample rate resolves, and the aliases bias the response wherever "
                 "|H| is small; sample faster or limit the scope's bandwidth")
    if not resp.usable.any():
        log.warn("no usable band: the coherence or the input energy is too low in every bin")


def _stray_capacitance(ringing: Ringing | None, ch: _Channels, inductance_h, added_capture, added_capacitance_f,
                       coherence_min: float, energy_min_db: float, log: _Log) -> StrayCapacitance | None:
    """The coil's stray capacitance from its ringing, with a known inductance or a second capture."""
    if inductance_h is None and added_capture is None:
        return None
    if ringing is None:
        log.warn("no ringing after the edges: the stray capacitance cannot be estimated from it")
        return None
    if added_capture is None:
        return stray_capacitance_from_inductance(ringing.natural_hz, ringing.natural_std_hz, float(inductance_h))
    other = analyse_capture(added_capture, input=ch.in_name, output=ch.out_name, coherence_min=coherence_min,
                            energy_min_db=energy_min_db)
    if other.ringing is None:
        log.warn(f"no ringing in the capture with the added capacitor ({added_capture.source})")
        return None
    return stray_capacitance_two_resonances(
        ringing.natural_hz, ringing.natural_std_hz, other.ringing.natural_hz,
        other.ringing.natural_std_hz, float(added_capacitance_f))


def analyse_capture(
    capture: Capture,
    input=None,
    output=None,
    shunt_ohm: float | None = None,
    *,
    inductance_h: float | None = None,
    added_capture: Capture | None = None,
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
    log = _Log(src, capture.notes)
    ch = _channels(capture, input, output, shunt_ohm, added_capture, added_capacitance_f)
    dt, n = capture.dt, capture.n_samples
    _warn_clipping(ch, log)
    seg = _edge_segments(ch, n, src)
    st = _output_states(ch, n, log)
    rs = _response_segments(seg, n, log)
    ef = _edge_figures(ch, seg, st)
    _warn_channel_direction(ch, seg, ef, log)
    two = ch.x is not None
    resp = None
    if two:
        dc_gain = st.levels.amplitude / st.input_levels.amplitude if st.has_states else None
        resp = edge_response(ch.y, dt, rs.starts, rs.length, x=ch.x, noise_x=st.input_levels.noise, noise_y=st.noise,
                             dc_gain=dc_gain, end_average=rs.end_average, coherence_min=coherence_min,
                             energy_min_db=energy_min_db)

    tr = _Transition()
    tc = _TimeConstant(TimeConstantFit(None, None, ""), None, None)
    ringing = None
    if st.has_states:
        tr = _transition(ch, seg, st, ef, dt, log)
        if tr.duration_s is not None:
            tc = _dominant_time_constant(ch, seg, st, ef, tr, resp, dt, log)
        ringing = _ringing_after_edges(ch, seg, st, ef, dt)
    if not two:
        resp = _one_channel_response(ch, seg, st, ef, rs, tc.fit.step_at, dt, coherence_min, energy_min_db, log)
    _warn_response(resp, two, log)
    stray = _stray_capacitance(ringing, ch, inductance_h, added_capture, added_capacitance_f, coherence_min,
                               energy_min_db, log)

    sweep = ident = None
    if shunt_ohm is not None:
        from ..identification._pipeline import identify

        shunt_ohm = float(shunt_ohm)
        sweep = impedance_sweep(resp, shunt_ohm, source=src, max_points=max_points)
        ident = identify(sweep, model=model)

    fit_v = None if tc.fit.fit_v is None else np.asarray(tc.fit.fit_v)
    t_axis = (np.arange(seg.length) - float(np.mean(seg.edge_frac))) * dt
    out_lv, in_lv, pol = st.levels, st.input_levels, seg.polarity
    return StepResult(
        source=src, sample_rate_hz=capture.sample_rate_hz, n_samples=n, input_name=ch.in_name,
        output_name=ch.out_name, edges=seg.n_edges, edges_rising=int(np.count_nonzero(pol > 0)),
        edges_falling=int(np.count_nonzero(pol < 0)), edge_times_s=capture.t0 + seg.t_mid * dt,
        levels_v=(out_lv.low, out_lv.high), levels_noise_v=(out_lv.low_noise, out_lv.high_noise),
        input_levels_v=None if in_lv is None else (in_lv.low, in_lv.high),
        transition_10_90_s=tr.duration_s, transition_10_90_std_s=tr.duration_std_s,
        overshoot_pct=tr.overshoot_pct, overshoot_std_pct=tr.overshoot_std_pct,
        time_constant_s=tc.fit.tau_s, time_constant_std_s=tc.fit.tau_std_s, time_constant_method=tc.fit.method,
        midpoint_time_constant_s=tc.midpoint_s, midpoint_time_constant_std_s=tc.midpoint_std_s,
        ringing=ringing, stray_capacitance=stray, response=resp, usable_band_hz=resp.band_hz, shunt_ohm=shunt_ohm,
        sweep=sweep, identification=ident, edge_waveform=EdgeWaveform(t_axis, ef.avg_x, ef.avg_y, fit_v),
        capture=capture, warnings=tuple(log.warnings), notes=tuple(log.notes),
    )
