"""Callbacks as plain functions: parse -> physics -> figures, no browser."""

from __future__ import annotations

import json

import numpy as np
import plotly
import pytest
from dash import no_update

from thermoplane import physics as ph
from thermoplane.app.callbacks import composition, export, layers, point, share
from thermoplane.app.callbacks import map as map_cb
from thermoplane.app.state import DEFAULT_VIEW, encode_view, view_to_controls
from thermoplane.physics import eos, plane

# The textbook physics keeps these tests quick; the full physics goes through the same code.
FAST = {"electrons": "classical", "ionization": "full", "coulomb": False, "pairs": False}
VIEW = {**DEFAULT_VIEW, **FAST, "resolution": 60, "masses": "1", "processes": ("pp",)}


def controls(**changes):
    """Control values for VIEW with changes: view entries first, then control-only entries."""
    view = {**VIEW, **{k: v for k, v in changes.items() if k in DEFAULT_VIEW}}
    return {**view_to_controls(view), **{k: v for k, v in changes.items() if k not in DEFAULT_VIEW}}


def heatmap(fig):
    return next(t for t in fig.data if t.type == "heatmap")


def metas(fig):
    return {t.meta for t in fig.data if t.meta}


def test_default_view_draws_the_map_with_its_lines():
    out = map_cb.update_map(**controls())
    fig = out["figure"]
    assert heatmap(fig).z.shape == (60, 60)
    assert {"equality", "degeneracy", "ignition_pp_1", "mass_1"} <= metas(fig)
    labels = {a.text for a in fig.layout.annotations}
    assert "1 M☉" in labels and "P_rad = P_gas" in labels
    assert out["readout"].startswith("μ = 0.62")
    assert all(out[m] == "" for m in map_cb.MESSAGES)
    assert out["view"]["query"] == encode_view(VIEW)


def test_regime_map_has_a_legend_and_int8_codes():
    fig = map_cb.update_map(**controls(quantity="regime"))["figure"]
    legend = [t.name for t in fig.data if t.showlegend]
    assert legend == [r.label for r in ph.regimes.REGIMES] if hasattr(ph, "regimes") else legend
    assert heatmap(fig).customdata.dtype == np.int8


def test_sum_off_keeps_the_last_map_and_says_why():
    out = map_cb.update_map(**controls(X=0.0))
    assert out["figure"] is no_update and out["view"] is no_update
    assert "must be 1" in out["comp-message"]


def test_z_follows_x_and_y_when_auto():
    out = map_cb.update_map(**controls(X=0.5, Y=0.3, Z=None, zauto=True))
    assert out["comp-message"] == ""
    comp = ph.Composition.from_xyz(0.5, 0.3, 0.2)
    assert out["readout"] == composition.readout(comp)


def test_nuclide_table_overrides_xyz():
    out = map_cb.update_map(**controls(mix=(("He-4", 0.98), ("C-12", 0.02)), mix_on=True))
    comp = ph.Composition({"He-4": 0.98, "C-12": 0.02})
    assert out["readout"] == composition.readout(comp)
    # an unfinished table reports next to itself
    bad = map_cb.update_map(**controls(mix=(("He-4", 0.5), ("", 0.2)), mix_on=True))
    assert bad["figure"] is no_update and "row 2" in bad["mix-message"]
    off = map_cb.update_map(**controls(mix=(("He-4", 0.5),), mix_on=False))
    assert off["mix-message"] == "" and off["figure"] is not no_update


@pytest.mark.parametrize("change, where", [
    (dict(rho_lo=5, rho_hi=1), "map-range-message"),
    (dict(T_lo=None), "map-range-message"),
    (dict(resolution=5), "map-range-message"),
    (dict(X="abc"), "comp-message"),
    (dict(electrons="quantum"), "phys-message"),
])
def test_errors_show_next_to_the_control(change, where):
    out = map_cb.update_map(**controls(**change))
    assert out["figure"] is no_update
    assert out[where] != ""


def test_bad_list_drops_only_that_layer():
    out = map_cb.update_map(**controls(levels="1, lots"))
    assert "'lots'" in out["map-levels-message"]
    assert out["figure"] is not no_update and not any(m.startswith("ignition") for m in metas(out["figure"]))
    out = map_cb.update_map(**controls(masses="-1"))
    assert out["map-masses-message"] and "mass_1" not in metas(out["figure"])


