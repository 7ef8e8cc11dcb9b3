"""The HTML report and its figures: every demo flowsheet, the figures' content, the command, a real browser.

What is checked, and against what:

* every flowsheet in ``flowsheets/`` (found by glob, so demos added later
  are included) gives a self-contained report: well-formed SVG figures,
  nothing fetched from outside, every stream and key figure present, the
  figures that apply and only those;
* the figures are black and white (every colour a grey), so they print;
* what the figures show agrees with the result (energy-flow bands with the
  stream enthalpies and condenser duty; profile points with the unit
  figures) and with sources outside the project: the water saturation line
  of the effect profile with CoolProp, the psychrometric chart's curves with
  ASHRAE Handbook—Fundamentals 2017 ch. 1 Table 2 and with psychrolib;
* a sweep plot shows every row, failed cases included;
* ``balance report`` writes one file and never overwrites one unasked;
* Chromium (Debian's package) loads the report without errors, every
  figure has a size and drawing elements, nothing is fetched, and a
  screenshot is kept in ``test-artifacts/``.
"""

from __future__ import annotations

import csv
import dataclasses
import json
import re
import shutil
import subprocess
import xml.etree.ElementTree as ET
from pathlib import Path

import pytest

from balance.analysis.key_figures import key_figures
from balance.cli import main
from balance.errors import InputError
from balance.flowsheet.file_format import load
from balance.report import figures, html
from balance.solve import solve

ROOT = Path(__file__).resolve().parent.parent
FLOWSHEETS = sorted((ROOT / "flowsheets").rglob("*.toml"))
DEMO = ROOT / "flowsheets" / "skim_milk_3_effect_forward.toml"
ARTIFACTS = ROOT / "test-artifacts"
SVG_NS = "{http://www.w3.org/2000/svg}"

_SOLVED: dict[Path, object] = {}


def solved(path: Path):
    """Solve a flowsheet once per test session. A solve that raises is the solve layer's
    business (tests/test_demos.py); the report tests then have nothing to report."""
    if path not in _SOLVED:
        try:
            _SOLVED[path] = solve(load(path))
        except Exception as exc:  # noqa: BLE001
            _SOLVED[path] = exc
    result = _SOLVED[path]
    if isinstance(result, Exception):
        pytest.skip(f"solving {path.name} raised {type(result).__name__}: {result} (see tests/test_demos.py)")
    return result


def svgs_in(text: str) -> list[str]:
    return re.findall(r"<svg\b.*?</svg>", text, flags=re.S)


def colours(svg: str) -> set[str]:
    return set(re.findall(r'(?:fill|stroke)="(#[0-9a-fA-F]{3,6})"', svg))


def is_grey(colour: str) -> bool:
    digits = colour[1:]
    if len(digits) == 3:
        digits = "".join(c * 2 for c in digits)
    r, g, b = (int(digits[i:i + 2], 16) for i in (0, 2, 4))
    return r == g == b


def texts(svg: str) -> list[str]:
    root = ET.fromstring(svg)
    return ["".join(t.itertext()) for t in root.iter(f"{SVG_NS}text")]


def plot_mapping(svg: str):
    """Pixel -> data maps of an x-y figure from its data-plot-area and data-range attributes."""
    root = ET.fromstring(svg)
    left, top, right, bottom = map(float, root.get("data-plot-area").split())
    x_lo, x_hi, y_lo, y_hi = map(float, root.get("data-range").split())
    return (lambda px: x_lo + (px - left) / (right - left) * (x_hi - x_lo),
            lambda py: y_lo + (bottom - py) / (bottom - top) * (y_hi - y_lo))


def polyline_points(element) -> list[tuple[float, float]]:
    return [tuple(map(float, p.split(","))) for p in element.get("points").split()]


def interpolate(points, x):
    points = sorted(points)
    for (x0, y0), (x1, y1) in zip(points, points[1:]):
        if x0 <= x <= x1:
            return y0 + (y1 - y0) * (x - x0) / (x1 - x0)
    raise AssertionError(f"{x} outside the curve")


# ---------------------------------------------------------------------------
# every demo flowsheet


