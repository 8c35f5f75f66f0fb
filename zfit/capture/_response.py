"""Frequency response from the edges of a capture: the H1 estimator with coherence.

Each edge of a square wave (or a single step) is a broadband excitation.
The derivatives of both channels around each edge are short transients, so
their DFTs over a segment that holds the whole transient need no window and
relate exactly as ``Y = H X``.  Averaging the cross- and auto-spectra over
all edges gives the H1 estimate ``H = G_xy / G_xx``, its ordinary coherence
and, from both, the random error of each bin (Bendat & Piersol 2010, ch. 9).

References
----------
J. S. Bendat and A. G. Piersol, *Random Data: Analysis and Measurement
Procedures*, 4th ed., Wiley, 2010, doi:10.1002/9781118032428, sections 9.1-9.2
(H1 estimator, coherence, Table 9.6 normalised random errors).
"""

from __future__ import annotations

import math
import warnings
from dataclasses import dataclass

import numpy as np

from .._errors import FitError, MeasurementWarning
from .._units import format_eng

__all__ = [
    "FrequencyResponse", "edge_response", "usable_band", "impedance_sweep", "prev_fast_len",
    "DEFAULT_COHERENCE_MIN", "DEFAULT_ENERGY_MIN_DB",
]

#: Bins whose ordinary coherence falls below this are outside the usable band.
DEFAULT_COHERENCE_MIN = 0.9
#: Bins where the input's derivative spectrum is this far below its peak
#: carry too little excitation to be trusted.
DEFAULT_ENERGY_MIN_DB = -40.0
# At most this many samples are transformed at once (rows x segment length),
# so the spectra of a 10-million-sample record never sit in memory together.
_BLOCK_SAMPLES = 1 << 21


@dataclass(frozen=True)
class FrequencyResponse:
    """The transfer function V_out/V_in estimated from the edges of a capture.

    Attributes
    ----------
    f_hz : numpy.ndarray
        Bin frequencies in Hz, ``k / (N dt)`` for ``k = 1 .. N/2``.
    h : numpy.ndarray
        Complex H1 estimate at each bin.
    h_std : numpy.ndarray
        Standard uncertainty of `h`, complex-circular (``E|dH|^2 = h_std^2``).
    coherence : numpy.ndarray
        Ordinary coherence ``|G_xy|^2 / (G_xx G_yy)`` (1 for a single edge).
    input_level_db : numpy.ndarray
        Input derivative auto-spectrum relative to its peak, in dB.
    usable : numpy.ndarray
        Bins inside the usable band.
    band_hz : tuple of float
        Lowest and highest usable frequency.
    n_averages : int
        Number of segments averaged (periods of a square wave, or edges).
    segment_s : float
        Length of the segment around each edge, the inverse of the bin spacing.
    method : str
        What estimated the response, in words.
    dc_gain : float
        Ratio of the output step to the input step (the bin at 0 Hz).
    nyquist_level_db : float
        Highest input level above 0.4 times the sample rate that stands clear
        of the noise (dB relative to the peak; -inf when none does): high
        values mean edges faster than the sampling, hence aliasing.
    """

    f_hz: np.ndarray
    h: np.ndarray
    h_std: np.ndarray
    coherence: np.ndarray
    input_level_db: np.ndarray
    usable: np.ndarray
    band_hz: tuple[float, float]
    n_averages: int
    segment_s: float
    method: str
    dc_gain: float
    nyquist_level_db: float = float("-inf")

    def __post_init__(self):
        for name in ("f_hz", "h", "h_std", "coherence", "input_level_db", "usable"):
            a = np.asarray(getattr(self, name))
            a.flags.writeable = False
            object.__setattr__(self, name, a)

    def magnitude_db(self) -> np.ndarray:
        """Return ``20 log10 |H|``."""
        return 20.0 * np.log10(np.abs(self.h))

    def phase_deg(self) -> np.ndarray:
        """Return the phase of H in degrees, unwrapped from the lowest bin."""
        return np.degrees(np.unwrap(np.angle(self.h)))

    def magnitude_db_std(self) -> np.ndarray:
        """Return the standard uncertainty of the magnitude in dB.

        The complex-circular `h_std` splits equally between the magnitude
        and the phase direction, ``h_std / sqrt 2`` each.
        """
        rel = self.h_std / np.sqrt(2.0) / np.abs(self.h)
        return 20.0 / math.log(10.0) * rel

    def phase_std_deg(self) -> np.ndarray:
        """Return the standard uncertainty of the phase in degrees."""
        return np.degrees(self.h_std / np.sqrt(2.0) / np.abs(self.h))

    def smoothed(self, points_per_decade: int = 20):
        """Return (f_hz, h, h_std) of the usable band averaged on a log grid.

        Adjacent bins are combined with inverse-variance weights (frequency
        smoothing, Bendat & Piersol 2010, 8.5.4), which is what a Bode plot
        of a long record shows.

        Parameters
        ----------
        points_per_decade : int
            Density of the log grid.
        """
        m = self.usable
        if not m.any():
            return np.zeros(0), np.zeros(0, complex), np.zeros(0)
        f = self.f_hz[m]
        decades = max(math.log10(f[-1] / f[0]), 1e-3)
        return _log_merge(f, self.h[m], self.h_std[m], max(2, int(math.ceil(decades * points_per_decade))))


