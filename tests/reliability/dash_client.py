"""Build valid ``/_dash-update-component`` bodies from the app's own callback list.

The callbacks change as the dashboard grows, so nothing here names more than a
handful of component ids: the dependency list (``/_dash-dependencies``) gives
every server-side callback's outputs, inputs and state, and the layout gives
each component's starting value. A body built here is what the browser would
send on first load, with any values changed by the caller.
"""

from __future__ import annotations

import json

from dash._utils import split_callback_id

UPDATE = "/_dash-update-component"


def is_pattern(cid: str) -> bool:
    return cid.startswith("{")


def layout_values(layout) -> dict:
    """{(component id, prop): value} for every component with a string id.

    ``layout`` is the JSON of ``GET /_dash-layout`` (what the browser renders).
    """
    values: dict = {}

    def walk(node):
        if isinstance(node, list):
            for n in node:
                walk(n)
            return
        if not isinstance(node, dict):
            return
        props = node.get("props")
        if not (isinstance(props, dict) and "type" in node):
            for v in node.values():             # plain dicts may hold components too
                if isinstance(v, (dict, list)):
                    walk(v)
            return
        cid = props.get("id")
        for prop, value in props.items():
            if isinstance(cid, str):
                values[(cid, prop)] = value
            if isinstance(value, (dict, list)):
                walk(value)

    walk(layout)
    return values


def server_callbacks(deps: list[dict]) -> list[dict]:
    """The callbacks that run in Python (clientside ones never reach the server)."""
    return [d for d in deps if not d.get("clientside_function")]


def find(deps: list[dict], output_id: str, prop: str | None = None) -> dict | None:
    """The server callback whose outputs include ``output_id`` (and ``prop``, when given)."""
    for d in server_callbacks(deps):
        for o in _outputs_list(d["output"]):
            if o["id"] == output_id and (prop is None or o["property"].split("@")[0] == prop):
                return d
    return None


def _outputs_list(output: str) -> list[dict]:
    out = split_callback_id(output)
    return out if isinstance(out, list) else [out]


def _entry(item: dict, values: dict, overrides: dict):
    cid, prop = item["id"], item["property"]
    if is_pattern(cid):
        return []                                  # no matching components on first load
    value = overrides.get((cid, prop), values.get((cid, prop)))
    return {"id": cid, "property": prop, "value": value}


def body(dep: dict, values: dict, overrides: dict | None = None, changed: list[str] | None = None) -> dict:
    """The request body for ``dep`` with the layout ``values``, some replaced by ``overrides``.

    ``changed`` lists the "id.prop" strings reported as triggering the callback
    (default: every overridden input, else the first input).
    """
    overrides = overrides or {}
    outputs = split_callback_id(dep["output"])
    inputs = [_entry(i, values, overrides) for i in dep["inputs"]]
    state = [_entry(s, values, overrides) for s in dep["state"]]
    if changed is None:
        changed = [f"{i['id']}.{i['property']}" for i in dep["inputs"] if (i["id"], i["property"]) in overrides]
        if not changed and dep["inputs"] and not is_pattern(dep["inputs"][0]["id"]):
            changed = [f"{dep['inputs'][0]['id']}.{dep['inputs'][0]['property']}"]
    return {"output": dep["output"], "outputs": outputs, "inputs": inputs, "state": state,
            "changedPropIds": changed}


def response_value(payload: dict, cid: str, prop: str):
    """A property from a callback response (``{"response": {id: {prop: value}}}``), or None."""
    return (payload or {}).get("response", {}).get(cid, {}).get(prop)


def encode(b: dict) -> bytes:
    return json.dumps(b, allow_nan=True).encode()
