"""Uploaded track files: bytes in, a validated table of (log rho, log T) out.

The question this module answers: a user drops a plain table written by their
own stellar code (the centre of a model star over time, or one profile from
centre to surface); which rows are usable, which columns hold density and
temperature, and what exactly is wrong when the answer is "none"?

There is no program-specific format. Accepted: comma-, tab-, semicolon- or
whitespace-separated text with one header row, optional ``#`` comment lines
anywhere, a UTF-8 byte-order mark, gzip compression, and numbers in any float
notation including Fortran ``D`` exponents. Shared by the Dash app and the
command line; pure Python + numpy + pandas, no Dash import.

Every problem raises :class:`TableError` (a ``ValueError``) with a message a
user can act on.
"""

from __future__ import annotations

import csv
import io
import re
import zlib
from dataclasses import dataclass, field

import numpy as np
import pandas as pd

__all__ = ["TableError", "LayoutError", "MAX_BYTES", "MAX_ROWS", "DELIMITERS", "read_table", "preview_lines",
           "ColumnMapping", "detect_columns", "TrackData", "apply_mapping", "to_numbers", "nuclide_of"]

#: Largest accepted file, raw or decompressed, in bytes (25 MB).
MAX_BYTES = 25 * 1024 * 1024
#: Largest accepted number of data rows.
MAX_ROWS = 2_000_000

_MB = 1024 * 1024
_GZIP_MAGIC = b"\x1f\x8b"
_CHUNK = 64 * 1024
# Delimiters tried in this order of preference when several split the header
# and the first data lines into the same number of fields.
_DELIMITERS = ("\t", ",", ";", "|")
_SNIFF_LINES = 50
# More than this fraction of control characters means the file is not text.
_MAX_CONTROL_FRACTION = 0.01
# A file that is not UTF-8 is read as Latin-1 only when it is almost all ASCII
# (a stray degree sign in a header), never when it looks like binary data.
_MAX_HIGH_BYTE_FRACTION = 0.02


class TableError(ValueError):
    """An uploaded table cannot be used; the message says why and what to change."""


class LayoutError(TableError):
    """The file is text but its lines could not be split into a header and columns.

    The app answers this one by showing the first lines of the file and letting
    the user choose the delimiter, the header line and whether to skip lines that
    do not fit (:func:`read_table`'s ``delimiter``, ``header_line``, ``skip_ragged``).
    """


#: Delimiter choices a user can make by hand: name -> character (None: runs of whitespace).
DELIMITERS = {"comma": ",", "semicolon": ";", "tab": "\t", "pipe": "|", "whitespace": None}
_SEP_NAMES = {None: "whitespace", "\t": "tab", ",": "comma", ";": "semicolon", "|": "pipe"}
_SEP_HINT = re.compile(r"^sep=(.)$", re.IGNORECASE)


# ----------------------------------------------------------------------------
# bytes -> text
# ----------------------------------------------------------------------------
def _fmt_mb(n_bytes: float) -> str:
    return f"{n_bytes / _MB:.1f} MB"


def _limit_mb(max_bytes: int) -> str:
    return f"{max_bytes / _MB:.3g} MB"


def _gunzip(data: bytes, max_bytes: int) -> bytes:
    """Decompress gzip data in chunks, refusing output larger than ``max_bytes``.

    Chunked decompression with ``max_length`` means a small "gzip bomb" never
    expands in memory beyond the limit. Concatenated gzip members are joined.
    """
    out = bytearray()
    rest = data
    while rest:
        if rest[:2] != _GZIP_MAGIC:
            break                      # trailing padding after the last member
        d = zlib.decompressobj(wbits=31)
        buf = rest
        try:
            while buf:
                room = max_bytes - len(out) + 1
                out += d.decompress(buf, min(_CHUNK, room))
                if len(out) > max_bytes:
                    raise TableError(f"the file decompresses to more than {_limit_mb(max_bytes)}; "
                                     f"the limit is {_limit_mb(max_bytes)} after decompression; "
                                     "upload a shorter table or thin it out")
                buf = d.unconsumed_tail
                if d.eof:
                    break
            if not d.eof:
                raise TableError("the file looks gzip-compressed but is truncated or damaged; "
                                 "compress it again or upload the plain text")
        except zlib.error as exc:
            raise TableError(f"the file looks gzip-compressed but cannot be decompressed ({exc}); "
                             "compress it again or upload the plain text") from None
        rest = d.unused_data
    return bytes(out)


def _decode(data: bytes) -> str:
    """Bytes to text, refusing anything that is mostly not plain text.

    A track table is essentially ASCII: text whose characters are more than
    30 % non-ASCII (however it decodes) is taken for binary data.
    """
    text = _decode_bytes(data)
    non_ascii = len(text) - len(text.encode("ascii", errors="ignore"))
    if non_ascii > 0.3 * len(text):
        raise TableError(f"the file is mostly not plain text ({non_ascii} of {len(text)} characters are "
                         "not ASCII): it looks like binary data; export the track as CSV or plain text")
    return text


def _decode_bytes(data: bytes) -> str:
    """Bytes to text: BOM, UTF-16 with BOM, UTF-8, near-ASCII Latin-1; refuse binary."""
    if data.startswith((b"\xff\xfe", b"\xfe\xff")):
        try:
            return data.decode("utf-16")
        except UnicodeDecodeError:
            raise TableError("the file starts like UTF-16 text but cannot be decoded; "
                             "save it as UTF-8 text") from None
    if b"\x00" in data:
        raise TableError("the file contains NUL bytes: it looks like binary data, not a text table; "
                         "export the track as CSV or plain text")
    # control bytes other than tab, newline, vertical tab, form feed, carriage return
    controls = len(data) - len(data.translate(None, bytes(range(0, 9)) + bytes(range(14, 32)) + b"\x7f"))
    if controls > _MAX_CONTROL_FRACTION * len(data):
        raise TableError(f"the file is mostly not printable text ({controls} control bytes in "
                         f"{len(data)}): it looks like binary data; export the track as CSV or plain text")
    if data.startswith(b"\xef\xbb\xbf"):
        data = data[3:]
    try:
        return data.decode("utf-8")
    except UnicodeDecodeError as exc:
        high = len(data) - len(data.translate(None, bytes(range(128, 256))))
        if high <= _MAX_HIGH_BYTE_FRACTION * len(data):
            return data.decode("latin-1")
        raise TableError(f"the file is not UTF-8 text (byte 0x{data[exc.start]:02x} at position "
                         f"{exc.start}) and looks like binary data; save it as UTF-8 text") from None


