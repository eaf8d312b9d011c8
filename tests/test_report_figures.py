"""Reports with figures: the report's numbers are the job's, each figure is a valid image drawn from the
result's own numbers, the HTML page is self-contained, and without matplotlib the report is still
written and says which extra adds the figures."""

from __future__ import annotations

import json
import math
import struct
from html.parser import HTMLParser
from pathlib import Path

import pytest

from solvsel.cli import main
from solvsel.errors import InputError, MissingExtraError
from solvsel.jobs import figures as figures_module
from solvsel.jobs.figures import draw_png, extraction_heatmap, figures_of
from solvsel.jobs.report import write_report

pytest.importorskip("matplotlib")

EXAMPLES = Path(__file__).resolve().parents[1] / "examples"
PNG_SIGNATURE = b"\x89PNG\r\n\x1a\n"


def png_size(data: bytes) -> tuple[int, int]:
    """Width and height of a PNG image from its header chunk (PNG specification, ISO/IEC 15948, 11.2.2)."""
    assert data[:8] == PNG_SIGNATURE and data[12:16] == b"IHDR"
    return struct.unpack(">II", data[16:24])


class _Refs(HTMLParser):
    """Every address a page would load or link to (src, href), and its tags."""

    def __init__(self):
        super().__init__()
        self.refs, self.tags = [], []

    def handle_starttag(self, tag, attrs):
        self.tags.append(tag)
        self.refs += [(tag, k, v) for k, v in attrs if k in ("src", "href", "srcset", "data")]


def refs_of(html_text: str) -> _Refs:
    p = _Refs()
    p.feed(html_text)
    return p


def report(tmp_path, capsys, *argv) -> tuple[Path, dict]:
    out = tmp_path / "r.md"
    assert main(["report", str(out), *argv]) == 0
    capsys.readouterr()
    return out, json.loads(out.with_suffix(".json").read_text(encoding="utf-8"))


def figure_files(out: Path) -> list[Path]:
    return sorted(out.parent.glob(f"{out.stem}-fig*.png"))


def assert_valid_pngs(files: list[Path]) -> None:
    assert files
    for f in files:
        data = f.read_bytes()
        w, h = png_size(data)
        assert len(data) > 1000 and w >= 300 and h >= 300, f


def assert_self_contained(out: Path, n_figures: int) -> str:
    page = out.with_suffix(".html").read_text(encoding="utf-8")
    refs = refs_of(page)
    assert all(v.startswith("data:image/png;base64,") for _, _, v in refs.refs), refs.refs
    assert sum(1 for t, k, _ in refs.refs if t == "img" and k == "src") == n_figures
    assert "script" not in refs.tags and "link" not in refs.tags and "iframe" not in refs.tags
    return page


# ----------------------------------------------------------------------------- rank: numbers and the map


def test_a_rank_report_holds_the_jobs_numbers_and_its_map(tmp_path, capsys):
    from solvsel import rank

    out, data = report(tmp_path, capsys, "rank", "--solute", "cannabidiol", "--food", "--top", "6")
    job = rank(solute="cannabidiol", food=True, top=6).to_dict()
    assert {k: v for k, v in data.items() if k != "audit"} == {k: v for k, v in job.items() if k != "audit"}
    md, page = out.read_text(encoding="utf-8"), assert_self_contained(out, 1)
    for r in job["results"]:  # each liquid and its Ra, as the text table prints it, in both pages
        assert r["name"] in md and f"{r['ra']:.2f}" in md and f"{r['ra']:.2f}" in page
    for c in {c for r in job["results"] for c in r["cautions"]}:
        assert c in md
    assert "## Inputs" in md and "target.name: cannabidiol" in md and "## Sources" in md
    files = figure_files(out)
    assert [f.name for f in files] == ["r-fig1-hsp_map.png"]
    assert_valid_pngs(files)
    assert "![The target and the liquids ranked](r-fig1-hsp_map.png)" in md
    # the map's points are the result's own numbers
    fig = figures_of("rank", job)[0]
    assert [(p["name"], p["dD"], p["dP"], p["dH"], p["ra"]) for p in fig.data["points"]] == \
        [(r["name"], r["dD"], r["dP"], r["dH"], r["ra"]) for r in job["results"]]
    assert sum(p["labelled"] for p in fig.data["points"]) == min(len(job["results"]), figures_module.LABELLED)


# ----------------------------------------------------------------------------- blend: the trade-off front


