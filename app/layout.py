"""The page: a control column (composition, physics, map, layers, sharing and
export, tracks) beside the map, its readouts and the notes on the physics.

Built by functions, one per panel, so each panel's ids sit next to its
controls. Every control that belongs to the view is listed in
:data:`app.state.CONTROLS`.
"""

from __future__ import annotations

from dash import dash_table, dcc, html

from .. import physics as ph
from ..physics import burning, eos, impact, plane, regimes

from . import figures
from .callbacks.layers import NU_PROCESS_CATEGORIES
from .state import COLOR_CHOICES, DEFAULT_VIEW, MAP_QUANTITIES, UI_RESOLUTION, view_to_controls
from .callbacks.point import state_grid
from .view import ASINH_SCALES

#: One-line explanations of the physics options (shown on hover).
OPTION_HELP = {
    ("electrons", "fermi"): "Fermi–Dirac electrons of any degeneracy and relativity (needed in white dwarfs "
                            "and stellar cores).",
    ("electrons", "classical"): "Electrons as a classical ideal gas, P_e = n_e k T: wrong once η > 0.",
    ("ionization", "saha"): "Saha equilibrium for H and He with pressure ionization at high density; "
                            "metals fully ionized.",
    ("ionization", "saha-metals"): "Experimental: as Saha (H, He), and every metal (Li to Zn) ionizes by its own "
                                   "Saha stages, so the free electrons of a cool photosphere come from the metals. "
                                   "About three times slower; the metals' pressure-ionization bands break "
                                   "ρ²(∂E/∂ρ)_T = P − T(∂P/∂T)_ρ above ~0.1 g cm⁻³ (see About).",
    ("ionization", "full"): "Every atom fully ionized everywhere: wrong in cool envelopes and atmospheres.",
    ("ionization", "chemical"): "Experimental: one free energy minimised over H₂, H, H⁺ and every ionization "
                                "stage of every element, with pressure ionization from an excluded volume and "
                                "two coexisting phases where its isotherms loop. Slow (seconds to tens of "
                                "seconds per map); stiff in the pressure-ionization band (see About).",
    "coulomb": "Electrostatic (Coulomb) correction to pressure and energy from a one-component-plasma fit.",
    "pairs": "Electron–positron pairs created thermally above about 10⁹ K.",
}
OPTION_LABELS = {"fermi": "Fermi–Dirac", "classical": "classical", "saha": "Saha (H, He)",
                 "saha-metals": "Saha with metals (experimental)", "full": "full",
                 "chemical": "chemical picture (experimental, slow)"}


def _number(id_, value, step=0.01, min_=0.0, max_=1.0, label="", title=""):
    """A number field. No min, max or step in the browser: a value the browser finds out of range
    would reach the server as empty, so the callbacks check the range and say what is allowed."""
    del step, min_, max_
    return html.Label([html.Span(label, className="field-label"),
                       dcc.Input(id=id_, type="number", value=value, step="any",
                                 debounce=True, className="number-input")], className="field", title=title)


def _message(id_):
    return html.Div(id=id_, className="message", role="alert", **{"aria-live": "polite"})


def _slider_value(value):
    """The slider position for a number-box value (the box may hold anything; the slider only 0–1)."""
    try:
        x = float(value)
    except (TypeError, ValueError):
        return None
    return min(max(x, 0.0), 1.0) if x == x else None


def _fraction_row(key: str, value, title: str) -> html.Div:
    """A mass-fraction number box with a slider beside it. The box is the source of truth (it is in the
    view and the URL); the slider follows it, and moving the slider writes the box (see the clientside
    ``syncSliders`` in assets/thermoplane.js): while the hand moves the map is drawn coarse, on release
    at full resolution."""
    return html.Div([
        _number(f"comp-{key}", value, label=key, title=title),
        html.Div(dcc.Slider(id=f"comp-{key}-slider", min=0, max=1, step=0.005, value=_slider_value(value),
                            updatemode="mouseup", marks={0: "0", 0.5: "0.5", 1: "1"},
                            tooltip={"placement": "bottom"},          # the value under the hand while it moves
                            allow_direct_input=False, className="fraction-slider"),
                 className="slider-box", title=f"drag to change {key}"),
    ], className="field-row fraction-row")


