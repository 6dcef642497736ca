"""Tests for app/upload.py: reading, column detection and validation of track tables."""

import gzip
import math
from pathlib import Path

import numpy as np
import pandas as pd
import pytest
from hypothesis import HealthCheck, given, settings
from hypothesis import strategies as st

from thermoplane.app.upload import (MAX_BYTES, MAX_ROWS, ColumnMapping, LayoutError, TableError, TrackData,
                                    apply_mapping, preview_lines,
                        detect_columns, read_table, to_numbers)

EXAMPLES = Path(__file__).resolve().parents[2] / "assets" / "examples"

CSV = b"model,age,log_rho,log_T\n1,0.0,1.5,7.1\n2,1.0e6,1.6,7.2\n3,2.0e6,1.7,7.3\n"
EXPECTED = pd.DataFrame({"model": [1.0, 2.0, 3.0], "age": [0.0, 1e6, 2e6],
                         "log_rho": [1.5, 1.6, 1.7], "log_T": [7.1, 7.2, 7.3]})


def _same(df):
    pd.testing.assert_frame_equal(df.reset_index(drop=True), EXPECTED, check_dtype=False)


# --------------------------------------------------------------------------- formats
def test_constants():
    # the limits the brief asks for (common practice, no source)
    assert MAX_BYTES == 25 * 1024 * 1024
    assert MAX_ROWS == 2_000_000


@pytest.mark.parametrize("sep", [",", "\t", ";", " ", "   ", " \t "])
def test_delimiters(sep):
    data = CSV.replace(b",", sep.encode())
    _same(read_table(data, "t.txt"))


def test_whitespace_with_alignment_and_trailing_space():
    data = b"  model    age   log_rho  log_T  \n     1    0.0    1.5    7.1\n  2  1.0e6  1.6  7.2   \n3 2.0e6 1.7 7.3\n"
    _same(read_table(data, "t.dat"))


def test_comments_anywhere_and_blank_lines():
    data = (b"# made up\n#another\n\nmodel,age,log_rho,log_T\n1,0.0,1.5,7.1\n  # inside\n\n"
            b"2,1.0e6,1.6,7.2\n# before last\n3,2.0e6,1.7,7.3\n# trailer\n")
    df = read_table(data, "t.csv")
    _same(df)
    assert list(df.attrs["source_lines"]) == [5, 8, 10]


def test_header_in_last_comment_line():
    data = b"# made up\n# model age log_rho log_T\n1 0.0 1.5 7.1\n2 1.0e6 1.6 7.2\n3 2.0e6 1.7 7.3\n"
    _same(read_table(data, "t.txt"))


def test_bom_and_crlf():
    data = b"\xef\xbb\xbf" + CSV.replace(b"\n", b"\r\n")
    df = read_table(data, "t.csv")
    assert list(df.columns) == ["model", "age", "log_rho", "log_T"]
    _same(df)


def test_utf16_with_bom():
    _same(read_table(CSV.decode().encode("utf-16"), "t.csv"))


@pytest.mark.parametrize("name", ["t.csv.gz", "t.csv", "noext"])
def test_gzip_detected_by_magic(name):
    _same(read_table(gzip.compress(CSV), name))


def test_gzip_multi_member():
    lines = CSV.split(b"\n", 2)
    data = gzip.compress(lines[0] + b"\n" + lines[1] + b"\n") + gzip.compress(lines[2])
    _same(read_table(data, "t.gz"))


def test_fortran_and_signed_numbers():
    data = (b"a b c d\n1.5D+00 +1.6d0 .17D1 1.0-100\n-2.5E-01 +3 1.0d-3 7\n")
    df = read_table(data, "f.txt")
    assert df["a"].tolist() == [1.5, -0.25]
    assert df["b"].tolist() == [1.6, 3.0]
    assert df["c"].tolist() == pytest.approx([1.7, 1e-3])
    assert df["d"].iloc[0] == pytest.approx(1e-100)   # Fortran drops the E for 3-digit exponents


def test_decimal_comma_in_semicolon_file():
    df = read_table(b"log_rho;log_T\n1,5;7,25\n-0,5;6,0\n", "eu.csv")
    assert df["log_rho"].tolist() == [1.5, -0.5]
    assert df["log_T"].tolist() == [7.25, 6.0]