# ----------------------------------------------------------------------------
# text -> rows
# ----------------------------------------------------------------------------
def _split_count(line: str, delim: str | None) -> int:
    if delim is None:
        return len(line.split())
    if '"' in line:
        return len(next(csv.reader([line], delimiter=delim, skipinitialspace=True)))
    return line.count(delim) + 1


def _split(line: str, delim: str | None) -> list[str]:
    if delim is None:
        return line.split()
    return [c.strip() for c in next(csv.reader([line], delimiter=delim, skipinitialspace=True))]


def _sniff(header: str, sample: list[str]) -> str | None:
    """The delimiter that splits the header and sample lines most consistently.

    For each candidate the header's field count must be at least 2; the score
    is how many sample lines have that same count. Ties go to the earlier
    candidate in (tab, comma, semicolon, pipe); whitespace runs come last and
    win only when no character delimiter does better. ``None`` means
    whitespace.
    """
    best, best_score = None, -1
    for delim in _DELIMITERS + (None,):
        n = _split_count(header, delim)
        if n < 2:
            continue
        score = sum(_split_count(line, delim) == n for line in sample)
        if score > best_score:
            best, best_score = delim, score
    return best


_NUMBER_RE = re.compile(r"^[+-]?(\d+\.?\d*|\.\d+)([eEdD][+-]?\d+)?$")


def _looks_numeric(cells: list[str]) -> bool:
    return bool(cells) and all(_NUMBER_RE.match(c) or c.lower() in ("nan", "inf", "-inf", "+inf")
                               for c in cells)


# Fortran writes 1.0D+05; and drops the letter for three-digit exponents (1.0-100).
_D_EXPONENT = r"^\s*([+-]?(?:\d+\.?\d*|\.\d+))[dD]([+-]?\d+)\s*$"
_BARE_EXPONENT = r"^\s*([+-]?(?:\d+\.\d*|\.\d+))([+-]\d{3})\s*$"
_DECIMAL_COMMA = r"^\s*([+-]?\d+),(\d+(?:[eEdD][+-]?\d+)?)\s*$"


def to_numbers(values, decimal_comma: bool = False) -> tuple[np.ndarray, np.ndarray]:
    """Parse cells as floats in any notation.

    Parameters
    ----------
    values : sequence or pandas.Series
        Cells (strings or numbers).
    decimal_comma : bool
        Also read ``1,5`` as 1.5 (only sensible when the delimiter is not a comma).

    Returns
    -------
    numbers : numpy.ndarray
        Float values, NaN where a cell is empty or not a number.
    parsed : numpy.ndarray of bool
        True where the cell is a number (including the words nan and inf).

    Notes
    -----
    Accepted: ``1``, ``+1.5``, ``-.5``, ``1.5e+05``, Fortran ``1.0D+05`` and
    ``1.0d-3``, Fortran's three-digit exponent without a letter ``1.0-100``,
    ``nan``, ``inf``, ``Infinity``.

    Examples
    --------
    >>> nums, parsed = to_numbers(["1.0D+05", "+2", "x"])
    >>> nums.tolist()[:2], parsed.tolist()
    ([100000.0, 2.0], [True, True, False])
    """
    s = values if isinstance(values, pd.Series) else pd.Series(np.asarray(values).ravel())
    if pd.api.types.is_numeric_dtype(s.dtype):
        arr = np.array(s, dtype=float)
        return arr, np.ones(arr.shape, bool)
    s = s.astype(object)
    # fast path first (C parser); the regular expressions only touch the cells it refused
    nums = np.array(pd.to_numeric(s, errors="coerce"), dtype=float)
    parsed = ~np.isnan(nums)
    retry = np.nonzero(~parsed)[0]
    if retry.size:
        rest = s.iloc[retry].astype(str).str.strip()
        norm = rest.str.replace(_D_EXPONENT, r"\1E\2", regex=True)
        norm = norm.str.replace(_BARE_EXPONENT, r"\1E\2", regex=True)
        if decimal_comma:
            norm = norm.str.replace(_DECIMAL_COMMA, r"\1.\2", regex=True).str.replace(
                _D_EXPONENT, r"\1E\2", regex=True)
        more = pd.to_numeric(norm, errors="coerce").to_numpy(dtype=float)
        is_nan_word = norm.str.lower().isin(["nan", "+nan", "-nan"]).to_numpy()
        nums[retry] = more
        parsed[retry] = ~np.isnan(more) | is_nan_word
    return nums, parsed


def _dedupe(names: list[str]) -> list[str]:
    out: list[str] = []
    for i, name in enumerate(names):
        name = name.strip().strip('"').strip("'").strip() or f"column_{i + 1}"
        candidate, k = name, 2
        while candidate in out:
            candidate, k = f"{name}_{k}", k + 1
        out.append(candidate)
    return out


def _balanced_tokens(header: str) -> list[str]:
    """Whitespace tokens joined while a bracket is open: 'log10(rho/g cm^-3)' stays one field."""
    out, cur, depth = [], [], 0
    for tok in header.split():
        cur.append(tok)
        depth += sum(tok.count(c) for c in "([{") - sum(tok.count(c) for c in ")]}")
        if depth <= 0:
            out.append(" ".join(cur))
            cur, depth = [], 0
    if cur:
        out.append(" ".join(cur))
    return out