def prev_fast_len(n: int) -> int:
    """Return the largest ``2^a 3^b 5^c`` not above `n` (a fast FFT length).

    Parameters
    ----------
    n : int
        Upper bound (at least 1).
    """
    best = 1
    p2 = 1
    while p2 <= n:
        p3 = p2
        while p3 <= n:
            p5 = p3
            while p5 <= n:
                best = max(best, p5)
                p5 *= 5
            p3 *= 3
        p2 *= 2
    return best


def _rows(x: np.ndarray, starts: np.ndarray, length: int) -> np.ndarray:
    return x[starts[:, None] + np.arange(length)[None, :]]


def _settled_ends(rows: np.ndarray, k: int) -> np.ndarray:
    """Return `rows` with the first and last sample replaced by the mean of the first and last `k`.

    `rows` is a fresh gather (fancy indexing) and is changed in place when already float.
    """
    if k <= 1:
        return rows
    rows = rows.astype(float, copy=False)
    rows[:, 0] = rows[:, :k].mean(axis=1)
    rows[:, -1] = rows[:, -k:].mean(axis=1)
    return rows


def edge_response(
    y: np.ndarray,
    dt: float,
    starts: np.ndarray,
    seg_len: int,
    *,
    x: np.ndarray | None = None,
    step_at: np.ndarray | None = None,
    step_size: float | None = None,
    step_sign: np.ndarray | None = None,
    dc_gain: float | None = None,
    noise_x: float = 0.0,
    noise_y: float = 0.0,
    end_average: int = 1,
    coherence_min: float = DEFAULT_COHERENCE_MIN,
    energy_min_db: float = DEFAULT_ENERGY_MIN_DB,
) -> FrequencyResponse:
    """Return the H1 estimate of V_out/V_in from segments of the record.

    A segment holds one period of a square wave (a rising and a falling
    edge: in periodic steady state ``Y = H X`` then holds exactly at every
    bin, settled or not) or the transient of one edge (a single step, or a
    record of two edges, where the response must settle within the segment).

    Parameters
    ----------
    y : numpy.ndarray
        Output channel samples.
    dt : float
        Sample interval in s.
    starts : numpy.ndarray of int
        First sample of the segment around each edge; each segment spans
        ``seg_len + 1`` samples (``seg_len`` differences).
    seg_len : int
        Number of derivative samples per segment (the DFT length).
    x : numpy.ndarray, optional
        Input channel samples (two-channel estimate).  Without it the input
        is an ideal step of `step_size` at `step_at` in each segment.
    step_at : numpy.ndarray, optional
        For a single channel: the instants of the ideal steps in each
        segment, in samples from the segment start (fractional), shape
        ``(segments,)`` or ``(segments, steps)``.
    step_size : float, optional
        For a single channel: the height of the ideal step (V), the
        difference of the measured state levels.
    step_sign : numpy.ndarray, optional
        For a single channel: +1 / -1 for each step in `step_at` (0 for none);
        by default each segment's one step goes the way its output does.
    dc_gain : float, optional
        The ratio of the output's step to the input's, when known from the
        state levels (reported as `FrequencyResponse.dc_gain`); by default
        the 0 Hz bin of one-edge segments.
    noise_x, noise_y : float
        White-noise standard deviation per sample of each channel (V); sets
        the uncertainty floor from noise and quantisation.
    end_average : int
        Samples averaged at each end of a segment to set its first and last
        value.  A segment that starts and ends on settled levels (one edge)
        then carries the noise of its ends, which is common to every bin,
        divided by this number instead of whole; leave 1 for segments of a
        period, whose ends are not settled.
    coherence_min : float
        Lowest coherence inside the usable band.
    energy_min_db : float
        Lowest input derivative level, relative to its peak, inside the band.

    Returns
    -------
    FrequencyResponse

    Notes
    -----
    ``G_xy = mean(conj(X) Y)`` so that an output delayed by ``tau`` has phase
    ``-2 pi f tau`` (the engineering sign convention, e^{+j omega t}).  The
    sign of each edge cancels in ``conj(X) Y`` and ``|X|^2``: rising and
    falling edges average without flipping.  The random error per bin is
    ``eps = sqrt(1 - gamma^2) / (|gamma| sqrt(2 n_d))`` on both ``|H|``
    (relative) and the phase (rad) (Bendat & Piersol 2010, Table 9.6), with
    a floor from the white noise of both channels, which is the only error
    available for a single edge.

    References
    ----------
    J. S. Bendat and A. G. Piersol, *Random Data*, 4th ed., Wiley, 2010,
    doi:10.1002/9781118032428, eqs. (9.28), (9.42) and Table 9.6.
    """
    starts = np.asarray(starts, dtype=np.intp)
    n_d = int(starts.size)
    if n_d == 0:
        raise FitError("no edge to estimate a frequency response from")
    nbin = seg_len // 2 + 1
    f = np.fft.rfftfreq(seg_len, dt)
    sxx = np.zeros(nbin)
    syy = np.zeros(nbin)
    sxy = np.zeros(nbin, dtype=complex)
    dc_in = 0.0
    dc_out = 0.0
    per_block = max(1, _BLOCK_SAMPLES // (seg_len + 1))
    omega_dt = 2.0 * np.pi * f * dt
    ideal_shape = np.sinc(f * dt) * np.exp(0.5j * omega_dt) if x is None else None
    k_end = int(min(max(1, end_average), (seg_len + 1) // 4))
    for b in range(0, n_d, per_block):
        st = starts[b:b + per_block]
        ry = np.diff(_settled_ends(_rows(y, st, seg_len + 1), k_end), axis=1)
        Y = np.fft.rfft(ry, axis=1)
        if x is not None:
            rx = np.diff(_settled_ends(_rows(x, st, seg_len + 1), k_end), axis=1)
            X = np.fft.rfft(rx, axis=1)
        else:
            # The sampled derivative of an ideal step of height A at s samples:
            # A exp(-j w s dt) (e^{j w dt} - 1)/(j w dt) (band-limited view).
            s = np.asarray(step_at, dtype=float).reshape(n_d, -1)[b:b + per_block]
            if step_sign is None:
                sign = np.sign(Y[:, 0].real)
                sign[sign == 0] = 1.0
                sign = sign[:, None]
            else:
                sign = np.asarray(step_sign, dtype=float).reshape(n_d, -1)[b:b + per_block]
            phase = np.exp(-1j * omega_dt[None, None, :] * s[:, :, None])
            X = step_size * np.einsum("rk,rkf->rf", sign, phase) * ideal_shape[None, :]
        sxx += np.sum(X.real**2 + X.imag**2, axis=0)
        syy += np.sum(Y.real**2 + Y.imag**2, axis=0)
        sxy += np.sum(np.conj(X) * Y, axis=0)
        # Sign-aligned step sizes for the DC gain.
        sgn = np.sign(X[:, 0].real)
        dc_in += float(np.sum(sgn * X[:, 0].real))
        dc_out += float(np.sum(sgn * Y[:, 0].real))
    with np.errstate(divide="ignore", invalid="ignore"):
        h = sxy / sxx
        coh = np.clip(np.abs(sxy) ** 2 / (sxx * syy), 0.0, 1.0)
        # Noise floor: the DFT of the N differences of N + 1 samples of white
        # noise of variance s^2 weights each inner sample by e^{j w dt} - 1
        # (|.|^2 = 4 sin^2(w dt / 2)) and each end sample by 1, so its variance
        # is s^2 (4 (N - 1) sin^2(w dt / 2) + 2).  The end term is the
        # segment's truncation: it dominates the lowest bins, where the inner
        # term vanishes, and dropping it made the uncertainty of a single
        # step's lowest bins several times too small.
        # Ends averaged over k samples carry s^2 / k each.
        dvar = (seg_len - 1) * 4.0 * np.sin(0.5 * omega_dt) ** 2 + 2.0 / k_end
        gxx = sxx / n_d
        var_noise = dvar * (noise_y**2 + np.abs(h) ** 2 * noise_x**2) / (n_d * gxx)
        std_noise = np.sqrt(var_noise)
        if n_d >= 2:
            eps = np.sqrt(np.maximum(1.0 - coh, 0.0)) / (np.sqrt(coh) * math.sqrt(2.0 * n_d))
            std_coh = math.sqrt(2.0) * eps * np.abs(h)
            h_std = np.maximum(std_coh, std_noise)
        else:
            h_std = std_noise
            coh = np.ones_like(coh)
        # The input's own excitation, above its noise floor, relative to its peak.
        floor = dvar * noise_x**2
        excess = np.maximum(gxx - floor, 1e-30 * np.max(gxx))
        level = 10.0 * np.log10(excess / np.max(excess[1:])) if nbin > 1 else np.zeros(nbin)
        # Input energy near Nyquist that stands clear of the noise floor's own
        # scatter: the median over the top fifth of the band, since fast edges
        # alias a smooth, broad spectrum, while noise spikes single bins.
        top = (f > 0.4 / dt) & (sxx > 0)
        nyquist_db = float("-inf")
        if x is not None and top.sum() >= 3:
            med = float(np.median(gxx[top] - floor[top]))
            if med > 3.0 * float(np.median(floor[top])) / math.sqrt(n_d) and med > 0:
                nyquist_db = 10.0 * math.log10(med / np.max(excess[1:]))
    if dc_gain is None:
        dc_gain = dc_out / dc_in if abs(dc_in) > 1e-9 * n_d * math.sqrt(np.max(gxx)) else float("nan")
    # Drop the DC bin (a Sweep needs positive frequencies) and the bins the
    # input does not excite at all (the even harmonics of a square wave
    # over one period), which carry no information.
    keep = np.zeros(f.size, dtype=bool)
    keep[1:] = level[1:] >= energy_min_db - 30.0
    f, h, h_std, coh, level = f[keep], h[keep], h_std[keep], coh[keep], level[keep]
    h_std = np.where(np.isfinite(h_std) & (h_std > 0), h_std, np.inf)
    usable, band = usable_band(f, h, h_std, coh, level, n_d, coherence_min=coherence_min, energy_min_db=energy_min_db)
    what = f"{n_d} segment(s) of {seg_len} samples"
    method = (f"H1 = G_xy/G_xx over {what}" if x is not None else
              f"output against an ideal step between the measured levels, {what}")
    return FrequencyResponse(f, h, h_std, coh, level, usable, band, n_d, seg_len * dt, method, dc_gain, nyquist_db)


def usable_band(f, h, h_std, coherence, input_level_db, n_averages, *, coherence_min=DEFAULT_COHERENCE_MIN,
                energy_min_db=DEFAULT_ENERGY_MIN_DB, snr_min: float = 3.0, window: int = 17):
    """Return (mask, (f_lo, f_hi)) of the usable bins and the band they span.

    A bin is usable where the input has energy, the coherence is high and
    the estimate stands clear of its uncertainty.  The band spans the usable
    bins around which at least half of the `window` nearest excited bins are
    usable too, so that a stray good bin in the noise above the band does not
    extend it; inside the band, bins that fail (a coherence dip where |H| is
    tiny at a part's resonance, the weak even harmonics of a square wave)
    are left out.

    Parameters
    ----------
    f, h, h_std, coherence, input_level_db : numpy.ndarray
        Per-bin frequency (Hz), estimate, uncertainty, coherence and input
        level relative to its peak (dB).
    n_averages : int
        Number of segments averaged (the coherence is not used for one).
    coherence_min : float
        Lowest coherence accepted.
    energy_min_db : float
        Lowest input level accepted.
    snr_min : float
        Lowest ``|H| / h_std`` accepted.
    window : int
        Neighbourhood, in excited bins, that must be mostly usable.
    """
    e = np.flatnonzero(input_level_db >= energy_min_db)
    mask = np.zeros(f.size, dtype=bool)
    if e.size == 0:
        return mask, (float("nan"), float("nan"))
    ok = np.isfinite(h[e]) & (np.abs(h[e]) > snr_min * h_std[e])
    if n_averages >= 2:
        ok &= coherence[e] >= coherence_min
    kernel = np.ones(min(window, ok.size))
    frac = np.convolve(ok.astype(float), kernel, mode="same") / np.convolve(np.ones(ok.size), kernel, mode="same")
    good = ok & (frac >= 0.5 - 1e-9)
    if not good.any():
        return mask, (float("nan"), float("nan"))
    gi = np.flatnonzero(good)
    lo, hi = e[gi[0]], e[gi[-1]]
    mask[e[ok]] = True
    mask[:lo] = False
    mask[hi + 1:] = False
    return mask, (float(f[lo]), float(f[hi]))


def _log_merge(f, h, h_std, max_points):
    """Average adjacent bins into at most `max_points` log-spaced groups (inverse-variance weights)."""
    if f.size <= max_points:
        return f, h, h_std
    edges = np.geomspace(f[0], f[-1] * (1 + 1e-12), max_points + 1)
    group = np.clip(np.searchsorted(edges, f, side="right") - 1, 0, max_points - 1)
    w = 1.0 / h_std**2
    sw = np.bincount(group, weights=w, minlength=max_points)
    keep = sw > 0
    fm = np.bincount(group, weights=w * f, minlength=max_points)[keep] / sw[keep]
    hr = np.bincount(group, weights=w * h.real, minlength=max_points)[keep] / sw[keep]
    hi = np.bincount(group, weights=w * h.imag, minlength=max_points)[keep] / sw[keep]
    return fm, hr + 1j * hi, 1.0 / np.sqrt(sw[keep])


def _smoothed_magnitude(h: np.ndarray, h_std: np.ndarray, half_width: int = 4) -> np.ndarray:
    """Return |h| averaged over up to ``2 half_width + 1`` neighbours where it is noisy, |h| itself where it is not.

    Each point's neighbourhood shrinks to the points itself as its relative
    uncertainty falls below 2 %, so that a sharp feature measured precisely
    (a resonance of a square wave averaged over many periods) keeps its own
    magnitude.
    """
    a = np.abs(h)
    if a.size < 3:
        return a
    k = np.arange(-half_width, half_width + 1)
    idx = np.clip(np.arange(a.size)[:, None] + k[None, :], 0, a.size - 1)
    rel = np.clip(h_std / np.maximum(a, 1e-300), 0.0, 1.0)
    # Neighbourhood half-width per point, from 0 (rel <= 2 %) to half_width (rel >= 20 %).
    hw = np.clip(np.round(half_width * (rel - 0.02) / 0.18), 0, half_width)
    inside = np.abs(k)[None, :] <= hw[:, None]
    return np.sum(np.where(inside, a[idx], 0.0), axis=1) / np.sum(inside, axis=1)


def impedance_sweep(response: FrequencyResponse, shunt_ohm: float, *, source: str = "", max_points: int = 300,
                    notes=()):
    """Return the part's impedance ``Z = R (V_in - V_out) / V_out`` as a `Sweep`.

    The output channel is the voltage across the sense resistor `shunt_ohm`
    at the part's return, the input the drive at its other terminal, so the
    current is ``V_out / R`` and ``Z = R (1/H - 1)``, with uncertainty
    ``R h_std / |H|^2`` (first-order propagation; the resistor's own
    tolerance scales every impedance alike and is not included).

    Parameters
    ----------
    response : FrequencyResponse
        The estimate of ``H = V_out / V_in``.
    shunt_ohm : float
        The sense resistor in ohm.
    source : str
        The capture file, kept in the sweep.
    max_points : int
        The usable bins are averaged into at most this many log-spaced points.
    notes : sequence of str
        Notes carried into the sweep.

    Raises
    ------
    FitError
        When the usable band has fewer points than a sweep needs.
    """
    from ..data._sweep import MIN_POINTS, make_sweep

    if not (shunt_ohm > 0 and math.isfinite(shunt_ohm)):
        raise FitError(f"the sense resistor must be a positive number of ohm, not {shunt_ohm!r}")
    m = response.usable
    if int(m.sum()) < MIN_POINTS:
        raise FitError(
            f"only {int(m.sum())} usable frequency bins (band {format_eng(response.band_hz[0], 'Hz')} to {format_eng(response.band_hz[1], 'Hz')}); "
            f"at least {MIN_POINTS} are needed for the impedance: capture more edges or a longer period")
    f, h, s = _log_merge(response.f_hz[m], response.h[m], response.h_std[m], max_points)
    z = shunt_ohm * (1.0 / h - 1.0)
    # The propagation takes |H| smoothed over neighbouring points, not each
    # point's own: where |H| is known to tens of percent (a single step's
    # upper band), a weight ~|H_measured|^2 favours the points whose noise
    # made |H| large, hence |Z| small, and biases the fit (a stray C too large).
    sz = shunt_ohm * s / _smoothed_magnitude(h, s) ** 2
    notes = list(notes) + [
        f"impedance from a capture: Z = R (V_in - V_out)/V_out with R = {format_eng(shunt_ohm, 'ohm', 6)}, "
        f"{response.n_averages} edge(s), {int(m.sum())} bins averaged into {f.size} points"
    ]
    with warnings.catch_warnings():
        warnings.simplefilter("ignore", MeasurementWarning)
        return make_sweep(f, z, sz, source=source, connection="impedance", notes=notes,
                          data_format="oscilloscope capture (H1 of the edges)",
                          noise_model="Bendat-Piersol H1 random error from coherence and the number of edges, "
                                      "with a white-noise floor from both channels")
