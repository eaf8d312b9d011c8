"""Figures of results: their data (plain numbers, any front end draws them) and drawings with matplotlib.

Each result holds its figure data once: :func:`figures_of` reads a result's JSON document (its
``to_dict()``) and returns :class:`FigureData` objects of plain lists and numbers, with no
plotting library involved; the report draws them with matplotlib (:func:`draw_png`, the extra
``figures``) and the terminal UI may draw the same data with its own widgets.

=================  ============================  ===========================================
kind               from                          what it shows
=================  ============================  ===========================================
``hsp_map``        rank, blend                   the target (and its sphere where R0 is known)
                                                 and the candidates, in three planes of
                                                 Hansen space
``bench_fit``      fit                           the fitted sphere, the liquids that dissolved
                                                 and those that did not, and RED per liquid
``creaming``       emulsion                      Stokes time to cream through the bottle
                                                 against droplet diameter
``pareto``         blend                         Ra against cost of the blends, the trade-off
                                                 front marked
``extraction``     extract (an extraction plan)  selectivity, solubility or Ra over solvent
                                                 strength x temperature (or any value from
                                                 plain arrays: :func:`extraction_heatmap`)
=================  ============================  ===========================================

The Hansen distance is ``Ra^2 = 4 (dD1-dD2)^2 + (dP1-dP2)^2 + (dH1-dH2)^2`` (Hansen, *Hansen
Solubility Parameters: A User's Handbook*, 2nd ed., 2007), so the sphere of radius R0 projects
onto the dP-dH plane as a circle of radius R0 and onto a plane with dD as an ellipse whose
half-axis along dD is R0/2.  matplotlib is imported only when a figure is drawn.
"""

from __future__ import annotations

import io
import math
from dataclasses import dataclass, field
from typing import Any, Sequence

__all__ = [
    "FigureData",
    "figures_of",
    "hsp_map",
    "bench_fit",
    "creaming",
    "pareto",
    "extraction_heatmap",
    "extraction",
    "draw_png",
    "FIGURE_EXTRA",
]

#: The optional extra that installs the plotting library.
FIGURE_EXTRA = "figures"
#: Names written beside the points of a map: the nearest ones only, so labels stay readable.
LABELLED = 8
_PLANES = (("dP", "dH"), ("dD", "dP"), ("dD", "dH"))


@dataclass(frozen=True)
class FigureData:
    """One figure as plain data.

    kind : str
        ``hsp_map``, ``bench_fit``, ``creaming``, ``pareto`` or ``extraction``.
    title, caption : str
        A heading and one or two sentences saying how to read it.
    data : dict
        The numbers drawn (lists, numbers and text only), keys documented by the function that
        makes it.
    sources : tuple of str
        Source ids (``tables/sources.csv``) of the method the figure draws.
    """

    kind: str
    title: str
    caption: str
    data: dict = field(default_factory=dict)
    sources: tuple = ()

    def to_dict(self) -> dict[str, Any]:
        return {"kind": self.kind, "title": self.title, "caption": self.caption, "data": self.data,
                "sources": list(self.sources)}


def _num(x) -> float | None:
    try:
        v = float(x)
    except (TypeError, ValueError):
        return None
    return v if math.isfinite(v) else None


def _target_of(target: dict) -> dict[str, Any]:
    return {"name": str(target.get("name") or "target"), "dD": _num(target.get("dD")),
            "dP": _num(target.get("dP")), "dH": _num(target.get("dH")), "r0": _num(target.get("r0"))}


