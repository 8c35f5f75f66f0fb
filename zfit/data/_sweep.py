"""The measured sweep: frequency, impedance and its per-point uncertainty."""

from __future__ import annotations

import warnings
from dataclasses import dataclass, field
from types import MappingProxyType

import numpy as np

from ._connection import InstrumentNoise
from ._noise import NoiseEstimate
from .._errors import MeasurementWarning, ZfitInputError
from .._units import format_eng

__all__ = ["Sweep", "make_sweep", "Rows", "cleaned_rows", "sweep_from_rows", "active_points", "MIN_POINTS", "CONNECTIONS",
           "FREQUENCY_RANGE_HZ", "IMPEDANCE_RANGE_OHM", "ELEMENT_RANGES", "SAMPLE_INTERVAL_RANGE_S"]

#: A table of two frequencies (an LCR meter at 1 kHz and 10 kHz) already
#: gives a series pair with its uncertainty; one point gives no frequency
#: dependence at all.
MIN_POINTS = 2

#: Frequencies zfit computes with, Hz: 1 uHz .. 10 THz, beyond the bands of
#: every impedance analyser and network analyser (common practice); outside
#: it a value is a unit error, an overrange code or a denormal number.
FREQUENCY_RANGE_HZ = (1e-6, 1e13)

#: Impedance magnitudes zfit computes with, ohm: 1 pohm .. 1 Tohm.  A bench
#: meter resolves about 1 uohm and 100 Gohm (common practice); beyond, the
#: value is an overrange code or lost digits, and the fit's squares of it
#: leave the floating-point range.  Zero (an exact short) is allowed at some
#: points, not at all of them.
IMPEDANCE_RANGE_OHM = (1e-12, 1e12)

#: Values of circuit elements zfit computes with, by unit (inclusive).  They
#: span every passive part made, with decades to spare (1 fH of an on-chip
#: trace to 1 kH of a mains choke; 1 aF to the 1 kF of a supercapacitor;
#: 1 nohm to 1 Pohm of a film capacitor's leakage), and within them a
#: circuit's impedance over `FREQUENCY_RANGE_HZ`, its S parameters and their
#: Fisher information stay inside double precision (checked at the corners
#: by tests/test_bounds.py).  Beyond them ``s L`` or ``1 / (s C)`` overflows or
#: vanishes and nothing computed from the value means anything.
ELEMENT_RANGES = MappingProxyType({"H": (1e-15, 1e3), "F": (1e-18, 1e3), "ohm": (1e-9, 1e15)})

#: Sample intervals of a capture, s: 1 fs (beyond any oscilloscope's
#: 100 GS/s) to 1000 s (a data logger); common practice.
SAMPLE_INTERVAL_RANGE_S = (1e-15, 1e3)

#: How a one-port impedance was measured.
CONNECTIONS = ("reflection", "shunt-thru", "series-thru", "impedance")