def _split_header_to(header: str, n: int) -> list[str] | None:
    """A whitespace header split into exactly ``n`` names, when units with spaces make that possible.

    Tried in turn: runs of two or more blanks; whitespace outside brackets
    (``log10(rho/g cm^-3)`` is one name); the same with a bracketed unit joined
    to the name before it (``rho [g cm^-3]``). None when none gives ``n``.
    """
    first = [c for c in re.split(r"\s{2,}|\t", header.strip()) if c]
    if len(first) == n:
        return first
    balanced = _balanced_tokens(header)
    if len(balanced) == n:
        return balanced
    joined: list[str] = []
    for tok in balanced:
        if joined and tok[:1] in "([{":
            joined[-1] += " " + tok
        else:
            joined.append(tok)
    return joined if len(joined) == n else None


def _mode(counts: np.ndarray) -> int:
    values, freq = np.unique(counts, return_counts=True)
    return int(values[np.argmax(freq)])


def preview_lines(data: bytes, n: int = 12, max_chars: int = 200) -> list[str]:
    """The first ``n`` lines of a file as text (gzip undone, each cut to ``max_chars``), for a user to look at.

    Never raises: a file that is not text gives an empty list.
    """
    try:
        data = bytes(data[:4 * _CHUNK]) if data[:2] != _GZIP_MAGIC else \
            zlib.decompressobj(wbits=31).decompress(bytes(data[:4 * _CHUNK]), 4 * _CHUNK)
        text = _decode(data)
    except (TableError, zlib.error, TypeError):
        return []
    return [line[:max_chars] for line in text.splitlines()[:n]]