def hsp_map(target: dict, points: Sequence[dict], title: str = "Hansen space map", what: str = "candidates") -> FigureData:
    """The map: the target (with its sphere where ``r0`` is known) and ``points``.

    ``target`` has ``name``, ``dD``, ``dP``, ``dH`` and ``r0`` [MPa^0.5]; each point ``name``,
    ``dD``, ``dP``, ``dH`` and ``ra`` (its distance to the target, which orders the labels).

    >>> f = hsp_map({"name": "x", "dD": 17, "dP": 4, "dH": 9, "r0": 5}, [{"name": "a", "dD": 16, "dP": 5, "dH": 9, "ra": 2.2}])
    >>> f.data["points"][0]["labelled"], f.data["target"]["r0"]
    (True, 5.0)
    """
    pts = [{"name": str(p.get("name")), "dD": _num(p.get("dD")), "dP": _num(p.get("dP")),
            "dH": _num(p.get("dH")), "ra": _num(p.get("ra"))} for p in points]
    pts = [p for p in pts if None not in (p["dD"], p["dP"], p["dH"])]
    order = sorted(range(len(pts)), key=lambda i: (pts[i]["ra"] is None, pts[i]["ra"] or 0.0))
    for rank, i in enumerate(order):
        pts[i]["labelled"] = rank < LABELLED
    t = _target_of(target)
    sphere = f"the outline is the sphere of radius R0 = {t['r0']:.1f}" if t["r0"] else "no R0 known, so no sphere"
    caption = (f"{t['name']} (star) and the {what}, in three planes of Hansen space [MPa^0.5]; {sphere} "
               f"(drawn with half the radius along dD, as Ra counts dD twice). The {LABELLED} nearest are named.")
    return FigureData("hsp_map", title, caption, {"target": t, "points": pts}, ("hansen2007",))


def bench_fit(fit: dict) -> FigureData:
    """The bench fit: the sphere and each liquid tested, inside or outside, from a fit's JSON document.

    ``data``: ``centre`` (dD, dP, dH), ``r0``, ``liquids`` (``name``, ``dD``, ``dP``, ``dH``,
    ``result`` as given, ``good`` (True: dissolved), ``red``, ``wrong_side``).
    """
    wrong = {str(w.get("name") if isinstance(w, dict) else w) for w in fit.get("wrong_side") or []}
    liquids = []
    for r in fit.get("liquids") or []:
        good = _is_good(r)
        liquids.append({"name": str(r.get("name")), "dD": _num(r.get("dD")), "dP": _num(r.get("dP")),
                        "dH": _num(r.get("dH")), "result": r.get("given", r.get("result")), "good": good,
                        "red": _num(r.get("red")), "wrong_side": str(r.get("name")) in wrong})
    data = {"centre": [_num(fit.get(k)) for k in ("dD", "dP", "dH")], "r0": _num(fit.get("r0")),
            "liquids": liquids}
    n_wrong = sum(1 for x in liquids if x["wrong_side"])
    caption = (f"The fitted sphere (centre {', '.join(f'{v:.1f}' for v in data['centre'] if v is not None)}, "
               f"R0 {data['r0']:.1f} MPa^0.5) with the {len(liquids)} liquids tested: filled dots dissolved "
               f"the sample, open ones did not; {n_wrong} on the wrong side (ringed). Right: RED = Ra/R0 of "
               "each liquid; 1 is the sphere's surface.")
    return FigureData("bench_fit", "Bench fit", caption, data, ("hansen2007",))


def _is_good(row: dict) -> bool:
    weight = _num(row.get("weight"))
    result = str(row.get("result", "")).lower()
    if result in ("good", "bad"):
        return result == "good"
    return bool(weight is not None and weight > 0.5)


