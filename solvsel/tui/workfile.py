"""Save the piece of work on screen as a workspace file, and open one (:mod:`solvsel.data.workspace`).

What is saved: the current target, the carriers' constraints (keyed by the request fields they
fill, as every front end reads them), the flavour formula with its dose and chain, and the
emulsion designer's fields.  Opening sets the target and fills the forms of every screen from
the file (a screen not yet shown fills its form from it when it first shows).
"""

from __future__ import annotations

from pathlib import Path

#: Carriers' constraints: workspace (request) field -> the scenario part's key the form reads.
CARRIER_FIELDS = {"use": "use", "jurisdiction": "jurisdiction", "purpose": "purpose", "temp_C": "temp_C",
                  "max_components": "max_components", "exclude": "exclude", "rejects": "reject",
                  "min_flash_C": "min_flash_C", "bp_min_C": "bp_min_C", "bp_max_C": "bp_max_C", "load": "load",
                  "storage_C": "storage_C"}


def target_entry(target) -> dict | None:
    """The workspace's ``target`` of a session target: a solute of the tables by name, else its HSP."""
    if target is None:
        return None
    if target.solute is not None and not getattr(target.solute, "is_user", False):
        return {"solute": target.solute.name}
    return {"hsp": [target.dD, target.dP, target.dH] + ([target.r0] if target.r0 else [])}


#: Emulsion designer: workspace (request) field -> the scenario part's key the form reads.
EMULSION_FIELDS = {"brix": "brix", "dilution": "dilution", "droplet_um": "droplet_um", "purpose": "purpose",
                   "emulsifier": "emulsifier", "emulsifier_ratio": "emulsifier_ratio", "oil_phase": "oil_phase"}


def workspace_of(app, name: str):
    """A :class:`~solvsel.data.workspace.Workspace` of what the app's forms hold now."""
    from ..data.workspace import Workspace

    s = app.session
    carrier = s.scenario_part("carrier")
    constraints = {field: carrier[key] for field, key in CARRIER_FIELDS.items() if carrier.get(key) not in (None, "", [])}
    flavour = s.scenario_part("flavour")
    formulas = ()
    if flavour.get("formula"):
        formulas = ({"name": "flavour", "parts": [{"name": k, "percent": v} for k, v in flavour["formula"].items()],
                     **{k: flavour[k] for k in ("dose", "chain", "category", "jurisdiction", "brix") if k in flavour}},)
    e = s.scenario_part("emulsion")
    emulsions = ()
    if e.get("oil"):
        request = {"oil": [[k, v] for k, v in e["oil"].items()], "jurisdictions": [e.get("jurisdiction", "EU")],
                   **{field: e[key] for field, key in EMULSION_FIELDS.items() if e.get(key) not in (None, "")}}
        emulsions = ({"name": "emulsion", "request": request, "hlb_oil": e.get("hlb_oil"),
                      "emulsifiers": e.get("emulsifiers")},)
    return Workspace(name=name, target=target_entry(s.target), constraints=constraints, formulas=formulas,
                     emulsions=emulsions)


def save_work(app, path: str) -> Path:
    """Gather the forms (each screen shown so far puts its fields in the session) and save."""
    from ..data.workspace import save_workspace

    for screen in list(app.session.screens.values()):
        screen.form_to_session()
    target = Path(path.strip()).expanduser()
    save_workspace(workspace_of(app, target.stem), target)
    return target


def parts_of(ws) -> dict:
    """The forms' values of a workspace, by part of the scenario (``carrier``, ``flavour``, ``emulsion``)."""
    parts = {"carrier": {key: ws.constraints[field] for field, key in CARRIER_FIELDS.items() if field in ws.constraints}}
    for f in ws.formulas[:1]:
        parts["flavour"] = {"formula": {p["name"]: p["percent"] for p in f.get("parts", ())},
                            **{k: f[k] for k in ("dose", "chain", "category", "jurisdiction", "brix") if f.get(k) is not None}}
    for e in ws.emulsions[:1]:
        req = e.get("request") or {}
        part = {"oil": {k: v for k, v in req.get("oil", ())},
                "jurisdiction": ", ".join(req.get("jurisdictions") or ["EU"]),
                **{key: req[field] for field, key in EMULSION_FIELDS.items() if field in req}}
        for k in ("hlb_oil", "emulsifiers"):
            if e.get(k):
                part[k] = e[k]
        parts["emulsion"] = part
    return parts


def open_work(app, path: str) -> str:
    """Read the workspace at ``path`` into the session, set its target and refill the forms; its name."""
    from ..data.workspace import open_workspace
    from ..jobs._base import target_of

    ws = open_workspace(Path(path.strip()).expanduser())
    s = app.session
    target = target_of(s.catalog, required=False, **(ws.target or {}))
    s.overrides = parts_of(ws)
    for screen in list(s.screens.values()):
        screen.session_to_form()
    if target is not None:
        s.set_target(target)
        app.screen.on_screen_resume()
    return ws.name