def test_unexpected_error_gives_a_generic_message(monkeypatch):
    def boom(*a, **k):
        raise RuntimeError("internal detail")
    monkeypatch.setattr(plane, "plane_grid", boom)
    out = map_cb.update_map(**controls(resolution=70))
    assert out["map-message"] == map_cb.GENERIC_ERROR and "internal" not in json.dumps(
        {k: v for k, v in out.items() if isinstance(v, str)})


def test_quantity_colour_and_layers_cost_no_physics(monkeypatch):
    map_cb.update_map(**controls())                       # fill the caches
    calls = []
    real = eos.evaluate
    monkeypatch.setattr(eos, "evaluate", lambda *a, **k: calls.append(1) or real(*a, **k))
    before = plane.evaluation_count()
    for change in (dict(quantity="eta"), dict(quantity="gamma1", colorscale="magma"),
                   dict(layers=("equality",)), dict(overlays=[]), dict(overlays=["ignition"]),
                   dict(presentation=True)):
        out = map_cb.update_map(**controls(**change))
        assert out["figure"] is not no_update
    assert plane.evaluation_count() == before
    assert calls == []


def test_a_composition_change_costs_one_plane_evaluation():
    plane.clear_cache()                          # another test may have drawn this composition already
    before = plane.evaluation_count()
    map_cb.update_map(**controls(X=0.6, Y=0.38))
    assert plane.evaluation_count() == before + 1
    # and the map callback's answer (figure, lines, Patch) evaluates nothing more
    map_cb.map_answer(None, None, ["comp-X.value"], **controls(X=0.6, Y=0.38))
    assert plane.evaluation_count() == before + 1