def creaming(emulsion: dict, n: int = 61) -> FigureData | None:
    """Time to cream through the bottle against droplet diameter (Stokes), from an emulsion's JSON
    document; None when it lacks the densities.

    ``data``: ``diameter_um`` and ``days`` (the curve, log-spaced 0.05-10 um), ``chosen_um`` and
    ``chosen_days`` (the droplet size asked about), ``shelf_days``, ``max_droplet_um`` (largest
    droplet that lasts the shelf life), ``height_mm``, ``direction`` (``cream`` or ``settle``).
    """
    from ..science.emulsion import creaming_mm_per_day, time_to_cream_days

    rho_c, rho_d = _num(emulsion.get("beverage_density")), _num(emulsion.get("oil_phase_density"))
    eta, height = _num(emulsion.get("viscosity_mPa_s")), _num(emulsion.get("height_mm"))
    if None in (rho_c, rho_d, eta, height) or rho_c == rho_d:
        return None
    diameters = [0.05 * (200.0 ** (i / (n - 1))) for i in range(n)]
    days = [time_to_cream_days(height, creaming_mm_per_day(d, rho_c, rho_d, eta)) for d in diameters]
    chosen = _num(emulsion.get("droplet_diameter_um"))
    data = {"diameter_um": diameters, "days": days, "chosen_um": chosen,
            "chosen_days": _num(emulsion.get("time_to_cream_days")), "shelf_days": _num(emulsion.get("shelf_days")),
            "max_droplet_um": _num(emulsion.get("max_droplet_um")), "height_mm": height,
            "direction": "cream" if rho_c > rho_d else "settle"}
    caption = (f"Stokes' law: days for droplets to {data['direction']} through {height:g} mm of the drink "
               f"(density {rho_c:.4f} g/cm3, oil phase {rho_d:.4f} g/cm3, {eta:.3g} mPa s) against droplet "
               "diameter; the dashed line is the shelf life, the dot the droplet size asked about.")
    return FigureData("creaming", "Creaming against droplet size", caption, data, ("stokes1851_memory",))


def _blend_name(b: dict) -> str:
    return " + ".join(str(c.get("name")) for c in b.get("components") or [])


def pareto(blend: dict) -> FigureData | None:
    """Ra against cost of the blends of a blend search's JSON document (number of liquids where no
    cost is known), the trade-off front marked; None without blends.

    ``data``: ``x_label``, ``points`` (``name``, ``x``, ``ra``, ``n_components``, ``front``, ``rank``: the
    blend's place in the search's order, as numbered in the table of the blends shown).
    """
    seen: dict[str, dict] = {}
    for group, front in ((blend.get("results") or [], False), (blend.get("pareto") or [], True)):
        for b in group:
            name = _blend_name(b)
            p = seen.setdefault(name, {"name": name, "ra": _num(b.get("ra")), "cost": _num(b.get("cost")),
                                       "n_components": int(b.get("n_components") or 0), "front": False,
                                       "rank": b.get("rank")})
            p["front"] = p["front"] or front or bool(b.get("pareto"))
    pts = [p for p in seen.values() if p["ra"] is not None]
    if not pts:
        return None
    by_cost = any(p["cost"] is not None for p in pts)
    x_label = "cost class of the blend (1 cheap .. 5 dear, by volume)" if by_cost else "number of liquids"
    points = [{"name": p["name"], "x": p["cost"] if by_cost else float(p["n_components"]), "ra": p["ra"],
               "n_components": p["n_components"], "front": p["front"], "rank": p["rank"]} for p in pts
              if (p["cost"] if by_cost else p["n_components"]) is not None]
    caption = ("Each blend found: its distance Ra to the target against its "
               f"{'cost' if by_cost else 'number of liquids'}. Filled dots are on the trade-off front (no other "
               "blend is better in fit, cost, hazard and number of liquids at once), so one may look beaten in "
               "this plane by a blend that is worse in hazard or size.")
    return FigureData("pareto", f"Blends: fit against {'cost' if by_cost else 'number of liquids'}", caption,
                      {"x_label": x_label, "points": points})


def extraction_heatmap(strengths: Sequence[float], temps_C: Sequence[float], values: Sequence[Sequence[float]],
                       value_label: str, strength_label: str = "solvent strength (% v/v)",
                       title: str = "Extraction: strength x temperature", note: str = "",
                       best: Sequence[float] | None = None, log: bool = False) -> FigureData:
    """A value (yield, selectivity, Ra ...) over solvent strength x temperature, from plain arrays:
    ``values[i][j]`` at ``temps_C[i]`` and ``strengths[j]`` (None: no value there, left blank); ``best``
    the (strength, temperature) to mark; ``log`` a logarithmic colour scale (where every value is positive).

    >>> extraction_heatmap([50, 70], [20, 40], [[1, 2], [3, 4]], "yield (%)").data["values"]
    [[1.0, 2.0], [3.0, 4.0]]
    """
    rows = [[_num(v) for v in row] for row in values]
    if len(rows) != len(temps_C) or any(len(r) != len(strengths) for r in rows):
        from ..errors import InputError

        raise InputError(f"expected {len(temps_C)} rows of {len(strengths)} values", param="values",
                         expected="one row per temperature, one value per strength")
    shown = [v for r in rows for v in r if v is not None]
    data = {"strengths": [float(s) for s in strengths], "temps_C": [float(t) for t in temps_C], "values": rows,
            "value_label": value_label, "strength_label": strength_label,
            "best": None if best is None else [float(best[0]), float(best[1])],
            "log": bool(log and shown and min(shown) > 0)}
    caption = f"{value_label} over {strength_label} and temperature [C]." + (f" {note}" if note else "")
    return FigureData("extraction", title, caption, data)


