"""The HTML report: one self-contained file for a solved flowsheet, and the notebook display of a result.

`report_html` builds one HTML document that needs nothing else to open: the
figures are inline SVG (`balance.report.figures`), the style sheet is inline,
there are no scripts, fonts, images or links to fetch. It holds, in order:

1. the job and scenario (title, description, the file's leading comments);
2. whether the solve converged, in words no one can miss;
3. the cautions (`balance.report.cautions`, plus those of the liquors used);
4. the key figures (`balance.analysis.key_figures.key_figures`);
5. the figures: flowsheet, energy flows, effect profile (if units boil),
   psychrometric chart (if air streams carry a humidity), sweep plots (if
   given);
6. the stream table and the unit table (`balance.report.exports`);
7. the solve's own record: convergence, attempts, balance closure, the
   property methods and their sources, warnings and problems.

The page is plain and printable: black on white, tables with rules, figures
that read in black and white.

Notebooks
---------
`solution_html` renders a result as tables. `register_notebook_display`
registers it with IPython's HTML formatter for `balance.solve.result.Solution`,
so a result shows itself as tables. The report layer registers itself; the
solve layer below knows nothing of it (layers import one way). Importing
`balance.report` inside IPython registers it, as does
``%load_ext balance.report.html``.
"""

from __future__ import annotations

import datetime as _dt
import html
import math
import os
import re
from pathlib import Path
from typing import Any, Iterable, Sequence

from balance import __version__
from balance.analysis.key_figures import key_figures
from balance.errors import InputError
from balance.quantities import convert, display_unit
from balance.report import exports, figures
from balance.report.cautions import cautions_for
from balance.report.tables import fmt

__all__ = ["report_html", "write_report", "solution_html", "register_notebook_display",
           "load_ipython_extension", "scenario_lines", "property_methods", "FIGURE_CAPTIONS"]

#: Captions of the figures, by the names `balance.report.figures.figures_for` gives them.
FIGURE_CAPTIONS = {
    "flowsheet": "Flowsheet, drawn from its graph: units, streams, flows and temperatures.",
    "energy_flows": "Energy entering and leaving the plant boundary.",
    "effect_profile": "Temperature and pressure along the effects, with boiling-point rise and driving force.",
    "psychrometric_chart": "The air path on a psychrometric chart.",
}

_CSS = """
body { font-family: "DejaVu Sans", Verdana, Helvetica, Arial, sans-serif; color: #000; background: #fff;
       max-width: 1240px; margin: 0 auto; padding: 0.5em 1.5em 2em; line-height: 1.4; font-size: 15px; }
h1 { font-size: 1.6em; border-bottom: 3px double #000; padding-bottom: 0.2em; margin-bottom: 0.3em; }
h2 { font-size: 1.25em; border-bottom: 1px solid #000; margin-top: 1.8em; }
h3 { font-size: 1.05em; margin-bottom: 0.3em; }
p.meta { font-size: 0.85em; margin-top: 0; }
nav { font-size: 0.85em; border: 1px solid #000; padding: 0.3em 0.8em; margin: 1em 0; }
nav a { color: #000; margin-right: 1em; }
.status { border: 2px solid #000; padding: 0.5em 1em; margin: 1em 0; }
.status.failed { border: 5px double #000; font-weight: bold; }
.cautions li { margin-bottom: 0.3em; }
.scenario { white-space: pre-line; border-left: 3px solid #000; padding-left: 0.8em; }
table { border-collapse: collapse; font-size: 0.82em; margin: 0.5em 0 1em; }
th, td { border: 1px solid #666; padding: 2px 7px; vertical-align: top; }
th { background: #eee; text-align: left; font-weight: bold; }
td.n { text-align: right; font-variant-numeric: tabular-nums; white-space: nowrap; }
.scroll { overflow-x: auto; }
figure { margin: 1.2em 0 1.8em; }
figure svg { display: block; max-width: 100%; height: auto; border: 1px solid #999; }
figure.wide { overflow-x: auto; }
figure.wide svg { max-width: none; }
figure.wide figcaption::after { content: " (wide: scroll sideways)"; }
figcaption { font-style: italic; font-size: 0.9em; margin-top: 0.3em; }
.note { font-size: 0.85em; }
footer { margin-top: 3em; font-size: 0.8em; border-top: 1px solid #000; }
@media print {
  body { max-width: none; font-size: 11pt; }
  nav { display: none; }
  figure, table, .status { page-break-inside: avoid; }
  h2 { page-break-after: avoid; }
  figure svg, figure.wide svg { border: none; max-width: 100%; }
  figure.wide figcaption::after { content: ""; }
}
"""