def read_table(data: bytes, filename: str = "", max_bytes: int = MAX_BYTES,
               max_rows: int = MAX_ROWS, *, delimiter: str = "auto", header_line: int | None = None,
               skip_ragged: bool = False) -> pd.DataFrame:
    """Read an uploaded track table into a DataFrame.

    Parameters
    ----------
    data : bytes
        The file content, plain or gzip-compressed (recognised by its magic
        bytes 1f 8b, whatever the name).
    filename : str
        Name as uploaded; used only in messages.
    max_bytes : int
        Largest accepted size, raw and after decompression.
    max_rows : int
        Largest accepted number of data rows.
    delimiter : str
        "auto" (sniffed) or a key of :data:`DELIMITERS` chosen by the user.
    header_line : int, optional
        None: found automatically. 0: the file has no header (columns are
        named ``column_1``, ``column_2``...). k >= 1: line k of the file (1-based,
        counting every line) is the header; lines before it are skipped.
    skip_ragged : bool
        Skip data lines whose number of fields differs from the header's
        instead of refusing the file; their line numbers are in
        ``df.attrs["skipped_lines"]``.

    Returns
    -------
    pandas.DataFrame
        One column per header field. Columns whose every non-empty cell is a
        number are float (empty cells NaN); other columns keep their cells as
        stripped strings. ``df.attrs["source_lines"]`` holds the 1-based line
        number in the (decompressed) file of every data row, for messages.

    Raises
    ------
    LayoutError
        No header; a header with no data rows; a row with a different number
        of fields from the header (the message names the line); unmatched
        quotes: the lines are text but do not split into a table.
    TableError
        Empty file; binary data; too large (raw or decompressed); more than
        ``max_rows`` data rows; a bad ``delimiter`` or ``header_line``.

    Notes
    -----
    The delimiter is sniffed on the header and the first 50 data lines (see
    :func:`_sniff`); a first line ``sep=;`` (written by some spreadsheets)
    names it. Lines whose first non-blank character is ``#`` are comments and
    may appear anywhere; when the first non-comment line is all numbers, the
    last comment line is taken as the header if it has the same number of
    fields (``# model age log_rho``). A whitespace-separated header whose
    names hold units with spaces (``log10(rho/g cm^-3)``) is split into as
    many names as the data lines have fields (see :func:`_split_header_to`).
    Quoted fields may contain the delimiter but not a line break. A column
    written entirely with decimal commas (``2,818383e+04``, spreadsheet
    exports of many countries) is read as numbers in every file that is not
    comma-separated (and in quoted cells of one that is). A trailing delimiter
    at the end of every line (an empty last column) is dropped.
    """
    name = f"'{filename}'" if filename else "the file"
    if not isinstance(data, (bytes, bytearray, memoryview)):
        raise TableError(f"expected the file content as bytes, got {type(data).__name__}")
    if delimiter != "auto" and delimiter not in DELIMITERS:
        raise TableError(f"unknown delimiter {delimiter!r}; choose auto, {', '.join(DELIMITERS)}")
    if header_line is not None and (isinstance(header_line, bool) or not isinstance(header_line, (int, np.integer))
                                    or header_line < 0):
        raise TableError(f"the header line must be a line number >= 1, or 0 for no header; got {header_line!r}")
    data = bytes(data)
    if len(data) > max_bytes:
        raise TableError(f"the file is {_fmt_mb(len(data))}; the limit is {_limit_mb(max_bytes)}; "
                         "upload a shorter table or thin it out (every n-th row)")
    if not data.strip():
        raise TableError(f"{name} is empty; upload a table with a header row and data rows")
    if data[:2] == _GZIP_MAGIC:
        data = _gunzip(data, max_bytes)
        if not data.strip():
            raise TableError(f"{name} is empty after decompression; upload a table with a header row "
                             "and data rows")
    text = _decode(data)

    forced = DELIMITERS[delimiter] if delimiter != "auto" else "auto"
    header_line_text, header_lineno, last_comment = None, 0, None
    no_header = header_line == 0
    data_lines: list[str] = []
    data_linenos: list[int] = []
    n_lines = 0
    for lineno, raw in enumerate(text.splitlines(), start=1):
        n_lines = lineno
        line = raw.strip()
        if header_line and lineno < header_line:
            continue
        if header_line and lineno == header_line:
            header_line_text, header_lineno = line.lstrip("#").strip(), lineno
            continue
        if not line:
            continue
        if line.startswith("#"):
            if header_line_text is None:
                last_comment = line.lstrip("#").strip()
            continue
        hint = _SEP_HINT.match(line)
        if hint and header_line_text is None and not data_lines:
            if forced == "auto":
                forced = "\t" if hint.group(1) == "\t" else hint.group(1)
                if forced not in _SEP_NAMES:
                    forced = "auto"
            continue
        if header_line_text is None and not no_header:
            header_line_text, header_lineno = line, lineno
            continue
        data_lines.append(line)
        data_linenos.append(lineno)
        if len(data_lines) > max_rows:
            raise TableError(f"{name} has more than {max_rows:,} data rows; the limit is {max_rows:,} rows; "
                             "thin the track out (every n-th model) and upload again")
    if header_line and header_line > n_lines:
        raise TableError(f"{name} has {n_lines} lines; there is no line {header_line} to use as the header")

    if no_header:
        if not data_lines:
            raise LayoutError(f"{name} has no data lines")
        delim = forced if forced != "auto" else _sniff(data_lines[0], data_lines[1:_SNIFF_LINES])
        ncol = _mode(np.array([_split_count(x, delim) for x in data_lines[:_SNIFF_LINES]]))
        header_line_text = (delim or " ").join(f"column_{i + 1}" for i in range(ncol))
    if not header_line_text:
        raise LayoutError(f"{name} holds only comment lines; add a header row naming the columns "
                          "and the data rows")

    def sniff(header):
        return forced if forced != "auto" else _sniff(header, data_lines[:_SNIFF_LINES])

    delim = sniff(header_line_text)
    if not no_header and not header_line and _looks_numeric(_split(header_line_text, delim)):
        # The header may be the last comment line before the data ("# model age log_rho").
        promoted = False
        if last_comment:
            sample = [header_line_text] + data_lines[:_SNIFF_LINES]
            cdelim = forced if forced != "auto" else _sniff(last_comment, sample)
            ccells = _split(last_comment, cdelim)
            if len(ccells) == _split_count(header_line_text, cdelim) and not _looks_numeric(ccells):
                data_lines.insert(0, header_line_text)
                data_linenos.insert(0, header_lineno)
                header_line_text, promoted = last_comment, True
                if len(data_lines) > max_rows:
                    raise TableError(f"{name} has more than {max_rows:,} data rows; the limit is "
                                     f"{max_rows:,} rows; thin the track out and upload again")
        if not promoted:
            raise LayoutError(f"the first line of {name} (line {header_lineno}) is all numbers: add a "
                              f"header row naming the columns, e.g. 'model,age,log_rho,log_T', or read it "
                              "with no header")

    delim = sniff(header_line_text)
    if delim is not None and header_line_text.count('"') % 2:
        raise LayoutError(f"the header of {name} has an unmatched quote character (\")")
    raw_names = _split(header_line_text, delim)
    if not data_lines:
        raise LayoutError(f"{name} has a header row (columns: {', '.join(_dedupe(raw_names))}) but no data rows")
    if delim is None and data_lines:
        # names with units in them ("log10(rho/g cm^-3)"): the data lines tell how many names there are
        n_data = _mode(np.array([_split_count(x, None) for x in data_lines[:_SNIFF_LINES]]))
        if n_data != len(raw_names):
            names = _split_header_to(header_line_text, n_data)
            if names is not None:
                raw_names = names
    columns = _dedupe(raw_names)

    ncol = len(columns)
    if delim is not None and any('"' in line for line in data_lines):
        for i, line in enumerate(data_lines):
            if line.count('"') % 2:
                raise LayoutError(f"line {data_linenos[i]} of {name} has an unmatched quote character (\")")
    counts = np.fromiter((_split_count(line, delim) for line in data_lines), dtype=np.int64,
                         count=len(data_lines))
    ragged = np.nonzero(counts != ncol)[0]
    skipped: list[int] = []
    if ragged.size and skip_ragged:
        skipped = [data_linenos[i] for i in ragged]
        keep = counts == ncol
        data_lines = [x for x, k in zip(data_lines, keep) if k]
        data_linenos = [x for x, k in zip(data_linenos, keep) if k]
        if not data_lines:
            raise LayoutError(f"no line of {name} has the header's {ncol} fields ({', '.join(columns)}) "
                              f"when split at {_SEP_NAMES[delim]}; choose another delimiter or header line")
    elif ragged.size:
        i = int(ragged[0])
        more = f" ({ragged.size - 1} more lines like it)" if ragged.size > 1 else ""
        raise LayoutError(f"line {data_linenos[i]} of {name} has {counts[i]} fields but the header has {ncol} "
                          f"({', '.join(columns)}); fields are {_SEP_NAMES[delim]}-separated; fix or remove "
                          f"that line{more}")

    body = "\n".join(data_lines)
    try:
        if delim is None:
            df = pd.read_csv(io.StringIO(body), sep=r"\s+", header=None, names=list(range(ncol)),
                             dtype=str, keep_default_na=False, na_filter=False, quoting=csv.QUOTE_NONE,
                             engine="c", skip_blank_lines=False, comment=None)
        else:
            df = pd.read_csv(io.StringIO(body), sep=delim, header=None, names=list(range(ncol)),
                             dtype=str, keep_default_na=False, na_filter=False, skipinitialspace=True,
                             quoting=csv.QUOTE_MINIMAL if '"' in body else csv.QUOTE_NONE,
                             engine="c", skip_blank_lines=False, comment=None)
    except (pd.errors.ParserError, ValueError, csv.Error) as exc:
        raise LayoutError(f"{name} cannot be split into columns ({exc}); check the delimiter and quotes") from None
    if len(df) != len(data_lines) or df.shape[1] != ncol:
        raise LayoutError(f"{name} cannot be split consistently into {ncol} columns ({', '.join(columns)}); "
                          "check the delimiter and quote characters")
    df.columns = columns

    out = {}
    comma_ok = delim != "," or '"' in body
    for col, raw in zip(columns, raw_names):
        nums, parsed = to_numbers(df[col])
        if parsed.all():
            out[col] = nums
            continue
        cells = df[col].astype(object).str.strip()
        nonempty = (cells != "").to_numpy()
        if not nonempty.any() and not str(raw).strip() and col == columns[-1]:
            continue                        # a trailing delimiter on every line: no column there
        if comma_ok and not parsed[nonempty].all():
            nums2, parsed2 = to_numbers(cells, decimal_comma=True)
            if parsed2[nonempty].all():
                nums, parsed = nums2, parsed2
        if nonempty.any() and parsed[nonempty].all():
            out[col] = np.where(nonempty, nums, np.nan)
        else:
            out[col] = cells.to_numpy(dtype=object)
    result = pd.DataFrame(out, columns=list(out))
    result.attrs["source_lines"] = np.asarray(data_linenos, dtype=np.int64)
    result.attrs["skipped_lines"] = skipped
    result.attrs["delimiter"] = _SEP_NAMES[delim]
    return result


