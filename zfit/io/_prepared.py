"""The sweep as identification sees it: read, port-extended, compensated."""

from __future__ import annotations

from .._errors import ZfitInputError
from .._units import parse_quantity

__all__ = ["prepared_sweep"]


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
    noise_rel, noise_floor : float, optional
        Override of the format's default noise model (`default_noise`).
    columns : str, optional
        Column mapping of a table (the ``--columns`` syntax).
    open_, short, load : str or os.PathLike, optional
        Fixture-compensation measurements.
    load_value : str or float, optional
        Impedance of the load standard in ohm (engineering notation allowed).
    port_delay : str or float, optional
        One-way delay of the line to remove from a reflection measurement, s.
    port_loss : float, optional
        One-way loss of that line in dB at 1 GHz.

    Returns
    -------
    Sweep
    """
    from ..data._connection import InstrumentNoise
    from ._sweep_file import read_sweep

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

        sweep = port_extended(sweep, parse_quantity(port_delay, "--port-delay"), loss=port_loss)
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
            load_ohm=None if load_value is None else parse_quantity(load_value, "--load-value"),
            connection=connection,
        )
    return sweep
