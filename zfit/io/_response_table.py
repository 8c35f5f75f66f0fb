"""Reading swept-sine gain/phase tables: frequency, gain and phase of V_out against V_in.

A generator steps through frequencies and a two-channel oscilloscope (or its
frequency-response mode, or a lock-in amplifier) records, at each one, the
amplitude ratio and the phase of the output against the input.  The table
gives, per row, the frequency and either

* the gain (a ratio, or in dB) and the phase (degrees or radians), or
* the amplitudes of V_in and V_out (V, mV; both peak-to-peak, both RMS or
  both peak) and, optionally, their phases (the phase of H is
  ``phase_out - phase_in``) or the phase of H itself;

and optionally the standard uncertainties of the gain (dB) and of the phase
per row, a coherence and a usable flag (the CSV that ``zfit step --response``
writes has all of these).  Columns are recognised from a header line, their
units from it (``Freq (kHz)``, ``Gain [dB]``, ``phase_rad``); ``--columns``
maps them explicitly (see `response_columns`).  Rows at one frequency are
kept as they are: they are repeated readings, whose scatter is the per-point
uncertainty (`zfit.capture._swept_sine`).
"""

from __future__ import annotations

import math
import re
from dataclasses import dataclass, field

import numpy as np

from .._errors import ZfitInputError
from ._table import _norm_unit, _split_name, column_items, numeric_block

__all__ = ["ResponseTable", "read_response_table", "response_columns", "RESPONSE_QUANTITIES"]

#: Quantities of a gain/phase table: what each is and its unit inside zfit.
RESPONSE_QUANTITIES = {
    "f": ("frequency", "Hz"),
    "gain": ("gain |V_out/V_in| as a ratio", ""),
    "gain_db": ("gain 20 log10 |V_out/V_in|", "dB"),
    "phase": ("phase of V_out against V_in", "deg or rad"),
    "vin": ("amplitude of V_in", "V"),
    "vout": ("amplitude of V_out", "V"),
    "phase_in": ("phase of V_in", "deg or rad"),
    "phase_out": ("phase of V_out", "deg or rad"),
    "gain_std": ("standard uncertainty of the gain", "dB"),
    "phase_std": ("standard uncertainty of the phase", "deg or rad"),
    "coherence": ("ordinary coherence of the reading", ""),
    "usable": ("1 where the reading is usable, 0 where not", ""),
}

# Header names (lower case; spaces, '|', '_' and '-' removed) -> quantity.
_ALIASES = {
    "f": "f", "freq": "f", "frequency": "f", "fhz": "f", "frequenz": "f", "fréquence": "f", "frecuencia": "f",
    "gain": "gain", "h": "gain", "absh": "gain", "magh": "gain", "hmag": "gain", "ratio": "gain",
    "amplituderatio": "gain", "vout/vin": "gain", "uout/uin": "gain", "av": "gain", "mag": "gain",
    "magnitude": "gain", "verstärkung": "gain", "gaindb": "gain_db", "magdb": "gain_db", "hdb": "gain_db",
    "db": "gain_db",
    "phase": "phase", "phi": "phase", "angle": "phase", "phaseh": "phase", "argh": "phase", "phasedeg": "phase",
    "phaserad": "phase", "phasediff": "phase", "phasedifference": "phase", "phasenwinkel": "phase",
    "vin": "vin", "uin": "vin", "ain": "vin", "vinamplitude": "vin", "amplitudein": "vin", "vinpp": "vin",
    "vinrms": "vin", "vinpk": "vin",
    "vout": "vout", "uout": "vout", "aout": "vout", "voutamplitude": "vout", "amplitudeout": "vout",
    "voutpp": "vout", "voutrms": "vout", "voutpk": "vout",
    "phasein": "phase_in", "phin": "phase_in", "phiin": "phase_in", "vinphase": "phase_in", "phasevin": "phase_in",
    "phaseout": "phase_out", "phout": "phase_out", "phiout": "phase_out", "voutphase": "phase_out",
    "phasevout": "phase_out",
    "gainstd": "gain_std", "gaindbstd": "gain_std", "magdbstd": "gain_std", "magstd": "gain_std",
    "hdbstd": "gain_std", "ugain": "gain_std", "ugaindb": "gain_std",
    "phasestd": "phase_std", "phasestddeg": "phase_std", "phasestdrad": "phase_std", "uphase": "phase_std",
    "coherence": "coherence", "coh": "coherence", "gamma2": "coherence",
    "usable": "usable", "valid": "usable",
}

