"""app.localfiles: a local file read in small chunks gives exactly what the upload parser gives for the whole."""

from __future__ import annotations

import gzip
import json

import numpy as np
import pandas as pd
import pytest

from thermoplane.app import cli, localfiles
from thermoplane.app.upload import MAX_BYTES, TableError, read_table

CHUNK = 1024          # the smallest block: every file below spans several


def _rows(n, start=0):
    return "".join(f"{i},{-2 + 0.01 * i:.4f},{6 + 0.001 * i:.5f},{0.7 - 1e-4 * i:.5f}\n" for i in range(start, n))


def _same(a: pd.DataFrame, b: pd.DataFrame):
    assert list(a.columns) == list(b.columns)
    assert len(a) == len(b)
    for col in a.columns:
        x, y = a[col].to_numpy(), b[col].to_numpy()
        if x.dtype == object or y.dtype == object:
            assert [str(v) for v in x] == [str(v) for v in y]
        else:
            np.testing.assert_array_equal(x, y)
    np.testing.assert_array_equal(a.attrs["source_lines"], b.attrs["source_lines"])


CASES = {
    "plain": "model,log_rho,log_T,X\n" + _rows(400),
    "comments": "# a comment\n# another\nmodel,log_rho,log_T,X\n" + _rows(150) + "# mid-file note\n\n"
                + _rows(300, 150) + "# tail\n",
    "promoted header": "# written by our own code\n# model log_rho log_T X\n"
                       + _rows(400).replace(",", " "),
    "crlf and bom": "\ufeffmodel;log_rho;log_T;X\r\n" + _rows(300).replace(",", ";").replace("\n", "\r\n"),
    "whitespace": "model   log_rho   log_T   X\n" + _rows(300).replace(",", "   "),
}


@pytest.mark.parametrize("name", list(CASES))
def test_chunked_equals_whole(tmp_path, name):
    f = tmp_path / "t.csv"
    f.write_bytes(CASES[name].encode("utf-8"))
    assert f.stat().st_size > 3 * CHUNK
    _same(localfiles.read_local(f, chunk_bytes=CHUNK), read_table(f.read_bytes(), str(f)))


def test_gzip_and_utf16_stream_in_chunks(tmp_path):
    text = CASES["comments"]
    gz = tmp_path / "t.csv.gz"
    gz.write_bytes(gzip.compress(text.encode()))
    u16 = tmp_path / "t16.csv"
    u16.write_bytes(text.encode("utf-16"))
    whole = read_table(text.encode(), "t")
    _same(localfiles.read_local(gz, chunk_bytes=CHUNK), whole)
    _same(localfiles.read_local(u16, chunk_bytes=CHUNK), whole)


def test_text_cell_in_a_later_chunk_is_kept(tmp_path):
    lines = _rows(300).splitlines(keepends=True)
    lines[250] = "250,oops,6.25,0.675\n"
    f = tmp_path / "t.csv"
    f.write_text("model,log_rho,log_T,X\n" + "".join(lines))
    df = localfiles.read_local(f, chunk_bytes=CHUNK)
    assert len(df) == 300 and df["log_rho"].iloc[250] == "oops"
    assert float(df["log_rho"].iloc[0]) == -2.0


def test_errors_name_the_line_of_the_whole_file(tmp_path):
    lines = _rows(300).splitlines(keepends=True)
    lines[200] = "200,1,2\n"                       # a short line deep in the file: line 202 (header is 1)
    f = tmp_path / "t.csv"
    f.write_text("model,log_rho,log_T,X\n" + "".join(lines))
    with pytest.raises(TableError) as chunked:
        localfiles.read_local(f, chunk_bytes=CHUNK)
    with pytest.raises(TableError) as whole:
        read_table(f.read_bytes(), str(f))
    assert "line 202 " in str(whole.value)
    assert str(chunked.value) == str(whole.value)


def test_larger_than_the_upload_limit(tmp_path, capsys):
    # 26 MB of rows: refused as an upload, read locally (in 8 MB blocks)
    row = "0,1.00000000,7.00000000,0.70000000" + " " * 60 + "\n"
    n = (MAX_BYTES + 2**20) // len(row)
    f = tmp_path / "big.csv"
    with open(f, "w") as fh:
        fh.write("model,log_rho,log_T,X\n")
        for _ in range(n // 10000):
            fh.write(row * 10000)
    assert f.stat().st_size > MAX_BYTES
    with pytest.raises(TableError, match="limit"):
        read_table(f.read_bytes(), "big.csv")
    df = localfiles.read_local(f)
    assert len(df) == (n // 10000) * 10000 and df["log_T"].eq(7.0).all()
    assert df.attrs["source_lines"][-1] == len(df) + 1
    with pytest.raises(TableError, match="limit"):
        localfiles.read_local(f, max_bytes=MAX_BYTES)
    # and `thermoplane track` reads it whole (the textbook physics keeps this quick)
    code = cli.main(["track", str(f), "--electrons", "classical", "--ionization", "full", "--no-coulomb",
                     "--no-pairs", "--json"])
    assert code == 0 and json.loads(capsys.readouterr().out)["rows"] == len(df)
    assert cli.main(["track", str(f), "--max-mb", "25"]) == 2
    assert "limit" in capsys.readouterr().err


@pytest.mark.parametrize("content, fragment", [(b"", "empty"), (b"# only\n# comments\n", "comment"),
                                               (b"rho,T\n", "no data rows")])
def test_refusals_as_the_upload_parser(tmp_path, content, fragment):
    f = tmp_path / "t.csv"
    f.write_bytes(content)
    with pytest.raises(TableError, match=fragment):
        localfiles.read_local(f, chunk_bytes=CHUNK)


def test_missing_file_is_an_oserror(tmp_path):
    with pytest.raises(OSError):
        localfiles.read_local(tmp_path / "nope.csv")
