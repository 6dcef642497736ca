"""Figure builders as pure functions."""

from __future__ import annotations

import numpy as np

from thermoplane.app import figures


def _plane(n=40):
    x = np.linspace(-10, 10, n)
    y = np.linspace(3, 10, n)
    return x, y, np.add.outer(y, x)


def test_heatmap_is_float32_and_lines_are_labelled_on_the_plot():
    x, y, z = _plane()
    lines = [figures.Line("equality", "P_rad = P_gas", x, 0.3 * x + 7),
             figures.Line("degeneracy", "electron degeneracy", x, 0.6 * x + 5)]
    fig = figures.plane_figure(x, y, z, z_label="z", lines=lines)
    assert fig.data[0].z.dtype == np.float32
    assert [a.text for a in fig.layout.annotations] == ["P_rad = P_gas", "electron degeneracy"]
    assert fig.data[0].zmid == 0.0


def test_labels_of_coincident_lines_do_not_overlap():
    x, y, z = _plane()
    lines = [figures.Line(f"l{i}", f"a label of line {i}", x, 0.3 * x + 6.5 + 0.01 * i) for i in range(3)]
    spots = figures.place_labels(lines, (-10, 10), (3, 10), 13)
    boxes = [figures._label_box((sx + 10) / 20, (sy - 3) / 7, l.label, 13) for (sx, sy), l in zip(spots, lines)]
    for i in range(3):
        for j in range(i):
            assert figures._overlap(boxes[i], boxes[j]) == 0


def test_line_outside_the_view_gets_no_label():
    x, y, z = _plane()
    fig = figures.plane_figure(x, y, z, z_label="z", lines=[figures.Line("pairs", "far", x, x * 0 + 50)])
    assert len(fig.layout.annotations) == 0


def test_categorical_has_legend_and_no_colour_bar():
    x, y, _ = _plane(10)
    codes = np.zeros((10, 10), dtype=np.int8)
    fig = figures.plane_figure(x, y, codes, z_label="r", categorical=[("a", "#000000"), ("b", "#ffffff")],
                               customdata=codes)
    assert [t.name for t in fig.data if t.showlegend] == ["a", "b"]
    heat = next(t for t in fig.data if t.type == "heatmap")
    assert heat.showscale is False and heat.customdata.dtype == np.int8


def test_presentation_mode_has_larger_type_and_thicker_lines():
    x, y, z = _plane()
    line = [figures.Line("equality", "eq", x, 0.3 * x + 7)]
    normal = figures.plane_figure(x, y, z, z_label="z", lines=line)
    big = figures.plane_figure(x, y, z, z_label="z", lines=line, presentation=True)
    assert big.layout.font.size > normal.layout.font.size
    assert big.data[1].line.width > normal.data[1].line.width


def test_graph_config_saves_images_at_three_times_screen_size():
    assert figures.graph_config()["toImageButtonOptions"]["scale"] == 3
