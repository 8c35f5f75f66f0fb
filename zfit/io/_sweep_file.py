"""``read_sweep``: any supported bench file in, a validated `Sweep` out.

The file kind is decided by the extension and checked against the content:
a ``.s2p`` that holds a comma-separated table, or a ``.csv`` that holds a
Touchstone option line, is an error rather than a guess.
"""

from __future__ import annotations

from pathlib import Path

import numpy as np

from dataclasses import replace

from ..data._connection import NA_CONNECTIONS, InstrumentNoise, conditioning_warning, impedance_from_s, sigma_z_from_s
from .._errors import ZfitInputError
from ..data._noise import MIN_POINTS_ESTIMATE, SOURCE_DEFAULT, SOURCE_GIVEN, NoiseEstimate, fitted_noise
from ..data._sweep import Sweep, cleaned_rows, sweep_from_rows

__all__ = ["read_sweep", "default_noise", "sweep_kind", "conditioning_note", "two_port_connection",
           "S_NOISE_DEFAULT", "TABLE_NOISE_DEFAULT", "TOUCHSTONE_EXTENSIONS", "TABLE_EXTENSIONS"]

#: Default noise on a measured S-parameter: 1e-3 relative (about 0.009 dB and
#: 0.06 degrees of trace noise) plus a -100 dB floor.  Common practice for a
#: calibrated vector network analyser at a narrow IF bandwidth, not the
#: specification of any instrument.
S_NOISE_DEFAULT = InstrumentNoise(1e-3, 1e-5)

#: Default noise on a tabulated impedance: 1e-3 relative (the 0.1 % class of
#: basic accuracy of bench impedance analysers and LCR meters) plus 0.1 mohm
#: (residual of a compensated short).  Common practice, not a datasheet value.
TABLE_NOISE_DEFAULT = InstrumentNoise(1e-3, 1e-4)

#: Below this relative scatter the data are smoother than any instrument
#: measures (1e-5 is 0.0001 dB and 0.0006 degrees): simulated, averaged to
#: the last digit, or smoothed, and their scatter says nothing of the
#: accuracy; the default noise model is kept.
MIN_CREDIBLE_REL = 1e-5

#: Touchstone extensions and their port count (the letter names the
#: parameter type in 1.x: S, Y, Z, G or H; ".ts" is for version 2.0).
TOUCHSTONE_EXTENSIONS = {f".{p}{n}p": n for p in "syzgh" for n in (1, 2)}
TOUCHSTONE_EXTENSIONS[".ts"] = None
TABLE_EXTENSIONS = (".csv", ".tsv", ".txt", ".dat", ".prn", ".tab")

_CONNECTION_HELP = (
    "reflection (the part on port 1 alone: S11), "
    "shunt-thru (the part from the through line to ground: S21 falls below 1 as the part's impedance falls, "
    "best for low impedances such as capacitors near resonance) or "
    "series-thru (the part in series between the two ports: S21 falls below 1 as the impedance rises, "
    "best for high impedances such as inductors near resonance)"
)


def sweep_kind(path) -> str:
    """Return ``"touchstone"`` or ``"table"`` for `path`, from its extension.

    Raises
    ------
    ZfitInputError
        For an extension zfit does not read.
    """
    ext = Path(path).suffix.lower()
    if ext in TOUCHSTONE_EXTENSIONS:
        return "touchstone"
    if ext in TABLE_EXTENSIONS:
        return "table"
    if len(ext) >= 4 and ext[1] in "syzgh" and ext[-1] == "p" and ext[2:-1].isdigit():
        raise ZfitInputError(
            f"{ext} holds {ext[2:-1]}-port data; a one-port part is measured as .s1p (reflection) or .s2p "
            "(shunt-thru or series-thru)",
            path,
        )
    raise ZfitInputError(
        f"unknown file kind {ext or '(no extension)'!r}; zfit reads Touchstone (.s1p, .s2p, .ts) and tables "
        f"({', '.join(TABLE_EXTENSIONS)})",
        path,
    )


def default_noise(path) -> InstrumentNoise:
    """Return the default noise model for the kind of file at `path`.

    Parameters
    ----------
    path : str or os.PathLike
        The sweep file; only its extension is used.

    Returns
    -------
    InstrumentNoise
        `S_NOISE_DEFAULT` (on S, linear floor) for Touchstone files,
        `TABLE_NOISE_DEFAULT` (on Z, floor in ohm) for tables.
    """
    return S_NOISE_DEFAULT if sweep_kind(path) == "touchstone" else TABLE_NOISE_DEFAULT