def test_non_numeric_column_kept_as_given_and_quotes():
    data = b'name,log_rho,log_T\n"Sun, ZAMS",1.5,7.1\nRGB tip,5.8,7.9\n'
    df = read_table(data, "q.csv")
    assert df["name"].tolist() == ["Sun, ZAMS", "RGB tip"]
    assert df["log_rho"].dtype == float


def test_column_with_a_bad_cell_stays_text_and_empty_cells_are_nan():
    df = read_table(b"log_rho,log_T,x\n1.5,7.1,\n1.6,oops,0.5\n", "b.csv")
    assert df["log_rho"].dtype == float
    assert df["log_T"].tolist() == ["7.1", "oops"]
    assert math.isnan(df["x"].iloc[0]) and df["x"].iloc[1] == 0.5


def test_duplicate_and_empty_header_names():
    df = read_table(b"rho,rho,\n1,2,3\n", "d.csv")
    assert list(df.columns) == ["rho", "rho_2", "column_3"]


def test_to_numbers_words():
    nums, parsed = to_numbers(["inf", "-inf", "nan", "1e5", "x", ""])
    assert parsed.tolist() == [True, True, True, True, False, False]
    assert nums[0] == np.inf and nums[3] == 1e5


# --------------------------------------------------------------------------- bad input
@pytest.mark.parametrize("data", [b"", b"   \n\n", b"\n# only comments\n"])
def test_empty(data):
    with pytest.raises(TableError, match="empty|only comment"):
        read_table(data, "e.csv")


@pytest.mark.parametrize("data", [b"\x00\x01\x02\x03binary", bytes(range(256)) * 4,
                                  b"\x89PNG\r\n\x1a\n" + bytes(range(1, 9)) * 40,
                                  b"\xff\xfe" + bytes([0xC3, 0x28]) * 50,    # UTF-16 BOM, CJK noise
                                  b"abc" + bytes([0xC3, 0x28]) * 50])         # invalid UTF-8
def test_binary_garbage(data):
    with pytest.raises(TableError, match="binary|not UTF-8|UTF-16"):
        read_table(data, "g.bin")


def test_header_only():
    with pytest.raises(TableError, match=r"columns: model, log_rho, log_T.*no data rows") as err:
        read_table(b"# c\nmodel,log_rho,log_T\n# nothing\n", "h.csv")
    assert "model" in str(err.value)


def test_no_header():
    with pytest.raises(TableError, match="header"):
        read_table(b"1,2,3\n4,5,6\n", "n.csv")


def test_ragged_row_names_line():
    with pytest.raises(TableError, match=r"line 4 .* 3 fields .* header has 4"):
        read_table(b"# c\nmodel,age,log_rho,log_T\n1,0,1.5,7.1\n2,1,1.6\n", "r.csv")


def test_unmatched_quote():
    with pytest.raises(TableError, match="quote"):
        read_table(b'a,b\n"1,2\n3,4\n', "q.csv")


def test_too_large_message():
    data = b"a,b\n" + b"1,2\n" * 100
    with pytest.raises(TableError, match=r"the file is 0\.0 MB; the limit is") as err:
        read_table(data, "big.csv", max_bytes=100)
    assert "rows" not in str(err.value).split(";")[0]


def test_too_large_formats_megabytes():
    # 31.2 MB of text, refused before any parsing (the message format of the brief)
    data = b"x" * int(31.2 * 1024 * 1024)
    with pytest.raises(TableError, match=r"the file is 31\.2 MB; the limit is 25 MB"):
        read_table(data, "big.csv")


def test_too_many_rows_own_message():
    data = b"log_rho,log_T\n" + b"1,7\n" * 11
    with pytest.raises(TableError, match=r"more than 10 data rows; the limit is 10 rows"):
        read_table(data, "rows.csv", max_rows=10)
    assert len(read_table(data, "rows.csv", max_rows=11)) == 11


def test_gzip_bomb_refused():
    bomb = gzip.compress(b"0" * (20 * 1024 * 1024), compresslevel=9)
    assert len(bomb) < 100_000
    with pytest.raises(TableError, match="decompresses to more than 1 MB"):
        read_table(bomb, "bomb.gz", max_bytes=1024 * 1024)