@pytest.mark.parametrize("path", FLOWSHEETS, ids=lambda p: str(p.relative_to(ROOT / "flowsheets")))
def test_report_of_every_demo(path):
    solution = solved(path)
    page = html.report_html(solution)
    assert page.startswith("<!DOCTYPE html>") and page.rstrip().endswith("</html>")
    # self-contained: nothing to fetch, no scripts
    assert not re.search(r"<(script|link|img|iframe|object)\b", page)
    assert not re.search(r"""(src|href)\s*=\s*["']?(https?:|//)""", page)
    assert "@import" not in page and "url(http" not in page
    # status and cautions
    assert ("Converged:" in page) == solution.converged
    assert ("NOT A SOLUTION" in page) == (not solution.converged)
    assert "Cautions" in page and "steady-state estimates" in page
    # tables: every stream, every unit with numbers, every key figure
    for name in solution.streams:
        assert f"<td>{name}</td>" in page, name
    for fig in key_figures(solution).values():
        assert f"<td>{fig.label}</td>" in page, fig.label
    # figures: the ones that apply, each well-formed SVG, black and white
    expected = {"flowsheet", "energy"}
    if figures.effect_rows(solution):
        expected.add("profile")
    if figures.air_path(solution) is not None:
        expected.add("psychro")
    found = []
    for svg in svgs_in(page):
        root = ET.fromstring(svg)   # raises if not well-formed
        found.append(root.get("data-figure"))
        grey = [c for c in colours(svg) if not is_grey(c)]
        assert not grey, f"{root.get('data-figure')}: colours {grey}"
    assert sorted(found) == sorted(expected)
    # property methods: every liquor's sources are named
    for name in {s.liquor for s in solution.streams.values() if s.liquor}:
        for source in solution.flowsheet.liquors[name].sources:
            assert html._e(source) in page


# ---------------------------------------------------------------------------
# figures


@pytest.fixture(scope="module")
def demo():
    return solved(DEMO)


def test_flowsheet_drawing_names_units_and_streams(demo):
    svg = figures.flowsheet_svg(demo)
    words = " ".join(texts(svg))
    for unit in ("feed", "steam", "E1", "E2", "E3", "condenser", "cooling", "concentrate"):
        assert unit in words
    for stream in ("L1", "V1", "L2", "V2", "V3", "concentrate", "cooling_water"):
        assert re.search(rf"\b{stream}\b", words), stream
    # the feed is labelled with its flow and temperature from the file: 20 t/h, 60 degC
    assert "feed  60.0 °C" in texts(svg) and "20,000 kg/h" in texts(svg)
    # a flowsheet without a solution is drawn with names only
    bare = figures.flowsheet_svg(load(DEMO))
    assert "kg/h" not in " ".join(texts(bare))


def test_energy_flows_close_and_match_the_streams(demo):
    flows = figures.energy_flows(demo)
    into = sum(f.value for f in flows if f.direction == "in")
    out = sum(f.value for f in flows if f.direction == "out")
    assert into == pytest.approx(out, rel=1e-9)   # the overall energy balance closes (checks)
    band = {f.label: f.value for f in flows}
    assert band["live steam"] == pytest.approx(demo.streams["steam"].enthalpy_flow, rel=1e-12)
    # the cooling water's net gain is the condenser duty (the condenser's own energy balance)
    assert band["to cooling water (condensers)"] == pytest.approx(
        demo.units["condenser"].quantities["duty"], rel=1e-9)
    assert band["product"] == pytest.approx(demo.streams["concentrate"].enthalpy_flow, rel=1e-12)


@pytest.mark.parametrize("path", FLOWSHEETS, ids=lambda p: p.stem)
def test_energy_diagram_of_every_demo_balances(path):
    solution = solved(path)
    if not solution.converged:
        pytest.skip("the balance closes only for a converged solve")
    flows = figures.energy_flows(solution)
    assert all(f.value > 0 for f in flows)
    assert not [f for f in flows if f.category == "imbalance"], flows