def test_a_blend_report_draws_the_blends_and_their_front(tmp_path, capsys):
    from solvsel import blend

    argv = ["blend", "--hsp", "17.5,6,10", "--max-components", "2", "--only",
            "ethanol,triacetin,benzyl alcohol,d-limonene,propylene glycol,medium-chain triglycerides"]
    out, data = report(tmp_path, capsys, *argv)
    job = blend(hsp=(17.5, 6.0, 10.0), max_components=2,
                only=("ethanol", "triacetin", "benzyl alcohol", "d-limonene", "propylene glycol",
                      "medium-chain triglycerides")).to_dict()
    assert [b["ra"] for b in data["results"]] == pytest.approx([b["ra"] for b in job["results"]], abs=1e-12)
    assert [f.name for f in figure_files(out)] == ["r-fig1-hsp_map.png", "r-fig2-pareto.png"]
    assert_valid_pngs(figure_files(out))
    assert_self_contained(out, 2)
    pareto = next(f for f in figures_of("blend", job) if f.kind == "pareto")
    front = {p["name"]: (p["x"], p["ra"]) for p in pareto.data["points"] if p["front"]}
    want = {" + ".join(c["name"] for c in b["components"]): (b["cost"], b["ra"]) for b in job["pareto"]}
    assert front == want
    shown = {p["name"] for p in pareto.data["points"]}
    assert {" + ".join(c["name"] for c in b["components"]) for b in job["results"]} <= shown


# ----------------------------------------------------------------------------- fit: inside and outside


def test_a_fit_report_draws_the_liquids_inside_and_outside_the_sphere(tmp_path, capsys):
    from solvsel import fit

    bench = str(EXAMPLES / "bench_extract.csv")
    out, data = report(tmp_path, capsys, "fit", bench)
    job = fit(path=bench).to_dict()
    assert (data["dD"], data["dP"], data["dH"], data["r0"]) == pytest.approx((job["dD"], job["dP"], job["dH"], job["r0"]))
    assert_valid_pngs(figure_files(out))
    md = out.read_text(encoding="utf-8")
    assert "`hsp_mr2022`" in md and "`hansen2007`" in md  # the liquids' table values and the method are cited
    fig = figures_of("fit", job)[0]
    assert fig.data["centre"] == [job["dD"], job["dP"], job["dH"]] and fig.data["r0"] == job["r0"]
    for drawn, row in zip(fig.data["liquids"], job["liquids"]):
        assert drawn["name"] == row["name"] and drawn["red"] == row["red"]
        assert drawn["good"] == (row["result"] == "good")
    # every result is explained by this fit: the dissolving liquids inside (RED < 1), the others outside
    assert job["explained"] == 1.0
    assert all((x["red"] < 1) == x["good"] for x in fig.data["liquids"])


# ----------------------------------------------------------------------------- emulsion: creaming


def test_an_emulsion_report_draws_creaming_against_droplet_size(tmp_path, capsys):
    from solvsel import emulsion

    argv = ["emulsion", "--oil", "d-limonene=70,sucrose acetate isobutyrate=30", "--brix", "11", "--dilution",
            "500", "--droplet-um", "0.4"]
    out, data = report(tmp_path, capsys, *argv)
    job = emulsion(oil=(("d-limonene", 70.0), ("sucrose acetate isobutyrate", 30.0)), brix=11.0, dilution=500.0,
                   droplet_um=0.4).to_dict()
    assert data["time_to_cream_days"] == pytest.approx(job["time_to_cream_days"], rel=1e-12)
    assert f"{job['time_to_cream_days']:.3g}" in out.read_text(encoding="utf-8") or \
        f"{job['time_to_cream_days']:.0f}" in out.read_text(encoding="utf-8")
    assert_valid_pngs(figure_files(out))
    assert "`stokes1851_memory` (memory)" in out.read_text(encoding="utf-8")
    fig = figures_of("emulsion", job)[0]
    d, days = fig.data["diameter_um"], fig.data["days"]
    # the curve passes through the job's own answer at the droplet size asked about
    curve_at = math.exp(_interp_log(math.log(0.4), [math.log(x) for x in d], [math.log(y) for y in days]))
    assert curve_at == pytest.approx(job["time_to_cream_days"], rel=1e-3)
    assert fig.data["chosen_days"] == job["time_to_cream_days"]
    # and through the shelf life at the largest droplet that lasts it
    assert math.exp(_interp_log(math.log(job["max_droplet_um"]), [math.log(x) for x in d],
                                [math.log(y) for y in days])) == pytest.approx(job["shelf_days"], rel=1e-3)
    # Stokes' law (Stokes 1851): the rate grows with the square of the diameter, so time falls as d^-2
    assert days[0] / days[-1] == pytest.approx((d[-1] / d[0]) ** 2, rel=1e-9)


def _interp_log(x, xs, ys):
    for (x0, y0), (x1, y1) in zip(zip(xs, ys), zip(xs[1:], ys[1:])):
        if x0 <= x <= x1:
            return y0 + (y1 - y0) * (x - x0) / (x1 - x0)
    raise AssertionError("outside the curve")


