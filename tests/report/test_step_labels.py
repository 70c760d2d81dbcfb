"""Step labels on the route diagrams do not cover each other (the P-T chart of the bundled extraction loop
showed 'hp-pump' over 'extraction-heater' and 'subcooler', 'condenser' and 'letdown-valve' on one spot)."""
import numpy as np
import plotly.graph_objects as go

from supercrit.report.figures import _GAP, _PLOT_H, _PLOT_W, _label_box, _place_labels


def _boxes(fig, x0, x1, y0, y1, ylog):
    """The label boxes as _place_labels estimates them, from the text traces it added."""
    out = []
    for tr in fig.data:
        if tr.mode != "text":
            continue
        x, y, pos = float(tr.x[0]), float(tr.y[0]), tr.textposition
        text = tr.text[0].strip("\u00a0")
        px = (x - x0) / (x1 - x0) * _PLOT_W
        py = ((np.log10(y) if ylog else y) - y0) / (y1 - y0) * _PLOT_H
        sx = 1 if "right" in pos else -1 if "left" in pos else 0
        sy = 1 if pos.startswith("top") else -1 if pos.startswith("bottom") else 0
        out.append(_label_box(px, py, text, sx, sy))
    return out


def test_labels_at_one_point_take_different_places_and_duplicates_are_written_once():
    fig = go.Figure(go.Scatter(x=[0.0, 100.0], y=[10.0, 1000.0], mode="lines"))
    labels = [(50.0, 100.0, name, "#000", "r1") for name in ("subcooler", "condenser", "letdown-valve")]
    labels += [(50.0, 100.0, "condenser", "#f00", "r2"),  # the same step of another route: once
               (90.0, 900.0, "extraction-heater", "#000", "r1")]
    _place_labels(fig, labels, ylog=True)
    texts = [tr.text[0].strip("\u00a0") for tr in fig.data if tr.mode == "text"]
    assert sorted(texts) == ["condenser", "extraction-heater", "letdown-valve", "subcooler"]
    boxes = _boxes(fig, 0.0, 100.0, 1.0, 3.0, True)
    for i, a in enumerate(boxes):
        for b in boxes[i + 1:]:
            # side by side, apart by the gap that keeps two labels on one line from reading as one
            assert not (a[0] < b[2] + _GAP and b[0] < a[2] + _GAP and a[1] < b[3] and b[1] < a[3])



def test_a_label_at_the_right_edge_is_put_on_the_left_of_its_point():
    fig = go.Figure(go.Scatter(x=[0.0, 100.0], y=[0.0, 100.0], mode="lines"))
    _place_labels(fig, [(100.0, 100.0, "recycle-compressor (stage 1)", "#000", "r")], ylog=False)
    assert [tr.textposition for tr in fig.data if tr.mode == "text"] == ["bottom left"]