def _e(text: Any) -> str:
    return html.escape(str(text), quote=True)


def scenario_lines(fs) -> list[str]:
    """The leading comment block of the flowsheet's file (its scenario), without the ``#``."""
    if not fs.file or not os.path.isfile(fs.file):
        return []
    lines = []
    with open(fs.file, encoding="utf-8") as handle:
        for raw in handle:
            stripped = raw.strip()
            if not stripped:
                if lines:
                    break
                continue
            if not stripped.startswith("#"):
                break
            lines.append(stripped.lstrip("#").strip())
    return lines


def property_methods(solution) -> list[tuple[str, list[str]]]:
    """The property models behind the numbers, each with its sources, for the record."""
    out = [("water and steam", ["IAPWS-IF97 (IAPWS R7-97(2012)), balance.properties.water; enthalpy datum "
                                "liquid water at the triple point"])]
    used = {s.liquor for s in solution.streams.values() if s.liquor}
    for name, liquor in solution.flowsheet.liquors.items():
        if name in used:
            desc = getattr(liquor, "description", "")
            out.append((f"liquor '{name}'" + (f": {desc}" if desc else ""), list(getattr(liquor, "sources", []))))
    if any(s.kind == "air" for s in solution.streams.values()):
        out.append(("moist air", ["balance.properties.humid_air: ASHRAE Handbook—Fundamentals (2017), ch. 1, "
                                  "perfect-gas relations; saturation pressure from IAPWS-IF97"]))
    return out


def _liquor_cautions(solution) -> list[str]:
    used = {s.liquor for s in solution.streams.values() if s.liquor}
    out = []
    for name, liquor in solution.flowsheet.liquors.items():
        if name in used:
            out += [c for c in getattr(liquor, "cautions", ()) if c not in out]
    return out


# ---------------------------------------------------------------------------
# tables


def _number(value: float) -> str:
    """A number for a table: as the terminal report writes it, but large ones in full with separators."""
    if math.isfinite(value) and 1e6 <= abs(value) < 1e15:
        return f"{value:,.0f}"
    return fmt(value)


def _cell(value: Any) -> str:
    if isinstance(value, float):
        return f'<td class="n">{_e(_number(value))}</td>'
    if value is None:
        return '<td class="n"></td>'
    return f"<td>{_e(value)}</td>"


def _html_table(headers: Sequence[str], rows: Iterable[Sequence[Any]], cls: str = "") -> str:
    head = "".join(f"<th>{_e(h)}</th>" for h in headers)
    body = "\n".join("<tr>" + "".join(_cell(v) for v in row) + "</tr>" for row in rows)
    return f'<div class="scroll"><table class="{cls}"><thead><tr>{head}</tr></thead>\n<tbody>{body}</tbody></table></div>'


def key_figures_html(solution) -> str:
    rows = []
    for fig in key_figures(solution).values():
        unit = display_unit(fig.kind) if fig.kind != "ratio" else ""
        value = convert(fig.value, fig.kind) if fig.kind != "ratio" else fig.value
        rows.append([fig.label, float(value), unit])
    return _html_table(["key figure", "value", "unit"], rows, "key-figures")


def stream_table_html(solution) -> str:
    table = exports.stream_table(solution)
    return _html_table(table.headers, table.rows, "streams")


def unit_table_html(solution) -> str:
    """Units as columns, their quantities and figures as rows (fixed values marked ``*``)."""
    table = exports.unit_table(solution)
    names = table.column("unit")
    units = [solution.units[n] for n in names]
    rows = [["type", ""] + table.column("type")]
    value_columns = [c for c in table.columns if c.kind is not None]
    for column in value_columns:
        values = table.column(column.name)
        if all(v is None for v in values):
            continue
        row: list[Any] = [column.name.replace("_", " "), column.unit]
        for unit, value in zip(units, values):
            if value is None:
                row.append(None)
            else:
                key = column.name.split(" (")[0]
                row.append(_number(value) + ("*" if key in unit.fixed else ""))
        rows.append(row)
    body = []
    for row in rows:
        cells = [f"<th>{_e(row[0])}</th>", f"<td>{_e(row[1])}</td>"]
        for v in row[2:]:
            cells.append('<td class="n"></td>' if v is None else f'<td class="n">{_e(v)}</td>')
        body.append("<tr>" + "".join(cells) + "</tr>")
    head = "".join(f"<th>{_e(h)}</th>" for h in ["", "unit"] + names)
    return (f'<div class="scroll"><table class="units"><thead><tr>{head}</tr></thead>\n<tbody>'
            + "\n".join(body) + "</tbody></table></div>"
            + '<p class="note">* fixed by the specification; the other values are solved or derived.</p>')