def composition_panel(c: dict) -> html.Section:
    nuclides = [{"label": n, "value": n} for n in ph.NUCLIDES]
    return html.Section([
        html.H3("Composition"),
        html.P("Mass fractions of hydrogen (X), helium (Y) and metals (Z) add up to 1: tick "
               "“Z = 1 − X − Y” to let Z follow, or press “normalise”.", className="hint"),
        _fraction_row("X", c["X"], "hydrogen (H-1) mass fraction"),
        _fraction_row("Y", c["Y"], "helium (He-4) mass fraction"),
        _fraction_row("Z", c["Z"], "metal mass fraction"),
        dcc.Store(id="comp-drag", data={"drag": False}), dcc.Store(id="comp-drag-b", data={"drag": False}),
        dcc.Store(id="map-drawn"),
        html.Div([dcc.Checklist(id="comp-zauto", options=[{"label": " Z = 1 − X − Y", "value": "auto"}],
                                value=c["zauto"], inline=True, className="check"),
                  html.Button("normalise", id="comp-normalise", n_clicks=0, className="small",
                              title="rescale the fractions so that they add up to 1")],
                 className="field-row tight"),
        _message("comp-rule-message"),
        html.Label([html.Span("metal mixture", className="field-label"),
                    dcc.Dropdown(id="comp-metals", options=list(ph.METAL_MIXTURES), value=c["metals"],
                                 clearable=False, className="dropdown")],
                   className="field", title="how Z is shared among the metals (our own rounded mixtures)"),
        _message("comp-message"),
        html.Details([
            html.Summary("any mixture of nuclides"),
            dcc.Checklist(id="comp-mix-on", options=[{"label": " use this table instead of X, Y, Z", "value": "on"}],
                          value=c["mix_on"], className="check"),
            dash_table.DataTable(
                id="comp-mix-table", data=c["mix"], editable=True, row_deletable=True,
                columns=[{"name": "nuclide", "id": "nuclide", "presentation": "dropdown"},
                         {"name": "mass fraction", "id": "fraction", "type": "numeric"}],
                dropdown={"nuclide": {"options": nuclides, "clearable": False}},
                style_table={"overflowX": "visible"}, css=[{"selector": ".Select-menu-outer",
                                                             "rule": "display: block !important"}],
                style_cell={"fontFamily": "inherit", "fontSize": "0.95rem", "padding": "3px 6px"},
                style_header={"fontWeight": "600"}),
            html.Button("add a row", id="comp-mix-add", n_clicks=0, className="small"),
            _message("mix-message"),
        ], id="comp-mix", open=bool(c["mix"])),
        html.Div(id="comp-readout", className="readout", title="fully ionized mean molecular weights"),
    ], className="panel", id="panel-composition")


def _radio(id_, option, value):
    return dcc.RadioItems(
        id=id_, value=value, inline=True, className="radio",
        options=[{"label": html.Span(OPTION_LABELS[v], title=OPTION_HELP[(option, v)]), "value": v}
                 for v in eos.MAP_OPTIONS[option]])


def physics_panel(c: dict) -> html.Section:
    return html.Section([
        html.H3("Physics"),
        html.Div([html.Span("electrons", className="field-label", title="how the electron gas is treated"),
                  _radio("phys-electrons", "electrons", c["electrons"])], className="option-row"),
        html.Div([html.Span("ionization", className="field-label", title="how H and He ionization is treated"),
                  _radio("phys-ionization", "ionization", c["ionization"])], className="option-row"),
        dcc.Checklist(id="phys-effects", value=c["effects"], inline=True, className="check",
                      options=[{"label": html.Span(" Coulomb", title=OPTION_HELP["coulomb"]), "value": "coulomb"},
                               {"label": html.Span(" pairs", title=OPTION_HELP["pairs"]), "value": "pairs"}]),
        _message("phys-message"),
    ], className="panel", id="panel-physics")


