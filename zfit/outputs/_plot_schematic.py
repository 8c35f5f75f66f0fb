"""The drawing of an equivalent circuit: a series/parallel tree of R, L and C
drawn as a schematic with each element labelled by its value (`plot_schematic`).
"""

from __future__ import annotations

from ._plot_style import INK, pyplot, styled

__all__ = ["plot_schematic"]


_EL_W, _EL_H, _GAP = 1.0, 0.44, 0.2


def _size(node):
    kind = node[0]
    if kind in ("R", "L", "C"):
        return _EL_W, _EL_H
    sizes = [_size(c) for c in node[1]]
    if kind == "series":
        return sum(w for w, _ in sizes), max(h for _, h in sizes)
    # parallel: leads of _GAP on each side
    return max(w for w, _ in sizes) + 2 * _GAP, sum(h for _, h in sizes) + _GAP * (len(sizes) - 1)


def _draw_element(ax, kind, label, x0, y, w):
    """Draw one symbol centred on the wire at height y, from x0 to x0 + w."""
    import matplotlib.patches as mp

    body = min(0.5 * w, 0.5 * _EL_W)
    xa, xb = x0 + (w - body) / 2, x0 + (w + body) / 2
    ax.plot([x0, xa], [y, y], color=INK, lw=1.0)
    ax.plot([xb, x0 + w], [y, y], color=INK, lw=1.0)
    if kind == "R":
        ax.add_patch(mp.Rectangle((xa, y - 0.07), body, 0.14, fill=False, ec=INK, lw=1.0))
    elif kind == "L":
        n = 4
        r = body / (2 * n)
        for k in range(n):
            ax.add_patch(mp.Arc((xa + r * (2 * k + 1), y), 2 * r, 2 * r, theta1=0, theta2=180, ec=INK, lw=1.0))
    else:
        gap = 0.06
        xm = x0 + w / 2
        ax.plot([xa, xm - gap / 2], [y, y], color=INK, lw=1.0)
        ax.plot([xm + gap / 2, xb], [y, y], color=INK, lw=1.0)
        for xp in (xm - gap / 2, xm + gap / 2):
            ax.plot([xp, xp], [y - 0.12, y + 0.12], color=INK, lw=1.4)
    t = ax.text(x0 + w / 2, y + 0.13, label, ha="center", va="bottom", fontsize=6.0, color=INK)
    t.set_gid(f"element-{label.split('=')[0].strip()}")
    t.zfit_room = w  # the width the label may take, for _fit_labels


def _draw(ax, node, x0, y, width):
    """Draw `node` with its wire entering at (x0, y) and leaving at (x0 + width, y)."""
    kind = node[0]
    if kind in ("R", "L", "C"):
        _draw_element(ax, kind, node[1], x0, y, width)
        return
    w, h = _size(node)
    if kind == "series":
        scale = width / w
        x = x0
        for child in node[1]:
            cw = _size(child)[0] * scale
            _draw(ax, child, x, y, cw)
            x += cw
        return
    # Parallel: branches stacked downwards from the entry height.
    inner = width - 2 * _GAP
    ytop = y
    ys = []
    for child in node[1]:
        ch = _size(child)[1]
        ys.append(ytop)
        _draw(ax, child, x0 + _GAP, ytop, inner)
        ytop -= ch + _GAP
    ax.plot([x0, x0 + _GAP], [y, y], color=INK, lw=1.0)
    ax.plot([x0 + width - _GAP, x0 + width], [y, y], color=INK, lw=1.0)
    for xr in (x0 + _GAP, x0 + width - _GAP):
        ax.plot([xr, xr], [ys[0], ys[-1]], color=INK, lw=1.0)
        ax.plot([xr] * len(ys), ys, ls="none", marker="o", ms=2.2, color=INK)


@styled
def _fit_labels(fig, ax) -> None:
    """Shrink element labels wider than their element, so that neighbours never overlap."""
    renderer = fig.canvas.get_renderer()
    x_lo, x_hi = ax.get_xlim()
    per_pixel = (x_hi - x_lo) / max(ax.bbox.width, 1e-9)
    labels = [t for t in ax.texts if getattr(t, "zfit_room", None) is not None]
    if not labels:
        return
    # One size for every label (the one the widest needs), for an even drawing.
    scale = min(1.0, *(0.94 * t.zfit_room / max(t.get_window_extent(renderer).width * per_pixel, 1e-12)
                       for t in labels))
    if scale < 1.0:
        for t in labels:
            t.set_fontsize(max(3.5, t.get_fontsize() * scale))


def plot_schematic(tree, *, title: str = "", width_in: float = 3.4, height_in: float | None = None):
    """Return a drawing of a series-parallel R-L-C network with its element values.

    Parameters
    ----------
    tree : tuple
        The network: ``("R" | "L" | "C", label)`` for an element,
        ``("series", [nodes])`` or ``("parallel", [nodes])`` for a
        combination; drawn between the terminals a (left) and b (right).
    title : str
        Figure title.
    width_in : float
        Figure width in inches.
    height_in : float, optional
        Figure height; by default from the drawing's aspect.

    Returns
    -------
    matplotlib.figure.Figure
        Each element's label is a text artist with gid ``element-<name>``
        (the label's text before ``=``).
    """
    plt = pyplot()
    w, h = _size(tree)
    total_w = w + 0.6
    top, bottom = 0.42, -(h - _EL_H / 2) - 0.14
    if height_in is None:
        height_in = max(0.55, width_in * (top - bottom) / (total_w + 0.1))
    fig = plt.figure(figsize=(width_in, height_in))
    ax = fig.add_axes((0.0, 0.0, 1.0, 1.0))
    ax.set_axis_off()
    y0 = 0.0
    ax.plot([-0.3, 0.0], [y0, y0], color=INK, lw=1.0)
    ax.plot([w, w + 0.3], [y0, y0], color=INK, lw=1.0)
    ax.plot([-0.3, w + 0.3], [y0, y0], ls="none", marker="o", ms=4, mfc="white", mec=INK, mew=1.0, zorder=5)
    ax.text(-0.3, y0 - 0.12, "a", ha="center", va="top", fontsize=7.5)
    ax.text(w + 0.3, y0 - 0.12, "b", ha="center", va="top", fontsize=7.5)
    _draw(ax, tree, 0.0, y0, w)
    # Limits in the figure's own aspect, so that symbols keep their shape.
    ax.set_xlim(-0.35, w + 0.35)
    ax.set_ylim(y0 + top - (w + 0.7) * height_in / width_in, y0 + top)
    _fit_labels(fig, ax)
    if title:
        ax.set_title(title, loc="left", parse_math=False)  # the user's file name: plain text
    return fig