def test_damaged_gzip():
    with pytest.raises(TableError, match="gzip"):
        read_table(gzip.compress(CSV)[:-12], "t.gz")
    with pytest.raises(TableError, match="gzip"):
        read_table(b"\x1f\x8b\x08\x00garbagegarbagegarbage", "t.gz")


def test_not_bytes():
    with pytest.raises(TableError, match="bytes"):
        read_table("a,b\n1,2\n", "s.csv")


# --------------------------------------------------------------------------- hypothesis
@settings(max_examples=150, deadline=None, suppress_health_check=[HealthCheck.too_slow])
@given(st.binary(max_size=400))
def test_random_bytes_only_table_error(data):
    try:
        df = read_table(data, "h.bin")
    except TableError:
        return
    assert isinstance(df, pd.DataFrame)


_cell = st.one_of(st.floats(allow_nan=True, allow_infinity=True).map(repr),
                  st.integers(-10**6, 10**6).map(str),
                  st.text(alphabet="abcDd.+-eE0123456789# \"';,\t", max_size=8))


@settings(max_examples=150, deadline=None, suppress_health_check=[HealthCheck.too_slow])
@given(st.lists(st.lists(_cell, min_size=1, max_size=4), min_size=0, max_size=6),
       st.sampled_from([",", "\t", ";", " "]), st.booleans())
def test_random_tables_only_table_error(rows, sep, compress):
    text = "\n".join(sep.join(r) for r in rows).encode()
    data = gzip.compress(text) if compress else text
    try:
        df = read_table(data, "h.csv", max_rows=50)
    except TableError:
        return
    assert isinstance(df, pd.DataFrame)
    try:
        mapping = detect_columns(df)
        apply_mapping(df, mapping)
    except TableError:
        pass


@settings(max_examples=60, deadline=None)
@given(st.lists(st.tuples(st.floats(-10, 10), st.floats(0, 12)), min_size=1, max_size=20),
       st.sampled_from([",", "\t", ";", " "]))
def test_roundtrip_numbers(rows, sep):
    text = "log_rho" + sep + "log_T\n" + "\n".join(f"{a!r}{sep}{b!r}" for a, b in rows)
    df = read_table(text.encode(), "r.csv")
    assert df["log_rho"].tolist() == [a for a, _ in rows]
    assert df["log_T"].tolist() == [b for _, b in rows]


# --------------------------------------------------------------------------- detection
def _df(**cols):
    n = max(len(v) for v in cols.values())
    return pd.DataFrame({k: list(v) + [np.nan] * (n - len(v)) for k, v in cols.items()})


@pytest.mark.parametrize("rho_name,T_name,rho_log,T_log", [
    ("log_rho", "log_T", True, True), ("logRho", "logT", True, True), ("lg_rho", "lg_T", True, True),
    ("log10_rho", "log10(T)", True, True), ("log(rho) [g/cm3]", "log T", True, True),
    ("log_rho_c", "log_Tc", True, True),
    ("log_centre_rho", "log_centre_T", True, True), ("logrhoc", "logtc", True, True),
    ("rho", "T", False, False), ("density", "temperature", False, False), ("rho_c", "T_c", False, False),
    ("center_rho", "central_temperature", False, False), ("Rho [g/cm3]", "T (K)", False, False),
])
def test_detect_names(rho_name, T_name, rho_log, T_log):
    lin = rho_log is False
    df = _df(**{"model": [1, 2], rho_name: [100.0, 200.0] if lin else [2.0, 2.3],
                T_name: [1e7, 2e7] if lin else [7.0, 7.3]})
    m = detect_columns(df)
    assert (m.rho_col, m.T_col, m.rho_log, m.T_log) == (rho_name, T_name, rho_log, T_log)
    assert m.units == "cgs"
    assert m.age_col == "model"


@pytest.mark.parametrize("name", ["rho [kg/m3]", "rho (kg m^-3)", "rho_si", "density_kg_m3",
                                  "log_rho [kg/m^3]"])