def map_controls_panel(c: dict) -> html.Section:
    return html.Section([
        html.H3("Map"),
        html.Label([html.Span("shaded quantity", className="field-label"),
                    dcc.Dropdown(id="map-quantity", value=c["quantity"], clearable=False, className="dropdown",
                                 options=[{"label": q.label, "value": q.name} for q in MAP_QUANTITIES])],
                   className="field"),
        html.Label([html.Span("colour scale", className="field-label"),
                    dcc.Dropdown(id="map-colorscale", value=c["colorscale"], clearable=False, className="dropdown",
                                 options=[{"label": v[0], "value": k} for k, v in COLOR_CHOICES.items()])],
                   className="field", title="perceptually uniform sequential scales, or colour-blind-safe "
                                            "diverging scales centred on the quantity's natural centre"),
        html.Div([_number("map-rho-lo", c["rho_lo"], 0.5, *plane.LOG_RHO_LIMITS, label="log ρ from"),
                  _number("map-rho-hi", c["rho_hi"], 0.5, *plane.LOG_RHO_LIMITS, label="to")], className="field-row"),
        html.Div([_number("map-T-lo", c["T_lo"], 0.5, *plane.LOG_T_LIMITS, label="log T from"),
                  _number("map-T-hi", c["T_hi"], 0.5, *plane.LOG_T_LIMITS, label="to"),
                  _number("map-resolution", c["resolution"], 10, *UI_RESOLUTION, label="pixels",
                          title=f"pixels per side, {UI_RESOLUTION[0]}–{UI_RESOLUTION[1]}")], className="field-row"),
        _message("map-range-message"),
        _message("map-zoom-message"),
        _message("map-message"),
    ], className="panel", id="panel-map")


def layers_panel(c: dict) -> html.Section:
    return html.Section([
        html.H3("Lines on the map"),
        dcc.Checklist(id="map-layers", value=c["layers"], className="check column",
                      options=[{"label": " " + regimes.BOUNDARY_LABELS[k], "value": k}
                               for k in regimes.BOUNDARY_KEYS]),
        dcc.Checklist(id="map-overlays", value=c["overlays"], className="check column",
                      options=[{"label": " ignition contours", "value": "ignition"},
                               {"label": " central lines of stars (n = 3 polytropes)", "value": "mass_lines"},
                               {"label": " ignition curves ε_nuc = ε_ν (burning processes below)",
                                "value": "nu_ignition"},
                               {"label": " electron-capture thresholds (T = 0 electrons; nuclides ≥ 1 % by mass)",
                                "value": "captures"}]),
        html.Label([html.Span("burning processes", className="field-label"),
                    dcc.Dropdown(id="map-processes", value=c["processes"], multi=True, className="dropdown",
                                 options=[{"label": burning.PROCESS_LABELS[p], "value": p}
                                          for p in burning.PROCESSES])], className="field"),
        html.Label([html.Span("ε levels, erg g⁻¹ s⁻¹", className="field-label"),
                    dcc.Input(id="map-levels", type="text", value=c["levels"], debounce=True,
                              className="text-input")], className="field"),
        _message("map-levels-message"),
        html.Label([html.Span("stellar masses, M☉", className="field-label"),
                    dcc.Input(id="map-masses", type="text", value=c["masses"], debounce=True,
                              className="text-input")], className="field"),
        _message("map-masses-message"),
    ], className="panel", id="panel-layers")