# ----------------------------------------------------------------------------
# column detection
# ----------------------------------------------------------------------------
@dataclass
class ColumnMapping:
    """Which column plays which role, and how to read it.

    ``rho_log`` / ``T_log``: the column holds log10 of the quantity.
    ``units``: "cgs" (g cm^-3) or "si" (kg m^-3) for the density; temperature
    is in K either way. ``age_col`` None means "use the row number".
    ``X_col``, ``Y_col``, ``Z_col``: mass fractions of hydrogen, helium and
    metals per row (any two give the third); ``nuclide_cols``: nuclide ->
    column of its mass fraction (used when no X/Y/Z column is mapped).
    ``ambiguous`` collects notes for the user (several candidates, guesses made
    from values, roles left unset).
    """

    rho_col: str | None = None
    T_col: str | None = None
    rho_log: bool = True
    T_log: bool = True
    units: str = "cgs"
    age_col: str | None = None
    label_col: str | None = None
    X_col: str | None = None
    Y_col: str | None = None
    Z_col: str | None = None
    nuclide_cols: dict[str, str] = field(default_factory=dict)
    ambiguous: list[str] = field(default_factory=list)

    @property
    def composition_cols(self) -> list[str]:
        """Every column that gives the track's own composition."""
        return [c for c in (self.X_col, self.Y_col, self.Z_col) if c is not None] + list(self.nuclide_cols.values())


_UNIT_RE = re.compile(r"[\[\(\{<]([^\]\)\}>]*)[\]\)\}>]")
_LOG_PREFIX = re.compile(r"^(log_?10|log|lg)_?")
# plain words for "at the centre"
_POSITION = r"(?:c|cen|center|centre|central|core)"
_UNIT_TOKENS = r"(?:cgs|si|k|kelvin|g_?cm_?3|g_?cm_?m3|gcc|kg_?m_?3|kg_?m_?m3|g_?cc)"
_DENSITY_NAMES = ("rho", "density", "dens", "den")
_TEMPERATURE_NAMES = ("t", "temp", "temperature", "tem")
# Parameters are found from plain words anywhere in the name (age_yr, time [s], model, step).
_AGE_WORDS = ("age", "time")
_AGE_NAMES = ("t_yr", "t_myr", "t_gyr", "t_s")
_STEP_WORDS = ("model", "step", "steps", "iteration")
_LABEL_NAMES = ("label", "name", "phase", "stage", "tag", "comment", "id", "star")
_X_NAMES = ("x", "x_h", "xh", "hydrogen")
_Y_NAMES = ("y", "y_he", "yhe", "helium")
_Z_NAMES = ("z", "metals", "metallicity")
_SI_RE = re.compile(r"kg\s*[/_ ]?\s*m\s*\^?\s*-?\s*3|kg\s*m\s*\*\*\s*-?3|(^|[^a-z])si($|[^a-z])")
# A nuclide written as element, separator, mass number (H-1, He_4, c-12), optionally as X(...)
# and with a centre word before or after; never glued (that spelling belongs to no table of ours).
_NUCLIDE_RE = re.compile(r"^([A-Za-z]{1,2})[-_ ](\d{1,3})$")
_NUCLIDE_POSITION = re.compile(r"^(?:center|centre|central|core|c)[_ ]+|[_ ]+(?:center|centre|central|core|c)$",
                               re.IGNORECASE)


def nuclide_of(column) -> str | None:
    """The nuclide a column's name spells out (``H-1``, ``X(He-4)``, ``central C-12``), or None.

    Only nuclides of :data:`thermoplane.physics.NUCLIDES`, written with a
    separator between element and mass number.
    """
    from ..physics import NUCLIDES
    name = str(column).strip()
    m = re.fullmatch(r"(?:x|X)\s*\((.*)\)", name)
    name = m.group(1).strip() if m else name
    name = _NUCLIDE_POSITION.sub("", name).strip()
    m = _NUCLIDE_RE.match(name)
    if not m:
        return None
    nuclide = f"{m.group(1).capitalize()}-{int(m.group(2))}"
    return nuclide if nuclide in NUCLIDES else None


def _normalise(name: str) -> tuple[str, str]:
    """(base name, unit text): lower case, units in brackets split off, separators as '_'."""
    low = str(name).strip().lower()
    # log10(T) or log(rho_c) [g/cm3]: the bracket after a log is the name, not a unit
    low = re.sub(r"^(log_?10|log|lg)\s*\(([^)]*)\)", r"\1_\2", low)
    units = " ".join(_UNIT_RE.findall(low))
    base = _UNIT_RE.sub(" ", low) if units and _UNIT_RE.sub(" ", low).strip() else low
    base = re.sub(r"[^a-z0-9]+", "_", base).strip("_")
    return base, units


