"""Local track files of any size, read in chunks with the upload parser.

The question this module answers: how does ``thermoplane track`` or
``thermoplane batch`` read a table on the user's own disk that is larger than
the web server's upload limit? The 25 MB limit of :mod:`app.upload` protects
the server; a local file is the user's own business, so here there is no size
or row limit unless the caller asks for one.

The file is streamed (plain or gzip) in blocks of whole lines. The first block
is parsed by :func:`app.upload.read_table` exactly as an upload would be;
every later block is parsed by the same function with the header line put in
front of it, so the delimiter, comment, number and decimal-comma rules are
those of uploads. Line numbers in ``df.attrs["source_lines"]`` and in error
messages are those of the whole file. Only one block of text (8 MB by
default) is held at a time next to the growing table.

Limit: lines are counted at ``\\n``; a file that separates lines with a bare
``\\r`` (no ``\\n``) is read as one block, correctly but without chunking.
"""

from __future__ import annotations

import gzip
import os
import re
import sys
import zlib

import numpy as np
import pandas as pd

from .upload import TableError, read_table

__all__ = ["CHUNK_BYTES", "read_local"]

#: Bytes of text parsed at a time.
CHUNK_BYTES = 8 * 1024 * 1024

_GZIP_MAGIC = b"\x1f\x8b"
_UTF16_BOMS = (b"\xff\xfe", b"\xfe\xff")
_UTF8_BOM = b"\xef\xbb\xbf"
_NO_ROW_LIMIT = sys.maxsize
# a line that holds data or a header: not blank, not a comment
_CONTENT_LINE = re.compile(rb"^[ \t\r\f\v]*[^#\s]", re.M)
_LINE_NUMBER = re.compile(r"\bline (\d+)\b")


def _limit_error(max_bytes: int) -> TableError:
    return TableError(f"the file is larger than {max_bytes / 2**20:.3g} MB (raw or decompressed); "
                      f"the limit is {max_bytes / 2**20:.3g} MB; raise or drop --max-mb to read it")


def _blocks(stream, chunk_bytes: int, max_bytes: int | None):
    """Blocks of whole lines (each ends with a newline, except perhaps the last)."""
    rest, total = b"", 0
    while True:
        try:
            buf = stream.read(chunk_bytes)
        except (OSError, EOFError, zlib.error) as exc:
            raise TableError(f"the file looks gzip-compressed but cannot be decompressed ({exc}); "
                             "compress it again or use the plain text") from None
        if not buf:
            if rest:
                yield rest
            return
        total += len(buf)
        if max_bytes is not None and total > max_bytes:
            raise _limit_error(max_bytes)
        buf = rest + buf
        cut = buf.rfind(b"\n") + 1
        if cut == 0:                      # one line longer than a block: keep reading
            rest = buf
            continue
        yield buf[:cut]
        rest = buf[cut:]


def _utf8_blocks(blocks):
    """UTF-16 text (with its byte-order mark) re-encoded as UTF-8 blocks of whole lines."""
    import codecs
    decoder = codecs.getincrementaldecoder("utf-16")()
    rest = ""
    for block in blocks:
        try:
            text = rest + decoder.decode(block)
        except UnicodeDecodeError:
            raise TableError("the file starts like UTF-16 text but cannot be decoded; "
                             "save it as UTF-8 text") from None
        cut = text.rfind("\n") + 1
        if cut:
            yield text[:cut].encode("utf-8")
        rest = text[cut:]
    if rest:
        yield rest.encode("utf-8")


def _header_bytes(first: bytes, df: pd.DataFrame) -> bytes:
    """The line read_table took as the header of ``first`` (a comment line when it was promoted)."""
    lines = first.split(b"\n")
    header_no, last_comment = None, None
    for no, raw in enumerate(lines, start=1):
        line = raw.strip()
        if no == 1 and line.startswith(_UTF8_BOM):
            line = line[len(_UTF8_BOM):].strip()
        if not line:
            continue
        if line.startswith(b"#"):
            last_comment = line
            continue
        header_no = no
        break
    lines_of_rows = df.attrs.get("source_lines")
    if header_no is not None and lines_of_rows is not None and len(lines_of_rows) \
            and int(lines_of_rows[0]) == header_no and last_comment is not None:
        return last_comment                 # "# model age log_rho" above an all-number first line
    return lines[header_no - 1].strip().removeprefix(_UTF8_BOM) if header_no else b""