_EXTRACTION_VALUES = {
    "selectivity": "selectivity (target over the most soluble reject, g/L per g/L)",
    "target_g_L": "estimated solubility of the target [g/L]",
    "ra": "Ra of the target to the mixture [MPa^0.5]",
}


def extraction(plan: dict) -> FigureData | None:
    """The heat map of an extraction plan's JSON document: the value the best point is chosen by
    (selectivity with rejects, else the target's solubility, else Ra) over its grid, frozen points blank,
    the best point marked; None without a grid."""
    g, strengths, temps = plan.get("grid") or {}, plan.get("strengths_pct_v") or [], plan.get("temps_C") or []
    best = plan.get("best") or {}
    usable = [k for k in _EXTRACTION_VALUES if isinstance(g.get(k), list)
              and any(_num(v) is not None for row in g[k] for v in row)]
    key = best.get("by") if best.get("by") in usable else next(iter(usable), None)
    if key is None or not strengths or not temps:
        return None
    liquid = g.get("liquid") or [[True] * len(temps) for _ in strengths]
    values = [[g[key][j][i] if liquid[j][i] else None for j in range(len(strengths))] for i in range(len(temps))]
    pair = plan.get("liquids") or ["solvent", "water"]
    point = (best["strength_pct_v"], best["temp_C"]) if best.get("strength_pct_v") is not None else None
    return extraction_heatmap(strengths, temps, values, _EXTRACTION_VALUES[key],
                              f"{pair[0]} strength (% v/v, with {pair[-1]})",
                              note="Blank cells: the mixture is frozen there; the ring marks the best point.",
                              best=point, log=key != "ra")


def figures_of(command: str, data: Any) -> list[FigureData]:
    """The figures of a command's JSON document (``rank``, ``blend``, ``fit``, ``emulsion``, ``extract``; none
    for others).

    >>> figures_of("table", {})
    []
    """
    if not isinstance(data, dict):
        return []
    out: list[FigureData | None] = []
    if command == "rank" and data.get("results") and data.get("target"):
        out.append(hsp_map(data["target"], data["results"], "The target and the liquids ranked", "liquids ranked"))
    elif command == "blend" and data.get("results"):
        blends = [{**b, "name": f"#{b.get('rank', i)}"} for i, b in enumerate(data["results"], 1)]
        out += [hsp_map(data.get("target") or {}, blends, "The target and the blends found",
                        "blends found (numbered as in the result's table)"),
                pareto(data)]
    elif command == "fit" and data.get("liquids") and data.get("r0"):
        out.append(bench_fit(data))
    elif command == "emulsion":
        out.append(creaming(data))
    elif command in ("extract", "extraction"):
        out.append(extraction(data))
    return [f for f in out if f is not None]


# ----------------------------------------------------------------------------- drawing (matplotlib)


def _figure(width: float, height: float):
    """A matplotlib figure drawn by the Agg canvas (no window, no global backend change); margins are set
    by each drawing (a layout engine would measure every label first, a second per figure here)."""
    from ..extras import need

    need("matplotlib", FIGURE_EXTRA, "figures in reports")
    from matplotlib.backends.backend_agg import FigureCanvasAgg
    from matplotlib.figure import Figure

    fig = Figure(figsize=(width, height))
    FigureCanvasAgg(fig)
    return fig


