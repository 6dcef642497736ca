"""JavaScript snippets that read numbers out of a live plotly figure.

Figures travel as typed arrays ({dtype, bdata} objects, base64); these decode them.
"""

DECODE = """
const decode = (v) => {
  if (v && v.bdata !== undefined) {
    const raw = atob(v.bdata); const buf = new ArrayBuffer(raw.length); const u8 = new Uint8Array(buf);
    for (let i = 0; i < raw.length; i++) u8[i] = raw.charCodeAt(i);
    const types = {f8: Float64Array, f4: Float32Array, i4: Int32Array, i2: Int16Array, i1: Int8Array,
                   u4: Uint32Array, u2: Uint16Array, u1: Uint8Array};
    return Array.from(new types[v.dtype](buf));
  }
  return v ? Array.from(v) : v;
};
"""


def trace_values(graph_id: str, meta: str, attr: str) -> str:
    """A JS function returning the finite values of ``attr`` of the trace whose meta is ``meta``."""
    return f"""() => {{ {DECODE}
  const gd = document.querySelector('#{graph_id} .js-plotly-plot');
  if (!gd || !gd.data) return null;
  const t = gd.data.find(d => d.meta === '{meta}');
  if (!t) return null;
  return decode(t['{attr}']).filter(v => v !== null && Number.isFinite(v));
}}"""


def annotation_texts(graph_id: str) -> str:
    """A JS function returning the texts of the figure's annotations (the words beside the lines)."""
    return f"""() => {{ const gd = document.querySelector('#{graph_id} .js-plotly-plot');
  if (!gd || !gd.layout || !gd.layout.annotations) return [];
  return gd.layout.annotations.map(a => a.text || ''); }}"""


def wait_for_line(page, graph_id: str, meta: str, more_than: int, timeout: float) -> None:
    """Wait until the line (trace ``meta``) of the live figure has more than ``more_than`` finite x values."""
    xs = trace_values(graph_id, meta, "x")
    page.wait_for_function(f"() => {{ const x = ({xs})(); return x && x.length > {more_than}; }}", timeout=timeout)
