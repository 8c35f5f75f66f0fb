"""The oscilloscope capture: uniformly sampled channels, as every capture reader returns them."""

from __future__ import annotations

import math
import re
import types
from dataclasses import dataclass, field
from typing import Mapping

import numpy as np

from .._errors import ZfitInputError
from .._units import format_eng
from ..data._sweep import SAMPLE_INTERVAL_RANGE_S

__all__ = ["Capture", "make_capture", "clipped_fraction", "check_finite", "check_time_base", "MIN_SAMPLES", "MAX_SAMPLE",
           "MAX_START_INTERVALS"]

#: A record shorter than this cannot hold an edge with its settled levels.
MIN_SAMPLES = 16


@dataclass(frozen=True)
class Capture:
    """Channels sampled on one uniform time grid.

    Attributes
    ----------
    t0 : float
        Time of the first sample in s.
    dt : float
        Sample interval in s (positive).
    channels : Mapping[str, numpy.ndarray]
        Voltage of each channel in V, 1-D float arrays of one length, read-only.
    names : tuple of str
        Channel names in file order (the keys of `channels`).
    source : str
        The file the capture came from, or a description.
    notes : tuple of str
        What the reader understood or assumed (sample interval from the
        header, time column printed coarsely, ...).
    file_columns : tuple of int
        The 1-based column of the file each channel came from, so that a
        channel can be chosen by the column number the user sees in the file.
    """

    t0: float
    dt: float
    channels: Mapping[str, np.ndarray]
    names: tuple[str, ...]
    source: str = ""
    notes: tuple[str, ...] = ()
    file_columns: tuple[int, ...] = field(default=())

    def __post_init__(self):
        chans = {}
        for name in self.names:
            a = np.asarray(self.channels[name], dtype=float)
            if a.flags.writeable:
                a = a.view()
                a.flags.writeable = False
            chans[name] = a
        object.__setattr__(self, "channels", types.MappingProxyType(chans))
        if not self.file_columns:
            object.__setattr__(self, "file_columns", tuple(range(1, len(self.names) + 1)))

    @property
    def n_samples(self) -> int:
        """Number of samples per channel."""
        return int(next(iter(self.channels.values())).size) if self.channels else 0

    @property
    def sample_rate_hz(self) -> float:
        """Sample rate ``1/dt`` in Hz."""
        return 1.0 / self.dt

    @property
    def duration_s(self) -> float:
        """Length of the record ``n dt`` in s."""
        return self.n_samples * self.dt

    def time(self) -> np.ndarray:
        """Return the sample times ``t0 + k dt`` in s."""
        return self.t0 + self.dt * np.arange(self.n_samples)

    def channel_name(self, key) -> str:
        """Return the name of the channel that `key` designates.

        Parameters
        ----------
        key : str or int
            A channel name (case-insensitive), or the 1-based column number
            in the file (``"2"`` or ``2``).

        Raises
        ------
        ZfitInputError
            When no channel matches.
        """
        if isinstance(key, str):
            text = key.strip()
            for name in self.names:
                if name == text:
                    return name
            for name in self.names:
                if name.lower() == text.lower():
                    return name
            if not re.fullmatch(r"\d+", text):
                raise ZfitInputError(
                    f"no channel named {key!r}; the channels are {', '.join(self.names)} "
                    f"(columns {', '.join(map(str, self.file_columns))})",
                    self.source,
                )
            key = int(text)
        key = int(key)
        for name, col in zip(self.names, self.file_columns):
            if col == key:
                return name
        raise ZfitInputError(
            f"column {key} is not a voltage channel; the channels are "
            + ", ".join(f"{c}={n}" for n, c in zip(self.names, self.file_columns)),
            self.source,
        )

    def channel(self, key) -> np.ndarray:
        """Return the samples of the channel that `key` designates (see `channel_name`).

        Parameters
        ----------
        key : str or int
            Channel name or 1-based file column.
        """
        return self.channels[self.channel_name(key)]