def draw_png(figure: FigureData, dpi: int = 110) -> bytes:
    """The figure drawn as a PNG image (needs matplotlib: the extra ``figures``).

    Raises :class:`~solvsel.errors.MissingExtraError` when matplotlib is not installed.
    """
    drawers = {"hsp_map": _draw_map, "bench_fit": _draw_fit, "creaming": _draw_creaming, "pareto": _draw_pareto,
               "extraction": _draw_extraction}
    fig = drawers[figure.kind](figure)
    buf = io.BytesIO()
    fig.savefig(buf, format="png", dpi=dpi)
    return buf.getvalue()


def _sphere(ax, centre: dict, r0: float, x: str, y: str, **style) -> None:
    from matplotlib.patches import Ellipse

    half = {"dD": r0 / 2.0, "dP": r0, "dH": r0}
    ax.add_patch(Ellipse((centre[x], centre[y]), 2 * half[x], 2 * half[y], fill=False, **style))


def _square(ax, xs: list[float], ys: list[float]) -> None:
    """Limits of the same span on both axes around the points, the panel square: one MPa^0.5 is as long on
    both axes, so the sphere shows its true shape."""
    span = max(max(xs) - min(xs), max(ys) - min(ys), 1.0) * 1.12
    cx, cy = (max(xs) + min(xs)) / 2, (max(ys) + min(ys)) / 2
    ax.set_xlim(cx - span / 2, cx + span / 2)
    ax.set_ylim(cy - span / 2, cy + span / 2)
    ax.set_aspect("equal", adjustable="box")


def _extent_of(points: list[dict], x: str, y: str, centre: dict | None, r0: float | None) -> tuple[list, list]:
    """The x and y values a panel must show: the points, the centre and the sphere's extent."""
    xs, ys = [p[x] for p in points], [p[y] for p in points]
    if centre is not None and centre.get(x) is not None:
        half = {"dD": (r0 or 0) / 2.0, "dP": r0 or 0, "dH": r0 or 0}
        xs += [centre[x] - half[x], centre[x] + half[x]]
        ys += [centre[y] - half[y], centre[y] + half[y]]
    return xs, ys


def _plane(ax, x: str, y: str) -> None:
    ax.set_xlabel(f"{x} [MPa^0.5]")
    ax.set_ylabel(f"{y} [MPa^0.5]")
    ax.grid(True, color="#dddddd", linewidth=0.6)
    ax.set_axisbelow(True)


def _draw_map(figure: FigureData):
    fig = _figure(12, 4.3)
    t, pts = figure.data["target"], figure.data["points"]
    axes = fig.subplots(1, 3, gridspec_kw={"wspace": 0.32, "left": 0.05, "right": 0.9, "bottom": 0.13, "top": 0.88})
    ras = [p["ra"] for p in pts if p["ra"] is not None]
    for ax, (x, y) in zip(axes, _PLANES):
        sc = ax.scatter([p[x] for p in pts], [p[y] for p in pts], c=[p["ra"] if p["ra"] is not None else 0 for p in pts],
                        cmap="viridis_r", s=28, edgecolors="#333333", linewidths=0.4,
                        vmin=min(ras, default=0), vmax=max(ras, default=1))
        if t["dD"] is not None:
            ax.scatter([t[x]], [t[y]], marker="*", s=220, color="#d62728", edgecolors="black", zorder=5)
            if t["r0"]:
                _sphere(ax, t, t["r0"], x, y, edgecolor="#d62728", linewidth=1.4)
        _square(ax, *_extent_of(pts, x, y, t if t["dD"] is not None else None, t["r0"]))
        _plane(ax, x, y)
        _labels(ax, [(p["name"], p[x], p[y]) for p in pts if p["labelled"]])
    fig.colorbar(sc, cax=fig.add_axes((0.925, 0.18, 0.012, 0.65)), label="Ra to the target [MPa^0.5]")
    fig.suptitle(figure.title)
    return fig


#: Where a label may go beside its point [points]: right-above, right-below, left-above, left-below.
_LABEL_SPOTS = ((4, 3, "left"), (4, -10, "left"), (-4, 3, "right"), (-4, -10, "right"))