@dataclass(frozen=True)
class Sweep:
    """A one-port impedance measured against frequency.

    Attributes
    ----------
    f_hz : numpy.ndarray
        Frequencies in Hz, strictly increasing, all positive.
    z_ohm : numpy.ndarray
        Complex impedance in ohm at each frequency.
    sigma_ohm : numpy.ndarray
        Standard uncertainty of `z_ohm` in ohm, complex-circular: the noise
        ``dZ`` has ``E|dZ|^2 = sigma^2``, that is ``sigma/sqrt(2)`` on each of
        the real and imaginary parts.
    source : str
        Where the data came from (a file path, or a description).
    connection : {'reflection', 'shunt-thru', 'series-thru', 'impedance'}
        How the impedance was obtained: from S11, from S21 of a shunt or a
        series part, or read directly as impedance (analyser table, capture).
    notes : tuple of str
        What was done to the data on the way in (points dropped, defaults used).
    reference_ohm : float or None
        Reference impedance of S-parameter data, None for impedance data.
    data_format : str
        What the reader understood of the file (e.g. ``"Touchstone 1.x, RI, GHz"``).
    noise_model : str
        The noise model that produced `sigma_ohm`, in words.
    s_param : numpy.ndarray or None
        The measured S11 or S21 behind each point, for S-parameter data.
    noise : InstrumentNoise or None
        The noise model itself (on S for S-parameter data, on Z for tables),
        so that later steps (port extension, compensation) can propagate it.
    active : numpy.ndarray of bool
        Points that look active (``Re Z < 0``, ``|S11| > 1``) beyond their
        uncertainty (`active_points`): kept, with their uncertainty.
    noise_estimate : NoiseEstimate or None
        Where the noise model came from (given, estimated from the data, or
        the format's default) and over which band.
    """

    f_hz: np.ndarray
    z_ohm: np.ndarray
    sigma_ohm: np.ndarray
    source: str = ""
    connection: str = "impedance"
    notes: tuple[str, ...] = ()
    reference_ohm: float | None = None
    data_format: str = ""
    noise_model: str = ""
    s_param: np.ndarray | None = field(default=None, repr=False)
    noise: "InstrumentNoise | None" = None

    active: np.ndarray | None = field(default=None, repr=False)
    noise_estimate: "NoiseEstimate | None" = None

    def __post_init__(self):
        # A copy, read-only: the caller's arrays stay theirs and writable.
        if self.active is None:
            object.__setattr__(self, "active", np.zeros(np.shape(self.f_hz), dtype=bool))
        for name in ("f_hz", "z_ohm", "sigma_ohm", "s_param", "active"):
            value = getattr(self, name)
            if value is not None:
                value = np.array(value)
                value.flags.writeable = False
                object.__setattr__(self, name, value)

    @property
    def n_points(self) -> int:
        """Number of frequency points."""
        return int(self.f_hz.size)

    @property
    def band_hz(self) -> tuple[float, float]:
        """Lowest and highest frequency in Hz."""
        return float(self.f_hz[0]), float(self.f_hz[-1])


def make_sweep(
    f_hz,
    z_ohm,
    sigma_ohm,
    *,
    source: str = "",
    connection: str = "impedance",
    lines=None,
    notes=(),
    s_param=None,
    **extra,
) -> Sweep:
    """Return a validated `Sweep` from raw arrays as a reader found them.

    The cleaning rules, in order (`cleaned_rows`): values must be finite and
    frequencies positive; rows are sorted by frequency (a note says so);
    repeated frequencies are merged (an identical copy of a row is dropped
    with a warning, repeats with different values, as at the joins of a
    segmented sweep, become their mean with their spread added to the
    uncertainty, and a note gives the count); then points that look active
    are flagged (`active_points`), never refused.

    Parameters
    ----------
    f_hz, z_ohm, sigma_ohm : array_like
        Frequencies (Hz), complex impedances (ohm) and their standard
        uncertainties (ohm), one per row.
    source : str
        The file the rows came from, used in error messages.
    connection : str
        One of `CONNECTIONS`.
    lines : array_like of int, optional
        The 1-based line number of each row in the file, for error messages.
    notes : sequence of str
        Notes from the reader, kept in the sweep.
    s_param : array_like, optional
        The measured S-parameter behind each impedance (kept for checks).
    **extra
        Further `Sweep` fields (`reference_ohm`, `data_format`, `noise_model`,
        `noise`, `noise_estimate`).

    Raises
    ------
    ZfitInputError
        On non-finite values, non-positive frequencies, fewer than
        `MIN_POINTS` distinct frequencies, or when every point is active.
    """
    rows = cleaned_rows(f_hz, z_ohm, sigma_ohm, source=source, connection=connection, lines=lines, notes=notes,
                        s_param=s_param)
    return sweep_from_rows(rows, rows.sigma_ohm, **extra)