def _strip_log(base: str) -> tuple[str, bool]:
    m = _LOG_PREFIX.match(base)
    if m and len(base) > m.end():
        return base[m.end():], True
    return base, False


def _strip_qualifiers(core: str) -> str:
    """Remove position words (centre, c) and unit tokens so 'center_rho_cgs' -> 'rho'."""
    core = re.sub(rf"^{_POSITION}_", "", core)
    core = re.sub(rf"_{_UNIT_TOKENS}$", "", core)
    core = re.sub(rf"_{_POSITION}$", "", core)
    return core


def _role_match(base: str, names: tuple[str, ...], allow_glued_c: bool = True) -> bool:
    core = _strip_qualifiers(base)
    if core in names:
        return True
    # glued centre suffix: rhoc, tc, densc
    return allow_glued_c and core.endswith("c") and core[:-1] in names


def _finite_values(df: pd.DataFrame, col: str) -> np.ndarray:
    nums, parsed = to_numbers(df[col])
    return nums[parsed & np.isfinite(nums)]


def _pick(cands: list[str], role: str, notes: list[str]) -> str | None:
    if len(cands) == 1:
        return cands[0]
    if len(cands) > 1:
        notes.append(f"several columns could be the {role}: {', '.join(cands)}; choose one")
    return None


def detect_columns(df: pd.DataFrame) -> ColumnMapping:
    """Guess each column's role from its name.

    Parameters
    ----------
    df : pandas.DataFrame
        A table from :func:`read_table`.

    Returns
    -------
    ColumnMapping
        Roles found; a role with several candidates is left unset and named
        in ``ambiguous``.

    Notes
    -----
    Names are compared in lower case with units in brackets split off
    (``rho [kg/m3]``) and any run of non-letters read as ``_``.

    - density: ``rho``, ``density``, ``dens``, optionally with a centre word
      (``c``, ``center``, ``centre``, ``central``, ``core``) before or after,
      glued (``rhoc``) or not (``rho_c``, ``center_rho``), and a unit token
      (``rho_cgs``, ``rho_kg_m3``).
    - temperature: ``T``, ``temp``, ``temperature`` with the same qualifiers.
      A bare lower-case ``t`` is read as time, a bare ``T`` as temperature.
      ``Teff`` is not the temperature of a layer and is never matched.
    - log or linear: a ``log``, ``log10`` or ``lg`` prefix means log10; no
      prefix means linear, *unless* the values cannot be linear: a density
      column with a negative value and every value in [-15, 15], or a
      temperature column with every value in (-inf, 13] (no stellar layer is
      at 13 K), is read as log10 and a note says so. ``ln`` prefixes are not
      recognised (convert to log10).
    - SI: the unit text or name mentions kg/m3 (kg m^-3, kg_m3) or "si";
      otherwise cgs.
    - age: a name with the word ``age`` or ``time`` in it (``age``,
      ``age_yr``, ``time [s]``), or ``t_yr``...; else a model or step
      counter (a name with the word ``model``, ``step`` or ``iteration``);
      else unset (the row number is used).
    - composition, only when most values lie in [0, 1]: ``X``/``hydrogen``,
      ``Y``/``helium``, ``Z``/``metals`` with centre qualifiers (``X_c``,
      ``central hydrogen``); or, when none of these is there, nuclide columns
      written with a separator (``H-1``, ``He-4``, ``X(C-12)``, see
      :func:`nuclide_of`).
    - label: ``label``, ``name``, ``phase``...; else the only non-numeric
      column if there is exactly one.
    """
    notes: list[str] = []
    info = {}
    for col in df.columns:
        base, units = _normalise(col)
        core, is_log = _strip_log(base)
        info[col] = (base, units, core, is_log)
    found = ", ".join(map(str, df.columns))

    def is_T(col: str) -> bool:
        base, _, core, is_log = info[col]
        if str(col).strip() == "t" and not is_log:
            return False
        return _role_match(core, _TEMPERATURE_NAMES)

    rho_c = [c for c in df.columns if _role_match(info[c][2], _DENSITY_NAMES)]
    T_c = [c for c in df.columns if is_T(c)]
    m = ColumnMapping(ambiguous=notes)
    m.rho_col = _pick(rho_c, "density", notes)
    m.T_col = _pick(T_c, "temperature", notes)
    if not rho_c:
        notes.append(f"no column looks like density (found: {found}); choose the density column")
    if not T_c:
        notes.append(f"no column looks like temperature (found: {found}); choose the temperature column")

    if m.rho_col is not None:
        base, units, core, is_log = info[m.rho_col]
        m.rho_log = is_log
        if _SI_RE.search(units) or re.search(r"(^|_)(si|kg_?m_?m?3)($|_)", base):
            m.units = "si"
        vals = _finite_values(df, m.rho_col)
        if not is_log and vals.size and vals.min() < 0 and vals.min() >= -15 and vals.max() <= 15:
            m.rho_log = True
            notes.append(f"column {m.rho_col!r} has negative values, all within [-15, 15]: read as "
                         "log10(density); map it as linear if that is wrong")
        elif is_log and vals.size and vals.max() > 30:
            notes.append(f"column {m.rho_col!r} is named as a log but has values up to {vals.max():.3g}; "
                         "check whether it is linear")
    if m.T_col is not None:
        base, units, core, is_log = info[m.T_col]
        m.T_log = is_log
        vals = _finite_values(df, m.T_col)
        if not is_log and vals.size and vals.max() <= 13:
            m.T_log = True
            notes.append(f"column {m.T_col!r} has every value at or below 13: read as log10(T); "
                         "map it as linear if that is wrong")
        elif is_log and vals.size and vals.max() > 30:
            notes.append(f"column {m.T_col!r} is named as a log but has values up to {vals.max():.3g}; "
                         "check whether it is linear")

    taken = {m.rho_col, m.T_col}

    def words(col) -> set[str]:
        return set(info[col][0].split("_"))

    ages = [c for c in df.columns if c not in taken and
            (words(c) & set(_AGE_WORDS) or _strip_qualifiers(info[c][0]) in _AGE_NAMES or str(c).strip() == "t")]
    steps = [c for c in df.columns if c not in taken and words(c) & set(_STEP_WORDS)]
    m.age_col = _pick(ages, "age", notes) if ages else _pick(steps, "age (model or step number)", notes)

    def is_fraction(c, role) -> bool:
        vals = _finite_values(df, c)
        if vals.size and np.mean((vals >= 0) & (vals <= 1)) > 0.5:
            return True
        notes.append(f"column {c!r} is named like {role} but its values are not mass fractions in [0, 1]; "
                     "not used")
        return False

    def composition(names, word, role):
        cands = [c for c in df.columns if c not in taken and c != m.age_col
                 and (_role_match(info[c][0], names) or word in words(c))
                 and nuclide_of(c) is None]
        return _pick([c for c in cands if is_fraction(c, role)], role, notes)

    m.X_col = composition(_X_NAMES, "hydrogen", "hydrogen mass fraction X")
    m.Y_col = composition(_Y_NAMES, "helium", "helium mass fraction Y")
    m.Z_col = composition(_Z_NAMES, "metals", "metal mass fraction Z")
    nuclides: dict[str, list[str]] = {}
    for c in df.columns:
        nuc = nuclide_of(c)
        if nuc is not None and c not in taken and pd.api.types.is_numeric_dtype(df[c]):
            nuclides.setdefault(nuc, []).append(c)
    for nuc, cols in nuclides.items():
        col = _pick(cols, f"mass fraction of {nuc}", notes)
        if col is not None and is_fraction(col, f"the mass fraction of {nuc}"):
            m.nuclide_cols[nuc] = col
    if m.nuclide_cols and (m.X_col or m.Y_col or m.Z_col):
        notes.append(f"nuclide columns ({', '.join(m.nuclide_cols.values())}) are not used: the X/Y/Z "
                     "columns give the composition")
        m.nuclide_cols = {}

    labels = [c for c in df.columns if info[c][0] in _LABEL_NAMES]
    if labels:
        m.label_col = _pick(labels, "label", notes)
    else:
        text_cols = [c for c in df.columns if not pd.api.types.is_numeric_dtype(df[c]) and c not in taken]
        if len(text_cols) == 1:
            m.label_col = text_cols[0]
    return m