def _labels(ax, labels: list[tuple[str, float, float]], size: float = 7.0) -> None:
    """Names beside their points, each at the first spot where it covers no name placed before (its box
    reckoned from the number of characters); where none is free, at the first spot."""
    fig = ax.figure
    px = fig.dpi / 72.0  # display pixels per point
    placed: list[tuple[float, float, float, float]] = []
    for name, x, y in labels:
        X, Y = ax.transData.transform((x, y))
        w, h = len(name) * size * 0.55 * px, size * 1.2 * px
        boxes = []
        for dx, dy, ha in _LABEL_SPOTS:
            x0 = X + dx * px - (w if ha == "right" else 0)
            boxes.append((x0, Y + dy * px, x0 + w, Y + dy * px + h))
        free = [i for i, b in enumerate(boxes) if not any(_overlap(b, o) for o in placed)]
        i = free[0] if free else 0
        placed.append(boxes[i])
        dx, dy, ha = _LABEL_SPOTS[i]
        ax.annotate(name, (x, y), xytext=(dx, dy), textcoords="offset points", fontsize=size, ha=ha)


def _overlap(a: tuple, b: tuple) -> bool:
    return a[0] < b[2] and b[0] < a[2] and a[1] < b[3] and b[1] < a[3]


def _draw_fit(figure: FigureData):
    fig = _figure(12, 8.5)
    d = figure.data
    centre = dict(zip(("dD", "dP", "dH"), d["centre"]))
    axes = fig.subplots(2, 2, gridspec_kw={"wspace": 0.45, "hspace": 0.28, "left": 0.06, "right": 0.98,
                                           "bottom": 0.07, "top": 0.94}).ravel()
    liquids = [x for x in d["liquids"] if None not in (x["dD"], x["dP"], x["dH"])]
    for ax, (x, y) in zip(axes[:3], _PLANES):
        for good, style in ((True, dict(color="#1f77b4")), (False, dict(facecolors="white", edgecolors="#ff7f0e"))):
            sel = [x_ for x_ in liquids if x_["good"] == good]
            ax.scatter([s[x] for s in sel], [s[y] for s in sel], s=30, linewidths=1.2,
                       label="dissolved" if good else "did not dissolve", **style)
        wrong = [s for s in liquids if s["wrong_side"]]
        ax.scatter([s[x] for s in wrong], [s[y] for s in wrong], s=120, facecolors="none", edgecolors="#d62728",
                   linewidths=1.2, label="wrong side")
        ax.scatter([centre[x]], [centre[y]], marker="+", s=120, color="black")
        _sphere(ax, centre, d["r0"], x, y, edgecolor="black", linewidth=1.2)
        _square(ax, *_extent_of(liquids, x, y, centre, d["r0"]))
        _plane(ax, x, y)
    axes[0].legend(fontsize=8, loc="best")
    _draw_red_strip(axes[3], d["liquids"])
    fig.suptitle(figure.title)
    return fig


def _draw_red_strip(ax, liquids: list[dict]) -> None:
    rows = sorted((x for x in liquids if x["red"] is not None), key=lambda x: x["red"])
    ys = range(len(rows))
    ax.barh(list(ys), [x["red"] for x in rows], color=["#1f77b4" if x["good"] else "#ff7f0e" for x in rows],
            edgecolor=["#d62728" if x["wrong_side"] else "none" for x in rows], linewidth=1.5)
    ax.axvline(1.0, color="black", linewidth=1)
    ax.set_yticks(list(ys), [x["name"] for x in rows], fontsize=6)
    ax.set_xlabel("RED = Ra / R0 (blue dissolved, orange not; 1 = the surface)")
    ax.invert_yaxis()


