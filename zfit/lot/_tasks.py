"""The work of one part and what it produced: plain records that pickle to a worker."""

from __future__ import annotations

from dataclasses import dataclass, field
from pathlib import Path

from ._part_summary import PartSummary

__all__ = ["ReadOptions", "PartTask", "PartOutcome", "PLOT_EXTRAS"]

#: The figures of ``zfit identify --plot`` beyond the first, as file-name suffixes
#: (``<part>-q.png`` of an inductor, ``<part>-esr-d.png`` of a capacitor).
PLOT_EXTRAS = ("q", "esr-d")


@dataclass(frozen=True)
class ReadOptions:
    """How to read each sweep (the shared reading options of the CLI).

    Attributes
    ----------
    connection : str or None
        ``reflection``, ``shunt-thru`` or ``series-thru`` (needed for .s2p).
    noise_rel, noise_floor : float or None
        Override of the instrument noise model.
    columns : str or None
        Column mapping of a table.
    open_, short, load : str or None
        Fixture-compensation measurements.
    load_value : str or None
        Impedance of the load standard.
    port_delay : str or None
        Port extension delay.
    port_loss : float or None
        Loss of the port-extension line, dB at 1 GHz.
    """

    connection: str | None = None
    noise_rel: str | float | None = None
    noise_floor: str | float | None = None
    columns: str | None = None
    open_: str | None = None
    short: str | None = None
    load: str | None = None
    load_value: str | None = None
    port_delay: str | None = None
    port_loss: str | float | None = None


@dataclass(frozen=True)
class PartTask:
    """The work of one part, self-contained so that it pickles to a worker.

    Attributes
    ----------
    index : int
        Position in the sorted lot.
    path : str
        Absolute path of the sweep file.
    name : str
        The file as shown in the summary.
    json_path : str
        Where its identify JSON goes.
    plot_path : str or None
        Where its plot goes, or None.
    model : str
        ``auto``, ``inductor``, ``capacitor`` or ``rational``.
    at : tuple of float
        Spot frequencies (Hz) to read out.
    read : ReadOptions
        How to read the sweep.
    core : CoreSpec or None
        The lot's cores (the limits file's ``[core]``): the material figures
        (``mu_i``, ...) are added to the part's summary.
    core_at : tuple of float
        Frequencies of the core's loss factor to add.
    bead : bool
        Add the bead's ``f_RX`` to the summary.
    """

    index: int
    path: str
    name: str
    json_path: str
    plot_path: str | None
    model: str = "auto"
    at: tuple = ()
    read: ReadOptions = field(default_factory=ReadOptions)
    core: object = None
    core_at: tuple = ()
    bead: bool = False

    def output_paths(self) -> tuple:
        """Return every file the part may write: its JSON, and its plots when asked."""
        paths = [self.json_path]
        if self.plot_path is not None:
            p = Path(self.plot_path)
            paths += [self.plot_path, *(str(p.with_name(f"{p.stem}-{x}{p.suffix}")) for x in PLOT_EXTRAS)]
        return tuple(paths)


@dataclass(frozen=True)
class PartOutcome:
    """What the work of one part produced.

    Attributes
    ----------
    index : int
    name : str
    result : PartSummary or None
        The figures of the identified part (its full result is in its JSON
        file), None on error.
    error : str or None
        One line saying what went wrong.
    warnings : tuple of str
        Measurement warnings raised while reading and identifying.
    skipped : bool
        Whether an up-to-date result was reused.
    seconds : float
        Time spent on the part.
    written : tuple of (str, str)
        The files written and the SHA-256 of their bytes.
    """

    index: int
    name: str
    result: PartSummary | None
    error: str | None = None
    warnings: tuple = ()
    skipped: bool = False
    seconds: float = 0.0
    written: tuple = ()