#: Phases beyond these (two turns) are refused: no network of the orders
#: fitted here lags or leads that much, and a radian column read as degrees
#: (or the reverse) is caught.
MAX_PHASE_DEG = 720.0
#: Gains beyond +-200 dB are no bench measurement (a column of something else).
MAX_GAIN_DB = 200.0

_PREFIX = {"": 1.0, "n": 1e-9, "u": 1e-6, "m": 1e-3, "k": 1e3}


@dataclass(frozen=True)
class ResponseTable:
    """The readings of a gain/phase table, one per row, in file order.

    Attributes
    ----------
    f_hz : numpy.ndarray
        Frequency of each reading in Hz.
    gain : numpy.ndarray
        ``|V_out / V_in|`` (a ratio).
    phase_rad : numpy.ndarray
        Phase of V_out against V_in in rad, as read (not unwrapped).
    lines : numpy.ndarray
        1-based file line of each reading.
    gain_std_db, phase_std_rad : numpy.ndarray or None
        Standard uncertainties per reading when the table gives them.
    coherence : numpy.ndarray or None
        Coherence per reading when the table gives it.
    source : str
        The file.
    data_format : str
        What was understood, e.g. ``"gain/phase table, comma, f [kHz], gain [dB], phase [deg]"``.
    method : str or None
        How the response was measured, when the file says (the first line
        of a ``zfit step --response`` CSV).
    notes : tuple of str
        Assumptions and rows dropped.
    """

    f_hz: np.ndarray
    gain: np.ndarray
    phase_rad: np.ndarray
    lines: np.ndarray
    gain_std_db: np.ndarray | None = None
    phase_std_rad: np.ndarray | None = None
    coherence: np.ndarray | None = None
    source: str = ""
    data_format: str = ""
    method: str | None = None
    notes: tuple[str, ...] = field(default=())

    def __post_init__(self):
        for name in ("f_hz", "gain", "phase_rad", "lines", "gain_std_db", "phase_std_rad", "coherence"):
            v = getattr(self, name)
            if v is not None:
                a = np.array(v)
                a.flags.writeable = False
                object.__setattr__(self, name, a)


def _quantity(key: str) -> str | None:
    if key in _ALIASES:
        return _ALIASES[key]
    return key if key in RESPONSE_QUANTITIES else None


def _amplitude_kind(key: str, unit: str | None) -> str:
    """``pp``, ``rms``, ``pk`` or ``""`` from the name and unit of an amplitude column."""
    text = (key + " " + (unit or "")).lower()
    for kind in ("pp", "rms", "pk"):
        if kind in text:
            return kind
    return ""


def _factor(q: str, unit: str | None, what: str, path, line):
    """Return (factor to zfit's unit, unit shown) of quantity `q` written in `unit`; None for 'not given'."""
    if unit is None or unit.strip() == "":
        return 1.0, None
    u = _norm_unit(unit).lower()
    if q == "f":
        for p, k in (("", 1.0), ("k", 1e3), ("m", 1e6), ("g", 1e9)):
            if u == p + "hz":
                return k, unit
    elif q in ("phase", "phase_in", "phase_out", "phase_std"):
        if u in ("deg", "degree", "degrees", "deg."):
            return math.pi / 180.0, "deg"
        if u in ("rad", "radian", "radians"):
            return 1.0, "rad"
    elif q in ("gain_db", "gain_std"):
        if u == "db":
            return 1.0, "dB"
    elif q == "gain":
        if u in ("", "1", "v/v", "ratio"):
            return 1.0, None
    elif q in ("vin", "vout"):
        m = re.fullmatch(r"([numk]?)v(pp|rms|pk|p-p|peak)?", u)
        if m:
            return _PREFIX[m.group(1)], unit
    elif q in ("coherence", "usable") and u in ("", "1"):
        return 1.0, None
    raise ZfitInputError(f"unknown unit {unit!r} for {what}", path, line)