def _middle_at(h) -> float:
    """Where the diverging scale's middle colour sits, as a value of the colour axis."""
    scale = [tuple(c) for c in h.colorscale]
    middle = scale[len(scale) // 2]
    return h.zmin + middle[0] * (h.zmax - h.zmin)


def test_eta_on_a_signed_log_scale_centred_on_zero_with_clipped_ends():
    fig = map_cb.update_map(**controls(quantity="eta", colorscale="auto"))["figure"]
    h = heatmap(fig)
    z = np.asarray(h.z, dtype=float)
    # asinh scale: the drawn values are asinh(eta); eta runs to ~1e8 on the default plane (asinh ~ 19)
    assert np.nanmax(z) < 25 and abs(_middle_at(h)) < 1e-9
    assert h.zmin < 0 < h.zmax and h.zmax - h.zmin < 30
    texts = list(h.colorbar.ticktext)
    assert "0" in texts and texts[-1].startswith("≥ ") and "signed-log" in h.colorbar.title.text


def test_gamma1_range_is_robust_to_a_spike_and_says_it_is_clipped():
    full = dict(electrons="fermi", ionization="saha", coulomb=True, pairs=True)
    fig = map_cb.update_map(**controls(quantity="gamma1", colorscale="auto", **full))["figure"]
    h = heatmap(fig)
    z = np.asarray(h.z, dtype=float)
    assert h.zmid is None
    lo, hi = np.nanpercentile(z, [1, 99])
    assert h.zmin == pytest.approx(lo, rel=1e-5) and h.zmax == pytest.approx(hi, rel=1e-5)
    assert "clipped" in h.colorbar.title.text and any(t.startswith(("≥", "≤")) for t in h.colorbar.ticktext)


def test_a_colour_bar_end_at_rounding_distance_from_zero_reads_zero():
    # a log10 fraction whose top 1 % is -1e-11 (the H2 fraction of fully molecular gas): the end says
    # "≥ 0", not "≥ -9.513e-12"; an end away from zero keeps its value
    z = np.concatenate([np.linspace(-6.0, -1e-11, 990), np.zeros(10)])
    _, lo, hi, vals, texts, clipped = map_cb._colour_range(z, None, None, None)
    assert clipped[1] and texts[-1] == "≥ 0"
    assert texts[0] == "≤ " + map_cb._fmt_tick(lo) and lo < -5.0


def test_burning_map_states_its_floor():
    h = heatmap(map_cb.update_map(**controls(quantity="eps_pp"))["figure"])
    assert "blank below 10^-30 erg/g/s" in h.colorbar.title.text


def test_no_physical_value_is_grey_with_a_legend_entry():
    out = map_cb.update_map(**controls(quantity="regime", ionization="full", coulomb=True))
    fig = out["figure"]
    (grey,) = [t for t in fig.data if t.meta == "unphysical"]
    mask = np.isfinite(np.asarray(grey.z, dtype=float))
    assert mask.any() and "P ≤ 0" in grey.hovertemplate
    # the grey layer holds only the rows and columns with such pixels (one more each side), in place
    heat = heatmap(fig)
    j0, i0 = int(np.searchsorted(heat.x, grey.x[0])), int(np.searchsorted(heat.y, grey.y[0]))
    assert np.array_equal(heat.x[j0:j0 + len(grey.x)], grey.x) and np.array_equal(heat.y[i0:i0 + len(grey.y)], grey.y)
    comp = ph.Composition.from_xyz(VIEW["X"], VIEW["Y"], VIEW["Z"], metals=VIEW["metals"])
    opts = eos.validate_options(electrons=VIEW["electrons"], ionization="full", coulomb=True, pairs=VIEW["pairs"])
    n = VIEW["resolution"]
    grid = plane.plane_grid(comp, VIEW["log_rho"], VIEW["log_T"], n, n, **opts)
    bad = ~np.isfinite(np.asarray(grid.get("log_P"), dtype=float))
    full = np.zeros_like(bad)
    full[i0:i0 + len(grey.y), j0:j0 + len(grey.x)] = mask
    assert np.array_equal(full, bad)
    assert any(t.name == map_cb.UNPHYSICAL_LABEL and t.showlegend for t in fig.data)
    # the default physics has a physical value everywhere: no grey region
    assert not [t for t in map_cb.update_map(**controls())["figure"].data if t.meta == "unphysical"]


def test_impact_maps_signed_log_percent_and_categories():
    from thermoplane.physics import impact
    names = [q.name for q in impact.impact_quantities()]
    assert "impact_coulomb_P" in names and "impact_electrons_classical_gamma1" in names and names[-1] == "impact_which"
    out = map_cb.update_map(**controls(quantity="impact_coulomb_P", resolution=60))
    assert out["map-message"] == ""
    h = heatmap(out["figure"])
    assert "signed-log" in h.colorbar.title.text and "%" in h.colorbar.title.text
    # the other fields of the same ingredient reuse the cached planes: no new evaluation
    before = plane.evaluation_count()
    map_cb.update_map(**controls(quantity="impact_coulomb_nabla_ad", resolution=60))
    assert plane.evaluation_count() == before
    fig = map_cb.update_map(**controls(quantity="impact_which", resolution=60))["figure"]
    legend = {t.name for t in fig.data if t.showlegend}
    assert {"Coulomb", "Fermi–Dirac vs classical electrons"} <= legend


def test_payload_at_300_pixels_is_small():
    out = map_cb.update_map(**controls(resolution=300, masses="0.1, 1, 10", processes=("pp", "triple_alpha")))
    size = len(json.dumps(out["figure"].to_plotly_json(), cls=plotly.utils.PlotlyJSONEncoder))
    assert size < 1.5e6                                   # the limit
    assert heatmap(out["figure"]).z.dtype == np.float32


def test_map_figure_for_the_command_line():
    fig = map_cb.map_figure(ph.Composition.from_xyz(0.7, 0.28, 0.02), {**VIEW})
    assert heatmap(fig).z.shape == (60, 60)


def test_extra_traces_are_drawn_on_top():
    import plotly.graph_objects as go
    extra = go.Scatter(x=[0, 1], y=[5, 6], meta="track")
    fig = map_cb.map_figure(ph.Composition.from_xyz(0.7, 0.28, 0.02), {**VIEW}, extra_traces=[extra])
    assert fig.data[-1].meta == "track"


# -- composition rules ------------------------------------------------------------

def test_auto_z_and_normalise():
    x, y, z, disabled, rows, msg = composition.apply_rules("comp-X", 0.6, 0.3, 0.5, ["auto"], None)
    assert z == pytest.approx(0.1) and disabled is True
    x, y, z, disabled, rows, msg = composition.apply_rules("comp-normalise", 0.7, 0.7, 0.6, [], None)
    assert (x, y, z) == pytest.approx((0.35, 0.35, 0.3)) and disabled is False
    *_, rows, msg = composition.apply_rules("comp-normalise", 1, 1, 1, [],
                                            [{"nuclide": "He-4", "fraction": 3}, {"nuclide": "C-12", "fraction": 1}])
    assert [r["fraction"] for r in rows] == [0.75, 0.25]
    *_, msg = composition.apply_rules("comp-normalise", 0, 0, 0, [], None)
    assert "0" in msg


def test_add_row():
    assert composition.add_mix_row(None) == [{"nuclide": None, "fraction": None}]


# -- point readout ------------------------------------------------------------------

NEUTRINO_ROWS = {"eps_nu", "eps_nu_pair", "eps_nu_photo", "eps_nu_plasma", "eps_nu_bremsstrahlung"}


def store(**changes):
    return map_cb.update_map(**controls(**changes))["view"]


def test_pin_gives_every_field_with_units_and_si_conversion():
    click = {"points": [{"x": 2.0, "y": 6.0}]}
    heading, table, js, csv_text, msg = point.pin_point(click, "cgs", store())
    data = json.loads(js)
    assert msg == "" and set(data["state"]) == set(ph.FIELD_UNITS) | NEUTRINO_ROWS
    assert data["units"]["P"] == "dyn cm^-2"
    assert data["state"]["rho"] == pytest.approx(100.0)
    _, _, js_si, csv_si, _ = point.pin_point(click, "si", store())
    si = json.loads(js_si)
    # 1 dyn cm^-2 = 0.1 Pa; 1 g cm^-3 = 1000 kg m^-3 (definitions of the units)
    assert si["state"]["P"] == pytest.approx(0.1 * data["state"]["P"])
    assert si["state"]["rho"] == pytest.approx(1e5) and si["units"]["rho"] == "kg m^-3"
    assert csv_si.splitlines()[0] == "quantity,value,unit,meaning"
    assert len(csv_si.splitlines()) == 1 + len(ph.FIELD_UNITS) + len(NEUTRINO_ROWS)


def test_every_unit_has_an_si_conversion():
    assert set(ph.FIELD_UNITS.values()) <= set(point.SI)


def test_no_click_yet():
    heading, table, *_ = point.pin_point(None, "cgs", None)
    assert table == [] and "Click" in heading


def test_pinned_point_heading_follows_the_units():
    click = {"points": [{"x": 2.0, "y": 6.0}]}
    heading, *_ = point.pin_point(click, "si", store())
    text = heading[0]                        # the heading line; then a line break and the c_V split
    assert "ρ = 1e+05 kg m⁻³" in text and "g cm⁻³;" in text       # log rho stays in g cm^-3, said so
    heading, *_ = point.pin_point(click, "cgs", store())
    assert "ρ = 100 g cm⁻³" in heading[0] and heading[2].startswith("c_V = ")


def test_pinned_point_without_physical_value_is_warned():
    click = {"points": [{"x": 4.0, "y": 3.5}]}
    view = store(ionization="full", coulomb=True)
    heading, rows, js, _, msg = point.pin_point(click, "cgs", view)
    P = json.loads(js)["state"]["P"]
    assert P < 0 and msg.startswith("No physical value here: P = ") and "not physical" in msg
    assert point.pin_point(click, "cgs", store())[4] == ""


# -- sharing ------------------------------------------------------------------------

def test_apply_url_reset_and_presentation():
    values, msg = share.apply_url(None, encode_view(VIEW), False)
    assert values == view_to_controls(VIEW) and msg == ""
    values, msg = share.apply_url(None, "?X=oops", False)
    assert values["X"] == DEFAULT_VIEW["X"] and "X" in msg
    values, _ = share.apply_url("reset-view", "?X=0.5", True)
    assert values == view_to_controls({**DEFAULT_VIEW, "presentation": True})
    values, _ = share.apply_url("presentation-toggle", "", False)
    assert values["presentation"] is True and values["X"] is no_update


# -- export -------------------------------------------------------------------------

def test_html_export_is_standalone():
    data, msg = export.html_export(1, store())
    assert msg == "" and data["filename"].endswith(".html")
    assert "<script src=\"http" not in data["content"] and "Plotly" in data["content"]
    assert len(data["content"]) > 1e6                  # plotly.js inlined


def test_csv_export_columns_and_safety():
    data, msg = export.csv_export(1, store(quantity="eta"))
    lines = data["content"].splitlines()
    assert lines[1] == "log_rho,log_T,eta,regime"
    assert len(lines) == 2 + 60 * 60
    first = lines[2].split(",")
    assert float(first[0]) == pytest.approx(-10.0) and float(first[1]) == pytest.approx(3.0)
    assert first[2].startswith("-") or first[2][0].isdigit()   # numbers untouched, minus sign kept


def test_spreadsheet_safe():
    assert export.spreadsheet_safe("=SUM(A1)") == "'=SUM(A1)"
    assert export.spreadsheet_safe("@x") == "'@x" and export.spreadsheet_safe("-1+1") == "'-1+1"
    assert export.spreadsheet_safe(-1.5) == -1.5 and export.spreadsheet_safe("ideal_gas") == "ideal_gas"


def test_lines_are_read_off_the_cached_plane_without_physics(monkeypatch):
    from thermoplane.physics import eos, plane
    comp = ph.Composition.from_xyz(0.7, 0.28, 0.02)
    grid = plane.plane_grid(comp, (-10, 10), (3, 10), 60, 60, electrons="classical", ionization="full",
                            coulomb=False, pairs=False)
    monkeypatch.setattr(eos, "evaluate", lambda *a, **k: pytest.fail("lines must not call the EOS"))
    opts = dict(electrons="classical", ionization="full", coulomb=False, pairs=False)
    keys = {line.key for line in layers.boundary_lines(grid, comp, opts, {"equality", "degeneracy"})}
    assert keys == {"equality", "degeneracy"}
    assert layers.mass_lines(grid, [1.0]) and layers.ignition_lines(grid, ["pp"], [1.0])


def test_pin_shows_neutrino_losses_and_their_parts():
    click = {"points": [{"x": 6.0, "y": 8.5}]}
    comp = map_cb.parse_view(map_cb.view_from_store(store()))[0]
    _, _, js, _, msg = point.pin_point(click, "cgs", store())
    data = json.loads(js)
    parts = ph.neutrinos.epsilon_parts(1e6, 10**8.5, comp)
    assert msg == "" and data["units"]["eps_nu"] == "erg g^-1 s^-1"
    assert data["state"]["eps_nu"] == pytest.approx(float(parts["total"]), rel=1e-12)
    assert data["state"]["eps_nu_plasma"] == pytest.approx(float(parts["plasma"]), rel=1e-12)
    total = sum(data["state"][f"eps_nu_{p}"] for p in ph.neutrinos.PROCESSES)
    assert data["state"]["eps_nu"] == pytest.approx(total, rel=1e-12)
    _, _, js_si, _, _ = point.pin_point(click, "si", store())
    si = json.loads(js_si)
    # 1 erg g^-1 s^-1 = 1e-7 J / 1e-3 kg / s = 1e-4 W kg^-1 (definitions of the units)
    assert si["units"]["eps_nu"] == "W kg^-1"
    assert si["state"]["eps_nu"] == pytest.approx(1e-4 * data["state"]["eps_nu"])


def test_neutrino_shadings_and_lines_on_the_map():
    out = map_cb.update_map(**controls(quantity="log_eps_nu", processes=("carbon",),
                                       mix_on=True, mix=(("C-12", 0.5), ("O-16", 0.3), ("Ne-20", 0.15),
                                                         ("Mg-24", 0.05))))
    fig = out["figure"]
    assert out["map-message"] == ""
    z = np.asarray(heatmap(fig).z, dtype=float)
    assert np.nanmax(z) > 10 and np.isfinite(z).mean() > 0.5
    labels = {a.text for a in fig.layout.annotations}
    assert {"carbon ignition (ε_nuc = ε_ν)", "e⁻ capture on ²⁴Mg", "e⁻ capture on ²⁰Ne"} <= labels
    assert {"nu_ignition_carbon", "capture_Mg-24", "capture_Ne-20"} <= metas(fig)
    # switched off: gone
    off = map_cb.update_map(**controls(quantity="nu_process", processes=("carbon",), nu_ignition=False,
                                       captures=False, mix_on=True, mix=(("C-12", 0.5), ("O-16", 0.5))))
    fig = off["figure"]
    assert not {m for m in metas(fig) if m.startswith(("nu_ignition", "capture"))}
    # the categorical map: a legend entry per process, codes 0..3
    names = [t.name for t in fig.data if t.type == "scatter" and t.showlegend]
    assert names == [label for label, _ in layers.NU_PROCESS_CATEGORIES]
    codes = np.asarray(heatmap(fig).z, dtype=float)
    assert set(np.unique(codes[np.isfinite(codes)])) <= {0.0, 1.0, 2.0, 3.0}


def test_grid_csv_names_the_dominant_neutrino_process():
    grid = plane.plane_grid(ph.Composition({"C-12": 1.0}), n_rho=20, n_T=20, **FAST)
    rows = export.grid_csv(grid, "nu_process", "dominant neutrino process").splitlines()[2:]
    values = {r.split(",")[2] for r in rows}
    assert values <= {"pair", "photo", "plasma", "bremsstrahlung", ""} and "pair" in values


# -- sliders and progressive drawing ----------------------------------------------------------------------

def test_preview_only_while_a_slider_is_held_and_only_for_the_boxes_it_writes():
    held, free = {"drag": True, "key": "X"}, {"drag": False}
    assert map_cb.is_preview(held, ["comp-X.value", "comp-drag.data"])
    assert map_cb.is_preview(held, ["comp-Z.value"])               # Z following X by the sum rule
    assert not map_cb.is_preview(free, ["comp-drag.data"])         # the hand let go: full resolution
    assert not map_cb.is_preview(held, ["comp-X.value", "map-quantity.value"])
    assert not map_cb.is_preview(None, ["comp-X.value"])
    assert not map_cb.is_preview(held, [])


def test_preview_draws_coarse_and_leaves_the_view_alone():
    c = controls(resolution=300)
    out = map_cb.update_map(preview=True, **c)
    assert heatmap(out["figure"]).z.shape == (map_cb.PREVIEW_RESOLUTION, map_cb.PREVIEW_RESOLUTION)
    assert out["view"] is no_update                                 # URL and readouts wait for the full map
    assert out["readout"].startswith("μ = ")
    low = map_cb.update_map(preview=True, **controls(resolution=60))   # below the preview size: as chosen
    assert heatmap(low["figure"]).z.shape == (60, 60)
    full = map_cb.update_map(**c)
    assert heatmap(full["figure"]).z.shape == (300, 300)
    assert full["view"]["view"]["resolution"] == 300


def test_second_preview_callback_answers_only_while_the_hand_holds_a_slider():
    # the page keeps one preview in flight on the map callback and one on this one (assets/thermoplane.js)
    c = controls(resolution=300, zauto=True)
    idle = map_cb.preview_answer({"drag": False, "key": "X"}, None, **c)
    assert set(idle) == set(map_cb.PREVIEW_OUTPUTS) and all(v is no_update for v in idle.values())
    assert all(v is no_update for v in map_cb.preview_answer("junk", None, **c).values())
    held = map_cb.preview_answer({"drag": True, "key": "X", "value": 0.5}, None, **c)
    assert "view" not in held                                       # the view waits for the full map
    assert held["readout"].startswith("μ = ")
    fig = held["figure"]                                            # a whole figure: nothing shown yet
    z = next(t for t in fig["data"] if t["type"] == "heatmap")["z"]
    assert z["shape"] == f"{map_cb.PREVIEW_RESOLUTION}, {map_cb.PREVIEW_RESOLUTION}"


def test_preview_keeps_the_sum_rule_message():
    out = map_cb.update_map(preview=True, **controls(X=0.3, zauto=False))
    assert out["figure"] is no_update
    assert "the sum must be 1" in out["comp-message"]


def test_no_preview_for_the_chemical_picture_the_map_waits_for_the_hand():
    held = {"drag": True, "key": "X", "value": 0.5}
    out = map_cb.map_answer(held, None, ["comp-drag.data"], **controls(ionization="chemical", resolution=40))
    assert out["figure"] is no_update and out["view"] is no_update
    assert out["phys-message"] == map_cb.NO_PREVIEW
    # the default physics does preview (a coarse figure, a Patch or a whole one)
    out = map_cb.map_answer(held, None, ["comp-drag.data"], **controls(resolution=40, zauto=True))
    assert out["figure"] is not no_update


def test_sliders_sit_beside_the_boxes():
    from thermoplane.app.layout import build_layout
    from thermoplane.app.layout import _slider_value
    text = str(build_layout())
    for k in "XYZ":
        assert f"comp-{k}-slider" in text
    assert _slider_value(0.7) == 0.7 and _slider_value("x") is None and _slider_value(1.5) == 1.0


# -- zoom and pan ------------------------------------------------------------------------------------------

def test_zoom_writes_the_range_boxes():
    out = map_cb.zoom_ranges({"xaxis.range[0]": -2.123456, "xaxis.range[1]": 3.5,
                              "yaxis.range[0]": 5.25, "yaxis.range[1]": 7.0})
    assert out == (-2.1235, 3.5, 5.25, 7.0, "")
    pan = map_cb.zoom_ranges({"xaxis.range": [1.0, 4.0]})           # a pan along ρ only
    assert pan[:2] == (1.0, 4.0) and pan[2] is no_update and pan[3] is no_update


def test_zoom_beyond_the_limits_is_clamped_with_a_message():
    lo, hi = plane.LOG_RHO_LIMITS
    out = map_cb.zoom_ranges({"xaxis.range[0]": lo - 3, "xaxis.range[1]": lo + 2})
    assert out[:2] == (lo, lo + 2)
    assert f"must be between {lo:g} and {hi:g}" in out[4]


def test_autorange_and_other_relayouts_change_nothing():
    for event in ({"xaxis.autorange": True, "yaxis.autorange": True}, {"autosize": True}, None,
                  {"dragmode": "pan"}):
        out = map_cb.zoom_ranges(event)
        assert all(v is no_update for v in out[:4])
    bad = map_cb.zoom_ranges({"xaxis.range[0]": "abc", "xaxis.range[1]": 2})
    assert all(v is no_update for v in bad[:4]) and "not a number" in bad[4]


def test_zoomed_ranges_recompute_the_plane():
    out = map_cb.update_map(**controls(rho_lo=-2.0, rho_hi=3.5, T_lo=5.25, T_hi=7.0))
    hm = heatmap(out["figure"])
    assert hm.z.shape == (60, 60)
    assert min(hm.x) == pytest.approx(-2.0) and max(hm.x) == pytest.approx(3.5)
    assert min(hm.y) == pytest.approx(5.25) and max(hm.y) == pytest.approx(7.0)
    assert encode_view({**VIEW, "log_rho": (-2.0, 3.5), "log_T": (5.25, 7.0)}) == out["view"]["query"]


@pytest.mark.parametrize("change", [{}, {"quantity": "regime"}, {"quantity": "eta"}, {"quantity": "gamma1"},
                                    {"quantity": "nu_process"}, {"quantity": "impact_which", "resolution": 30},
                                    {"presentation": True}, {"colorscale": "magma"}])
def test_map_figures_pass_plotly_validation(change):
    """The map figure is built without plotly's validators (for speed); here they check it."""
    import plotly.graph_objects as go
    out = map_cb.update_map(**controls(**change))
    assert out["figure"] is not no_update, out
    go.Figure(out["figure"].to_plotly_json())            # raises ValueError on anything plotly.js does not know


def test_saha_with_metals_is_offered_and_its_map_shows_the_metals_electrons():
    # the experimental option is a radio of the physics panel, and its map of the metals' share of the free
    # electrons differs from the default's where metals are not fully ionized (a cool photosphere)
    from thermoplane.app.layout import build_layout
    assert "Saha with metals (experimental)" in str(build_layout())
    q = "metal_electron_fraction"
    base = heatmap(map_cb.update_map(**controls(quantity=q, resolution=40))["figure"])
    out = map_cb.update_map(**controls(quantity=q, resolution=40, ionization="saha-metals"))
    assert out["phys-message"] == ""
    metal = heatmap(out["figure"])
    a, b = np.asarray(base.z, float), np.asarray(metal.z, float)
    assert a.shape == b.shape
    assert np.nanmax(np.abs(a - b)) > 0.1