def test_effect_profile_against_coolprop(demo):
    CP = pytest.importorskip("CoolProp.CoolProp")
    rows = figures.effect_rows(demo)
    assert [r["unit"] for r in rows] == ["E1", "E2", "E3"]   # falling pressure: the vapour cascade
    for row in rows:
        # water boils at T_sat(p): CoolProp (IAPWS-95) and IF97 agree to about 1 mK here
        t_sat = CP.PropsSI("T", "P", row["pressure"], "Q", 0, "Water")
        assert row["water_temperature"] == pytest.approx(t_sat, abs=0.01)
        unit = demo.units[row["unit"]]
        assert row["driving_force"] == pytest.approx(unit.figures["driving_force"], rel=1e-12)
    svg = figures.effect_profile_svg(demo)
    words = texts(svg)
    assert "ΔT 16.8 K" in words            # E3's driving force, as in the unit table
    assert "18.0" in words                  # E3 at the 18 kPa the file fixes


SYNTHETIC_PATH = figures.AirPath(
    points=[("outside", 283.15, 0.006), ("heated", 313.15, 0.006), ("humidified", 303.15, 0.0165)],
    steps=[("outside", "heated", "heater"), ("heated", "humidified", "washer")], pressure=101325.0)


def test_psychrometric_chart_against_ashrae_and_psychrolib():
    svg = figures.psychrometric_svg(SYNTHETIC_PATH)
    to_t, to_w = plot_mapping(svg)
    root = ET.fromstring(svg)
    curves = {float(e.get("data-relative-humidity")): [(to_t(x), to_w(y)) for x, y in polyline_points(e)]
              for e in root.iter(f"{SVG_NS}polyline") if e.get("data-relative-humidity")}
    assert 1.0 in curves and 0.4 in curves
    # ASHRAE Handbook—Fundamentals 2017, ch. 1, Table 2: W_s = 20.173 g/kg at 25 °C, 101.325 kPa.
    # Our ideal-gas relations omit the enhancement factor and run about 0.4 % low there
    # (the Handbook's own comparison); 1 % allows that and the drawing's resolution.
    assert interpolate(curves[1.0], 25.0) == pytest.approx(20.173, rel=0.01)
    # psychrolib (ASHRAE's ideal-gas formulas, its own saturation pressure) at 40 % and 30 °C;
    # IF97 and ASHRAE's saturation pressures differ by < 0.1 % here, the drawing by < 0.2 %.
    psychrolib = pytest.importorskip("psychrolib")
    psychrolib.SetUnitSystem(psychrolib.SI)
    w = psychrolib.GetHumRatioFromRelHum(30.0, 0.4, 101325.0) * 1000.0
    assert interpolate(curves[0.4], 30.0) == pytest.approx(w, rel=0.005)
    # the path: a dot per state, named
    words = texts(svg)
    for label in ("outside", "heated", "humidified", "heater", "washer"):
        assert label in words


def test_air_path_from_a_dryer_flowsheet(tmp_path):
    from balance.unitops import UNIT_TYPES
    needed = {"ambient_air", "steam_air_heater", "spray_dryer", "powder_product", "air_exhaust"}
    if not needed <= set(UNIT_TYPES):
        pytest.skip(f"drying unit types not available: {sorted(needed - set(UNIT_TYPES))}")
    path = tmp_path / "spray.toml"
    path.write_text(SPRAY_DRYER, encoding="utf-8")
    solution = solve(load(path))
    air = figures.air_path(solution)
    assert {p[0] for p in air.points} == {"A1", "A2", "exhaust"}
    assert set(air.steps) == {("A1", "A2", "heater"), ("A2", "exhaust", "dryer")}
    page = html.report_html(solution)
    assert "data-figure=\"psychro\"" in page and "moist air" in page
    assert "dust explosion" in page          # the drying caution
    assert "data-figure=\"profile\"" not in page   # nothing boils