@dataclass(frozen=True)
class Rows:
    """Sorted rows with repeats merged, before the uncertainty is final.

    Attributes
    ----------
    f_hz, z_ohm : numpy.ndarray
        Distinct increasing frequencies (Hz) and impedances (ohm).
    sigma_ohm : numpy.ndarray or None
        Uncertainty given with the rows (merged like the values), or None.
    spread_ohm : numpy.ndarray
        Standard deviation of the repeats merged into each row (complex
        circular, ohm); zero for rows measured once.
    s_param : numpy.ndarray or None
        The S-parameter behind each row, merged like the impedance.
    lines : numpy.ndarray
        File line of each row (the first of its repeats).
    source, connection : str
        As given to `cleaned_rows`.
    notes : tuple of str
        The reader's notes and the cleaning's.
    """

    f_hz: np.ndarray
    z_ohm: np.ndarray
    sigma_ohm: np.ndarray | None
    spread_ohm: np.ndarray
    s_param: np.ndarray | None
    lines: np.ndarray
    source: str
    connection: str
    notes: tuple[str, ...]


def cleaned_rows(f_hz, z_ohm, sigma_ohm=None, *, source="", connection="impedance", lines=None, notes=(),
                 s_param=None) -> Rows:
    """Return the rows of a reader validated, sorted and with repeats merged.

    Parameters
    ----------
    f_hz, z_ohm : array_like
        Frequencies (Hz) and complex impedances (ohm) in file order.
    sigma_ohm : array_like, optional
        Their standard uncertainties (ohm), when already known.
    source, connection, lines, notes, s_param
        As for `make_sweep`.

    Returns
    -------
    Rows

    Raises
    ------
    ZfitInputError
        Naming the line: a value that is not finite, a frequency that is not
        positive, an uncertainty that is not positive; fewer than
        `MIN_POINTS` distinct frequencies.

    Notes
    -----
    A repeated frequency is measured twice, typically at the join of two
    segments of a stitched sweep, with two IF bandwidths or two calibrations:
    neither value is better, so the row becomes their mean, and their spread
    (the rms distance of the repeats from the mean) is added in quadrature to
    the uncertainty, as a Type A component (GUM, JCGM 100:2008, 4.2).
    """
    if connection not in CONNECTIONS:
        raise ZfitInputError(f"unknown connection {connection!r}; use one of {', '.join(CONNECTIONS)}", source)
    f = np.array(f_hz, dtype=float).ravel()
    z = np.array(z_ohm, dtype=complex).ravel()
    sig = None if sigma_ohm is None else np.broadcast_to(np.asarray(sigma_ohm, dtype=float), f.shape).copy()
    s = None if s_param is None else np.array(s_param, dtype=complex).ravel()
    ln = np.arange(1, f.size + 1) if lines is None else np.asarray(lines, dtype=int).ravel()
    if not (f.size == z.size == ln.size and (sig is None or sig.size == f.size) and (s is None or s.size == f.size)):
        raise ZfitInputError("frequency, impedance and uncertainty have different lengths", source)
    notes = list(notes)

    def fail(message, index):
        raise ZfitInputError(message, source, int(ln[index]) if lines is not None else None)

    bad = ~(np.isfinite(f) & np.isfinite(z.real) & np.isfinite(z.imag))
    if bad.any():
        fail("value is not a finite number (NaN or inf)", int(np.flatnonzero(bad)[0]))
    if sig is not None and (not np.all(np.isfinite(sig)) or np.any(sig <= 0)):
        fail("uncertainty is not a positive finite number", int(np.flatnonzero(~(np.isfinite(sig) & (sig > 0)))[0]))
    nonpos = f <= 0
    if nonpos.any():
        fail(f"frequency {format_eng(f[nonpos][0], 'Hz')} is not positive", int(np.flatnonzero(nonpos)[0]))
    _check_ranges(f, z, fail, source)
    f, z, sig, s, ln = _without_exact_zeros(f, z, sig, s, ln, source, notes)

    order = np.argsort(f, kind="stable")
    if np.any(np.diff(order) < 0):
        notes.append("rows were not in frequency order; sorted")
    f, z, ln = f[order], z[order], ln[order]
    sig = None if sig is None else sig[order]
    s = None if s is None else s[order]
    spread = np.zeros(f.size)
    if f.size and np.any(np.diff(f) == 0):
        f, z, sig, s, ln, spread = _merged_repeats(f, z, sig, s, ln, source, notes)
    if f.size < MIN_POINTS:
        raise ZfitInputError(f"only {f.size} distinct frequency point(s); at least {MIN_POINTS} are needed", source)
    return Rows(f, z, sig, spread, s, ln, str(source), connection, tuple(notes))