def test_detect_si(name):
    m = detect_columns(_df(**{name: [1e3, 2e3], "T": [1e7, 1e7]}))
    assert m.rho_col == name and m.units == "si"


def test_detect_age_priority_and_teff_ignored():
    df = _df(model=[1, 2], age_yr=[0.0, 1e6], log_Teff=[3.7, 3.8], log_Tc=[7.1, 7.2], log_rho_c=[1, 2])
    m = detect_columns(df)
    assert m.age_col == "age_yr" and m.T_col == "log_Tc" and m.rho_col == "log_rho_c"


@pytest.mark.parametrize("name,role", [("time [s]", "age"), ("stellar age", "age"), ("model", "step"),
                                       ("step", "step"), ("iteration", "step")])
def test_detect_parameter_from_plain_words(name, role):
    m = detect_columns(_df(**{name: [1.0, 2.0], "rho": [1.0, 2.0], "T": [1e7, 2e7]}))
    assert m.age_col == name


def test_nuclides_need_a_separator():
    from thermoplane.app.upload import nuclide_of
    assert nuclide_of("C-12") == "C-12" and nuclide_of("central O_16") == "O-16" and nuclide_of("X(He-4)") == "He-4"
    assert nuclide_of("C12") is None and nuclide_of("Xx-99") is None


@pytest.mark.parametrize("names,expect", [
    (("central hydrogen", "central helium"), ("X", "Y")),
    (("X", "Z"), ("X", "Z")),
])
def test_detect_composition_words(names, expect):
    m = detect_columns(_df(**{names[0]: [0.7, 0.5], names[1]: [0.28, 0.02], "rho": [1.0, 2.0], "T": [1e7, 2e7]}))
    got = {"X": m.X_col, "Y": m.Y_col, "Z": m.Z_col}
    assert [got[r] for r in expect] == list(names)


def test_nuclide_columns_detected_and_applied():
    df = _df(**{"log_rho": [1.0, 2.0], "log_T": [7.0, 7.1], "H-1": [0.7, 0.0], "He-4": [0.28, 0.98],
                "X(C-12)": [0.01, 0.01], "O-16": [0.01, 0.01]})
    m = detect_columns(df)
    assert m.nuclide_cols == {"H-1": "H-1", "He-4": "He-4", "C-12": "X(C-12)", "O-16": "O-16"}
    t = apply_mapping(df, m)
    assert t.X.tolist() == [0.7, 0.0] and t.Y.tolist() == [0.28, 0.98]
    assert t.metals == {"C-12": 0.5, "O-16": 0.5} and not t.bad_rows


def test_xyz_columns_any_two_give_the_third():
    df = _df(log_rho=[1.0, 2.0, 3.0], log_T=[7.0, 7.1, 7.2], X=[0.7, 0.5, 0.5], Z=[0.02, 0.02, 0.6])
    t = apply_mapping(df, ColumnMapping(rho_col="log_rho", T_col="log_T", X_col="X", Z_col="Z"))
    assert np.allclose(t.Y[:2], [0.28, 0.48])
    assert t.bad_rows == [2] and "add up to 1" in t.bad_reasons[2]


def test_detect_lowercase_t_is_time():
    m = detect_columns(_df(t=[0.0, 1.0], T=[1e7, 2e7], rho=[1.0, 2.0]))
    assert m.T_col == "T" and m.age_col == "t"


def test_detect_ambiguous():
    m = detect_columns(_df(log_rho=[1, 2], rho=[10.0, 100.0], log_T=[7, 7.1], T_c=[1e7, 1.2e7]))
    assert m.rho_col is None and m.T_col is None
    text = " ".join(m.ambiguous)
    assert "log_rho" in text and "rho" in text and "T_c" in text


def test_detect_log_from_values_is_noted():
    m = detect_columns(_df(rho=[-2.0, 1.5, 3.0], T=[6.5, 7.0, 7.2]))
    assert m.rho_log and m.T_log
    assert any("rho" in note for note in m.ambiguous) and any("'T'" in note for note in m.ambiguous)