def read_sweep(path, connection: str | None = None, *, noise: InstrumentNoise | None = None,
               columns: str | None = None) -> Sweep:
    """Return the sweep in a Touchstone file or an analyser table.

    Parameters
    ----------
    path : str or os.PathLike
        ``.s1p`` (reflection), ``.s2p`` (shunt-thru or series-thru; reflection
        uses S11), ``.ts`` (Touchstone 2.0, one or two ports), or a table
        (``.csv``, ``.tsv``, ``.txt``, ``.dat``, ``.prn``, ``.tab``).
    connection : {'reflection', 'shunt-thru', 'series-thru'}, optional
        How the analyser saw the part.  Implied for one-port files; for
        two-port files, taken from the data when they say clearly which
        transmission connection it is (`two_port_connection`, with a note);
        must be None (or ``'impedance'``) for tables.
    noise : InstrumentNoise, optional
        Noise of the measurement (on S for Touchstone files, on Z for
        tables).  None: estimated from the scatter of the data
        (`zfit.data._noise.fitted_noise`), or `default_noise` when the sweep
        has too few points or no scatter; `Sweep.noise_estimate` says which.
    columns : str, optional
        Column mapping of a table (see `zfit.io._table.parse_columns`).

    Returns
    -------
    Sweep
        Cleaned (`zfit.data._sweep.cleaned_rows`: sorted, repeats merged,
        active points flagged), with `sigma_ohm` propagated from the noise
        model through the connection formula (first order,
        ``|dZ/dS| sigma_S``), the reference impedance and a description of
        the data format.

    Raises
    ------
    ZfitInputError
        Naming the file and line for anything that cannot be read as a
        one-port sweep.

    References
    ----------
    .. [1] D. M. Pozar, *Microwave Engineering*, 4th ed., Wiley, 2012,
       sections 4.3-4.4 (S and ABCD parameters of shunt and series elements).
    .. [2] JCGM 100:2008 (GUM), section 5.1 (law of propagation of uncertainty).
    """
    path = Path(path)
    kind = sweep_kind(path)
    if not path.is_file():
        raise ZfitInputError("no such file" if not path.exists() else "is not a file", path)
    if kind == "touchstone":
        return _sweep_from_touchstone(path, connection, noise, columns)
    return _sweep_from_table(path, connection, noise, columns)


def _noise_for(rows, values, on: str, given: InstrumentNoise | None, default: InstrumentNoise):
    """The noise model of cleaned rows: given, else estimated, else the default (with a note)."""
    band = (float(rows.f_hz[0]), float(rows.f_hz[-1]))
    if given is not None:
        return given, NoiseEstimate(SOURCE_GIVEN, given.rel, given.floor, on, band), ()
    est = fitted_noise(rows.f_hz, values, on)
    if est is not None and est.rel + est.floor / max(float(np.median(np.abs(values))), 1e-300) >= MIN_CREDIBLE_REL:
        return est.noise, est, (
            f"noise estimated from the data ({est.points} points): sigma({on}) = {est.rel:.3g} * |{on}| + "
            f"{est.floor:.3g}{'' if on == 'S' else ' ohm'}",)
    why = (f"only {rows.f_hz.size} points (fewer than {MIN_POINTS_ESTIMATE}): too few to estimate the noise from the data"
           if rows.f_hz.size < MIN_POINTS_ESTIMATE else
           "the data scatter less than any instrument does (smoothed or simulated?)")
    return default, NoiseEstimate(SOURCE_DEFAULT, default.rel, default.floor, on, band), (
        f"{why}: the default noise model is used (give --noise-rel/--noise-floor for the instrument's)",)