def response_columns(text: str, header: list[str] | None = None, n_columns: int | None = None, path=None):
    """Return ``{quantity: (column_index, unit or None)}`` from a ``--columns`` text of a gain/phase table.

    Items separated by commas, either one per column in file order
    (``f[kHz],gain[dB],phase[deg]``; ``-`` skips a column) or
    ``QUANTITY[UNIT]=COLUMN`` with the 1-based column number or header text
    (``f=1,gain[dB]=3,phase[rad]=4``).  Quantity names: ``f``, ``gain``
    (a ratio; ``gain[dB]`` for dB), ``gain_db``, ``phase``, ``vin``,
    ``vout``, ``phase_in``, ``phase_out``, ``gain_std`` (dB), ``phase_std``,
    ``coherence``, ``usable``.

    Parameters
    ----------
    text : str
        The mapping.
    header : list of str, optional
        The header names, to resolve columns given by name and units not given.
    n_columns : int, optional
        Number of columns in the file.
    path : path-like, optional
        The file, for error messages.
    """
    out = {}
    for key, unit, shown, col in column_items(text, header, path, "f[kHz],gain[dB],phase[deg]"):
        q = _quantity(key)
        if q is None:
            raise ZfitInputError(f"--columns: unknown quantity {shown!r}; known: {', '.join(RESPONSE_QUANTITIES)}", path)
        if q == "gain" and unit is not None and _norm_unit(unit).lower() == "db":
            q = "gain_db"
        if n_columns is not None and not 0 <= col < n_columns:
            raise ZfitInputError(f"--columns: column {col + 1} for {shown!r} but the file has {n_columns} columns", path)
        if q in out:
            raise ZfitInputError(f"--columns: {q} given twice", path)
        if unit is None and header is not None and col < len(header):
            unit = _split_name(header[col])[1]
        out[q] = (col, unit, key)
    return out


def _mapping_from_header(header, path, line):
    found = {}
    for col, h in enumerate(header):
        key, unit, _ = _split_name(h)
        q = _quantity(key)
        if q is None:
            continue
        if q == "gain" and unit is not None and _norm_unit(unit).lower() == "db":
            q = "gain_db"
        if q in found:
            raise ZfitInputError(f"columns {found[q][0] + 1} ({header[found[q][0]]!r}) and {col + 1} ({h!r}) both "
                                 f"look like the {RESPONSE_QUANTITIES[q][0]}; give --columns", path, line)
        found[q] = (col, unit, key)
    return found


def _method_from_comments(comments: list[str]) -> str | None:
    """The measurement method a ``zfit step --response`` CSV states in its first comment line."""
    for c in comments:
        m = re.search(r"H = V_out/V_in \((.*)\)\s*$", c)
        if m:
            return m.group(1)
    return None