def share_panel() -> html.Section:
    return html.Section([
        html.H3("Share and export"),
        html.P("This link restores the whole view:", className="hint"),
        html.Div([dcc.Input(id="share-link", type="text", readOnly=True, className="text-input"),
                  dcc.Clipboard(target_id="share-link", id="share-copy", title="copy link",
                                className="clip")], className="field-row tight"),
        _message("share-message"),
        html.Div([html.Button("PNG", id="export-png", n_clicks=0, title="image at 3× screen size"),
                  html.Button("SVG", id="export-svg", n_clicks=0, title="vector image"),
                  html.Button("HTML", id="export-html", n_clicks=0,
                              title="interactive figure in one file that opens offline"),
                  html.Button("CSV", id="export-csv", n_clicks=0, title="the shaded grid as a table")],
                 className="button-row"),
        dcc.Download(id="download-html"), dcc.Download(id="download-csv"),
        _message("export-message"),
    ], className="panel", id="panel-share")


def tracks_panel() -> html.Section:
    """Stellar tracks: upload, column mapping, list (see app.callbacks.tracks)."""
    from .callbacks.tracks import tracks_panel as panel
    return panel()


def tracks_results() -> html.Section:
    """The selected track's crossings, a plot along the tracks, the enriched CSV."""
    from .callbacks.tracks import tracks_results as results
    return results()