def _solve_record_html(solution) -> str:
    parts = []
    rn = solution.residual_norm
    parts.append("<table class='record'><tbody>" + "".join(
        f"<tr><th>{_e(k)}</th><td>{_e(v)}</td></tr>" for k, v in (
            ("status", solution.status),
            ("method", solution.method),
            ("iterations", solution.iterations),
            ("largest scaled residual", f"{rn:.2e}" if math.isfinite(rn) else "not finite"),
            ("time of the numerical solve", f"{solution.seconds * 1e3:.1f} ms"),
            ("message", solution.message),
        )) + "</tbody></table>")
    if solution.attempts:
        parts.append("<h3>Attempts</h3><ul>" + "".join(f"<li>{_e(a)}</li>" for a in solution.attempts) + "</ul>")
    rows = []
    for b in solution.balances.values():
        if not (b.into or b.out_of):
            continue
        kind = "power" if b.name == "energy" else "mass_flow"
        rows.append([f"{b.name}", float(convert(b.into, kind)), float(convert(b.out_of, kind)),
                     display_unit(kind), f"{b.closure:.1e}", "yes" if b.closes else "NO"])
    parts.append("<h3>Balance closure over the plant boundary</h3>")
    parts.append(_html_table(["balance", "in", "out", "unit", "closure (in - out) / scale", "closes"], rows,
                             "balances"))
    parts.append("<h3>Property methods</h3><ul>")
    for what, sources in property_methods(solution):
        parts.append(f"<li><b>{_e(what)}</b><ul>" + "".join(f"<li>{_e(s)}</li>" for s in sources) + "</ul></li>")
    parts.append("</ul>")
    parts.append("<h3>Warnings</h3>")
    if solution.warnings:
        parts.append("<ul>" + "".join(f"<li>{_e(w)}</li>" for w in solution.warnings) + "</ul>")
    else:
        parts.append("<p>None.</p>")
    if solution.problems:
        parts.append("<h3>Problems (failed checks)</h3><ul>"
                     + "".join(f"<li><b>{_e(p)}</b></li>" for p in solution.problems) + "</ul>")
    if not solution.converged and solution.worst_equations:
        parts.append("<h3>Largest residuals</h3>")
        parts.append(_html_table(["equation", "scaled residual"],
                                 [[label, f"{value:+.2e}"] for label, value in solution.worst_equations]))
    return "\n".join(parts)


# ---------------------------------------------------------------------------
# the report


def read_sweep_rows(path: str | os.PathLike) -> list[dict]:
    """Rows of a sweep from a CSV file (or Parquet, with pandas), as dicts of text or numbers."""
    import csv
    source = Path(path)
    if not source.is_file():
        raise InputError("no such file", file=str(source), key="--sweep")
    if source.suffix.lower() in (".parquet", ".pq"):
        try:
            import pandas as pd
            return pd.read_parquet(source).to_dict("records")
        except ImportError:
            raise InputError("reading Parquet needs pandas and pyarrow", file=str(source), key="--sweep",
                             hint="pip install 'balance[report]' pyarrow, or give the CSV") from None
    with open(source, newline="", encoding="utf-8") as handle:
        return list(csv.DictReader(handle))


def sweep_plot_specs(rows: list[dict], plots: Sequence[str] | None) -> list[dict]:
    """Turn ``X:Y[:BY]`` texts into `sweep_svg` arguments, checking the columns exist."""
    if not plots:
        columns = ", ".join(rows[0]) if rows else "none"
        raise InputError(f"say what to plot with --plot X:Y; columns: {columns}", key="--plot")
    columns = set(rows[0]) if rows else set()
    specs = []
    for text in plots:
        parts = [p.strip() for p in text.split(":")]
        if len(parts) not in (2, 3) or not all(parts):
            raise InputError(f"expected X:Y or X:Y:BY, got {text!r}", key="--plot")
        missing = [p for p in parts if p not in columns]
        if missing:
            raise InputError(f"no column {', '.join(map(repr, missing))} in the sweep rows; columns: "
                             f"{', '.join(sorted(columns))}", key="--plot")
        spec = {"rows": rows, "x": parts[0], "y": parts[1]}
        if len(parts) == 3:
            spec["by"] = parts[2]
        specs.append(spec)
    return specs


def _svg_width(svg: str) -> float:
    match = re.search(r'<svg[^>]*?\swidth="([0-9.]+)"', svg)
    return float(match.group(1)) if match else 0.0


