"""The request the browser sends for the map callback, and the browser's side of a Dash ``Patch``:
shared by tests/app/test_delta.py and tests/benchmarks/bench_app.py (requests to the real server)."""

from __future__ import annotations

import copy


def map_request(app, values: dict, changed: str, held: bool = False, shape=None, drag_value=None) -> dict:
    """The body of a POST to /_dash-update-component for the map, for control values keyed like
    state.CONTROLS; ``held``: a slider is in the hand (a preview, ``drag_value`` its value), ``shape``: the
    fingerprint of the figure the browser shows (None: no figure yet)."""
    from thermoplane.app.state import CONTROLS
    key = next(k for k in app.callback_map if "plane-graph.figure" in k)
    spec = app.callback_map[key]
    outputs = []
    for part in key.strip(".").split("..."):
        cid, prop = part.rsplit(".", 1)
        outputs.append({"id": cid, "property": prop})
    by_id = {(cid, prop): name for name, (cid, prop) in CONTROLS.items()}
    drag = {"drag": held, "key": "X"}
    if held and drag_value is not None:
        drag["value"] = drag_value
    extra = {("tracks-store", "data"): None, ("tracks-colour-by", "value"): None,    # no tracks loaded
             ("comp-drag", "data"): drag, ("map-shape", "data"): shape}
    value = lambda i: (values[by_id[(i["id"], i["property"])]] if (i["id"], i["property"]) in by_id
                       else extra[(i["id"], i["property"])])
    inputs = [{**i, "value": value(i)} for i in spec["inputs"]]
    state = [{**i, "value": value(i)} for i in spec["state"]]
    changed = ["comp-drag.data"] if held else [changed]
    return {"output": key, "outputs": outputs, "inputs": inputs, "changedPropIds": changed, "state": state}


def response_parts(body: dict) -> dict:
    """{"component-id.property": value} of a callback's JSON answer."""
    return {f"{cid}.{prop}": v for cid, props in body["response"].items() for prop, v in props.items()}


def apply_patch(figure: dict, patch: dict) -> dict:
    """What the browser does with a Patch answer (the operations this app sends: Assign, Delete)."""
    out = copy.deepcopy(figure)
    for op in patch["operations"]:
        *path, last = op["location"]
        target = out
        for k in path:
            target = target[k]
        if op["operation"] == "Assign":
            target[last] = op["params"]["value"]
        elif op["operation"] == "Delete":
            del target[last]
        else:
            raise AssertionError(f"unexpected patch operation {op['operation']}")
    return out
