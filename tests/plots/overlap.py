"""Measure the text of a drawn figure: the boxes of every tick label, axis label, title, legend and annotation."""

from __future__ import annotations

from matplotlib.backends.backend_agg import FigureCanvasAgg


def _axes_texts(ax, renderer):
    (x0, x1), (y0, y1) = sorted(ax.get_xlim()), sorted(ax.get_ylim())
    items = [(t.get_text(), t) for t in ax.get_yticklabels(which="both")
             if t.get_text() and t.get_visible() and y0 <= t.get_position()[1] <= y1]
    items += [(t.get_text(), t) for t in ax.get_xticklabels(which="both")
              if t.get_text() and t.get_visible() and x0 <= t.get_position()[0] <= x1]
    items += [(t.get_text(), t) for t in (ax.xaxis.label, ax.yaxis.label, ax.title, *ax.texts)
              if t.get_text() and t.get_visible()]
    boxes = [(text, artist.get_window_extent(renderer)) for text, artist in items]
    legend = ax.get_legend()
    if legend is not None:
        boxes.append(("legend", legend.get_window_extent(renderer)))
    for child in ax.child_axes:  # secondary axes (e.g. the Torr cm scale of the Paschen plot)
        boxes += _axes_texts(child, renderer)
    return boxes


def overlaps(figure) -> list[tuple[str, str]]:
    """Pairs of texts of ``figure`` whose drawn boxes intersect (a legend counts as one box; the legend's own
    texts and the ticks inside one axis are compared with everything else)."""
    renderer = FigureCanvasAgg(figure).get_renderer()
    figure.draw(renderer)
    boxes = [box for ax in figure.axes if ax not in {c for a in figure.axes for c in a.child_axes}
             for box in _axes_texts(ax, renderer)]
    if figure.get_suptitle():
        boxes.append((figure.get_suptitle(), figure._suptitle.get_window_extent(renderer)))
    found = []
    for i in range(len(boxes)):
        for j in range(i + 1, len(boxes)):
            (a, box_a), (b, box_b) = boxes[i], boxes[j]
            if box_a.overlaps(box_b) and box_a.width > 0 and box_b.width > 0:
                found.append((a, b))
    return found