def _head(path: Path) -> str:
    with open(path, "rb") as fh:
        raw = fh.read(16384)
    if raw[:2] in (b"\xff\xfe", b"\xfe\xff"):
        # UTF-16 text (Windows bench software): decode it, a cut last character aside.
        return raw[: len(raw) // 2 * 2].decode("utf-16", errors="replace")
    if raw[:3] == b"\xef\xbb\xbf":
        raw = raw[3:]  # UTF-8 byte-order mark (Windows editors)
    return raw.decode("latin-1")


def _check_is_touchstone(path: Path) -> None:
    from ._touchstone import looks_like_touchstone

    head = _head(path)
    if "\x00" in head[:4096]:
        raise ZfitInputError("is a binary file, not a Touchstone text file", path)
    if looks_like_touchstone(head):
        return
    lines = head.splitlines()
    bad_option = False
    for i, raw in enumerate(lines):
        s = raw.partition("!")[0].strip()
        if not s:
            continue
        if s[0] == "#" and not bad_option and not looks_like_touchstone(s):
            # Not an option line: maybe a table whose comments start with '#'.
            # Look on; the parser names this line if nothing else is wrong.
            bad_option = True
            continue
        if bad_option and s[0] == "#":
            continue
        if bad_option and ("," in s or ";" in s):
            raise ZfitInputError(
                "is not a Touchstone file although its extension says so: it reads as a delimited table "
                "with '#' comments (rename the file .csv)",
                path,
                i + 1,
            )
        if bad_option or s[0] in "#[":
            return  # an option line or a keyword: the parser says what is wrong with it
        if s[0] in "0123456789+-.":
            if "," in s or ";" in s:
                raise ZfitInputError(
                    f"is not a Touchstone file although its extension says so: this line is a delimited table row "
                    f"(rename the file .csv)",
                    path,
                    i + 1,
                )
            return  # numbers without an option line: Touchstone defaults apply
        raise ZfitInputError(
            "is not a Touchstone file although its extension says so: expected an option line "
            "('# Hz S RI R 50'), '[Version] 2.0' or data, found text",
            path,
            i + 1,
        )
    raise ZfitInputError("no data: the file is empty or only comments", path)


def _sweep_from_touchstone(path: Path, connection, noise: InstrumentNoise | None, columns) -> Sweep:
    from ._touchstone import read_touchstone

    if columns is not None:
        raise ZfitInputError("--columns applies to tables, not to Touchstone files", path)
    _check_is_touchstone(path)
    ext = path.suffix.lower()
    data = read_touchstone(path, TOUCHSTONE_EXTENSIONS[ext])
    notes = list(data.notes)
    if data.n_ports == 1:
        if connection not in (None, "reflection"):
            raise ZfitInputError(
                f"a one-port file holds S11 only, which is a reflection measurement, not {connection}", path
            )
        connection = "reflection"
        s = data.s[:, 0, 0]
    elif data.n_ports == 2:
        if connection is None:
            connection, evidence = two_port_connection(data.s)
            if connection is None:
                raise ZfitInputError(
                    "a two-port file needs --connection: " + _CONNECTION_HELP + "; to tell them apart: a series part "
                    "gives S11 + S21 = 1, a shunt part S21 - S11 = 1" + evidence,
                    path,
                )
            notes.append(f"connection {connection} taken from the data ({evidence}); give --connection to override")
        if connection not in NA_CONNECTIONS:
            raise ZfitInputError(f"unknown connection {connection!r}; use {_CONNECTION_HELP}", path)
        s = data.s[:, 0, 0] if connection == "reflection" else data.s[:, 1, 0]
    else:
        raise ZfitInputError(f"{data.n_ports}-port data: a one-port part is measured with 1 or 2 ports", path)
    z0 = data.reference_ohm
    bad_s = ~np.isfinite(s)
    if bad_s.any():
        i = int(np.flatnonzero(bad_s)[0])
        raise ZfitInputError("S-parameter is not a finite number (NaN or inf)", path, int(data.lines[i]))
    singular = np.abs(1 - s) < 1e-12 if connection != "series-thru" else np.abs(s) < 1e-12
    if singular.any():
        i = int(np.flatnonzero(singular)[0])
        # Within 1e-12 of the value that is an open: |Z| beyond 1e12 Z0, no measurement's.
        port, target, kind = (("S11", 1, "an open circuit") if connection == "reflection" else
                              ("S21", 1, "an open across the line") if connection == "shunt-thru" else
                              ("S21", 0, "an open in series"))
        if s[i] == target:
            text = f"{port} = {target} ({kind}): the impedance is infinite"
        else:
            text = (f"|{port} - {target}| = {abs(s[i] - target):.3g}, within 1e-12 of {kind}: |Z| would exceed "
                    "1e12 times the reference impedance")
        raise ZfitInputError(text, path, int(data.lines[i]))
    with np.errstate(all="ignore"):
        z = impedance_from_s(s, connection, z0)
    rows = cleaned_rows(data.f_hz, z, source=str(path), connection=connection, lines=data.lines, notes=notes,
                        s_param=s)
    s = rows.s_param
    noise, record, more = _noise_for(rows, s, "S", noise, S_NOISE_DEFAULT)
    with np.errstate(all="ignore"):
        # Repeats are merged on S: the impedance of the mean S.
        rows = replace(rows, z_ohm=impedance_from_s(s, connection, z0), notes=rows.notes + more)
        sigma = np.hypot(sigma_z_from_s(s, connection, z0, noise), rows.spread_ohm)
    port = "S11" if connection == "reflection" else "S21"
    return sweep_from_rows(
        rows, sigma,
        reference_ohm=z0,
        data_format=data.data_format + f"; {port} used",
        noise_model=noise.describe("S") + f", carried to Z through the {connection} formula ({record.source})",
        noise=noise,
        noise_estimate=record,
    )


def _sweep_from_table(path: Path, connection, noise: InstrumentNoise | None, columns) -> Sweep:
    from ._table import read_table
    from ._touchstone import looks_like_touchstone

    if connection not in (None, "impedance"):
        raise ZfitInputError(
            f"--connection {connection} applies to network-analyser S-parameters; a table holds impedance already", path
        )
    if looks_like_touchstone(_head(path)):
        raise ZfitInputError(
            "is a Touchstone file although its extension says table: rename it .s1p or .s2p", path
        )
    data = read_table(path, columns)
    rows = cleaned_rows(data.f_hz, data.z_ohm, source=str(path), connection="impedance", lines=data.lines,
                        notes=data.notes)
    noise, record, more = _noise_for(rows, rows.z_ohm, "Z", noise, TABLE_NOISE_DEFAULT)
    rows = replace(rows, notes=rows.notes + more)
    with np.errstate(all="ignore"):
        sigma = np.hypot(noise.sigma(rows.z_ohm), rows.spread_ohm)
    return sweep_from_rows(
        rows, sigma,
        data_format=data.data_format,
        noise_model=noise.describe("Z") + f" ({record.source})",
        noise=noise,
        noise_estimate=record,
    )


def two_port_connection(s) -> tuple[str | None, str]:
    """Return the transmission connection a two-port measurement shows, and the evidence.

    A part in series between two matched ports has ``S11 + S21 = 1``; a part
    from the through line to ground has ``S21 - S11 = 1`` (both from the
    ABCD matrices of a series impedance and a shunt admittance, Pozar 2012,
    Table 4.1).  The connection is named when the median misfit of one
    identity is below 0.05 and below a fifth of the other's.

    Parameters
    ----------
    s : array_like of complex, shape (n, 2, 2)
        The two-port S-parameters.

    Returns
    -------
    connection : {'series-thru', 'shunt-thru'} or None
        None when the data fit neither identity clearly.
    evidence : str
        The misfits, in words, for a note or an error message.
    """
    s11, s21 = s[:, 0, 0], s[:, 1, 0]
    series = float(np.median(np.abs(s11 + s21 - 1)))
    shunt = float(np.median(np.abs(s21 - s11 - 1)))
    if series < 0.05 and series < 0.2 * shunt:
        return "series-thru", f"|S11 + S21 - 1| ~ {series:.2g} where |S21 - S11 - 1| ~ {shunt:.2g}: it looks like series-thru"
    if shunt < 0.05 and shunt < 0.2 * series:
        return "shunt-thru", f"|S21 - S11 - 1| ~ {shunt:.2g} where |S11 + S21 - 1| ~ {series:.2g}: it looks like shunt-thru"
    return None, f" (this file: |S11 + S21 - 1| ~ {series:.2g}, |S21 - S11 - 1| ~ {shunt:.2g}, it fits neither closely: check the fixture)"


def conditioning_note(sweep: Sweep) -> str | None:
    """Return the one-line poor-conditioning warning for `sweep`, or None.

    Parameters
    ----------
    sweep : Sweep
        A sweep; only S-parameter sweeps can be poorly conditioned this way.
    """
    if sweep.s_param is None or sweep.connection not in NA_CONNECTIONS:
        return None
    return conditioning_warning(sweep.s_param, sweep.connection)
