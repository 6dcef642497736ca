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

__all__ = ["TableError", "MAX_BYTES", "MAX_ROWS", "read_table", "ColumnMapping", "detect_columns",
           "TrackData", "apply_mapping", "to_numbers"]

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


def read_table(data: bytes, filename: str = "", max_bytes: int = MAX_BYTES,
               max_rows: int = MAX_ROWS) -> pd.DataFrame:
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

    Returns
    -------
    pandas.DataFrame
        One column per header field. Columns whose every non-empty cell is a
        number are float (empty cells NaN); other columns keep their cells as
        stripped strings. ``df.attrs["source_lines"]`` holds the 1-based line
        number in the (decompressed) file of every data row, for messages.

    Raises
    ------
    TableError
        Empty file; binary data; too large (raw or decompressed); more than
        ``max_rows`` data rows; a header with no data rows; no header; a row
        with a different number of fields from the header (the message names
        the line); unmatched quotes.

    Notes
    -----
    The delimiter is sniffed on the header and the first 50 data lines (see
    :func:`_sniff`). Lines whose first non-blank character is ``#`` are
    comments and may appear anywhere; when the first non-comment line is all
    numbers, the last comment line is taken as the header if it has the same
    number of fields (``# model age log_rho``). Quoted fields may contain the
    delimiter but not a line break. In semicolon-, tab- or whitespace-separated
    files a column written entirely with decimal commas (``1,5``) is read as
    numbers.
    """
    name = f"'{filename}'" if filename else "the file"
    if not isinstance(data, (bytes, bytearray, memoryview)):
        raise TableError(f"expected the file content as bytes, got {type(data).__name__}")
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

    header_line, header_lineno, last_comment = None, 0, None
    data_lines: list[str] = []
    data_linenos: list[int] = []
    for lineno, raw in enumerate(text.splitlines(), start=1):
        line = raw.strip()
        if not line:
            continue
        if line.startswith("#"):
            if header_line is None:
                last_comment = line.lstrip("#").strip()
            continue
        if header_line is None:
            header_line, header_lineno = line, lineno
            continue
        data_lines.append(line)
        data_linenos.append(lineno)
        if len(data_lines) > max_rows:
            raise TableError(f"{name} has more than {max_rows:,} data rows; the limit is {max_rows:,} rows; "
                             "thin the track out (every n-th model) and upload again")

    if header_line is None:
        raise TableError(f"{name} holds only comment lines; add a header row naming the columns "
                         "and the data rows")

    delim = _sniff(header_line, data_lines[:_SNIFF_LINES])
    if _looks_numeric(_split(header_line, delim)):
        # The header may be the last comment line before the data ("# model age log_rho").
        promoted = False
        if last_comment:
            sample = [header_line] + data_lines[:_SNIFF_LINES]
            cdelim = _sniff(last_comment, sample)
            ccells = _split(last_comment, cdelim)
            if len(ccells) == _split_count(header_line, cdelim) and not _looks_numeric(ccells):
                data_lines.insert(0, header_line)
                data_linenos.insert(0, header_lineno)
                header_line, promoted = last_comment, True
                if len(data_lines) > max_rows:
                    raise TableError(f"{name} has more than {max_rows:,} data rows; the limit is "
                                     f"{max_rows:,} rows; thin the track out and upload again")
        if not promoted:
            raise TableError(f"the first line of {name} (line {header_lineno}) is all numbers: add a "
                             f"header row naming the columns, e.g. 'model,age,log_rho,log_T'")

    delim = _sniff(header_line, data_lines[:_SNIFF_LINES])
    if delim is not None and header_line.count('"') % 2:
        raise TableError(f"the header of {name} has an unmatched quote character (\")")
    columns = _dedupe(_split(header_line, delim))
    if not data_lines:
        raise TableError(f"{name} has a header row (columns: {', '.join(columns)}) but no data rows")

    ncol = len(columns)
    if delim is not None and any('"' in line for line in data_lines):
        for i, line in enumerate(data_lines):
            if line.count('"') % 2:
                raise TableError(f"line {data_linenos[i]} of {name} has an unmatched quote character (\")")
    counts = np.fromiter((_split_count(line, delim) for line in data_lines), dtype=np.int64,
                         count=len(data_lines))
    ragged = np.nonzero(counts != ncol)[0]
    if ragged.size:
        i = int(ragged[0])
        sep = {None: "whitespace", "\t": "tab", ",": "comma", ";": "semicolon", "|": "pipe"}[delim]
        more = f" ({ragged.size - 1} more lines like it)" if ragged.size > 1 else ""
        raise TableError(f"line {data_linenos[i]} of {name} has {counts[i]} fields but the header has {ncol} "
                         f"({', '.join(columns)}); fields are {sep}-separated; fix or remove that line{more}")

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
        raise TableError(f"{name} cannot be split into columns ({exc}); check the delimiter and quotes") from None
    if len(df) != len(data_lines) or df.shape[1] != ncol:
        raise TableError(f"{name} cannot be split consistently into {ncol} columns ({', '.join(columns)}); "
                         "check the delimiter and quote characters")
    df.columns = columns

    out = {}
    for col in columns:
        nums, parsed = to_numbers(df[col])
        if parsed.all():
            out[col] = nums
            continue
        cells = df[col].astype(object).str.strip()
        nonempty = (cells != "").to_numpy()
        if delim != "," and not parsed[nonempty].all():
            nums2, parsed2 = to_numbers(cells, decimal_comma=True)
            if parsed2[nonempty].all():
                nums, parsed = nums2, parsed2
        if nonempty.any() and parsed[nonempty].all():
            out[col] = np.where(nonempty, nums, np.nan)
        else:
            out[col] = cells.to_numpy(dtype=object)
    result = pd.DataFrame(out, columns=columns)
    result.attrs["source_lines"] = np.asarray(data_linenos, dtype=np.int64)
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
    ambiguous: list[str] = field(default_factory=list)


_UNIT_RE = re.compile(r"[\[\(\{<]([^\]\)\}>]*)[\]\)\}>]")
_LOG_PREFIX = re.compile(r"^(log_?10|log|lg)_?")
_POSITION = r"(?:c|cen|cntr|center|centre|central|core)"
_UNIT_TOKENS = r"(?:cgs|si|k|kelvin|g_?cm_?3|g_?cm_?m3|gcc|kg_?m_?3|kg_?m_?m3|g_?cc)"
_DENSITY_NAMES = ("rho", "density", "dens", "den")
_TEMPERATURE_NAMES = ("t", "temp", "temperature", "tem")
_AGE_NAMES = ("age", "time", "t_yr", "star_age", "age_yr", "age_myr", "age_gyr", "time_yr", "time_s",
              "t_myr", "t_gyr", "t_s", "age_s", "tau")
_STEP_NAMES = ("model", "model_number", "modelnumber", "model_no", "model_nr", "step", "steps", "nmodel",
               "n_model", "imodel", "num", "number", "iteration")
_LABEL_NAMES = ("label", "name", "phase", "stage", "tag", "comment", "id", "model_name", "star")
_X_NAMES = ("x", "h1", "x_h", "xh", "x_h1", "hydrogen", "h_1")
_Y_NAMES = ("y", "he4", "y_he", "yhe", "y_he4", "helium", "he_4")
_SI_RE = re.compile(r"kg\s*[/_ ]?\s*m\s*\^?\s*-?\s*3|kg\s*m\s*\*\*\s*-?3|(^|[^a-z])si($|[^a-z])")


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
    - age: ``age``, ``time``, ``t_yr``, ``star_age``...; else a model or step
      counter (``model``, ``model_number``, ``step``); else unset (the row
      number is used).
    - X, Y: ``X``/``h1``/``hydrogen`` and ``Y``/``he4``/``helium`` with
      centre qualifiers, only when most values lie in [0, 1].
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
    ages = [c for c in df.columns if c not in taken and
            (_strip_qualifiers(info[c][0]) in _AGE_NAMES or str(c).strip() == "t")]
    steps = [c for c in df.columns if c not in taken and info[c][0] in _STEP_NAMES]
    m.age_col = _pick(ages, "age", notes) if ages else _pick(steps, "age (model or step number)", notes)

    def composition(names, role):
        cands = [c for c in df.columns if c not in taken and _role_match(info[c][0], names)]
        good = []
        for c in cands:
            vals = _finite_values(df, c)
            if vals.size and np.mean((vals >= 0) & (vals <= 1)) > 0.5:
                good.append(c)
            else:
                notes.append(f"column {c!r} is named like {role} but its values are not mass fractions "
                             "in [0, 1]; not used")
        return _pick(good, role, notes)

    m.X_col = composition(_X_NAMES, "hydrogen mass fraction X")
    m.Y_col = composition(_Y_NAMES, "helium mass fraction Y")

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
                      ("label", mapping.label_col), ("X", mapping.X_col), ("Y", mapping.Y_col)):
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
    return TrackData(log_rho=log_rho, log_T=log_T, age=age, label=label, X=X, Y=Y,
                     bad_rows=bad, bad_reasons=bad_reasons)