#: The farthest start of a record from time zero, in sample intervals: sample
#: times are t0 + k dt, and beyond 1e12 intervals double precision keeps too
#: few digits of dt to tell the samples apart.
MAX_START_INTERVALS = 1e12


def check_time_base(dt: float, t0: float, source, line: int | None = None, what: str = "sample interval") -> None:
    """Refuse a sample interval outside `SAMPLE_INTERVAL_RANGE_S` or a start too far from zero.

    Parameters
    ----------
    dt, t0 : float
        Sample interval (positive) and time of the first sample, s.
    source, line
        The file and line, for the message.
    what : str
        What the interval is called in the message.

    Raises
    ------
    ZfitInputError
        With the range in the message.
    """
    lo, hi = SAMPLE_INTERVAL_RANGE_S
    if not lo <= dt <= hi:
        raise ZfitInputError(f"{what} {format_eng(dt, 's')} is outside {format_eng(lo, 's')} .. {format_eng(hi, 's')}, "
                             "the range zfit computes in (a unit error?)", source, line)
    if abs(t0) > MAX_START_INTERVALS * dt:
        raise ZfitInputError(f"start time {format_eng(t0, 's')} is more than {MAX_START_INTERVALS:.0e} sample "
                             f"intervals ({format_eng(dt, 's')}) from zero; give times relative to the trigger", source, line)


def make_capture(channels, dt, *, t0: float = 0.0, names=None, source: str = "", notes=(), file_columns=()) -> Capture:
    """Return a validated `Capture` from arrays.

    Parameters
    ----------
    channels : Mapping[str, array_like] or sequence of array_like
        The voltage of each channel in V, all of one length.
    dt : float
        Sample interval in s.
    t0 : float
        Time of the first sample in s.
    names : sequence of str, optional
        Channel names when `channels` is a sequence (default ``CH1``, ``CH2``, ...).
    source : str
        Where the data came from, used in messages.
    notes : sequence of str
        Notes kept in the capture.
    file_columns : sequence of int
        The 1-based file column of each channel (default 1, 2, ...).

    Raises
    ------
    ZfitInputError
        On a non-positive or non-finite interval, channels of different
        lengths, fewer than `MIN_SAMPLES` samples or non-finite samples.
    """
    if isinstance(channels, Mapping):
        names = tuple(str(k) for k in channels)
        arrays = [channels[k] for k in channels]
    else:
        arrays = list(channels)
        names = tuple(names) if names is not None else tuple(f"CH{i + 1}" for i in range(len(arrays)))
    if not arrays:
        raise ZfitInputError("the capture has no voltage channel", source)
    if len(set(names)) != len(names):
        raise ZfitInputError(f"channel names repeat: {', '.join(names)}", source)
    dt = float(dt)
    if not (math.isfinite(dt) and dt > 0):
        raise ZfitInputError(f"sample interval {dt!r} s is not a positive number", source)
    if not math.isfinite(float(t0)):
        raise ZfitInputError("start time is not a finite number", source)
    check_time_base(dt, float(t0), source)
    arrs = []
    for name, a in zip(names, arrays):
        a = np.asarray(a, dtype=float)
        if a.ndim != 1:
            raise ZfitInputError(f"channel {name}: expected a 1-D array of samples, got shape {a.shape}", source)
        arrs.append(a)
    n = arrs[0].size
    for name, a in zip(names, arrs):
        if a.size != n:
            raise ZfitInputError(f"channel {name} has {a.size} samples where {names[0]} has {n}", source)
    if n < MIN_SAMPLES:
        raise ZfitInputError(f"only {n} samples; at least {MIN_SAMPLES} are needed", source)
    for name, a in zip(names, arrs):
        check_finite(a, name, source)
    return Capture(float(t0), dt, dict(zip(names, arrs)), names, source=str(source), notes=tuple(notes),
                   file_columns=tuple(file_columns))