def test_detect_composition_and_label():
    df = pd.DataFrame({"phase": ["MS", "RGB"], "log_rho": [1.0, 5.0], "log_T": [7.1, 7.8],
                       "X_c": [0.7, 0.0], "helium": [0.28, 0.98]})
    m = detect_columns(df)
    assert (m.X_col, m.Y_col, m.label_col) == ("X_c", "helium", "phase")
    assert m.age_col is None            # row number fallback


def test_detect_composition_rejects_non_fractions():
    m = detect_columns(_df(x=[10.0, 20.0], log_rho=[1, 2], log_T=[7, 7.1]))
    assert m.X_col is None and any("'x'" in note for note in m.ambiguous)


def test_no_density_column_message_lists_columns():
    df = read_table(b"model,age,radius,log_T\n1,0,1,7\n", "n.csv")
    m = detect_columns(df)
    assert m.rho_col is None and any("radius" in note for note in m.ambiguous)
    with pytest.raises(TableError, match=r"no density column.*model, age, radius, log_T"):
        apply_mapping(df, m)


# --------------------------------------------------------------------------- mapping
def test_apply_linear_si_and_log():
    df = pd.DataFrame({"rho": [1e3, 1e6], "T": [1e7, 1e8], "age": [0.0, 5.0]})
    t = apply_mapping(df, ColumnMapping(rho_col="rho", T_col="T", rho_log=False, T_log=False,
                                        units="si", age_col="age"))
    # 1 kg m^-3 = 1e-3 g cm^-3 (SI definition)
    assert t.log_rho.tolist() == pytest.approx([0.0, 3.0])
    assert t.log_T.tolist() == pytest.approx([7.0, 8.0])
    assert t.age.tolist() == [0.0, 5.0] and t.bad_rows == []
    t2 = apply_mapping(df.assign(lr=[1.0, 2.0]), ColumnMapping(rho_col="lr", T_col="T", T_log=False))
    assert t2.log_rho.tolist() == [1.0, 2.0]


def test_non_numeric_cells_are_bad_rows_by_number():
    data = b"# c\nlog_rho,log_T\n1.0,7.0\nabc,7.1\n1.2,\n1.3,7.3\n"
    df = read_table(data, "b.csv")
    t = apply_mapping(df, detect_columns(df))
    assert t.bad_rows == [1, 2]
    assert "line 4" in t.bad_reasons[1] and "'abc'" in t.bad_reasons[1]
    assert "line 5" in t.bad_reasons[2] and "log_T" in t.bad_reasons[2]
    assert t.valid.tolist() == [True, False, False, True]
    assert len(t.log_rho) == 4                      # bad rows kept in the output


def test_non_positive_and_non_finite_are_bad_rows():
    df = pd.DataFrame({"rho": [1.0, 0.0, -1.0, np.inf, np.nan, 2.0], "T": [1e7] * 5 + [np.inf]})
    t = apply_mapping(df, ColumnMapping(rho_col="rho", T_col="T", rho_log=False, T_log=False))
    assert t.bad_rows == [1, 2, 3, 4, 5]
    assert "> 0" in t.bad_reasons[1] and "> 0" in t.bad_reasons[2]
    assert "not finite" in t.bad_reasons[3] and "missing" in t.bad_reasons[4]
    assert "T" in t.bad_reasons[5]


def test_log_out_of_range_is_bad_row():
    df = pd.DataFrame({"log_rho": [1.0, 400.0], "log_T": [7.0, 7.0]})
    t = apply_mapping(df, ColumnMapping(rho_col="log_rho", T_col="log_T"))
    assert t.bad_rows == [1]


def test_composition_checks():
    df = pd.DataFrame({"log_rho": [1.0] * 4, "log_T": [7.0] * 4, "X": [0.7, 1.2, 0.5, 0.3],
                       "Y": [0.28, 0.0, 0.6, -0.1]})
    t = apply_mapping(df, ColumnMapping(rho_col="log_rho", T_col="log_T", X_col="X", Y_col="Y"))
    assert t.bad_rows == [1, 2, 3]
    assert "outside [0, 1]" in t.bad_reasons[1] and "X + Y" in t.bad_reasons[2]


