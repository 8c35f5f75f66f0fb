"""A matplotlib figure as PNG or SVG bytes (reproducible: no dates, seeded SVG
ids), and written to a file atomically.
"""

from __future__ import annotations

from ._plot_style import apply_layout, pyplot

__all__ = ["figure_bytes", "save_figure"]


def figure_bytes(fig, fmt: str, *, salt: str = "zfit") -> bytes:
    """Return the figure encoded as PNG or SVG.

    Parameters
    ----------
    fig : matplotlib.figure.Figure
        The figure.
    fmt : {'png', 'svg'}
        Output format.
    salt : str
        Seed of the SVG element ids, so that several figures inlined in one
        HTML page have distinct ids and the output is reproducible.
    """
    import io

    import matplotlib

    buf = io.BytesIO()
    apply_layout(fig)  # the figure may have been resized since it was drawn
    with matplotlib.rc_context({"svg.hashsalt": salt, "svg.fonttype": "none"}):
        fig.savefig(buf, format=fmt, metadata={"Date": None} if fmt == "svg" else {"Software": None})
    return buf.getvalue()


def save_figure(fig, path, *, force: bool = False):
    """Write the figure as PNG or SVG by the file's extension, atomically.

    Parameters
    ----------
    fig : matplotlib.figure.Figure
        The figure (closed after writing).
    path : str or os.PathLike
        Output file ending in ``.png`` or ``.svg``.
    force : bool
        Whether an existing file may be replaced.

    Returns
    -------
    pathlib.Path
        The path written.
    """
    from pathlib import Path

    from .._atomic import write_atomic
    from .._errors import ZfitInputError

    path = Path(path)
    fmt = path.suffix.lower().lstrip(".")
    if fmt not in ("png", "svg"):
        raise ZfitInputError("plot file must end in .png or .svg", path=path)
    try:
        return write_atomic(path, figure_bytes(fig, fmt, salt=path.stem), force)
    finally:
        pyplot().close(fig)