def _check_ranges(f, z, fail, source) -> None:
    """Refuse frequencies and impedances outside the ranges zfit computes with."""
    lo, hi = FREQUENCY_RANGE_HZ
    out = (f < lo) | (f > hi)
    if out.any():
        i = int(np.flatnonzero(out)[0])
        fail(f"frequency {f[i]:.3g} Hz is outside {format_eng(lo, 'Hz')} .. {format_eng(hi, 'Hz')}, the range "
             "zfit computes in (a unit error, an overrange code?)", i)
    mag = np.abs(z)
    lo, hi = IMPEDANCE_RANGE_OHM
    out = (mag > hi) | ((mag > 0) & (mag < lo))
    if out.any():
        i = int(np.flatnonzero(out)[0])
        fail(f"|Z| = {mag[i]:.3g} ohm is outside {format_eng(lo, 'ohm')} .. {format_eng(hi, 'ohm')}, the range "
             "zfit computes in (an instrument's overrange code, a wrong unit or reference?)", i)
    if mag.size >= MIN_POINTS and not mag.any():
        raise ZfitInputError(f"|Z| is zero at every one of the {mag.size} points: nothing usable to identify "
                             "(a column of zeros, or an ideal short?)", source)


def _without_exact_zeros(f, z, sig, s, ln, source, notes):
    """The rows without those whose impedance is exactly zero, with a note and a warning.

    No instrument measures an exact zero: it is an underrange code, a blank
    cell read as 0, or S11 = -1 to the last digit.  Such a row carries no
    information and every ``1/Z`` of the fit divides by it, so it is set
    aside and said; the file is read (`_check_ranges` refuses a file that is
    zero everywhere).
    """
    zero = z == 0
    if not zero.any():
        return f, z, sig, s, ln
    lines = [int(x) for x in ln[zero]]
    shown = ", ".join(str(x) for x in lines[:5]) + (" ..." if len(lines) > 5 else "")
    msg = (f"{len(lines)} point(s) with |Z| = 0 exactly set aside (line {shown}): no instrument measures an exact "
           "zero (an underrange code or a blank cell?)")
    notes.append(msg)
    warnings.warn(f"{source}: {msg}", MeasurementWarning, stacklevel=4)
    keep = ~zero
    return f[keep], z[keep], None if sig is None else sig[keep], None if s is None else s[keep], ln[keep]


def _merged_repeats(f, z, sig, s, ln, source, notes):
    """Sorted rows with each run of one frequency made one row (see `cleaned_rows`)."""
    start = np.flatnonzero(np.concatenate([[True], np.diff(f) != 0]))
    group = np.cumsum(np.concatenate([[True], np.diff(f) != 0])) - 1
    count = np.diff(np.append(start, f.size))

    def mean(x):
        return None if x is None else np.bincount(group, x.real, start.size) / count + (
            1j * np.bincount(group, x.imag, start.size) / count if np.iscomplexobj(x) else 0)

    zm = mean(z)
    dev = np.abs(z - zm[group]) ** 2
    spread = np.sqrt(np.bincount(group, dev, start.size) / count)
    # Repeats equal to the last digit are one row copied twice, not a second
    # measurement: dropped, with a warning (the file was assembled by hand?).
    identical = (count > 1) & (spread <= 1e-12 * np.abs(zm))
    merged = (count > 1) & ~identical
    if identical.any():
        dup_lines = [int(x) for x, g in zip(ln, group) if identical[g]]
        firsts = {int(ln[i]) for i in start[identical]}
        dropped = [x for x in dup_lines if x not in firsts]
        shown = ", ".join(str(x) for x in dropped[:5]) + (" ..." if len(dropped) > 5 else "")
        msg = f"{len(dropped)} repeated frequencies dropped (line {shown}); identical copies of an earlier row"
        notes.append(msg)
        warnings.warn(f"{source}: {msg}", MeasurementWarning, stacklevel=4)
    if merged.any():
        n_extra = int(np.sum(count[merged] - 1))
        at = ", ".join(format_eng(x, "Hz", 4) for x in f[start[merged]][:4]) + (" ..." if merged.sum() > 4 else "")
        notes.append(
            f"{int(merged.sum())} repeated frequencies ({n_extra} extra row(s), at {at}) merged: mean of the "
            f"repeats, their spread (largest {100 * float(np.max(spread[merged] / np.abs(zm[merged]))):.2g} % of |Z|) "
            "added to the uncertainty"
        )
    sm = mean(s)
    sigm = None if sig is None else np.sqrt(np.bincount(group, sig**2, start.size) / count + spread**2)
    return f[start], zm, sigm, sm, ln[start], spread