# ----------------------------------------------------------------------------
# mapping -> track
# ----------------------------------------------------------------------------
@dataclass
class TrackData:
    """A validated track: log10 density (cgs) and log10 temperature per row.

    Every row of the table is kept; ``bad_rows`` (0-based data-row indices)
    are left out of evaluation, with a reason each in ``bad_reasons``.
    """

    log_rho: np.ndarray
    log_T: np.ndarray
    age: np.ndarray | None = None
    label: np.ndarray | None = None
    X: np.ndarray | None = None
    Y: np.ndarray | None = None
    metals: dict[str, float] | None = None
    bad_rows: list[int] = field(default_factory=list)
    bad_reasons: dict[int, str] = field(default_factory=dict)

    @property
    def valid(self) -> np.ndarray:
        """Boolean mask, True on the rows that are evaluated."""
        mask = np.ones(len(self.log_rho), dtype=bool)
        mask[np.asarray(self.bad_rows, dtype=int)] = False
        return mask

    def __len__(self) -> int:
        return len(self.log_rho)


def _missing(value: float) -> str:
    return "missing value (empty or nan)" if np.isnan(value) else f"{value} is not finite"


# 10**x must stay finite and non-zero in double precision
_LOG_LIMIT = 300.0


def apply_mapping(df: pd.DataFrame, mapping: ColumnMapping) -> TrackData:
    """Convert the mapped columns to log10 rho (g cm^-3) and log10 T (K).

    Parameters
    ----------
    df : pandas.DataFrame
        A table from :func:`read_table`.
    mapping : ColumnMapping
        From :func:`detect_columns`, possibly corrected by the user.

    Returns
    -------
    TrackData

    Raises
    ------
    TableError
        No density or temperature column chosen; a mapped column that does
        not exist (the message lists the columns found); units not "cgs" or
        "si"; no valid row at all.

    Notes
    -----
    SI density: 1 kg m^-3 = 1e-3 g cm^-3, so log rho_cgs = log rho_SI - 3.
    A row is bad when its density or temperature cell is not a number, not
    finite, not > 0 (linear columns), or so large in log that 10**value is
    not a finite double (|log| > 300); or when X or Y is outside [0, 1] or
    X + Y > 1 (1e-6 tolerance). A non-numeric age leaves the row valid with
    age NaN.
    """
    found = ", ".join(map(str, df.columns))
    if mapping.rho_col is None:
        raise TableError(f"no density column chosen; columns found: {found}")
    if mapping.T_col is None:
        raise TableError(f"no temperature column chosen; columns found: {found}")
    for role, col in (("density", mapping.rho_col), ("temperature", mapping.T_col), ("age", mapping.age_col),
                      ("label", mapping.label_col), ("X", mapping.X_col), ("Y", mapping.Y_col),
                      ("Z", mapping.Z_col), *((f"{n} fraction", c) for n, c in (mapping.nuclide_cols or {}).items())):
        if col is not None and col not in df.columns:
            raise TableError(f"the {role} column {col!r} is not in the table; columns found: {found}")
    if mapping.units not in ("cgs", "si"):
        raise TableError(f"units must be 'cgs' or 'si', got {mapping.units!r}")

    n = len(df)
    lines = df.attrs.get("source_lines")
    lines = lines if lines is not None and len(lines) == n else None
    reasons: dict[int, list[str]] = {}

    def flag(mask: np.ndarray, make) -> None:
        for i in np.nonzero(mask)[0]:
            reasons.setdefault(int(i), []).append(make(int(i)))

    def cell(col: str, i: int) -> str:
        text = str(df[col].iloc[i]).strip()
        return repr(text) if text else "empty cell"

    def column(col: str, is_log: bool, what: str) -> np.ndarray:
        nums, parsed = to_numbers(df[col])
        flag(~parsed, lambda i: f"{col}: {cell(col, i)} is not a number")
        flag(parsed & ~np.isfinite(nums), lambda i: f"{col}: {_missing(nums[i])}")
        fin = parsed & np.isfinite(nums)
        if is_log:
            out = np.where(fin, nums, np.nan)
            big = fin & (np.abs(out) > _LOG_LIMIT)
            flag(big, lambda i: f"{col}: log10 {what} = {nums[i]:g} is out of range (|log| > {_LOG_LIMIT:g})")
            out[big] = np.nan
        else:
            nonpos = fin & (nums <= 0)
            flag(nonpos, lambda i: f"{col}: {what} must be > 0, got {nums[i]:g}")
            with np.errstate(divide="ignore", invalid="ignore"):
                out = np.where(fin & ~nonpos, np.log10(np.where(fin & ~nonpos, nums, 1.0)), np.nan)
        return out

    log_rho = column(mapping.rho_col, mapping.rho_log, "density")
    if mapping.units == "si":
        log_rho = log_rho - 3.0          # kg m^-3 -> g cm^-3
    log_T = column(mapping.T_col, mapping.T_log, "temperature")

    def fraction(col: str | None) -> np.ndarray | None:
        if col is None:
            return None
        nums, parsed = to_numbers(df[col])
        flag(~parsed, lambda i: f"{col}: {cell(col, i)} is not a number")
        fin = parsed & np.isfinite(nums)
        flag(parsed & ~fin, lambda i: f"{col}: {_missing(nums[i])}")
        out_of = fin & ((nums < 0) | (nums > 1))
        flag(out_of, lambda i: f"{col}: mass fraction {nums[i]:g} is outside [0, 1]")
        return np.where(fin, nums, np.nan)

    X = fraction(mapping.X_col)
    Y = fraction(mapping.Y_col)
    Z = fraction(mapping.Z_col)
    metals = None
    from_nuclides = False
    if X is None and Y is None and Z is None and mapping.nuclide_cols:
        # nuclide columns: X = hydrogen isotopes, Y = helium isotopes, the rest are metals in the
        # track's mean metal mixture (the equation of state sees metals only through mu and ye)
        from ..physics import NUCLIDES
        parts = {n: fraction(c) for n, c in mapping.nuclide_cols.items()}
        for nuc in parts:
            if nuc not in NUCLIDES:
                raise TableError(f"unknown nuclide {nuc!r} in the composition columns; "
                                 f"known: {', '.join(NUCLIDES)}")
        from_nuclides = True
        zeros = np.zeros(n)

        def total(names):
            cols = [v for k, v in parts.items() if k in names]
            return np.sum(cols, axis=0) if cols else zeros.copy()

        hyd = [k for k in parts if NUCLIDES[k].Z == 1]
        hel = [k for k in parts if NUCLIDES[k].Z == 2]
        met = [k for k in parts if NUCLIDES[k].Z > 2]
        X, Y = total(hyd), total(hel)
        Z = total(met) if met else None
        if met:
            means = {k: float(np.nanmean(parts[k])) if np.isfinite(parts[k]).any() else 0.0 for k in met}
            s_m = sum(means.values())
            metals = {k: v / s_m for k, v in means.items()} if s_m > 0 else None
        with np.errstate(invalid="ignore"):
            short = np.abs(X + Y + (Z if Z is not None else 0.0) - 1.0) > 0.01
        if Z is not None:
            flag(short, lambda i: f"the nuclide fractions add up to {X[i] + Y[i] + Z[i]:.6g}, not 1")
    if Z is not None:
        # any two of X, Y, Z give the third
        if X is None and Y is None:
            raise TableError("a metal (Z) column alone does not give the composition; map X or Y too")
        if X is None:
            X = 1.0 - Y - Z
        elif Y is None:
            Y = 1.0 - X - Z
        elif not from_nuclides:
            with np.errstate(invalid="ignore"):
                off = np.abs(X + Y + Z - 1.0) > 0.01
            flag(off, lambda i: f"X + Y + Z = {X[i] + Y[i] + Z[i]:.6g} is not 1 (within 0.01)")
        with np.errstate(invalid="ignore"):
            neg = (X < -1e-6) | (Y < -1e-6)
        flag(neg, lambda i: f"X = {X[i]:.6g}, Y = {Y[i]:.6g}, Z = {Z[i]:.6g} do not add up to 1")
    if X is not None and Y is not None:
        with np.errstate(invalid="ignore"):
            over = (X + Y > 1.0 + 1e-6) & (X <= 1) & (Y <= 1) & (X >= 0) & (Y >= 0)
        flag(over, lambda i: f"X + Y = {X[i] + Y[i]:.6g} is more than 1")

    age = None
    if mapping.age_col is not None:
        age, _ = to_numbers(df[mapping.age_col])
    label = None
    if mapping.label_col is not None:
        label = df[mapping.label_col].astype(str).to_numpy(dtype=object)

    bad = sorted(reasons)
    bad_reasons = {}
    for i in bad:
        where = f"line {lines[i]}" if lines is not None else f"row {i}"
        bad_reasons[i] = f"{where}: " + "; ".join(reasons[i])
    if len(bad) == n:
        first = "; ".join(bad_reasons[i] for i in bad[:3])
        raise TableError(f"none of the {n} rows has a usable density and temperature "
                         f"(density column {mapping.rho_col!r}, temperature column {mapping.T_col!r}; "
                         f"columns found: {found}); first problems: {first}")
    return TrackData(log_rho=log_rho, log_T=log_T, age=age, label=label, X=X, Y=Y, metals=metals,
                     bad_rows=bad, bad_reasons=bad_reasons)
