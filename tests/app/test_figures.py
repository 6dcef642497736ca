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


# -- issue 14: clutter -------------------------------------------------------------------
def test_each_burning_process_has_its_own_line_style():
    from thermoplane.physics.burning import PROCESSES
    styles = {figures.LINE_STYLES[figures.ignition_style(p)] for p in PROCESSES}
    assert len(styles) == len(PROCESSES)
    assert len({c for c, _ in styles}) == len(PROCESSES) and len({d for _, d in styles}) == len(PROCESSES)


def test_track_palette_is_never_a_line_colour():
    from thermoplane.app import tracks as tk

    def rgb(h):
        h = h.lstrip("#")
        return np.array([int(h[i:i + 2], 16) for i in (0, 2, 4)], float)

    lines = [rgb(c) for c, _ in figures.LINE_STYLES.values()]
    for colour in tk.TRACK_COLOURS:
        # far from every line colour (Euclidean RGB distance; our threshold, no source)
        assert min(np.linalg.norm(rgb(colour) - c) for c in lines) > 90, colour


def test_labels_keep_clear_of_track_ends():
    line = figures.Line("equality", "P_rad = P_gas", np.linspace(-10, 10, 201), np.linspace(3, 10, 201))
    free = figures.place_labels([line], (-10, 10), (3, 10), 13)[0]
    blocked = figures.place_labels([line], (-10, 10), (3, 10), 13, avoid=[free])[0]
    assert blocked != free
    assert abs(blocked[0] - free[0]) > 1.0              # moved along the line, off the end marker


def test_presentation_mode_enlarges_tracks():
    d = {"x": [1.0, 2.0], "y": [7.0, 7.5], "row": np.array([0, 1]), "age": None, "regime": ["a", "b"],
         "beta": [0.9, 0.8], "eta": [-1.0, 0.5],
         "crossings": [{"label": "electron degeneracy (η = 0)", "short": "η = 0", "row": 0, "row_after": 1,
                        "log_rho": 1.5, "log_T": 7.2, "age": None, "X": 0.7, "Y": 0.28, "Z": 0.02,
                        "composition": "track"}]}
    small = figures.track_traces("t", "track", "#E6007E", d)
    big = figures.track_traces("t", "track", "#E6007E", d, presentation=True)
    assert big[1].line.width > 1.5 * small[1].line.width
    assert big[-1].textfont.size > small[-1].textfont.size
    assert list(small[-1].text) == ["η = 0"] and "track's own" in small[-1].customdata[0][3]


def _validated(fig):
    """The figure rebuilt by plotly's validators (raises ValueError on a property plotly.js does not know)."""
    import plotly.graph_objects as go
    return go.Figure(fig.to_plotly_json())


def test_figures_are_valid_plotly_although_built_unvalidated():
    x, y, z = _plane(12)
    codes = np.zeros((12, 12), dtype=np.int8)
    line = [figures.Line("equality", "eq", x, 0.3 * x + 7)]
    for fig in (figures.plane_figure(x, y, z, z_label="z", lines=line, colorscale="PuOr_r", z_range=(-1, 1),
                                     colorbar_ticks=([0.0], ["0"]), colorbar_note="clipped", customdata=codes,
                                     unphysical=z > 15),
                figures.plane_figure(x, y, codes, z_label="r", categorical=[("a", "#000000"), ("b", "#ffffff")],
                                     lines=line, presentation=True, title="t"),
                figures.plane_figure(x, y, z, z_label="z", colorscale="Magma", hover_value=False)):
        checked = _validated(fig)
        heat = next(t for t in fig.data if t.type == "heatmap")
        # the colour scale goes as the list plotly.js draws (it knows few of plotly's names, none with _r)
        assert isinstance(heat.colorscale, (list, tuple)) and len(checked.data[0].to_plotly_json()) > 0
    import plotly.colors as pc
    fig = figures.plane_figure(x, y, z, z_label="z", colorscale="PuOr_r")
    assert [list(p) for p in fig.data[0].colorscale] == [list(p) for p in pc.get_colorscale("PuOr_r")]
    assert fig.data[0].z.dtype == np.float32
