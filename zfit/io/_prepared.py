"""The sweep as identification sees it: read, port-extended, compensated."""

from __future__ import annotations

from .._errors import ZfitInputError
from .._units import bounded, parse_quantity

__all__ = ["prepared_sweep", "READING_OPTION_RANGES"]

#: Where each reading option is meaningful (SI, inclusive), common practice:
#: a relative noise of at most 100 %; a noise floor of at most 1 Gohm on a
#: table (and at most 1 on S, `S_FLOOR_MAX`); a one-way port extension of at most 100 ns
#: (20 m of cable, where a test fixture is a few centimetres, 100 ps); a
#: line loss of at most 100 dB at 1 GHz; a load standard of 1 mohm .. 1 Gohm.
READING_OPTION_RANGES = {
    "--noise-rel": (0.0, 1.0, ""),
    "--noise-floor": (0.0, 1e9, ""),
    "--port-delay": (-1e-7, 1e-7, "s"),
    "--port-loss": (0.0, 100.0, "dB"),
    "--load-value": (1e-3, 1e9, "ohm"),
}

#: The noise floor on S is a linear |S|, which is at most 1.
S_FLOOR_MAX = 1.0


def _option(value, name: str, hi: float | None = None) -> float | None:
    """The SI value of a reading option (text in engineering notation, or a number), within its range."""
    if value is None:
        return None
    lo, top, unit = READING_OPTION_RANGES[name]
    return bounded(parse_quantity(value, name), name, lo, top if hi is None else hi, unit)


def prepared_sweep(
    path,
    connection: str | None = None,
    noise_rel: float | None = None,
    noise_floor: float | None = None,
    columns: str | None = None,
    open_=None,
    short=None,
    load=None,
    load_value=None,
    port_delay=None,
    port_loss: float | None = None,
):
    """Return the sweep of a file as prepared for identification.

    Reads the file, applies the port extension, then fixture compensation:
    the order a bench engineer applies them in.  The command line's reading
    options map one to one onto the parameters.

    Parameters
    ----------
    path : str or os.PathLike
        The sweep file.
    connection : {'reflection', 'shunt-thru', 'series-thru'}, optional
        How the analyser saw the part (needed for .s2p files).
    noise_rel, noise_floor : str or float, optional
        Override of the format's default noise model (`default_noise`);
        text in engineering notation (``1m``) is read, and every value is
        checked against `READING_OPTION_RANGES`.
    columns : str, optional
        Column mapping of a table (the ``--columns`` syntax).
    open_, short, load : str or os.PathLike, optional
        Fixture-compensation measurements.
    load_value : str or float, optional
        Impedance of the load standard in ohm (engineering notation allowed).
    port_delay : str or float, optional
        One-way delay of the line to remove from a reflection measurement, s.
    port_loss : str or float, optional
        One-way loss of that line in dB at 1 GHz.

    Returns
    -------
    Sweep
    """
    from ..data._connection import InstrumentNoise
    from ._sweep_file import read_sweep

    from ._sweep_file import sweep_kind

    noise_rel = _option(noise_rel, "--noise-rel")
    if noise_floor is not None:
        noise_floor = _option(noise_floor, "--noise-floor", S_FLOOR_MAX if sweep_kind(path) == "touchstone" else None)
    port_delay, port_loss = _option(port_delay, "--port-delay"), _option(port_loss, "--port-loss")
    load_value = _option(load_value, "--load-value")
    noise = None
    if noise_rel is not None or noise_floor is not None:
        from ._sweep_file import default_noise

        base = default_noise(path)
        noise = InstrumentNoise(
            base.rel if noise_rel is None else noise_rel,
            base.floor if noise_floor is None else noise_floor,
        )
    sweep = read_sweep(path, connection=connection, noise=noise, columns=columns)
    if port_delay is not None:
        from ..data._fixture import port_extended

        sweep = port_extended(sweep, port_delay, loss=port_loss)
    elif port_loss is not None:
        raise ZfitInputError("--port-loss goes with --port-delay (the loss of the line being removed)", path)
    if load_value is not None and load is None:
        raise ZfitInputError("--load-value goes with --load (the measurement of that load standard)", path)
    if open_ is not None or short is not None or load is not None:
        from ._standards import compensate_from_files

        sweep = compensate_from_files(
            sweep,
            open_path=open_,
            short_path=short,
            load_path=load,
            load_ohm=load_value,
            connection=connection,
        )
    return sweep
