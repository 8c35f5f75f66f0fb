"""The measured sweep: frequency, impedance and its per-point uncertainty."""

from __future__ import annotations

import warnings
from dataclasses import dataclass, field

import numpy as np

from ._connection import InstrumentNoise
from .._errors import MeasurementWarning, ZfitInputError
from .._units import format_eng

__all__ = ["Sweep", "make_sweep", "MIN_POINTS", "CONNECTIONS"]

#: Fewer points than this cannot support even the simplest circuit with its
#: uncertainties.
MIN_POINTS = 10

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

    def __post_init__(self):
        for name in ("f_hz", "z_ohm", "sigma_ohm", "s_param"):
            value = getattr(self, name)
            if value is not None:
                value = np.asarray(value)
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

    Rows are sorted by frequency and repeated frequencies dropped (the first
    kept, the drop reported in `notes` and as a warning).

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
        `noise`).

    Raises
    ------
    ZfitInputError
        On non-finite values, non-positive frequencies, fewer than
        `MIN_POINTS` points, or impedances that are not passive beyond their
        uncertainty (Re Z < -k sigma with k = sqrt(2 ln N) + 2,
        about 5.7 for 801 points).
    """
    if connection not in CONNECTIONS:
        raise ZfitInputError(f"unknown connection {connection!r}; use one of {', '.join(CONNECTIONS)}", source)
    f = np.asarray(f_hz, dtype=float).ravel()
    z = np.asarray(z_ohm, dtype=complex).ravel()
    sig = np.broadcast_to(np.asarray(sigma_ohm, dtype=float), f.shape).copy()
    s = None if s_param is None else np.asarray(s_param, dtype=complex).ravel()
    ln = np.arange(1, f.size + 1) if lines is None else np.asarray(lines, dtype=int).ravel()
    if not (f.size == z.size == sig.size == ln.size):
        raise ZfitInputError("frequency, impedance and uncertainty have different lengths", source)
    notes = list(notes)

    def fail(message, index):
        raise ZfitInputError(message, source, int(ln[index]) if lines is not None else None)

    bad = ~(np.isfinite(f) & np.isfinite(z.real) & np.isfinite(z.imag))
    if bad.any():
        fail("value is not a finite number (NaN or inf)", int(np.flatnonzero(bad)[0]))
    if not np.all(np.isfinite(sig)) or np.any(sig <= 0):
        fail("uncertainty is not a positive finite number", int(np.flatnonzero(~(np.isfinite(sig) & (sig > 0)))[0]))
    nonpos = f <= 0
    if nonpos.any():
        fail(f"frequency {format_eng(f[nonpos][0], 'Hz')} is not positive", int(np.flatnonzero(nonpos)[0]))

    order = np.argsort(f, kind="stable")
    if np.any(np.diff(order) < 0):
        notes.append("rows were not in frequency order; sorted")
    f, z, sig, ln = f[order], z[order], sig[order], ln[order]
    s = None if s is None else s[order]
    dup = np.concatenate([[False], np.diff(f) == 0])
    if dup.any():
        dropped = ", ".join(str(int(x)) for x in ln[dup][:5]) + (" ..." if dup.sum() > 5 else "")
        msg = f"{int(dup.sum())} repeated frequencies dropped (line {dropped}); the first of each kept"
        notes.append(msg)
        warnings.warn(f"{source}: {msg}", MeasurementWarning, stacklevel=2)
        keep = ~dup
        f, z, sig, ln = f[keep], z[keep], sig[keep], ln[keep]
        s = None if s is None else s[keep]

    if f.size < MIN_POINTS:
        raise ZfitInputError(f"only {f.size} frequency points; at least {MIN_POINTS} are needed", source)
    # A fixed 3-sigma test on each of hundreds of points fires by chance on
    # honest data of a low-loss part; the threshold grows with the number of
    # points like the largest of N Gaussian draws, sqrt(2 ln N), plus a margin.
    k = float(np.sqrt(2.0 * np.log(f.size)) + 2.0)
    active = z.real < -k * sig / np.sqrt(2.0)
    if active.any():
        i = int(np.flatnonzero(active)[0])
        fail(
            f"not a passive one-port: Re Z = {format_eng(z.real[i], 'ohm')} at {format_eng(f[i], 'Hz', 6)} is below zero "
            f"by more than {k:.1f} standard uncertainties (check the connection and the calibration)",
            i,
        )
    return Sweep(f, z, sig, source=str(source), connection=connection, notes=tuple(notes), s_param=s, **extra)