def active_points(z_ohm, sigma_ohm) -> np.ndarray:
    """Return where an impedance looks active beyond its uncertainty.

    A passive one-port has ``Re Z >= 0`` (``|S11| <= 1``).  A point whose
    ``Re Z`` is below zero by more than ``k`` standard uncertainties of the
    real part, ``k = sqrt(2 ln N) + 2`` (the largest of ``N`` Gaussian draws
    with a margin: about 5.7 for 801 points), is not explained by the stated
    noise: the calibration residual, the phase accuracy or a connection
    poorly suited to the part is larger there.

    Parameters
    ----------
    z_ohm : array_like of complex
        Impedances (ohm).
    sigma_ohm : array_like of float
        Their complex-circular standard uncertainties (ohm).
    """
    z = np.asarray(z_ohm, dtype=complex)
    k = float(np.sqrt(2.0 * np.log(max(z.size, 2))) + 2.0)
    return z.real < -k * np.asarray(sigma_ohm, dtype=float) / np.sqrt(2.0)


def sweep_from_rows(rows: Rows, sigma_ohm, **extra) -> Sweep:
    """Return the `Sweep` of cleaned rows with their final uncertainty.

    Points that look active (`active_points`) are kept, flagged in
    `Sweep.active`, and one `MeasurementWarning` says how many, over which
    band and what it means.

    Parameters
    ----------
    rows : Rows
        What `cleaned_rows` returned.
    sigma_ohm : array_like
        Standard uncertainty of each row (ohm), the spread of merged repeats
        included.
    **extra
        Further `Sweep` fields.

    Raises
    ------
    ZfitInputError
        When every point is active: nothing usable remains.
    """
    sig = np.broadcast_to(np.asarray(sigma_ohm, dtype=float), rows.f_hz.shape).copy()
    if not np.all(np.isfinite(sig)) or np.any(sig <= 0):
        i = int(np.flatnonzero(~(np.isfinite(sig) & (sig > 0)))[0])
        raise ZfitInputError("uncertainty is not a positive finite number", rows.source, int(rows.lines[i]))
    active = active_points(rows.z_ohm, sig)
    notes = list(rows.notes)
    if active.any():
        n = int(active.sum())
        fa = rows.f_hz[active]
        quantity = "|S11| > 1" if rows.connection == "reflection" else "Re Z < 0"
        if active.all():
            raise ZfitInputError(
                f"every point looks active ({quantity} beyond its uncertainty, {format_eng(fa[0], 'Hz')} .. "
                f"{format_eng(fa[-1], 'Hz')}): nothing passive to identify; check the connection, the calibration "
                "and the reference impedance",
                rows.source,
            )
        band = (f"at {format_eng(fa[0], 'Hz')}" if n == 1 else
                f"between {format_eng(fa[0], 'Hz')} and {format_eng(fa[-1], 'Hz')}")
        msg = (
            f"{n} of {rows.f_hz.size} points look active ({quantity} beyond their uncertainty) {band}: a calibration residual or a phase error "
            "larger than the noise model there, or a connection poorly suited to this impedance; kept and "
            "flagged, weighted by their uncertainty"
        )
        notes.append(msg)
        warnings.warn(f"{rows.source}: {msg}", MeasurementWarning, stacklevel=3)
    return Sweep(rows.f_hz, rows.z_ohm, sig, source=rows.source, connection=rows.connection, notes=tuple(notes),
                 s_param=rows.s_param, active=active, **extra)