def _sweep_figures(sweeps) -> list[tuple[str, str]]:
    out = []
    for item in sweeps or ():
        if isinstance(item, dict):
            spec = dict(item)
            caption = spec.pop("caption", None)
            svg = figures.sweep_svg(**spec)
            out.append((caption or f"{spec.get('y')} against {spec.get('x')} over the sweep.", svg))
        else:
            caption, svg = item
            out.append((caption, svg))
    return out


def report_html(solution, *, sweeps: Iterable[Any] | None = None, title: str | None = None,
                generated: _dt.datetime | None = None) -> str:
    """The full report as one self-contained HTML document.

    Parameters
    ----------
    solution : Solution
        A solved (or failed) flowsheet; a failed one is reported as such,
        with its numbers marked as not a solution.
    sweeps : iterable, optional
        Sweep plots to include: each either a ``(caption, svg)`` pair or a
        dict of `balance.report.figures.sweep_svg` arguments (``rows``,
        ``x``, ``y``, ...) with an optional ``caption``.
    title : str, optional
        Default: the flowsheet's title.
    generated : datetime, optional
        Time stamp written in the report (default: now).

    Returns
    -------
    str
        The HTML document.
    """
    fs = solution.flowsheet
    title = title or fs.title or (os.path.basename(fs.file) if fs.file else "flowsheet")
    stamp = (generated or _dt.datetime.now()).strftime("%Y-%m-%d %H:%M")
    figs = figures.figures_for(solution, strict=False)
    extra = _sweep_figures(sweeps)
    sections = []

    # 1. job and scenario
    job = [f"<h1>{_e(title)}</h1>",
           f"<p class='meta'>Report by balance {_e(__version__)}, {_e(stamp)}"
           + (f"; flowsheet file <code>{_e(fs.file)}</code>" if fs.file else "") + "</p>"]
    if fs.description:
        job.append(f"<p>{_e(fs.description)}</p>")
    lines = scenario_lines(fs)
    if lines:
        job.append("<div class='scenario'>" + _e("\n".join(lines)) + "</div>")
    sections.append("\n".join(job))

    nav = [("status", "Status"), ("cautions", "Cautions"), ("key-figures", "Key figures"),
           ("figures", "Figures"), ("streams", "Streams"), ("units", "Units"), ("record", "Solve record")]
    sections.append("<nav>" + "".join(f"<a href='#{a}'>{_e(t)}</a>" for a, t in nav) + "</nav>")

    # 2. status
    if solution.converged:
        status = (f"<div class='status' id='status'>Converged: the equations were solved "
                  f"(largest scaled residual {solution.residual_norm:.1e}) and every check passed.</div>")
    else:
        problems = "; ".join(solution.problems[:4]) or solution.message
        status = (f"<div class='status failed' id='status'>NOT A SOLUTION: {_e(solution.status)}. "
                  f"The numbers below are where the solver stopped, for diagnosis only. {_e(problems)}</div>")
    sections.append(status)

    # 3. cautions
    cautions = cautions_for(fs) + _liquor_cautions(solution)
    sections.append("<h2 id='cautions'>Cautions</h2><ul class='cautions'>"
                    + "".join(f"<li>{_e(c)}</li>" for c in cautions) + "</ul>")

    # 4. key figures
    sections.append("<h2 id='key-figures'>Key figures</h2>" + key_figures_html(solution))

    # 5. figures
    fig_parts = ["<h2 id='figures'>Figures</h2>"]
    number = 0
    for name, svg in figs.items():
        number += 1
        wide = " class='wide'" if _svg_width(svg) > 1400 else ""
        fig_parts.append(f"<figure id='figure-{_e(name)}'{wide}>{svg}<figcaption>Figure {number}. "
                         f"{_e(FIGURE_CAPTIONS.get(name, name))}</figcaption></figure>")
    for caption, svg in extra:
        number += 1
        fig_parts.append(f"<figure class='sweep'>{svg}<figcaption>Figure {number}. {_e(caption)}"
                         f"</figcaption></figure>")
    sections.append("\n".join(fig_parts))

    # 6. tables
    sections.append("<h2 id='streams'>Streams</h2>" + stream_table_html(solution)
                    + "<p class='note'>(leaves): the stream leaves the flowsheet by an unconnected outlet. "
                      "Enthalpies on the IAPWS datum (liquid water at the triple point).</p>")
    sections.append("<h2 id='units'>Units</h2>" + unit_table_html(solution))

    # 7. the solve's record
    sections.append("<h2 id='record'>Solve record</h2>" + _solve_record_html(solution))

    body = "\n\n".join(sections)
    footer = (f"<footer>Written by balance {_e(__version__)}. Steady-state estimates for engineering review; "
              f"see the cautions.</footer>")
    return ("<!DOCTYPE html>\n<html lang='en'>\n<head>\n<meta charset='utf-8'>\n"
            "<meta name='viewport' content='width=device-width, initial-scale=1'>\n"
            f"<meta name='generator' content='balance {_e(__version__)}'>\n"
            f"<title>{_e(title)}</title>\n<style>{_CSS}</style>\n</head>\n<body>\n"
            f"{body}\n{footer}\n</body>\n</html>\n")