SPRAY_DRYER = """
[flowsheet]
title = "Spray dryer, single stage (test)"
[units.feed]
type = "feed"
liquor = "skim_milk"
flow = "2 t/h"
solids = "48 %"
temperature = "60 degC"
[units.ambient]
type = "ambient_air"
temperature = "20 degC"
relative_humidity = "50 %"
[units.heater]
type = "steam_air_heater"
outlet_temperature = "200 degC"
[units.steam]
type = "steam_supply"
pressure = "16 bar"
[units.dryer]
type = "spray_dryer"
outlet_temperature = "90 degC"
product_moisture = "4 %"
[units.powder]
type = "powder_product"
[units.stack]
type = "air_exhaust"
[streams]
feed = "feed.out -> dryer.feed_in"
A1 = "ambient.out -> heater.air_in"
A2 = "heater.air_out -> dryer.air_in"
steam = "steam.out -> heater.heating_in"
exhaust = "dryer.air_out -> stack.in"
powder = "dryer.product_out -> powder.in"
"""


def test_sweep_plot_shows_every_row():
    rows = [{"feed.flow": str(f), "steam_economy": str(2.8 - 0.02 * f), "effects": n,
             "converged": "False" if (f, n) == (14, 3) else "True"}
            for n in (3, 4) for f in range(10, 31, 2)]
    svg = figures.sweep_svg(rows, "feed.flow", "steam_economy", by="effects")
    to_x, to_y = plot_mapping(svg)
    root = ET.fromstring(svg)
    series = {e.get("data-series"): [(to_x(x), to_y(y)) for x, y in polyline_points(e)]
              for e in root.iter(f"{SVG_NS}polyline") if e.get("data-series")}
    assert set(series) == {"3", "4"}
    assert len(series["3"]) == 10 and len(series["4"]) == 11     # the failed case is not on the line ...
    for x, y in series["4"]:
        assert y == pytest.approx(2.8 - 0.02 * x, abs=1e-3)
    assert "not converged (1)" in texts(svg)                       # ... but shown and counted
    dashes = {e.get("stroke-dasharray") for e in root.iter(f"{SVG_NS}polyline") if e.get("data-series")}
    assert len(dashes) == 2                                         # told apart without colour
    with pytest.raises(InputError, match="no row has a number"):
        figures.sweep_svg(rows, "missing", "steam_economy")


def test_png_figures(tmp_path, demo):
    pytest.importorskip("cairosvg")
    paths = html.write_figures(demo, tmp_path, format="png")
    assert {p.name for p in paths} == {"flowsheet.png", "energy_flows.png", "effect_profile.png"}
    for p in paths:
        assert p.read_bytes()[:8] == b"\x89PNG\r\n\x1a\n" and p.stat().st_size > 10_000


def test_failed_solution_is_marked(demo):
    failed = dataclasses.replace(demo, converged=False, status="not converged",
                                 problems=["the equations were not solved (test)"])
    page = html.report_html(failed)
    assert "NOT A SOLUTION" in page and "Converged:" not in page
    assert "NOT A SOLUTION" in html.solution_html(failed)


def test_notebook_display(demo):
    registered = {}

    class Formatter:
        def for_type(self, cls, func):
            registered[cls] = func

    class Shell:
        class display_formatter:
            formatters = {"text/html": Formatter()}

    assert html.register_notebook_display(Shell())
    from balance.solve.result import Solution
    shown = registered[Solution](demo)
    assert "<table" in shown and "water evaporated" in shown and "E3" in shown


# ---------------------------------------------------------------------------
# the command


def test_report_command(tmp_path, capsys):
    out = tmp_path / "r.html"
    assert main(["report", str(DEMO), "-o", str(out), "--figures", str(tmp_path / "figs")]) == 0
    assert out.is_file() and (tmp_path / "figs" / "flowsheet.svg").is_file()
    before = out.read_text(encoding="utf-8")
    assert main(["report", str(DEMO), "-o", str(out)]) == 2            # refuses, before solving
    assert "exists already" in capsys.readouterr().err
    assert out.read_text(encoding="utf-8") == before
    rows = tmp_path / "rows.csv"
    with open(rows, "w", newline="", encoding="utf-8") as handle:
        writer = csv.writer(handle)
        writer.writerow(["feed.flow", "steam_economy", "converged"])
        writer.writerows([[f, 2.6 - 0.01 * f, True] for f in (10, 20, 30)])
    assert main(["report", str(DEMO), "-o", str(out), "--overwrite", "--sweep", str(rows),
                 "--plot", "feed.flow:steam_economy"]) == 0
    page = out.read_text(encoding="utf-8")
    assert "data-figure=\"sweep\"" in page and "steam_economy against feed.flow" in page
    assert main(["report", str(DEMO), "-o", str(tmp_path / "x.html"), "--sweep", str(rows),
                 "--plot", "feed.flow:nothing"]) == 2
    assert "no column 'nothing'" in capsys.readouterr().err