# ----------------------------------------------------------------------------- extraction heat map


def test_every_figure_source_is_in_the_sources_table():
    from solvsel import load_catalog

    cat = load_catalog()
    kinds = {"hsp_map": figures_module.hsp_map({"name": "x", "dD": 17, "dP": 4, "dH": 9}, []),
             "creaming": figures_module.creaming({"beverage_density": 1.04, "oil_phase_density": 0.9,
                                                  "viscosity_mPa_s": 1.3, "height_mm": 100}),
             "bench_fit": figures_module.bench_fit({"dD": 17, "dP": 4, "dH": 9, "r0": 5, "liquids": []})}
    for kind, fig in kinds.items():
        assert fig.sources, kind
        for sid in fig.sources:
            assert cat.source(sid)["citation"], sid


def test_the_extraction_heat_map_from_plain_arrays(tmp_path):
    # synthetic arrays (made up for this test, no measurement): the plan's job will pass its own
    strengths, temps = [40.0, 60.0, 80.0, 96.0], [20.0, 40.0, 60.0]
    values = [[1.0, 2.0, 3.0, 4.0], [2.0, 3.5, 4.0, 5.0], [3.0, 4.0, None, 7.0]]
    fig = extraction_heatmap(strengths, temps, values, "yield (%) [synthetic]")
    assert fig.data["values"][2][2] is None and fig.data["strengths"] == strengths
    w, h = png_size(draw_png(fig))
    assert w > 300 and h > 300
    with pytest.raises(InputError) as err:
        extraction_heatmap(strengths, temps, values[:2], "yield")
    assert err.value.param == "values"


def test_an_extraction_report_draws_the_plans_grid(tmp_path, capsys):
    from solvsel.jobs.extraction import extraction

    out, data = report(tmp_path, capsys, "extract", "--solute", "cannabidiol", "--strengths", "60:100:20",
                       "--temps=-40:20:20")
    job = extraction(solute="cannabidiol", strengths="60:100:20", temps_C="-40:20:20").to_dict()
    assert data["grid"]["selectivity"] == job["grid"]["selectivity"]  # the report's JSON is the job's
    assert [f.name for f in figure_files(out)] == ["r-fig1-extraction.png"]
    assert_valid_pngs(figure_files(out))
    fig = figures_of("extract", job)[0]
    by = job["best"]["by"]
    for i, t in enumerate(job["temps_C"]):  # a row per temperature, a column per strength, frozen blank
        for j, s in enumerate(job["strengths_pct_v"]):
            want = job["grid"][by][j][i] if job["grid"]["liquid"][j][i] else None
            assert fig.data["values"][i][j] == want, (s, t)
    assert fig.data["best"] == [job["best"]["strength_pct_v"], job["best"]["temp_C"]]


# ----------------------------------------------------------------------------- without matplotlib


def test_without_matplotlib_the_report_says_which_extra_draws_the_figures(tmp_path, capsys, monkeypatch):
    import solvsel.extras

    def missing(module, extra, what):
        raise MissingExtraError(extra, what, module)

    monkeypatch.setattr(solvsel.extras, "need", missing)
    out, _ = report(tmp_path, capsys, "rank", "--solute", "cannabidiol", "--top", "3")
    md = out.read_text(encoding="utf-8")
    assert "pip install 'solvsel[figures]'" in md and "## Figures" in md
    assert not figure_files(out)
    assert_self_contained(out, 0)
    assert "solvsel[figures]" in out.with_suffix(".html").read_text(encoding="utf-8")


def test_a_report_to_standard_output_draws_no_figure(tmp_path, capsys, monkeypatch):
    monkeypatch.chdir(tmp_path)
    assert main(["report", "-", "rank", "--solute", "cannabidiol", "--top", "2"]) == 0
    text = capsys.readouterr().out
    assert text.startswith("# ") and "## Figures" not in text and not list(tmp_path.iterdir())


def test_write_report_from_a_front_end(tmp_path):
    # the UI's export: its own text, the result's to_dict(), the job named so the figures are drawn
    from solvsel import hlb, load_catalog

    result = hlb(oil=(("d-limonene", 70.0), ("medium-chain triglycerides", 30.0)))
    paths = write_report(tmp_path / "hlb.md", "Required HLB", "hlb (from the screen)", "required HLB ...",
                         result.to_dict(), catalog=load_catalog(), job="hlb")
    assert [p.suffix for p in paths] == [".md", ".json", ".csv", ".html"]  # no figure for this job
    assert json.loads(paths[1].read_text(encoding="utf-8"))["required_hlb"] == result.to_dict()["required_hlb"]
    assert "## Figures" not in paths[0].read_text(encoding="utf-8")