def test_mapped_column_missing_names_columns():
    df = pd.DataFrame({"a": [1.0], "b": [2.0]})
    with pytest.raises(TableError, match=r"'zz' is not in the table; columns found: a, b"):
        apply_mapping(df, ColumnMapping(rho_col="a", T_col="zz"))
    with pytest.raises(TableError, match="units"):
        apply_mapping(df, ColumnMapping(rho_col="a", T_col="b", units="mks"))


def test_no_valid_rows():
    df = pd.DataFrame({"rho": [-1.0, 0.0], "T": [1e7, 1e7]})
    with pytest.raises(TableError, match="none of the 2 rows"):
        apply_mapping(df, ColumnMapping(rho_col="rho", T_col="T", rho_log=False, T_log=False))


def test_trackdata_valid_property():
    t = TrackData(log_rho=np.zeros(3), log_T=np.zeros(3), bad_rows=[1])
    assert t.valid.tolist() == [True, False, True] and len(t) == 3


# --------------------------------------------------------------------------- our example files
@pytest.mark.parametrize("name,n,rho_col,T_col", [
    ("example_central_track.csv", 60, "log_rho_c", "log_T_c"),
    ("example_profile.tsv", 41, "rho", "T"),
    ("example_whitespace.txt", 30, "rho_c", "T_c"),
])
def test_example_files(name, n, rho_col, T_col):
    data = (EXAMPLES / name).read_bytes()
    assert b"made up" in data.split(b"\n", 1)[0]
    df = read_table(data, name)
    m = detect_columns(df)
    assert (m.rho_col, m.T_col, m.ambiguous) == (rho_col, T_col, [])
    t = apply_mapping(df, m)
    assert len(t) == n and t.bad_rows == []
    assert np.all(np.isfinite(t.log_rho)) and np.all((t.log_T > 3) & (t.log_T < 9))


# -- headers with units, decimal commas, the reader's choices (issue 14 items 3 and 4) --------------
def test_whitespace_header_with_units_inside_names():
    text = b"m/Msun   log10(rho/g cm^-3)   log10(T/K)\n0.1 2.0 7.1\n0.2 1.9 7.0\n"
    df = read_table(text)
    assert list(df.columns) == ["m/Msun", "log10(rho/g cm^-3)", "log10(T/K)"]
    m = detect_columns(df)
    assert (m.rho_col, m.T_col, m.rho_log, m.T_log) == ("log10(rho/g cm^-3)", "log10(T/K)", True, True)
    single = read_table(b"m/Msun log10(rho/kg m^-3) log10(T/K)\n0.1 2.0 7.1\n")
    assert detect_columns(single).units == "si" and single.shape == (1, 3)
    assert list(read_table(b"m rho [g cm^-3] T [K]\n1 2 3\n").columns) == ["m", "rho [g cm^-3]", "T [K]"]


def test_decimal_commas_from_spreadsheets():
    text = "sep=;\nage;rho;T;\n1;2,818383e+04;1,2E+07;\n2;-3,5;1,3e7;\n".encode()
    df = read_table(text)
    assert list(df.columns) == ["age", "rho", "T"]
    assert df["rho"].tolist() == [28183.83, -3.5] and df["T"].tolist() == [1.2e7, 1.3e7]
    tab = read_table(b"rho\tT\n2,5\t1,2e7\n")
    assert tab["rho"].tolist() == [2.5]


def test_reader_choices_delimiter_header_line_and_skipped_lines():
    text = b"produced by my code\nrho T\n1 2\n3 4 5\n6 7\n"
    with pytest.raises(LayoutError):
        read_table(text)
    df = read_table(text, header_line=2, skip_ragged=True)
    assert df.values.tolist() == [[1.0, 2.0], [6.0, 7.0]] and df.attrs["skipped_lines"] == [4]
    df = read_table(b"1;2\n3;4\n", header_line=0, delimiter="semicolon")
    assert list(df.columns) == ["column_1", "column_2"] and df["column_2"].tolist() == [2.0, 4.0]
    with pytest.raises(TableError, match="delimiter"):
        read_table(b"a b\n1 2\n", delimiter="space")
    with pytest.raises(TableError, match="no line 9"):
        read_table(b"a b\n1 2\n", header_line=9)
    assert preview_lines(b"a b\n1 2\n") == ["a b", "1 2"]
    assert preview_lines(b"\x00\x01") == []
