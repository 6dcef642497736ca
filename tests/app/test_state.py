"""The view and its URL: round trip, and robustness against any query string."""

from __future__ import annotations

from hypothesis import given, settings
from hypothesis import strategies as st

from thermoplane.app.state import (DEFAULT_VIEW, controls_to_view, decode_view, encode_view, parse_number_list,
                       view_to_controls)

import pytest

CHANGED = {**DEFAULT_VIEW, "X": 0.5, "Y": 0.45, "Z": 0.05, "zauto": True, "metals": "CNO only",
           "mix": (("He-4", 0.9), ("C-12", 0.1)), "mix_on": True, "electrons": "classical",
           "ionization": "full", "coulomb": False, "pairs": False, "log_rho": (-2.5, 7.25),
           "log_T": (4.0, 9.5), "resolution": 150, "quantity": "eta", "colorscale": "cividis",
           "layers": ("equality", "coupling"), "ignition": False, "processes": ("cno",),
           "levels": "10, 1e5", "masses": "0.5, 2", "mass_lines": False, "presentation": True}


def test_default_view_is_the_empty_query():
    assert encode_view(DEFAULT_VIEW) == ""
    assert decode_view("") == (DEFAULT_VIEW, [])


def test_round_trip_restores_every_entry():
    query = encode_view(CHANGED)
    view, messages = decode_view(query)
    assert messages == []
    assert view == CHANGED


def test_controls_round_trip():
    assert controls_to_view(**view_to_controls(CHANGED)) == CHANGED


def test_no_layers_survive_the_round_trip():
    view = {**DEFAULT_VIEW, "layers": (), "processes": ()}
    assert decode_view(encode_view(view))[0] == view


@pytest.mark.parametrize("query, key", [
    ("?X=abc", "X"), ("?X=2", "X"), ("?X=nan", "X"), ("?resolution=5", "resolution"),
    ("?resolution=1e3", "resolution"), ("?log_rho=5,1", "log_rho"), ("?log_T=1,2,3", "log_T"),
    ("?log_T=0,20", "log_T"), ("?quantity=speed", "quantity"), ("?layers=equality,bogus", "layers"),
    ("?mix=Xx-9=1", "mix"), ("?electrons=quantum", "electrons"), ("?pairs=maybe", "pairs"),
    ("?levels=1,-3", "levels"), ("?masses=a", "masses"), ("?colorscale=rainbow", "colorscale"),
])
def test_bad_values_fall_back_with_a_message(query, key):
    view, messages = decode_view(query)
    assert view[key] == DEFAULT_VIEW[key]
    assert len(messages) == 1 and key in messages[0]


def test_unknown_key_is_reported_and_others_kept():
    view, messages = decode_view("?foo=1&X=0.6")
    assert view["X"] == 0.6
    assert messages and "foo" in messages[0]


def test_number_list():
    assert parse_number_list("0.1, 1 10;1e3", "masses") == (0.1, 1.0, 10.0, 1000.0)
    with pytest.raises(ValueError, match="'x'"):
        parse_number_list("1, x", "masses")
    with pytest.raises(ValueError, match="> 0"):
        parse_number_list("0", "masses")


@settings(max_examples=300, deadline=None)
@given(st.text(max_size=300))
def test_any_text_decodes_without_raising(text):
    view, messages = decode_view(text)
    assert set(view) == set(DEFAULT_VIEW)
    assert isinstance(messages, list)


keys = st.sampled_from(sorted(DEFAULT_VIEW) + ["zz", ""])


@settings(max_examples=300, deadline=None)
@given(st.lists(st.tuples(keys, st.text(max_size=40)), max_size=8))
def test_any_query_of_known_keys_decodes_without_raising(pairs):
    from urllib.parse import urlencode
    view, _ = decode_view("?" + urlencode(pairs))
    assert set(view) == set(DEFAULT_VIEW)
    # what was accepted encodes and decodes to itself
    assert decode_view(encode_view(view))[0] == view


def test_non_text_input():
    assert decode_view(None) == (DEFAULT_VIEW, [])
    assert decode_view(12)[0] == DEFAULT_VIEW