def _shift_lines(err: TableError, offset: int) -> TableError:
    return TableError(_LINE_NUMBER.sub(lambda m: f"line {int(m.group(1)) + offset}", str(err)))


def read_local(path, max_bytes: int | None = None, chunk_bytes: int = CHUNK_BYTES) -> pd.DataFrame:
    """Read a track table from a local file of any size.

    Parameters
    ----------
    path : str or os.PathLike
        The file: plain text or gzip (recognised by its first bytes).
    max_bytes : int, optional
        Refuse files larger than this, raw or decompressed (default: no limit).
    chunk_bytes : int
        Bytes of text parsed per call of :func:`app.upload.read_table`.

    Returns
    -------
    pandas.DataFrame
        As :func:`app.upload.read_table` returns for the whole file: one column
        per header field, numbers as float, ``attrs["source_lines"]`` the
        1-based line of every data row in the (decompressed) file.

    Raises
    ------
    TableError
        Everything :func:`app.upload.read_table` refuses, with the file's own
        line numbers; a file over ``max_bytes``; a later block whose columns
        cannot be split like the first.
    OSError
        The file cannot be opened (missing, a directory, no permission).

    Notes
    -----
    A column whose cells are all numbers in some blocks and partly text in
    others comes out as an object column holding floats and strings; the
    track code reads both, as it reads the all-text column of an upload.
    """
    name = os.fspath(path)
    chunk_bytes = max(int(chunk_bytes), 1024)
    with open(name, "rb") as raw:
        if max_bytes is not None and os.fstat(raw.fileno()).st_size > max_bytes:
            raise _limit_error(max_bytes)
        stream = gzip.GzipFile(fileobj=raw, mode="rb") if raw.read(2) == _GZIP_MAGIC else raw
        raw.seek(0)
        head = stream.peek(2)[:2] if hasattr(stream, "peek") else b""
        blocks = _blocks(stream, chunk_bytes, max_bytes)
        if head in _UTF16_BOMS:
            blocks = _utf8_blocks(blocks)

        # the first block: whole lines up to at least a header and one data line (or the end)
        first = b""
        for block in blocks:
            first += block
            if len(_CONTENT_LINE.findall(first, 0, len(first))) >= 2:
                break
        big = max(len(first), 1) + 1
        df = read_table(first, name, max_bytes=big, max_rows=_NO_ROW_LIMIT)
        header = _header_bytes(first, df)
        next_line = first.count(b"\n") + 1     # file line number of the next block's first line
        parts = [df]
        lines = [df.attrs["source_lines"]]
        for block in blocks:
            start, next_line = next_line, next_line + block.count(b"\n")
            if not _CONTENT_LINE.search(block):
                continue                       # only comments or blank lines
            text = header + b"\n" + block
            offset = start - 2                 # the block's first line is line 2 of ``text``
            try:
                part = read_table(text, name, max_bytes=len(text) + 1, max_rows=_NO_ROW_LIMIT)
            except TableError as err:
                raise _shift_lines(err, offset) from None
            if list(part.columns) != list(df.columns):
                raise TableError(f"the lines of {name!r} from line {start} on cannot be split into the "
                                 f"header's columns ({', '.join(map(str, df.columns))}); check the delimiter")
            parts.append(part)
            lines.append(part.attrs["source_lines"] + offset)
    if len(parts) == 1:
        return df
    for part in parts:
        part.attrs = {}
    out = pd.concat(parts, ignore_index=True)
    out.attrs = {"source_lines": np.concatenate(lines).astype(np.int64)}
    return out