# ---------------------------------------------------------------------------
# a real browser

CHROMIUM = shutil.which("chromium") or shutil.which("chromium-browser")

_PROBE = """<script>window.__errors=[];window.addEventListener('error',function(e){
window.__errors.push(String(e.message||(e.target&&(e.target.src||e.target.href))||e.type))},true);</script>"""
_REPORT_BACK = """<script>window.addEventListener('load',function(){
var out={errors:window.__errors,resources:performance.getEntriesByType('resource').length,svgs:[]};
document.querySelectorAll('svg').forEach(function(s){var r=s.getBoundingClientRect();
out.svgs.push({figure:s.getAttribute('data-figure'),width:r.width,height:r.height,
drawn:s.querySelectorAll('path,line,polyline,polygon,rect,circle,text').length});});
var pre=document.createElement('pre');pre.id='probe';pre.textContent=JSON.stringify(out);
document.body.appendChild(pre);});</script>"""


def _chromium(*args, profile: Path) -> subprocess.CompletedProcess:
    command = [CHROMIUM, "--headless", "--no-sandbox", "--disable-gpu", "--disable-quic", "--no-first-run",
               "--disable-background-networking", "--disable-component-update", "--disable-sync",
               "--hide-scrollbars", f"--user-data-dir={profile}", "--enable-logging=stderr", "--v=0", *args]
    return subprocess.run(command, capture_output=True, text=True, timeout=180, check=False)


def _browser_cases():
    cases = [DEMO]
    for path in FLOWSHEETS:   # and the first demo with an air path, if there is one
        if path != DEMO and "ambient_air" in path.read_text(encoding="utf-8"):
            cases.append(path)
            break
    return cases


@pytest.mark.skipif(CHROMIUM is None, reason="Chromium is not installed (Debian: apt-get install chromium); "
                                             "CI installs it")
@pytest.mark.parametrize("path", _browser_cases(), ids=lambda p: p.stem)
def test_report_in_headless_chromium(path, tmp_path):
    solution = solved(path)
    page = html.report_html(solution)
    expected = len(svgs_in(page))
    report = tmp_path / "report.html"
    report.write_text(page, encoding="utf-8")
    # the same page with a probe that records errors and each figure's rendered size
    probed = tmp_path / "probed.html"
    probed.write_text(page.replace("<head>", "<head>" + _PROBE, 1).replace("</body>", _REPORT_BACK + "</body>", 1),
                      encoding="utf-8")
    run = _chromium("--dump-dom", probed.as_uri(), profile=tmp_path / "profile")
    assert run.returncode == 0, run.stderr[-2000:]
    match = re.search(r'<pre id="probe">(.*?)</pre>', run.stdout, flags=re.S)
    assert match, "the page did not finish loading"
    probe = json.loads(html.html.unescape(match.group(1)))
    assert probe["errors"] == []
    assert probe["resources"] == 0                      # nothing fetched: self-contained
    assert len(probe["svgs"]) == expected >= 2
    for svg in probe["svgs"]:
        assert svg["width"] > 200 and svg["height"] > 100 and svg["drawn"] > 10, svg
    console = [line for line in run.stderr.splitlines() if "CONSOLE" in line]
    assert not console, console
    # a screenshot of the report as a reader sees it, kept as a test artefact
    ARTIFACTS.mkdir(exist_ok=True)
    shot = ARTIFACTS / f"report-{path.stem}.png"
    shot.unlink(missing_ok=True)
    run = _chromium("--window-size=1280,4200", f"--screenshot={shot}", report.as_uri(),
                    profile=tmp_path / "profile")
    assert run.returncode == 0, run.stderr[-2000:]
    assert shot.read_bytes()[:8] == b"\x89PNG\r\n\x1a\n" and shot.stat().st_size > 50_000