def _draw_creaming(figure: FigureData):
    fig = _figure(8, 5)
    d = figure.data
    ax = fig.subplots(gridspec_kw={"left": 0.1, "right": 0.97, "bottom": 0.11, "top": 0.92})
    ax.loglog(d["diameter_um"], d["days"], color="#1f77b4", linewidth=2, label=f"time to {d['direction']}")
    if d["shelf_days"]:
        ax.axhline(d["shelf_days"], color="#555555", linestyle="--", label=f"shelf life {d['shelf_days']:g} days")
    if d["max_droplet_um"]:
        ax.axvline(d["max_droplet_um"], color="#2ca02c", linestyle=":",
                   label=f"largest droplet that lasts: {d['max_droplet_um']:.2f} um")
    if d["chosen_um"] and d["chosen_days"]:
        ax.scatter([d["chosen_um"]], [d["chosen_days"]], color="#d62728", s=60, zorder=5,
                   label=f"{d['chosen_um']:g} um: {d['chosen_days']:.3g} days")
    ax.set_xlabel("droplet diameter [um]")
    ax.set_ylabel(f"days to {d['direction']} through {d['height_mm']:g} mm")
    ax.grid(True, which="both", color="#e5e5e5", linewidth=0.5)
    ax.legend(fontsize=8)
    ax.set_title(figure.title)
    return fig


def _draw_pareto(figure: FigureData):
    fig = _figure(8, 5)
    d = figure.data
    ax = fig.subplots(gridspec_kw={"left": 0.1, "right": 0.97, "bottom": 0.11, "top": 0.92})
    markers = {1: "s", 2: "o", 3: "^", 4: "D"}
    for n in sorted({p["n_components"] for p in d["points"]}):
        for front in (False, True):
            sel = [p for p in d["points"] if p["n_components"] == n and p["front"] == front]
            if sel:
                ax.scatter([p["x"] for p in sel], [p["ra"] for p in sel], marker=markers.get(n, "o"), s=50,
                           facecolors="#1f77b4" if front else "white", edgecolors="#1f77b4",
                           label=f"{n} liquid{'s' if n > 1 else ''}{', on the front' if front else ''}")
    ax.set_xlabel(d["x_label"])
    ax.set_ylabel("Ra to the target [MPa^0.5]")
    ax.grid(True, color="#e5e5e5", linewidth=0.6)
    ax.legend(fontsize=8)
    ax.set_title(figure.title)
    ax.margins(x=0.25, y=0.08)  # room for the names
    _labels(ax, [(p["name"], p["x"], p["ra"]) for p in d["points"] if p["front"]])
    return fig


def _draw_extraction(figure: FigureData):
    from matplotlib.colors import LogNorm

    fig = _figure(8, 5)
    d = figure.data
    ax = fig.subplots(gridspec_kw={"left": 0.1, "right": 0.98, "bottom": 0.11, "top": 0.92})
    values = [[math.nan if v is None else v for v in row] for row in d["values"]]
    mesh = ax.pcolormesh(_edges(d["strengths"]), _edges(d["temps_C"]), values, cmap="viridis",
                         norm=LogNorm() if d["log"] else None)
    if len(d["strengths"]) * len(d["temps_C"]) <= 60:  # numbers in the cells while they fit
        _annotate_cells(ax, d, mesh)
    if d["best"]:
        ax.scatter([d["best"][0]], [d["best"][1]], s=160, facecolors="none", edgecolors="#d62728", linewidths=2)
    fig.colorbar(mesh, ax=ax, label=d["value_label"])
    ax.set_xlabel(d["strength_label"])
    ax.set_ylabel("temperature [C]")
    ax.set_title(figure.title)
    return fig


def _annotate_cells(ax, d: dict, mesh) -> None:
    for i, t in enumerate(d["temps_C"]):
        for j, s in enumerate(d["strengths"]):
            v = d["values"][i][j]
            if v is not None:  # dark text on the light (high) cells of viridis, light on the dark ones
                ax.text(s, t, f"{v:.3g}", ha="center", va="center", fontsize=8,
                        color="black" if mesh.norm(v) > 0.5 else "white")


def _edges(centres: list[float]) -> list[float]:
    """The cell edges around ``centres`` (halfway between neighbours, as far again beyond the ends).

    >>> _edges([50.0, 70.0, 96.0])
    [40.0, 60.0, 83.0, 109.0]
    """
    if len(centres) == 1:
        return [centres[0] - 0.5, centres[0] + 0.5]
    mids = [(a + b) / 2 for a, b in zip(centres, centres[1:])]
    return [centres[0] - (mids[0] - centres[0])] + mids + [centres[-1] + (centres[-1] - mids[-1])]