def read_response_table(path, columns: str | None = None) -> ResponseTable:
    """Return the readings of a swept-sine gain/phase table.

    Parameters
    ----------
    path : str or os.PathLike
        Comma, semicolon, tab or whitespace separated text; ``#`` and ``!``
        start comment lines; a header line (or ``--columns``); text lines
        before the header are skipped.
    columns : str, optional
        A column mapping in the syntax of `response_columns`.

    Returns
    -------
    ResponseTable

    Raises
    ------
    ZfitInputError
        With the file and line: no numbers, text among the numbers, no
        frequency, no gain or no phase, a phase without a unit that could be
        degrees or radians, a phase beyond two turns, a gain or amplitude
        that is not positive, or fewer than 3 usable readings.
    """
    block = numeric_block(path, what="frequency, gain and phase", columns_given=columns is not None)
    values, data_idx, header, header_line = block.values, block.data_idx, block.header, block.header_line
    notes, dname = list(block.notes), block.delimiter_name
    n_cols = values.shape[1]
    if columns is not None:
        mapping = response_columns(columns, header, n_cols, path)
        source = "--columns"
    elif header is None:
        raise ZfitInputError(f"no header line: cannot tell what the {n_cols} columns are; give --columns, "
                             "e.g. --columns 'f[Hz],gain[dB],phase[deg]' or 'f,vin[V],vout[V],phase[deg]'",
                             path, int(data_idx[0]) + 1)
    else:
        mapping = _mapping_from_header(header, path, header_line)
        source = "header"
    seen = ", ".join(repr(h) for h in header) if header else f"{n_cols} unnamed columns"
    where = header_line
    if "f" not in mapping:
        raise ZfitInputError(f"no frequency column; columns seen: {seen}; give --columns", path, where)
    has_gain = "gain" in mapping or "gain_db" in mapping
    if not has_gain and not ("vin" in mapping and "vout" in mapping):
        raise ZfitInputError(f"no gain column (a ratio, in dB, or the amplitudes vin and vout); columns seen: {seen}; "
                             "give --columns", path, where)
    has_phase = "phase" in mapping or ("phase_in" in mapping and "phase_out" in mapping)
    if not has_phase:
        raise ZfitInputError(f"no phase column (the phase of H, or phase_in and phase_out); columns seen: {seen}; "
                             "give --columns", path, where)

    def column(q, line=where):
        col, unit, _ = mapping[q]
        k, shown = _factor(q, unit, f"column {header[col] if header else col + 1!r}", path, line)
        return values[:, col] * k, shown

    # Readings flagged unusable (the bins of a capture outside its band) are not checked: they are dropped.
    usable = np.ones(values.shape[0], dtype=bool)
    if "usable" in mapping:
        usable = values[:, mapping["usable"][0]] > 0.5

    def fail_at(mask, message):
        mask = mask & usable
        if not mask.any():
            return
        i = int(np.flatnonzero(mask)[0])
        raise ZfitInputError(message(i), path, int(data_idx[i]) + 1)

    f, f_unit = column("f")
    parts = [f"f [{f_unit or 'Hz'}]"]
    bad = ~np.isfinite(f) | (f <= 0)
    if bad.any():
        fail_at(bad, lambda i: f"frequency {values[i, mapping['f'][0]]:g} is not a positive number")
    if "gain_db" in mapping and "gain" not in mapping:
        g_db, _ = column("gain_db")
        bad = ~np.isfinite(g_db) | (np.abs(g_db) > MAX_GAIN_DB)
        if bad.any():
            fail_at(bad, lambda i: f"gain {g_db[i]:g} dB is beyond +-{MAX_GAIN_DB:g} dB (a column of something else?)")
        gain = 10.0 ** (g_db / 20.0)
        parts.append("gain [dB]")
    elif "gain" in mapping:
        gain, _ = column("gain")
        bad = ~np.isfinite(gain) | (gain <= 0)
        if bad.any():
            fail_at(bad, lambda i: f"gain {gain[i]:g} is not a positive ratio (is the column in dB? write "
                                   "'gain (dB)' in the header)")
        parts.append("gain [ratio]")
    else:
        vin, vin_u = column("vin")
        vout, vout_u = column("vout")
        kin = _amplitude_kind(mapping["vin"][2], mapping["vin"][1])
        kout = _amplitude_kind(mapping["vout"][2], mapping["vout"][1])
        if kin != kout:
            raise ZfitInputError(f"V_in is given as {kin or 'an unstated amplitude'} and V_out as "
                                 f"{kout or 'an unstated amplitude'}: give both peak-to-peak, both RMS or both peak",
                                 path, where)
        for name, v in (("V_in", vin), ("V_out", vout)):
            bad = ~np.isfinite(v) | (v <= 0)
            if bad.any():
                fail_at(bad, lambda i, name=name, v=v: f"{name} amplitude {v[i]:g} is not positive")
        gain = vout / vin
        parts.append(f"V_in [{vin_u or 'V'}], V_out [{vout_u or 'V'}]")
    if "phase" in mapping:
        phase, p_unit = _phase(column, "phase", values[:, mapping["phase"][0]], path, where, seen)
        parts.append(f"phase [{p_unit}]")
    else:
        p_in, u_in = _phase(column, "phase_in", values[:, mapping["phase_in"][0]], path, where, seen)
        p_out, u_out = _phase(column, "phase_out", values[:, mapping["phase_out"][0]], path, where, seen)
        phase = p_out - p_in
        parts.append(f"phase_out - phase_in [{u_out}]")
    limit = math.radians(MAX_PHASE_DEG)
    bad = ~np.isfinite(phase) | (np.abs(phase) > limit)
    if bad.any():
        fail_at(bad, lambda i: f"phase {math.degrees(phase[i]):.6g} deg is beyond +-{MAX_PHASE_DEG:g} deg "
                               "(two turns): out of range (radians read as degrees?)")
    g_std = p_std = coh = None
    keep = np.ones(f.size, dtype=bool)
    if "gain_std" in mapping:
        g_std, _ = column("gain_std")
        parts.append("gain std [dB]")
    if "phase_std" in mapping:
        col, unit, _ = mapping["phase_std"]
        if unit is None:
            # The phase's own unit, when its uncertainty does not say.
            unit = p_unit if "phase" in mapping else u_out
        k, _ = _factor("phase_std", unit, "the phase uncertainty", path, where)
        p_std = values[:, col] * k
        parts.append("phase std")
    for name, s in (("gain", g_std), ("phase", p_std)):
        if s is not None:
            bad = np.isnan(s) | (s < 0)
            if bad.any():
                fail_at(bad, lambda i, s=s, name=name: f"the {name} uncertainty {s[i]:g} is negative or not a number")
            keep &= np.isfinite(s)
    if "coherence" in mapping:
        coh, _ = column("coherence")
    if "usable" in mapping:
        keep &= usable
        parts.append("usable flag")
    if not keep.all():
        notes.append(f"{int((~keep).sum())} reading(s) outside the usable band or without a finite uncertainty "
                     f"left out (line {int(data_idx[~keep][0]) + 1} ...)")
    if int(keep.sum()) < 3:
        raise ZfitInputError(f"only {int(keep.sum())} usable reading(s): a transfer function needs at least 3 "
                             "frequencies", path, int(data_idx[0]) + 1)
    sel = (lambda a: None if a is None else a[keep])
    fmt = f"gain/phase table, {dname}{' (decimal comma)' if block.decimal_comma else ''}, columns from {source}: " + ", ".join(parts)
    return ResponseTable(f_hz=f[keep], gain=gain[keep], phase_rad=phase[keep], lines=data_idx[keep] + 1,
                         gain_std_db=sel(g_std), phase_std_rad=sel(p_std), coherence=sel(coh), source=str(path),
                         data_format=fmt, method=_method_from_comments(block.comments), notes=tuple(notes))


def _phase(column, q, raw, path, line, seen):
    """Return (phase in rad, unit shown) of a phase column; refuse a column without a unit that could be either."""
    v, unit = column(q)
    if unit is not None:
        return v, unit
    m = float(np.nanmax(np.abs(raw))) if raw.size else 0.0
    # A phase in radians stays within two turns (4 pi); beyond one turn in
    # radians (2 pi) the column can only be degrees.
    if m > 2.0 * math.pi * 1.001:
        return np.radians(raw), "deg (no unit given; the values can only be degrees)"
    raise ZfitInputError(f"the {q.replace('_', ' ')} column has no unit and its values (|phase| <= {m:.3g}) could be "
                         f"degrees or radians; write the unit in the header ('phase (deg)') or give --columns with "
                         f"phase[deg] or phase[rad] (columns seen: {seen})", path, line)