def about_physics() -> list:
    """The text of the "about the physics" panel (one place, easy to update)."""
    P = html.P
    return [
        P("What is computed. For the composition and options chosen, Thermoplane evaluates the equation of "
          "state of stellar matter at every pixel of the density–temperature plane: ideal ions, radiation "
          "(P = aT⁴/3), electrons and positrons as a Fermi–Dirac gas of any degeneracy and relativity "
          "(generalized Fermi–Dirac integrals; Cox & Giuli 1968, ch. 24; tabulated as one free energy after "
          "Timmes & Swesty 2000 so every derivative is consistent), Saha ionization of hydrogen and helium "
          "(ground states only, with their Planck–Larkin weight) with the electron chemical potential, a "
          "pressure-ionization rule of our own "
          "in the spirit of Hummer & Mihalas (1988) that ionizes them completely above about 10 g cm⁻³, and "
          "the dense-plasma terms of fully ionized matter: the ions as a Coulomb liquid (one-component-plasma "
          "fit of Potekhin & Chabrier 2000, Phys. Rev. E 62, 8554, with quantum corrections as T approaches "
          "the ion plasma temperature T_p, after Potekhin & Chabrier 2010) or as a bcc Coulomb crystal "
          "(Madelung energy, harmonic phonons with zero-point motion from the fit of Baiko, Potekhin & "
          "Yakovlev 2001, anharmonic terms), whichever has the lower free energy; electron screening of the "
          "ions; electron exchange and correlation. Mixtures by linear mixing. Where matter is not fully "
          "ionized these terms are scaled by the square of the ionized fraction (our own interim rule). "
          "Metals are taken as fully ionized. The derivatives give Γ₁, ∇_ad and the sound speed; c_V is "
          "split into ion, electron and radiation parts in the point readout."),
        P("The lines. P_rad = P_gas; electron degeneracy η = 0; relativistic electrons x_F = 1 "
          "(Chandrasekhar 1939); pair onset where positrons reach 1 % of the electrons; Coulomb coupling "
          "Γ = 1; melting, where the crystal's and the liquid's free energies are equal (Γ ≈ 175 in the "
          "classical limit); quantum ions below T = T_p; half "
          "ionization of H and of He⁺. Each is found from the full equation of state, so it bends where "
          "the physics does. Ignition contours are lines of constant energy generation from the rate fits "
          "in Kippenhahn, Weigert & Weiss (2012, Stellar Structure and Evolution, ch. 18; pp, CNO, triple "
          "alpha) and Caughlan & Fowler (1988; carbon), with weak screening (Salpeter 1954). The central "
          "lines of stars are n = 3 polytropes, P_c = 0.364 G M^(2/3) ρ_c^(4/3), solved with the full "
          "equation of state."),
        P("Neutrinos and captures. Neutrino losses ε_ν: pair, photo and plasma neutrinos from the fits of "
          "Itoh, Hayashi, Nishikawa & Kohyama (1996, ApJS 102, 411), valid for about 10⁷–10¹¹ K (pair from "
          "10⁸ K) and 1 ≤ ρ/μ_e ≤ 10¹⁴ g cm⁻³, extrapolated outside; electron–nucleus bremsstrahlung from the "
          "degenerate-electron formula of Kaminker et al. (1999, A&A 343, 1009) with Coulomb logarithm 1 (an "
          "upper estimate), counted only for relativistic degenerate electrons, so the bremsstrahlung region "
          "starts with a step at x_F = 1. No recombination or Urca neutrinos. The curves ε_nuc = ε_ν are drawn "
          "where ε_ν ≥ 10⁻² erg g⁻¹ s⁻¹. Electron-capture thresholds (A, Z) → (A, Z−1) of nuclides with at "
          "least 1 % of the mass: where the chemical potential of the T = 0 electron gas reaches "
          "Δ_atomic + m_e c² (AME2020 masses); no Coulomb lattice shift, no thermal tail, first capture only."),
        P("Where it fails. No molecules and, by default, no neutral metals (below about 10⁴ K at low density "
          "the results are approximate; metal-rich mixtures such as C/O show P ≤ 0, grey, below ~2×10⁵ K from "
          "~10⁻⁷ to ~25 g cm⁻³, their metals taken as fully ionized: use \"Saha with metals\" (experimental: "
          "~3 times slower, and above ~0.1 g cm⁻³ the metals' pressure-ionization bands break the density "
          "identity) or the chemical picture there); no neutronization in the equation of state (only its "
          "thresholds are drawn) and "
          "no nuclear statistical equilibrium; the "
          "Coulomb and pressure-ionization treatments are approximate near ρ ~ 1–10 g cm⁻³ at low T (inside "
          "the pressure-ionization band the thermodynamic identities hold only approximately); the Coulomb "
          "lowering of ionization potentials is not modelled (the Planck–Larkin weight, not it, ionizes hot "
          "dense hydrogen); "
          "the Coulomb term can exceed the ideal pressure with full ionization or classical electrons at low "
          "T; screening is weak screening only, so burning rates in dense, cool plasma are underestimated. "
          "Dense plasma: linear mixing (no mixing corrections, no phase separation of mixtures); the quantum "
          "liquid borrows the harmonic lattice's quantum correction and its classical excess is faded or frozen "
          "as T → 0 by our own interpolation (no quantum melting: for hydrogen-rich matter the crystal and "
          "the quantum liquid are nearly equal there); "
          "the ion c_V readout includes electron screening, slightly negative in degenerate matter; "
          "electron screening is our Thomas–Fermi ion-sphere interpolation, exchange-correlation our "
          "interpolation between exact limits (see the README); in the Saha option the pressure-ionization "
          "rule is a free energy at fixed density whose pressure is left out (so P rises through the band), "
          "and at the band's dense end heating recombines H (∇_ad dips just below 0 near 2.4 g cm⁻³, "
          "1–2.5×10⁴ K). "
          "The lines on the map are read off the map's own pixels (refine the resolution for finer lines)."),
        P("Being built: one free energy for partly ionized, pressure-ionized and molecular matter (H₂, every "
          "ionization stage of every element, the Coulomb term of each ion, an excluded volume whose derivative "
          "is the occupation probability), with every quantity from one minimum. It is offered under "
          "Physics as \"chemical picture\" and from Python and the command line as ionization=\"chemical\" "
          "(experimental: stiff in the pressure-ionization "
          "band, where it returns two coexisting phases across the van der Waals loops of its isotherms, "
          "and leaves some points without a root (shown grey); a map takes seconds to tens of seconds, and "
          "the first one of a composition builds its two-phase lines; electron exchange-correlation is in, "
          "but no crystal, quantum ions or screening yet). With it the map can shade the fraction of H in H₂ "
          "and the share of free electrons from metals, and draws the H₂ half-dissociation line and the edges of the two-phase "
          "regions; see the README."),
        P("Results are for exploration and checks. For a publication, compare against a full tabulated "
          "equation of state.", className="strong"),
    ]