#: Largest magnitude taken as a sample (V, or A through a current probe): a
#: value beyond it is a unit or column mistake, and would overflow the
#: spectra (squares of 1e300 are infinite).
MAX_SAMPLE = 1e12


def check_finite(a: np.ndarray, name: str, source, first_line: int | None = None):
    # The sum is finite exactly when every sample is (barring overflow, which
    # the exact scan below then sorts out): one fast pass for the usual case.
    if a.size and math.isfinite(float(np.sum(a))):
        if max(float(a.max()), -float(a.min())) <= MAX_SAMPLE:
            return
    # Block-wise, so that a 10-million-sample channel needs no 10-million bool temporary.
    step = 1 << 20
    for i in range(0, a.size, step):
        bad = ~np.isfinite(a[i:i + step])
        if bad.any():
            k = i + int(np.flatnonzero(bad)[0])
            line = None if first_line is None else first_line + k
            where = "" if line is not None else f" (sample {k})"
            raise ZfitInputError(f"channel {name}: sample is not a finite number (NaN, inf or an overrange mark){where}",
                                 source, line)
    for i in range(0, a.size, step):
        big = np.abs(a[i:i + step]) > MAX_SAMPLE
        if big.any():
            k = i + int(np.flatnonzero(big)[0])
            line = None if first_line is None else first_line + k
            where = "" if line is not None else f" (sample {k})"
            raise ZfitInputError(f"channel {name}: sample {a[k]:.3g} is beyond {MAX_SAMPLE:.0e} in magnitude, not a "
                                 f"voltage (a wrong column or unit?){where}", source, line)


def clipped_fraction(x: np.ndarray) -> tuple[float, float]:
    """Return the fractions of samples that sit flat at the lowest and highest value.

    A channel clipped by the scope's vertical range piles its samples up at
    one code at the rail: the extreme value then holds far more samples than
    the next code inside, unlike a noisy plateau, whose extreme codes are its
    rarest.  When both extremes pile up alike, the record is taken as clean
    and nearly noiseless (each level on one code), not as clipped.

    Parameters
    ----------
    x : numpy.ndarray
        The samples of one channel.

    Returns
    -------
    (float, float)
        Fraction of all samples pinned at the bottom and at the top rail; zero
        for a rail that does not look clipped.
    """
    x = np.asarray(x)
    if x.size > 1 << 21:
        x = x[:: int(math.ceil(x.size / (1 << 21)))]  # fractions need no more samples than this
    lo, hi = float(x.min()), float(x.max())
    if hi <= lo:
        return 0.0, 0.0
    # Counts at, and just inside, each rail: a 256-bin histogram resolves the
    # codes of an 8-bit scope and costs one pass.
    counts, edges = np.histogram(x, bins=256, range=(lo, hi))
    at_lo = int(np.count_nonzero(x == lo))
    at_hi = int(np.count_nonzero(x == hi))
    n = x.size

    def pinned(at, inside):
        # The rail holds more than half a percent of the record, and more than
        # three times what the neighbouring bins hold: a pile-up, not a tail.
        return at > 0.005 * n and at > 3.0 * max(inside, 1) and np.count_nonzero(counts) > 4

    inside_lo = int(counts[1:4].max()) if counts.size > 4 else 0
    inside_hi = int(counts[-4:-1].max()) if counts.size > 4 else 0
    f_lo = at_lo / n if pinned(at_lo, inside_lo) else 0.0
    f_hi = at_hi / n if pinned(at_hi, inside_hi) else 0.0
    if f_lo and f_hi and max(f_lo, f_hi) < 3.0 * min(f_lo, f_hi):
        # Both extremes piled up alike: a clean, nearly noiseless record whose
        # levels each sit on one code, not a clipped one.
        return 0.0, 0.0
    if f_lo and f_hi:
        return (f_lo, 0.0) if f_lo > f_hi else (0.0, f_hi)
    return f_lo, f_hi