def write_report(solution, path: str | os.PathLike, *, overwrite: bool = False, **options) -> Path:
    """Write `report_html` to a file; refuses to replace an existing file unless ``overwrite``.

    Raises
    ------
    InputError
        If the file exists and ``overwrite`` is False.
    """
    target = Path(path)
    if target.exists() and not overwrite:
        raise InputError("exists already; choose another name or pass --overwrite", file=str(target))
    text = report_html(solution, **options)
    target.parent.mkdir(parents=True, exist_ok=True)
    target.write_text(text, encoding="utf-8")
    return target


def write_figures(solution, directory: str | os.PathLike, *, format: str = "svg", overwrite: bool = False,
                  sweeps: Iterable[Any] | None = None) -> list[Path]:
    """Write every figure of the report as a separate SVG or PNG file, for slides.

    Files are named after the figure (``flowsheet.svg``, ``energy_flows.svg``,
    ``effect_profile.svg``, ``psychrometric_chart.svg``, ``sweep_1.svg``, ...).
    Nothing is written if one of them exists and ``overwrite`` is False.
    """
    if format not in ("svg", "png"):
        raise InputError(f"unknown figure format {format!r}; valid: svg, png", key="--format")
    folder = Path(directory)
    items = list(figures.figures_for(solution).items())
    items += [(f"sweep_{i}", svg) for i, (_, svg) in enumerate(_sweep_figures(sweeps), start=1)]
    paths = [folder / f"{name}.{format}" for name, _ in items]
    existing = [str(p) for p in paths if p.exists()]
    if existing and not overwrite:
        raise InputError(f"exists already: {', '.join(existing)}; choose another folder or pass --overwrite",
                         key="--figures")
    if format == "png":   # fail before writing anything if PNG cannot be made
        try:
            import cairosvg  # noqa: F401
        except (ImportError, OSError) as exc:
            raise InputError(f"PNG figures need cairosvg and the cairo library ({exc})", key="--format",
                             hint="pip install 'balance[report]', or use --format svg") from None
    folder.mkdir(parents=True, exist_ok=True)
    for path, (_, svg) in zip(paths, items):
        if format == "svg":
            path.write_text(svg, encoding="utf-8")
        else:
            figures.svg_to_png(svg, path)
    return paths


# ---------------------------------------------------------------------------
# notebooks


def solution_html(solution) -> str:
    """A result as HTML tables for a notebook: status, key figures, streams, units."""
    fs = solution.flowsheet
    state = ("converged" if solution.converged
             else f"<b>NOT A SOLUTION ({_e(solution.status)})</b>: numbers for diagnosis only")
    head = (f"<p><b>{_e(fs.title or 'flowsheet')}</b>: {state}; {_e(solution.method)}, "
            f"{solution.iterations} iterations, largest scaled residual {solution.residual_norm:.1e}</p>")
    return ("<div class='balance-solution'>" + head
            + "<details open><summary>Key figures</summary>" + key_figures_html(solution) + "</details>"
            + "<details><summary>Streams</summary>" + stream_table_html(solution) + "</details>"
            + "<details><summary>Units</summary>" + unit_table_html(solution) + "</details>"
            + "</div>")


def register_notebook_display(ipython=None) -> bool:
    """Show `~balance.solve.result.Solution` objects as tables in IPython and Jupyter.

    Parameters
    ----------
    ipython : InteractiveShell, optional
        Default: the running shell, if any.

    Returns
    -------
    bool
        True if a shell was found and the formatter registered.
    """
    from balance.solve.result import Solution
    if ipython is None:
        try:
            from IPython import get_ipython
        except ImportError:
            return False
        ipython = get_ipython()
        if ipython is None:
            return False
    ipython.display_formatter.formatters["text/html"].for_type(Solution, solution_html)
    return True


def load_ipython_extension(ipython) -> None:
    """``%load_ext balance.report.html``: show solutions as tables."""
    register_notebook_display(ipython)