def about_panel() -> html.Details:
    return html.Details([html.Summary("About the physics"), html.Div(about_physics(), id="about-text")],
                        className="panel about", id="panel-about")


def point_panel() -> html.Section:
    return html.Section([
        html.Div([html.H3("Point", className="inline"),
                  dcc.RadioItems(id="point-units", value="cgs", inline=True, className="radio",
                                 options=[{"label": " cgs", "value": "cgs"}, {"label": " SI", "value": "si"}]),
                  html.Span("copy as", className="field-label"),
                  dcc.Clipboard(target_id="point-json", id="point-copy-json", className="clip",
                                title="copy the pinned state as JSON"),
                  html.Span("JSON", className="clip-label"),
                  dcc.Clipboard(target_id="point-csv", id="point-copy-csv", className="clip",
                                title="copy the pinned state as CSV"),
                  html.Span("CSV", className="clip-label")], className="point-bar"),
        html.Div("Click the map to pin a point.", id="point-heading", className="readout"),
        _message("point-message"),
        html.Div(state_grid(), id="point-table"),
        html.Details([html.Summary("as text"),
                      dcc.Textarea(id="point-json", readOnly=True, className="copy-text"),
                      dcc.Textarea(id="point-csv", readOnly=True, className="copy-text")]),
    ], className="panel", id="panel-point")


#: The spinner over the map shows only for an answer slower than this (a full map; the coarse previews while a
#: slider moves come sooner, and a spinner popping up and down with each would cost the browser a redraw).
LOADING_DELAY_MS = 700


def map_area() -> html.Div:
    return html.Div([
        dcc.Loading(dcc.Graph(id="plane-graph", config=figures.graph_config(), className="plane-graph",
                              style={"height": "72vh", "minHeight": "480px"}),
                    type="circle", delay_show=LOADING_DELAY_MS, id="plane-loading"),
        dcc.Store(id="map-shape"),            # fingerprint of the figure shown (see app.delta)
        html.Div("Hover over the map to read a point.", id="hover-readout", className="readout hover-line"),
        tracks_results(),
        point_panel(),
        about_panel(),
    ], className="main")


def _labels() -> dict:
    return {"regimes": [r.label for r in regimes.REGIMES],
            "quantities": {q.name: q.label for q in MAP_QUANTITIES},
            "categories": {"nu_process": [label for label, _ in NU_PROCESS_CATEGORIES]},
            # shadings drawn on a signed-log scale: the hover readout turns the colour value back
            "asinh": {name: unit for name, unit in ASINH_SCALES.items()},
            "impact_categories": impact.category_labels()}


def build_layout():
    """Called per page load, so every visitor starts from the defaults (no server state);
    the URL callback then applies the link's view."""
    c = view_to_controls(DEFAULT_VIEW)
    return html.Div([
        dcc.Location(id="url", refresh=False),
        dcc.Store(id="view-store"), dcc.Store(id="presentation-store", data=c["presentation"]),
        dcc.Store(id="labels-store", data=_labels()),
        html.Header([html.H1("Thermoplane"),
                     html.Span("the density–temperature plane of stellar matter", className="tagline"),
                     html.Span(className="spacer"),
                     html.Button("reset view", id="reset-view", n_clicks=0, title="back to the default view"),
                     html.Button("Presentation mode", id="presentation-toggle", n_clicks=0,
                                 title="large type, thick lines, controls folded away")],
                    className="topbar"),
        html.Div([
            html.Aside([composition_panel(c), physics_panel(c), map_controls_panel(c), layers_panel(c),
                        share_panel(), tracks_panel()], className="controls", id="controls"),
            map_area(),
        ], className="body"),
    ], className="page", id="page")
