"""Figures of a solution as hand-written SVG: flowsheet, energy flows, effect profile, psychrometric chart, sweeps.

Every figure is a function returning one self-contained SVG document as a
string (no scripts, no external fonts or images), so it can be inlined in
the HTML report, written to a file for slides, or turned into PNG
(`svg_to_png`, which needs the optional ``cairosvg``).

Style, the same in every figure: black on white, thin grey only for grids;
things are told apart by line style (solid, dashed, dotted, dash-dot),
line weight, hatching and open or filled markers, never by colour alone, so
a figure reads the same printed in black and white. Text is DejaVu Sans or
the nearest sans-serif.

Figures and what they need:

=====================  ==========================================================
`flowsheet_svg`        any flowsheet (values shown when given a solution)
`energy_flow_svg`      a solution: energy entering and leaving the boundary
`effect_profile_svg`   a solution with boiling units (``boiling_temperature``)
`psychrometric_svg`    air states (`air_path` finds them in a solution)
`sweep_svg`            rows (dicts) of a parameter sweep
=====================  ==========================================================

Layout of the flowsheet drawing: a layered (left-to-right) drawing of our
own. Recycles are found by depth-first search and drawn as return lines
under the drawing; the other units are put in columns by longest path from
the feeds; supplies sit just left of the unit they feed, outlets just right
of the unit they leave; streams spanning several columns pass through
invisible waypoints; the order within a column comes from a few barycentre
sweeps; streams are drawn as orthogonal lines with their own vertical track
in each gap.
"""

from __future__ import annotations

import html
import math
from dataclasses import dataclass, field
from typing import Any, Iterable, Sequence

from balance.errors import InputError
from balance.flowsheet.graph import IMPLICIT_OUTLET_PREFIX
from balance.quantities import KINDS, convert, display_unit

__all__ = [
    "flowsheet_svg", "energy_flow_svg", "energy_flows", "EnergyFlow", "effect_profile_svg",
    "effect_rows", "psychrometric_svg", "air_path", "AirPath", "sweep_svg", "svg_to_png",
    "figures_for", "nice_ticks", "STREAM_STYLES",
]

FONT = "DejaVu Sans, Verdana, Helvetica, Arial, sans-serif"
#: Average advance of a character of the font, in em (DejaVu Sans is wide).
_EM = 0.6

#: How each stream kind is drawn: (stroke-width, dash array, description).
STREAM_STYLES = {
    "liquor": (2.4, "", "liquor: heavy solid"),
    "vapour": (1.4, "7 4", "vapour, steam: dashed"),
    "water": (1.0, "", "water, condensate: thin solid"),
    "air": (1.6, "10 3 2 3", "air: dash-dot"),
    "powder": (2.4, "", "powder: double line"),
    "fuel": (1.2, "4 2 1 2 1 2", "fuel: dash-dot-dot"),
}
_OTHER_STYLE = (1.2, "1 2", "other: dotted")


# ---------------------------------------------------------------------------
# SVG primitives


def _n(value: float) -> str:
    """A coordinate written short: two decimals at most."""
    text = f"{value:.2f}".rstrip("0").rstrip(".")
    return "0" if text in ("-0", "") else text


def _esc(text: Any) -> str:
    return html.escape(str(text), quote=True)


def text_width(text: str, size: float) -> float:
    """Approximate width of a text in the figure font [px]."""
    return len(text) * size * _EM


class _Canvas:
    """An SVG document under construction; ``prefix`` keeps ids unique in a page."""

    def __init__(self, prefix: str, title: str, description: str = ""):
        self.prefix = prefix
        self.title = title
        self.description = description
        self.items: list[str] = []
        self.defs: list[str] = []
        self._patterns: set[str] = set()
        #: ``data-*`` attributes of the root element (axis mappings, for readers and tests)
        self.data: dict[str, str] = {}

    def id(self, name: str) -> str:
        return f"{self.prefix}-{name}"

    def add(self, item: str) -> None:
        self.items.append(item)

    @staticmethod
    def _attrs(style: dict) -> str:
        parts = []
        for key, value in style.items():
            if value is None or value == "":
                continue
            if isinstance(value, float):
                value = _n(value)
            parts.append(f'{key.rstrip("_").replace("_", "-")}="{_esc(value)}"')
        return " ".join(parts)

    def line(self, x1, y1, x2, y2, **style) -> None:
        style.setdefault("stroke", "#000")
        self.add(f'<line x1="{_n(x1)}" y1="{_n(y1)}" x2="{_n(x2)}" y2="{_n(y2)}" {self._attrs(style)}/>')

    def polyline(self, points: Sequence[tuple[float, float]], **style) -> None:
        style.setdefault("stroke", "#000")
        style.setdefault("fill", "none")
        pts = " ".join(f"{_n(x)},{_n(y)}" for x, y in points)
        self.add(f'<polyline points="{pts}" {self._attrs(style)}/>')

    def polygon(self, points: Sequence[tuple[float, float]], **style) -> None:
        style.setdefault("stroke", "#000")
        pts = " ".join(f"{_n(x)},{_n(y)}" for x, y in points)
        self.add(f'<polygon points="{pts}" {self._attrs(style)}/>')

    def path(self, d: str, **style) -> None:
        style.setdefault("stroke", "#000")
        style.setdefault("fill", "none")
        self.add(f'<path d="{d}" {self._attrs(style)}/>')

    def rect(self, x, y, w, h, **style) -> None:
        style.setdefault("stroke", "#000")
        style.setdefault("fill", "#fff")
        self.add(f'<rect x="{_n(x)}" y="{_n(y)}" width="{_n(w)}" height="{_n(h)}" {self._attrs(style)}/>')

    def circle(self, x, y, r, **style) -> None:
        style.setdefault("stroke", "#000")
        self.add(f'<circle cx="{_n(x)}" cy="{_n(y)}" r="{_n(r)}" {self._attrs(style)}/>')

    def text(self, x, y, content: str, size: float = 11, anchor: str = "start", halo: bool = False,
             **style) -> None:
        """Text at (x, y) (baseline); ``halo`` puts a white box behind it so lines under it do not cross it."""
        rotate = style.pop("rotate", None)
        if halo:
            w = text_width(content, size) * (1.05 if style.get("font_weight") == "bold" else 1.0)
            x0 = x - w if anchor == "end" else x - w / 2 if anchor == "middle" else x
            self.rect(x0 - 1.5, y - size * 0.85, w + 3, size * 1.1, fill="#fff", stroke="none",
                      fill_opacity=0.85)
        if rotate is not None:
            style["transform"] = f"rotate({_n(rotate)} {_n(x)} {_n(y)})"
        style.setdefault("fill", "#000")
        self.add(f'<text x="{_n(x)}" y="{_n(y)}" font-size="{_n(size)}" text-anchor="{anchor}" '
                 f'{self._attrs(style)}>{_esc(content)}</text>')

    def arrowhead(self, x, y, dx, dy, size: float = 7.0, **style) -> None:
        """A filled arrowhead with its tip at (x, y) pointing along (dx, dy)."""
        length = math.hypot(dx, dy) or 1.0
        ux, uy = dx / length, dy / length
        bx, by = x - ux * size, y - uy * size
        half = size * 0.42
        style.setdefault("fill", "#000")
        style.setdefault("stroke", "none")
        self.polygon([(x, y), (bx - uy * half, by + ux * half), (bx + uy * half, by - ux * half)], **style)

    def pattern(self, name: str) -> str:
        """``url(#...)`` of a hatching pattern, defined once per figure.

        Names: ``diagonal`` (/), ``backward`` (\\), ``cross``, ``horizontal``,
        ``vertical``, ``dots``, ``dense`` (close diagonal), ``grey``.
        """
        pid = self.id(f"pattern-{name}")
        if name not in self._patterns:
            self._patterns.add(name)
            body = {
                "diagonal": ('6', 'rotate(45)', '<line x1="0" y1="0" x2="0" y2="6" stroke="#000" stroke-width="1"/>'),
                "backward": ('6', 'rotate(-45)', '<line x1="0" y1="0" x2="0" y2="6" stroke="#000" stroke-width="1"/>'),
                "dense": ('3.5', 'rotate(45)', '<line x1="0" y1="0" x2="0" y2="3.5" stroke="#000" stroke-width="0.9"/>'),
                "cross": ('6', 'rotate(45)', '<line x1="0" y1="0" x2="0" y2="6" stroke="#000" stroke-width="0.8"/>'
                          '<line x1="0" y1="0" x2="6" y2="0" stroke="#000" stroke-width="0.8"/>'),
                "horizontal": ('5', '', '<line x1="0" y1="0" x2="5" y2="0" stroke="#000" stroke-width="1"/>'),
                "vertical": ('5', '', '<line x1="0" y1="0" x2="0" y2="5" stroke="#000" stroke-width="1"/>'),
                "dots": ('5', '', '<circle cx="2.5" cy="2.5" r="0.9" fill="#000"/>'),
                "grey": ('4', '', '<rect x="0" y="0" width="4" height="4" fill="#c8c8c8"/>'),
            }[name]
            size, transform, content = body
            attr = f' patternTransform="{transform}"' if transform else ""
            self.defs.append(f'<pattern id="{pid}" patternUnits="userSpaceOnUse" width="{size}" '
                             f'height="{size}"{attr}><rect x="0" y="0" width="{size}" height="{size}" '
                             f'fill="#fff"/>{content}</pattern>')
        return f"url(#{pid})"

    def clip(self, name: str, x, y, w, h) -> str:
        cid = self.id(f"clip-{name}")
        self.defs.append(f'<clipPath id="{cid}"><rect x="{_n(x)}" y="{_n(y)}" width="{_n(w)}" '
                         f'height="{_n(h)}"/></clipPath>')
        return f"url(#{cid})"

    def svg(self, width: float, height: float) -> str:
        head = (f'<svg xmlns="http://www.w3.org/2000/svg" version="1.1" width="{_n(width)}" '
                f'height="{_n(height)}" viewBox="0 0 {_n(width)} {_n(height)}" role="img" '
                f'font-family="{FONT}" class="balance-figure" data-figure="{_esc(self.prefix)}"'
                + "".join(f' data-{k}="{_esc(v)}"' for k, v in self.data.items()) + ">")
        parts = [head, f"<title>{_esc(self.title)}</title>"]
        if self.description:
            parts.append(f"<desc>{_esc(self.description)}</desc>")
        if self.defs:
            parts.append("<defs>" + "".join(self.defs) + "</defs>")
        parts.append(f'<rect x="0" y="0" width="{_n(width)}" height="{_n(height)}" fill="#fff"/>')
        parts += self.items
        parts.append("</svg>")
        return "\n".join(parts)


def nice_ticks(low: float, high: float, count: int = 6) -> list[float]:
    """Round tick values that enclose [low, high], about ``count`` of them.

    >>> nice_ticks(0.0, 100.0)
    [0.0, 20.0, 40.0, 60.0, 80.0, 100.0]
    >>> nice_ticks(54.8, 102.6, 6)
    [50.0, 60.0, 70.0, 80.0, 90.0, 100.0, 110.0]
    """
    if not (math.isfinite(low) and math.isfinite(high)):
        return []
    if high <= low:
        high = low + (abs(low) * 0.1 or 1.0)
    raw = (high - low) / max(count - 1, 1)
    magnitude = 10 ** math.floor(math.log10(raw))
    step = next(m * magnitude for m in (1, 2, 2.5, 5, 10) if m * magnitude >= raw * 0.999)
    first = math.floor(low / step + 1e-9)
    last = math.ceil(high / step - 1e-9)
    return [float(round(k * step, 10)) for k in range(first, last + 1)]


def _tick_label(value: float, ticks: Sequence[float]) -> str:
    step = abs(ticks[1] - ticks[0]) if len(ticks) > 1 else 1.0
    decimals = max(0, -int(math.floor(math.log10(step))) + (1 if step / 10 ** math.floor(math.log10(step)) == 2.5 else 0))
    return f"{value:,.{decimals}f}" if decimals else f"{value:,.0f}"


def _num(value: float | None, kind: str | None = None, digits: int = 4) -> str:
    """A number for a label, about ``digits`` significant figures, converted to the display unit."""
    if value is None:
        return "-"
    if kind is not None and kind in KINDS:
        value = convert(float(value), kind)
    if not math.isfinite(value):
        return "n/a"
    magnitude = abs(value)
    if magnitude >= 10 ** (digits - 1):
        return f"{value:,.0f}"
    if magnitude == 0:
        return "0"
    decimals = max(0, digits - 1 - int(math.floor(math.log10(magnitude))))
    return f"{value:,.{decimals}f}"


@dataclass
class _Axis:
    """A linear map from data to pixels."""

    low: float
    high: float
    start: float
    end: float

    def __call__(self, value: float) -> float:
        span = self.high - self.low or 1.0
        return self.start + (value - self.low) / span * (self.end - self.start)


def _frame(canvas: _Canvas, x: _Axis, y: _Axis, xticks, yticks, xlabel: str, ylabel: str,
           grid: bool = True) -> None:
    """Axes box, grid, ticks and labels of an x-y plot."""
    left, right = x.start, x.end
    top, bottom = y.end, y.start
    canvas.data["plot-area"] = f"{_n(left)} {_n(top)} {_n(right)} {_n(bottom)}"
    canvas.data["range"] = f"{x.low!r} {x.high!r} {y.low!r} {y.high!r}"
    if grid:
        for t in xticks:
            canvas.line(x(t), top, x(t), bottom, stroke="#bbb", stroke_width=0.5)
        for t in yticks:
            canvas.line(left, y(t), right, y(t), stroke="#bbb", stroke_width=0.5)
    canvas.rect(left, top, right - left, bottom - top, fill="none", stroke_width=1)
    for t in xticks:
        canvas.line(x(t), bottom, x(t), bottom + 4, stroke_width=1)
        canvas.text(x(t), bottom + 16, _tick_label(t, xticks), 10, "middle")
    for t in yticks:
        canvas.line(left - 4, y(t), left, y(t), stroke_width=1)
        canvas.text(left - 7, y(t) + 3.5, _tick_label(t, yticks), 10, "end")
    canvas.text((left + right) / 2, bottom + 34, xlabel, 11, "middle")
    canvas.text(left - 48, (top + bottom) / 2, ylabel, 11, "middle", rotate=-90)


_MARKERS = ("circle", "square", "triangle", "diamond", "cross", "plus")


def _marker(canvas: _Canvas, shape: str, x: float, y: float, size: float = 4.0, filled: bool = True) -> None:
    fill = "#000" if filled else "#fff"
    if shape == "circle":
        canvas.circle(x, y, size, fill=fill, stroke_width=1.2)
    elif shape == "square":
        canvas.rect(x - size, y - size, 2 * size, 2 * size, fill=fill, stroke_width=1.2)
    elif shape == "triangle":
        canvas.polygon([(x, y - size * 1.2), (x + size * 1.1, y + size * 0.8), (x - size * 1.1, y + size * 0.8)],
                       fill=fill, stroke_width=1.2)
    elif shape == "diamond":
        canvas.polygon([(x, y - size * 1.3), (x + size, y), (x, y + size * 1.3), (x - size, y)],
                       fill=fill, stroke_width=1.2)
    elif shape == "cross":
        canvas.line(x - size, y - size, x + size, y + size, stroke_width=1.6)
        canvas.line(x - size, y + size, x + size, y - size, stroke_width=1.6)
    else:
        canvas.line(x - size, y, x + size, y, stroke_width=1.6)
        canvas.line(x, y - size, x, y + size, stroke_width=1.6)


# ---------------------------------------------------------------------------
# Flowsheet drawing


@dataclass
class _Node:
    name: str
    layer: int
    dummy: bool = False
    role: str = "unit"            # unit, source, sink, outlet (implicit), dummy
    width: float = 0.0
    height: float = 0.0
    lines: list[tuple[str, float, str]] = field(default_factory=list)   # (text, size, weight/style)
    band: str | None = None       # hatching band: boils, exchanger, dries
    x: float = 0.0
    y: float = 0.0                # top
    order: float = 0.0
    left: list = field(default_factory=list)    # edge ids attached on the left (inlets)
    right: list = field(default_factory=list)   # edge ids attached on the right (outlets)


@dataclass
class _Edge:
    name: str
    kind: str
    chain: list[str]             # node names from source to target, dummies between
    back: bool = False
    label: tuple[str, str] = ("", "")


_PORT_GAP = 34.0      # vertical distance between streams on one side of a box
_NODE_GAP = 26.0      # vertical gap between boxes in a column
_MIN_GAP = 70.0       # smallest horizontal gap between columns
_LABEL_SIZE = 9.0     # font size of stream labels
_MARGIN = 20.0


def _short_outlet_name(name: str) -> str:
    return name[len(IMPLICIT_OUTLET_PREFIX):] if name.startswith(IMPLICIT_OUTLET_PREFIX) else name


def _unit_value_lines(unit_result) -> list[str]:
    """Up to three short lines of a unit's main numbers."""
    if unit_result is None:
        return []
    q, f = unit_result.quantities, unit_result.figures
    lines = []
    if "boiling_temperature" in f:
        lines.append(f"{_num(f['boiling_temperature'], 'temperature')} °C")
    if "pressure" in q:
        lines.append(f"{_num(q['pressure'], 'pressure')} kPa")
    if "area" in q:
        lines.append(f"{_num(q['area'], 'area')} m2")
    elif "duty" in q and len(lines) < 2:
        lines.append(f"{_num(q['duty'], 'power')} kW")
    return lines[:3]


def _band_for(unit, unit_result) -> str | None:
    if getattr(unit, "boils", False):
        return "boils"
    if getattr(unit, "dries", False):
        return "dries"
    if unit_result is not None and "area" in unit_result.quantities:
        return "exchanger"
    return None


def _stream_label(solution, stream) -> tuple[str, str]:
    if solution is None or stream.name not in solution.streams:
        return stream.name, ""
    values = solution.streams[stream.name].values
    first = stream.name
    if "temperature" in values:
        first += f"  {_num(values['temperature'], 'temperature', 3)} °C"
    second = f"{_num(values.get('flow'), 'mass_flow', 3)} kg/h" if "flow" in values else ""
    if "humidity" in values:
        second += f"  {_num(values['humidity'], 'humidity_ratio', 3)} g/kg"
    return first, second


def _feedback_edges(graph, process: list[str], sources: list[str]) -> set[tuple[str, str, str]]:
    """Edges that close a cycle, found by depth-first search from the feeds (file order)."""
    back: set[tuple[str, str, str]] = set()
    state: dict[str, int] = {}
    starts = [v for s in sources for _, v in graph.out_edges(s)] + list(process)

    def out_edges(node):
        edges = [(u, v, k, d) for u, v, k, d in graph.out_edges(node, keys=True, data=True) if v in state_ok]
        return sorted(edges, key=lambda e: (e[3]["kind"] != "liquor", process.index(e[1])))

    state_ok = set(process)
    for start in starts:
        if start not in state_ok or start in state:
            continue
        stack = [(start, iter(out_edges(start)))]
        state[start] = 1
        while stack:
            node, edges = stack[-1]
            advanced = False
            for u, v, key, _ in edges:
                if state.get(v) == 1:
                    back.add((u, v, key))
                elif v not in state:
                    state[v] = 1
                    stack.append((v, iter(out_edges(v))))
                    advanced = True
                    break
            if not advanced:
                state[node] = 2
                stack.pop()
    return back


def _layout(fs, solution):
    """Place the units and route the streams; returns nodes, edges and the drawing size."""
    graph = fs.graph
    names = list(graph.nodes)
    units = fs.units
    sources = [n for n in names if units[n].boundary == "source"]
    sinks = [n for n in names if units[n].boundary == "sink"]
    process = [n for n in names if n not in sources and n not in sinks]
    back = _feedback_edges(graph, process, sources)

    layer: dict[str, int] = {}
    forward = {n: [] for n in process}
    for u, v, key in graph.edges(keys=True):
        if u in forward and v in forward and (u, v, key) not in back:
            forward[u].append(v)
    indegree = {n: 0 for n in process}
    for u, targets in forward.items():
        for v in targets:
            indegree[v] += 1
    ready = [n for n in process if indegree[n] == 0]
    for n in process:
        layer[n] = 0
    while ready:
        node = ready.pop(0)
        for v in forward[node]:
            layer[v] = max(layer[v], layer[node] + 1)
            indegree[v] -= 1
            if indegree[v] == 0:
                ready.append(v)
    for n in sources:
        targets = [layer[v] for v in graph.successors(n) if v in layer]
        layer[n] = min(targets) - 1 if targets else 0
    for n in sinks:
        feeds = [layer[u] for u in graph.predecessors(n) if u in layer]
        layer[n] = max(feeds) + 1 if feeds else 1
    shift = -min(layer.values()) if layer else 0
    for n in layer:
        layer[n] += shift

    nodes: dict[str, _Node] = {}
    results = solution.units if solution is not None else {}
    for n in names:
        unit = units[n]
        if n in sources:
            role = "source"
        elif n.startswith(IMPLICIT_OUTLET_PREFIX):
            role = "outlet"
        elif n in sinks:
            role = "sink"
        else:
            role = "unit"
        node = _Node(n, layer[n], role=role)
        if role == "outlet":
            node.lines = [(_short_outlet_name(n).split(".")[-1].replace("_", " "), 9.5, "normal")]
        elif role in ("source", "sink"):
            node.lines = [(n, 11, "bold"), (unit.type_name.replace("_", " "), 9, "italic")]
        else:
            node.lines = [(n, 12, "bold"), (unit.type_name.replace("_", " "), 9.5, "italic")]
            node.lines += [(t, 9.5, "normal") for t in _unit_value_lines(results.get(n))]
            node.band = _band_for(unit, results.get(n))
        nodes[n] = node

    edges: list[_Edge] = []
    dummy_count = 0
    for stream in fs.streams:
        u, v = stream.source, stream.target
        is_back = (u, v, stream.name) in back
        chain = [u]
        if not is_back:
            for level in range(layer[u] + 1, layer[v]):
                dummy_count += 1
                dname = f"\x00dummy{dummy_count}"
                nodes[dname] = _Node(dname, level, dummy=True, role="dummy")
                chain.append(dname)
        chain.append(v)
        label = _stream_label(solution, stream)
        if v.startswith(IMPLICIT_OUTLET_PREFIX) and label[1]:   # the outlet's tag names it
            label = (label[0][len(stream.name):].strip(), label[1])
        edges.append(_Edge(stream.name, stream.kind, chain, is_back, label))

    # attachment lists
    for index, edge in enumerate(edges):
        nodes[edge.chain[0]].right.append(index)
        nodes[edge.chain[-1]].left.append(index)
        for d in edge.chain[1:-1]:
            nodes[d].left.append(index)
            nodes[d].right.append(index)

    # sizes
    for node in nodes.values():
        ports = max(len(node.left), len(node.right), 1)
        if node.dummy:
            node.width, node.height = 0.0, _PORT_GAP
            continue
        text_w = max(text_width(t, s) * (1.1 if w == "bold" else 1.0) for t, s, w in node.lines)
        if node.role == "outlet":
            node.width = text_w + 18
            node.height = 20.0
            continue
        node.width = max(text_w + 20, 70.0 if node.role != "unit" else 86.0)
        content = sum(s * 1.3 for _, s, _ in node.lines) + 12 + (10 if node.band else 0)
        node.height = max(content, ports * _PORT_GAP + 8)

    # order within layers: start from file order, then barycentre sweeps
    layers: dict[int, list[str]] = {}
    for name, node in nodes.items():
        layers.setdefault(node.layer, []).append(name)
    neighbours_left: dict[str, list[str]] = {n: [] for n in nodes}
    neighbours_right: dict[str, list[str]] = {n: [] for n in nodes}
    for edge in edges:
        if edge.back:
            continue
        for a, b in zip(edge.chain, edge.chain[1:]):
            neighbours_right[a].append(b)
            neighbours_left[b].append(a)
    position = {}
    for level in sorted(layers):
        members = layers[level]
        # dummies start where their stream starts
        for i, name in enumerate(members):
            position[name] = i
        if level > min(layers):
            for name in members:
                left = neighbours_left[name]
                if left:
                    position[name] = sum(position[m] for m in left) / len(left) + 0.001 * position[name]
            members.sort(key=lambda m: position[m])
            for i, name in enumerate(members):
                position[name] = i

    def crossings() -> int:
        total = 0
        for level in sorted(layers)[:-1]:
            pairs = [(position[a], position[b]) for a in layers[level] for b in neighbours_right[a]]
            for i in range(len(pairs)):
                for j in range(i + 1, len(pairs)):
                    if (pairs[i][0] - pairs[j][0]) * (pairs[i][1] - pairs[j][1]) < 0:
                        total += 1
        return total

    best = (crossings(), {k: list(v) for k, v in layers.items()})
    ordered = sorted(layers)
    for sweep in range(8):
        sequence = ordered[1:] if sweep % 2 == 0 else list(reversed(ordered[:-1]))
        for level in sequence:
            members = layers[level]
            linked = neighbours_left if sweep % 2 == 0 else neighbours_right
            for name in members:
                near = linked[name]
                if near:
                    position[name] = sum(position[m] for m in near) / len(near) + 0.001 * position[name]
            members.sort(key=lambda m: position[m])
            for i, name in enumerate(members):
                position[name] = i
        count = crossings()
        if count < best[0]:
            best = (count, {k: list(v) for k, v in layers.items()})
    layers = best[1]
    for members in layers.values():
        for i, name in enumerate(members):
            position[name] = i

    # attachment order on each side: by the position of the other end
    def other_end_y(edge_index, node_name, side):
        edge = edges[edge_index]
        chain = edge.chain
        i = chain.index(node_name)
        other = chain[i - 1] if side == "left" else chain[i + 1] if i + 1 < len(chain) else chain[i]
        return nodes[other].y + nodes[other].height / 2

    # vertical placement: a small least-squares problem (straight streams) under the order of each column
    for members in layers.values():
        y = _MARGIN + 10
        for name in members:
            nodes[name].y = y
            y += nodes[name].height + _NODE_GAP

    def attach_offset(node: _Node, edge_index: int, side: str) -> float:
        items = node.left if side == "left" else node.right
        if node.dummy or len(items) == 1:
            return node.height / 2
        k = items.index(edge_index)
        span = (len(items) - 1) * _PORT_GAP
        return node.height / 2 - span / 2 + k * _PORT_GAP

    def attach_y(node: _Node, edge_index: int, side: str) -> float:
        return node.y + attach_offset(node, edge_index, side)

    def sort_attachments():
        for node in nodes.values():
            node.left.sort(key=lambda e: other_end_y(e, node.name, "left"))
            node.right.sort(key=lambda e: other_end_y(e, node.name, "right"))

    for _ in range(3):
        sort_attachments()
        _place_vertically(nodes, edges, layers, attach_offset)
    sort_attachments()

    # snap small jogs straight: waypoints to the stream before them, outlets to their unit,
    # supplies to the unit they feed, where the column leaves room
    column_of = {name: members for members in layers.values() for name in members}

    def room_for(node: _Node, top_y: float) -> bool:
        members = column_of[node.name]
        i = members.index(node.name)
        above = nodes[members[i - 1]] if i > 0 else None
        below = nodes[members[i + 1]] if i + 1 < len(members) else None
        gap = _NODE_GAP / 2
        return ((above is None or above.y + above.height + gap <= top_y)
                and (below is None or top_y + node.height + gap <= below.y))

    for edge_index, edge in enumerate(edges):
        if edge.back:
            continue
        chain = [nodes[n] for n in edge.chain]
        for prev, node in zip(chain, chain[1:]):
            if node.dummy or (node.role in ("sink", "outlet") and len(node.left) == 1):
                want = attach_y(prev, edge_index, "right") - attach_offset(node, edge_index, "left")
                if 0 < abs(want - node.y) < 12 and room_for(node, want):
                    node.y = want
        first, second = chain[0], chain[1]
        if first.role == "source" and len(first.right) == 1:
            want = attach_y(second, edge_index, "left") - attach_offset(first, edge_index, "right")
            if 0 < abs(want - first.y) < 12 and room_for(first, want):
                first.y = want
    top = min(n.y for n in nodes.values())
    for n in nodes.values():
        n.y += _MARGIN + 10 - top
    # x of columns; each gap holds the vertical tracks and the labels of the streams ending beyond it
    column_width = {level: max(nodes[n].width for n in members) for level, members in layers.items()}
    gap_after: dict[int, float] = {}
    for level in ordered[:-1]:
        crossing, ending = 0, []
        for e, edge in enumerate(edges):
            if edge.back:
                continue
            for a, b in zip(edge.chain, edge.chain[1:]):
                if nodes[a].layer == level:
                    crossing += abs(attach_y(nodes[a], e, "right") - attach_y(nodes[b], e, "left")) > 0.5
                    if not nodes[b].dummy:
                        ending.append(edge)
        label_w = max([text_width(t, _LABEL_SIZE) * 1.04 for e in ending for t in e.label] + [40.0])
        gap_after[level] = max(_MIN_GAP, _track_room(crossing) + label_w + 14)
    column_x = {}
    x = _MARGIN
    for level in ordered:
        column_x[level] = x
        x += column_width[level] + gap_after.get(level, 0.0)
    total_width = x + _MARGIN

    for level, members in layers.items():
        for name in members:
            node = nodes[name]
            if node.role in ("sink", "outlet"):
                node.x = column_x[level]
            elif node.dummy:
                node.x = column_x[level] + column_width[level] / 2
            else:
                node.x = column_x[level] + (column_width[level] - node.width) / 2

    bottom = max(n.y + n.height for n in nodes.values())
    return nodes, edges, layers, column_x, column_width, total_width, bottom, attach_y


def _track_room(count: int) -> float:
    """Width in a gap for ``count`` vertical tracks [px]."""
    return 14.0 + 7.0 * min(count, 12)


def _place_vertically(nodes: dict, edges: list, layers: dict, attach_offset) -> None:
    """Set each node's top y: least squares on the height differences of the streams'
    ends (straight lines are preferred, the liquor line and long streams most), under
    the order and spacing of each column; solved as one small QP by CasADi."""
    import casadi as ca
    names = list(nodes)
    index = {n: i for i, n in enumerate(names)}
    y = ca.SX.sym("y", len(names))
    terms = []
    for e, edge in enumerate(edges):
        if edge.back:
            continue
        for a, b in zip(edge.chain, edge.chain[1:]):
            na, nb = nodes[a], nodes[b]
            weight = 3.0 if edge.kind == "liquor" else 1.0
            if na.dummy or nb.dummy:
                weight *= 2.0
            if na.role == "source" or nb.role in ("sink", "outlet"):
                weight *= 0.7
            diff = (y[index[a]] + attach_offset(na, e, "right")) - (y[index[b]] + attach_offset(nb, e, "left"))
            terms.append(weight * diff ** 2)
    start = [nodes[n].y for n in names]
    terms.append(1e-4 * ca.sumsqr(y - ca.DM(start)))
    constraints = []
    for members in layers.values():
        for upper, lower in zip(members, members[1:]):
            gap = _NODE_GAP if not (nodes[upper].dummy or nodes[lower].dummy) else _NODE_GAP / 2
            constraints.append(y[index[lower]] - y[index[upper]] - nodes[upper].height - gap)
    problem = {"x": y, "f": ca.sum1(ca.vertcat(*terms)), "g": ca.vertcat(*constraints) if constraints else ca.SX(0, 1)}
    options = {"print_iter": False, "print_header": False, "print_info": False, "error_on_fail": False}
    solver = ca.qpsol("flowsheet_layout", "qrqp", problem, options)
    result = solver(x0=ca.DM(start), lbg=0, ubg=ca.inf)
    values = [float(v) for v in ca.DM(result["x"]).full().ravel()]
    if all(math.isfinite(v) for v in values):
        for n, v in zip(names, values):
            nodes[n].y = v


def _draw_node(canvas: _Canvas, node: _Node) -> None:
    x, y, w, h = node.x, node.y, node.width, node.height
    if node.role == "outlet":
        tip = x + w
        canvas.polygon([(x, y), (tip - 8, y), (tip, y + h / 2), (tip - 8, y + h), (x, y + h), (x + 6, y + h / 2)],
                       fill="#fff", stroke_width=0.8)
        canvas.text(x + 9, y + h / 2 + 3.3, node.lines[0][0], node.lines[0][1])
        return
    if node.role in ("source", "sink"):
        notch = 7 if node.role == "sink" else 0
        canvas.polygon([(x, y), (x + w - 10, y), (x + w, y + h / 2), (x + w - 10, y + h), (x, y + h),
                        (x + notch, y + h / 2)], fill="#fff", stroke_width=1.2)
    else:
        canvas.rect(x, y, w, h, rx=2, stroke_width=1.6)
        if node.band:
            pattern = {"boils": "vertical", "exchanger": "diagonal", "dries": "dots"}[node.band]
            canvas.rect(x + 1, y + h - 10, w - 2, 9, fill=canvas.pattern(pattern), stroke="none")
            canvas.line(x, y + h - 10, x + w, y + h - 10, stroke_width=0.8)
    total = sum(s * 1.3 for _, s, _ in node.lines)
    usable = h - (10 if node.band else 0)
    ty = y + (usable - total) / 2 + node.lines[0][1]
    for text, size, weight in node.lines:
        style = {"font_weight": "bold"} if weight == "bold" else {"font_style": "italic"} if weight == "italic" else {}
        canvas.text(x + (w - (10 if node.role in ("source", "sink") else 0)) / 2 + (3 if node.role == "sink" else 0),
                    ty, text, size, "middle", **style)
        ty += size * 1.3


def flowsheet_svg(subject, title: str | None = None) -> str:
    """A drawing of the flowsheet: units, streams, flows and temperatures.

    Parameters
    ----------
    subject : Solution or Flowsheet
        With a solution the streams are labelled with flow and temperature
        and the units with their main numbers; a flowsheet alone is drawn
        with names only.
    title : str, optional
        The figure's title (default: the flowsheet's).

    Returns
    -------
    str
        An SVG document.

    Notes
    -----
    Columns run left to right in the direction of flow; supplies are flags,
    products and outlets notched flags; process units boxes, with a band of
    vertical hatching for units that boil, diagonal hatching for heat
    exchangers and dots for dryers. Line styles tell stream kinds apart
    (`STREAM_STYLES`); a recycle returns along a lane under the drawing.
    """
    solution = subject if hasattr(subject, "streams") and hasattr(subject, "model") else None
    fs = solution.flowsheet if solution is not None else subject
    fs.complete()
    canvas = _Canvas("flowsheet", title or fs.title or "flowsheet",
                     "Drawing of the flowsheet generated from its graph")
    nodes, edges, layers, column_x, column_width, width, bottom, attach_y = _layout(fs, solution)

    # vertical tracks in each gap, one per stream that changes height there
    gap_edges: dict[int, list[tuple[int, float, float]]] = {}
    segments = []
    for index, edge in enumerate(edges):
        if edge.back:
            continue
        for a, b in zip(edge.chain, edge.chain[1:]):
            na, nb = nodes[a], nodes[b]
            ya, yb = attach_y(na, index, "right"), attach_y(nb, index, "left")
            segments.append((index, na, nb, ya, yb))
            if abs(ya - yb) > 0.5:
                gap_edges.setdefault(na.layer, []).append((index, ya, yb))
    track_x: dict[tuple[int, int], float] = {}
    for level, items in gap_edges.items():
        gap_left = column_x[level] + column_width[level] + 8
        usable = _track_room(len(items)) - 8
        # downward streams first, the lowest-starting leftmost; then upward ones, the highest-starting
        # leftmost: streams of one direction then never cross each other in the gap
        items.sort(key=lambda t: (t[2] < t[1], -t[1] if t[2] >= t[1] else t[1]))
        step = usable / max(len(items), 1)
        for k, (index, _, _) in enumerate(items):
            track_x[(index, level)] = gap_left + step * (k + 0.5)

    lanes_y = bottom + 24
    back_edges = [i for i, e in enumerate(edges) if e.back]
    height = lanes_y + 16 * len(back_edges) + 20

    def style_of(kind):
        return STREAM_STYLES.get(kind, _OTHER_STYLE)

    labels = []
    for index, na, nb, ya, yb in segments:
        edge = edges[index]
        sw, dash, _ = style_of(edge.kind)
        xa = na.x + na.width if not na.dummy else na.x
        xb = nb.x if not nb.dummy else nb.x
        if abs(ya - yb) > 0.5:
            tx = track_x[(index, na.layer)]
            points = [(xa, ya), (tx, ya), (tx, yb), (xb, yb)]
        else:
            points = [(xa, ya), (xb, yb)]
        if edge.kind == "powder":
            canvas.polyline(points, stroke_width=sw + 1.6)
            canvas.polyline(points, stroke="#fff", stroke_width=sw - 0.8)
        else:
            canvas.polyline(points, stroke_width=sw, stroke_dasharray=dash or None)
        if not nb.dummy:
            canvas.arrowhead(xb, yb, 1, 0)
            labels.append((edge, points))

    for k, index in enumerate(back_edges):
        edge = edges[index]
        na, nb = nodes[edge.chain[0]], nodes[edge.chain[-1]]
        ya, yb = attach_y(na, index, "right"), attach_y(nb, index, "left")
        sw, dash, _ = style_of(edge.kind)
        lane = lanes_y + 16 * k
        xa = na.x + na.width
        out_x = column_x[na.layer] + column_width[na.layer] + 4 + 5 * k
        in_x = column_x[nb.layer] - 10 - 5 * k
        points = [(xa, ya), (out_x, ya), (out_x, lane), (in_x, lane), (in_x, yb), (nb.x, yb)]
        canvas.polyline(points, stroke_width=sw, stroke_dasharray=dash or None)
        canvas.arrowhead(nb.x, yb, 1, 0)
        canvas.arrowhead((out_x + in_x) / 2, lane, -1, 0, 6)
        labels.append((edge, points))

    for name, node in nodes.items():
        if not node.dummy:
            _draw_node(canvas, node)

    size = _LABEL_SIZE
    for edge, points in labels:
        first, second = edge.label
        needed = max(text_width(first, size), text_width(second, size)) + 10
        (x_a, y_line), (x_b, _) = points[-2], points[-1]
        if x_b - x_a >= needed or len(points) < 3 or points[1][0] - points[0][0] < needed:
            x_text, anchor = x_b - 5, "end"
        else:   # more room on the first leg, at the source
            (x_text, y_line), anchor = (points[0][0] + 5, points[0][1]), "start"
        halo = {"halo": True}
        if second:
            canvas.text(x_text, y_line - 4, second, size, anchor, **halo)
            if first:
                canvas.text(x_text, y_line - 5 - size * 1.15, first, size, anchor, font_weight="bold", **halo)
        else:
            canvas.text(x_text, y_line - 4, first, size, anchor, font_weight="bold", **halo)

    # legend
    kinds = []
    for edge in edges:
        if edge.kind not in kinds:
            kinds.append(edge.kind)
    lx, ly = _MARGIN, height + 4
    canvas.text(lx, ly + 4, "Streams:", 10, font_weight="bold")
    lx += 62
    for kind in kinds:
        sw, dash, text = style_of(kind)
        if kind == "powder":
            canvas.line(lx, ly, lx + 34, ly, stroke_width=sw + 1.6)
            canvas.line(lx, ly, lx + 34, ly, stroke="#fff", stroke_width=sw - 0.8)
        else:
            canvas.line(lx, ly, lx + 34, ly, stroke_width=sw, stroke_dasharray=dash or None)
        label = text if kind in STREAM_STYLES else f"{kind}: dotted"
        canvas.text(lx + 40, ly + 3.5, label, 10)
        lx += 48 + text_width(label, 10) + 10
    bands = sorted({n.band for n in nodes.values() if n.band})
    ly2 = ly + 20
    if bands:
        bx = _MARGIN
        canvas.text(bx, ly2 + 4, "Units:", 10, font_weight="bold")
        bx += 62
        words = {"boils": "boils (effect, flash)", "exchanger": "exchanges heat", "dries": "dries"}
        for band in bands:
            pattern = {"boils": "vertical", "exchanger": "diagonal", "dries": "dots"}[band]
            canvas.rect(bx, ly2 - 5, 30, 10, fill=canvas.pattern(pattern), stroke_width=0.8)
            canvas.text(bx + 36, ly2 + 3.5, words[band], 10)
            bx += 46 + text_width(words[band], 10) + 10
        ly2 += 20
    if solution is not None:
        canvas.text(_MARGIN, ly2 + 4, "Labels: stream, temperature [°C]; flow [kg/h] "
                    "(air: dry-air flow, humidity ratio [g/kg]).", 9.5, font_style="italic")
        ly2 += 16
    return canvas.svg(max(width, 560), ly2 + 6)


# ---------------------------------------------------------------------------
# Energy flows


@dataclass(frozen=True)
class EnergyFlow:
    """One band of the energy-flow diagram.

    ``direction`` is ``"in"`` or ``"out"``; ``value`` in W (positive);
    ``category`` one of steam, feed, power, fuel, air, water, cooling,
    product, condensate, vapour, exhaust, losses, other, imbalance.
    """

    label: str
    value: float
    direction: str
    category: str


def _external_powers(solution) -> dict[str, float]:
    """Net power entering at each unit [W] (shaft, electric or fuel in; heat losses out)."""
    import casadi as ca
    import numpy as np
    model = solution.model
    exprs = getattr(model, "external_power", {}) or {}
    symbolic = {name: e for name, e in exprs.items() if isinstance(e, (ca.SX, ca.MX))}
    out = {name: float(e) for name, e in exprs.items() if name not in symbolic}
    if symbolic:
        function = ca.Function("external_power", [model.x, model.p], [ca.vertcat(*symbolic.values())])
        x = np.asarray(solution.x, dtype=float)
        p = np.array([solution.values.get(v.path, v.fixed) for v in model.parameters], dtype=float)
        values = np.asarray(function(x, p), dtype=float).ravel()
        out.update(dict(zip(symbolic, values.tolist())))
    return out


def _power_category(unit, unit_result) -> tuple[str, str]:
    """(category, word) of power entering at a unit: fuel, electricity or shaft power."""
    names = set(unit_result.quantities) | set(unit_result.figures) if unit_result else set()
    if any("fuel" in n for n in names) or any(w in unit.type_name for w in ("burner", "furnace", "fired")):
        return "fuel", "fuel"
    if any("electric" in n for n in names) or "electric" in unit.type_name:
        return "power", "electricity"
    return "power", "power"


def energy_flows(solution) -> list[EnergyFlow]:
    """The energy crossing the flowsheet boundary, grouped for the diagram.

    Enthalpy flows are on the datum every stream shares (liquid water at the
    triple point), so inputs equal outputs when the balance closes. Cooling
    water is shown by its net gain (what the condensers reject); power or
    fuel entering at a unit is an input; heat lost at a unit an output.
    """
    fs = solution.flowsheet
    groups: dict[tuple[str, str, str], float] = {}

    def add(direction, category, label, value):
        key = (direction, category, label)
        groups[key] = groups.get(key, 0.0) + value

    cooled_units = {}
    for s in solution.streams.values():
        source = fs.unit(s.source)
        if source.boundary == "source" and source.type_name == "cooling_water":
            cooled_units.setdefault(s.target, []).append(s)
    cooling_in = sum(st.enthalpy_flow for sts in cooled_units.values() for st in sts)
    cooling_out = 0.0
    cooling_paired = set()
    for s in solution.streams.values():
        target = fs.unit(s.target)
        if (target.boundary == "sink" and s.source in cooled_units and s.kind == "water"
                and "condensate" not in fs.stream(s.name).source_port):
            cooling_out += s.enthalpy_flow
            cooling_paired.add(s.source)
    for s in solution.streams.values():
        source, target = fs.unit(s.source), fs.unit(s.target)
        h = s.enthalpy_flow
        if source.boundary == "source":
            if source.type_name == "cooling_water" and s.target in cooling_paired:
                continue
            if source.type_name == "steam_supply":
                add("in", "steam", "live steam", h)
            elif s.kind in ("liquor", "powder"):
                add("in", "feed", "feed", h)
            elif s.kind == "air":
                add("in", "air", "air in", h)
            elif s.kind == "fuel":
                add("in", "fuel", "fuel", h)
            elif s.kind == "water":
                add("in", "water", "water in" if source.type_name != "cooling_water" else "cooling water in", h)
            else:
                add("in", "other", f"{s.kind} in", h)
        elif target.boundary == "sink":
            if s.source in cooling_paired and s.kind == "water" and \
                    "condensate" not in fs.stream(s.name).source_port:
                continue
            if s.kind in ("liquor", "powder"):
                add("out", "product", "product" if "product" in target.type_name else f"{s.kind} out", h)
            elif s.kind == "water":
                add("out", "condensate", "condensate", h)
            elif s.kind == "vapour":
                add("out", "vapour", "vapour out", h)
            elif s.kind == "air":
                add("out", "exhaust", "exhaust air", h)
            else:
                add("out", "other", f"{s.kind} out", h)
    if cooling_paired:
        add("out", "cooling", "to cooling water (condensers)", cooling_out - cooling_in)
    try:
        powers = _external_powers(solution)
    except Exception:  # noqa: BLE001 - a figure must not fail for want of one number
        powers = {}
    for name, value in powers.items():
        if value > 0:
            unit = fs.unit(name)
            category, word = _power_category(unit, solution.units.get(name))
            add("in", category, f"{word} at {name}", value)
        elif value < 0:
            add("out", "losses", "heat losses", -value)
    flows = []
    for (direction, category, label), value in groups.items():
        if value < 0:   # a negative net flow belongs on the other side
            direction = "out" if direction == "in" else "in"
            value = -value
        if value > 0:
            flows.append(EnergyFlow(label, value, direction, category))
    total_in = sum(f.value for f in flows if f.direction == "in")
    total_out = sum(f.value for f in flows if f.direction == "out")
    gap = total_in - total_out
    if abs(gap) > 1e-3 * max(total_in, total_out, 1.0):
        flows.append(EnergyFlow("balance residual", abs(gap), "out" if gap > 0 else "in", "imbalance"))
    order = ["steam", "power", "fuel", "feed", "air", "water", "other", "imbalance",
             "cooling", "exhaust", "vapour", "product", "condensate", "losses"]
    flows.sort(key=lambda f: (f.direction != "in", order.index(f.category) if f.category in order else 99,
                              -f.value))
    return flows


_ENERGY_PATTERNS = {
    "steam": "diagonal", "power": "cross", "fuel": "dense", "feed": "horizontal", "air": "dots",
    "water": "vertical", "other": "grey", "imbalance": "grey",
    "cooling": "backward", "exhaust": "dots", "vapour": "diagonal", "product": "horizontal",
    "condensate": "vertical", "losses": "grey",
}


def energy_flow_svg(solution, title: str = "Energy flows over the plant boundary") -> str:
    """A band diagram of the energy entering and leaving the flowsheet.

    Inputs enter from the left, outputs leave to the right; a band's
    thickness is proportional to its power, and each band is hatched and
    labelled with its value and share. See `energy_flows` for what is
    counted.
    """
    flows = energy_flows(solution)
    canvas = _Canvas("energy", title, "Energy flow diagram: inputs left, outputs right, width proportional to power")
    inputs = [f for f in flows if f.direction == "in"]
    outputs = [f for f in flows if f.direction == "out"]
    total = max(sum(f.value for f in inputs), sum(f.value for f in outputs), 1.0)
    bar_h = 300.0
    scale = bar_h / total
    min_band = 2.0
    gap = 18.0
    label_size = 10.5

    def label_lines(f):
        share = f.value / total * 100
        return f.label, f"{_num(f.value, 'power', 4)} kW ({share:.1f} %)"

    left_w = max([text_width(t, label_size) for f in inputs for t in label_lines(f)] + [80]) + 16
    right_w = max([text_width(t, label_size) for f in outputs for t in label_lines(f)] + [80]) + 16
    band_len = 190.0
    x0 = left_w
    x_plant = x0 + band_len
    plant_w = 46.0
    x_out = x_plant + plant_w
    x_end = x_out + band_len
    width = x_end + right_w
    top = 50.0

    def thickness(f):
        return max(f.value * scale, min_band)

    def side_positions(items):
        """Stacked positions at the plant and spread positions at the free end."""
        at_plant, y = [], top + 20
        for f in items:
            at_plant.append(y)
            y += thickness(f)
        plant_bottom = y
        spread = []
        y = top
        for f in items:
            spread.append(y)
            y += max(thickness(f), 26.0) + gap
        # centre the spread ends on the plant bar
        shift = ((top + 20 + plant_bottom) / 2) - (top + (y - gap)) / 2
        return at_plant, [s + shift for s in spread], plant_bottom

    in_plant, in_free, in_bottom = side_positions(inputs)
    out_plant, out_free, out_bottom = side_positions(outputs)
    y_min = min(in_free + out_free + [top])
    shift = top - y_min if y_min < top else 0.0
    in_plant = [v + shift for v in in_plant]
    in_free = [v + shift for v in in_free]
    out_plant = [v + shift for v in out_plant]
    out_free = [v + shift for v in out_free]
    plant_top = top + 20 + shift
    plant_bottom = max(in_bottom, out_bottom) + shift

    def band(x_a, y_a, x_b, y_b, t, f, notch=0.0, point=0.0):
        """A band from (x_a, y_a) to (x_b, y_b), thickness t; a notched start and a pointed end."""
        mid = (x_a + x_b) / 2
        d = (f"M{_n(x_a)},{_n(y_a)} C{_n(mid)},{_n(y_a)} {_n(mid)},{_n(y_b)} {_n(x_b)},{_n(y_b)} "
             f"L{_n(x_b + point)},{_n(y_b + t / 2)} L{_n(x_b)},{_n(y_b + t)} "
             f"C{_n(mid)},{_n(y_b + t)} {_n(mid)},{_n(y_a + t)} {_n(x_a)},{_n(y_a + t)} "
             f"L{_n(x_a + notch)},{_n(y_a + t / 2)} Z")
        canvas.path(d, fill=canvas.pattern(_ENERGY_PATTERNS.get(f.category, "grey")), stroke_width=0.9)

    for f, y_free, y_plant in zip(inputs, in_free, in_plant):
        t = thickness(f)
        band(x0, y_free, x_plant, y_plant, t, f, notch=min(10.0, t / 2))
        first, second = label_lines(f)
        canvas.text(x0 - 8, y_free + t / 2 - 1, first, label_size, "end", font_weight="bold")
        canvas.text(x0 - 8, y_free + t / 2 + label_size + 1, second, label_size - 0.5, "end")
    for f, y_free, y_plant in zip(outputs, out_free, out_plant):
        t = thickness(f)
        band(x_out, y_plant, x_end, y_free, t, f, point=min(12.0, max(t / 2, 5.0)))
        first, second = label_lines(f)
        canvas.text(x_end + 18, y_free + t / 2 - 1, first, label_size, font_weight="bold")
        canvas.text(x_end + 18, y_free + t / 2 + label_size + 1, second, label_size - 0.5)
    canvas.rect(x_plant, plant_top - 6, plant_w, plant_bottom - plant_top + 12, fill="#fff", stroke_width=1.6)
    canvas.text(x_plant + plant_w / 2, plant_top - 12, "plant", 11, "middle", font_weight="bold")
    bottom = max(plant_bottom + 12, max([y + max(thickness(f), 26) for f, y in zip(inputs, in_free)] + [0]),
                 max([y + max(thickness(f), 26) for f, y in zip(outputs, out_free)] + [0])) + 14
    total_in = sum(f.value for f in inputs)
    total_out = sum(f.value for f in outputs)
    canvas.text(x0 - 8, top - 22, f"in: {_num(total_in, 'power')} kW", 11, "end", font_weight="bold")
    canvas.text(x_end + 18, top - 22, f"out: {_num(total_out, 'power')} kW", 11, font_weight="bold")
    note = "Enthalpy flows relative to liquid water at the triple point (IAPWS datum); "
    if any(f.category == "cooling" for f in flows):
        note += "cooling water by its net gain; "
    canvas.text(12, bottom + 10, note + "band width proportional to power.", 9.5, font_style="italic")
    return canvas.svg(width + 10, bottom + 22)


# ---------------------------------------------------------------------------
# Effect profile


def effect_rows(solution) -> list[dict[str, float]]:
    """The boiling units in the order of the vapour cascade (falling pressure).

    Each row: ``unit``, ``boiling_temperature``, ``water_temperature``
    (saturation at the boiling pressure), ``boiling_point_rise``,
    ``condensing_temperature`` and ``driving_force`` (where the unit is
    heated), ``pressure`` and ``heating_pressure`` (SI; None if absent).
    """
    rows = []
    for u in solution.units.values():
        f, q = u.figures, u.quantities
        if "boiling_temperature" not in f:
            continue
        bpr = f.get("boiling_point_rise", 0.0)
        rows.append({
            "unit": u.name,
            "boiling_temperature": f["boiling_temperature"],
            "boiling_point_rise": bpr,
            "water_temperature": f["boiling_temperature"] - bpr,
            "condensing_temperature": f.get("condensing_temperature"),
            "driving_force": f.get("driving_force"),
            "pressure": q.get("pressure", f.get("pressure")),
            "heating_pressure": f.get("heating_pressure"),
        })
    rows.sort(key=lambda r: -(r["pressure"] if r["pressure"] is not None else -r["boiling_temperature"]))
    return rows


def effect_profile_svg(solution, title: str = "Temperatures and pressures along the effects") -> str | None:
    """Temperature and pressure profile along the effects, with boiling-point rise and driving force.

    Top: condensing temperature of the heating side (filled squares, solid
    line), boiling temperature of the liquor (open circles, dashed) and the
    saturation temperature of water at the effect's pressure (short bars,
    dotted); the driving force is marked as a bracket, the boiling-point
    rise written beside each effect. Bottom: boiling-side pressure (hatched
    bars) and heating-side pressure (open bars). Returns None when the
    flowsheet has no boiling units.
    """
    rows = effect_rows(solution)
    if not rows:
        return None
    canvas = _Canvas("profile", title, "Temperature and pressure profile along the effects")
    n = len(rows)
    left, plot_w = 78.0, max(170.0 * n, 380.0)
    right = left + plot_w
    top1, bottom1 = 20.0, 290.0
    top2, bottom2 = 350.0, 490.0
    width = right + 190

    to_c = lambda t: convert(t, "temperature")  # noqa: E731
    temps = []
    for r in rows:
        temps += [to_c(r["boiling_temperature"]), to_c(r["water_temperature"])]
        if r["condensing_temperature"] is not None:
            temps.append(to_c(r["condensing_temperature"]))
    yt = nice_ticks(min(temps) - 3, max(temps) + 3, 7)
    ty = _Axis(yt[0], yt[-1], bottom1, top1)
    xs = [left + plot_w * (i + 0.5) / n for i in range(n)]
    for t in yt:
        canvas.line(left, ty(t), right, ty(t), stroke="#bbb", stroke_width=0.5)
        canvas.line(left - 4, ty(t), left, ty(t))
        canvas.text(left - 7, ty(t) + 3.5, _tick_label(t, yt), 10, "end")
    canvas.rect(left, top1, plot_w, bottom1 - top1, fill="none", stroke_width=1)
    canvas.text(left - 50, (top1 + bottom1) / 2, "temperature [°C]", 11, "middle", rotate=-90)
    for x, r in zip(xs, rows):
        canvas.line(x, bottom1, x, bottom1 + 4)
        canvas.text(x, bottom1 + 17, r["unit"], 11, "middle", font_weight="bold")

    def series(key, dash, shape, filled):
        pts = [(x, ty(to_c(r[key]))) for x, r in zip(xs, rows) if r[key] is not None]
        if len(pts) > 1:
            canvas.polyline(pts, stroke_width=1.4, stroke_dasharray=dash or None)
        for px, py in pts:
            if shape == "bar":
                canvas.line(px - 9, py, px + 9, py, stroke_width=2)
            else:
                _marker(canvas, shape, px, py, 4.2, filled)

    series("condensing_temperature", "", "square", True)
    series("boiling_temperature", "6 3", "circle", False)
    series("water_temperature", "1.5 3", "bar", False)
    halo = {"halo": True}
    for x, r in zip(xs, rows):
        tb = ty(to_c(r["boiling_temperature"]))
        if r["condensing_temperature"] is not None and r["driving_force"] is not None:
            tc = ty(to_c(r["condensing_temperature"]))
            bx = x + 16
            canvas.line(bx, tc + 1, bx, tb - 1, stroke_width=1)
            canvas.line(bx - 4, tc, bx + 4, tc, stroke_width=1)
            canvas.line(bx - 4, tb, bx + 4, tb, stroke_width=1)
            canvas.text(bx + 6, (tc + tb) / 2 + 3.5,
                        f"ΔT {_num(r['driving_force'], 'temperature_difference', 3)} K", 10, **halo)
        canvas.text(x - 10, tb + 18, f"BPR {_num(r['boiling_point_rise'], 'temperature_difference', 2)} K",
                    10, "end", **halo)

    # legend (right of the plot)
    lx, ly = right + 14, top1 + 8
    for key, dash, shape, filled, text in (
            ("c", "", "square", True, "condensing (heating side)"),
            ("b", "6 3", "circle", False, "boiling liquor"),
            ("w", "1.5 3", "bar", False, "water at the effect's pressure")):
        canvas.line(lx, ly, lx + 30, ly, stroke_width=1.4, stroke_dasharray=dash or None)
        if shape == "bar":
            canvas.line(lx + 6, ly, lx + 24, ly, stroke_width=2)
        else:
            _marker(canvas, shape, lx + 15, ly, 4.2, filled)
        for k, part in enumerate(_wrap(text, 22)):
            canvas.text(lx + 36, ly + 3.5 + 12 * k, part, 10)
        ly += 34
    canvas.text(lx, ly + 4, "ΔT: driving force", 10)
    canvas.text(lx, ly + 18, "BPR: boiling-point rise", 10)

    # pressures
    pressures = []
    for r in rows:
        for key in ("pressure", "heating_pressure"):
            if r[key] is not None:
                pressures.append(convert(r[key], "pressure"))
    pt = nice_ticks(0.0, max(pressures) * 1.15, 5)
    py = _Axis(pt[0], pt[-1], bottom2, top2)
    for t in pt:
        canvas.line(left, py(t), right, py(t), stroke="#bbb", stroke_width=0.5)
        canvas.line(left - 4, py(t), left, py(t))
        canvas.text(left - 7, py(t) + 3.5, _tick_label(t, pt), 10, "end")
    canvas.rect(left, top2, plot_w, bottom2 - top2, fill="none", stroke_width=1)
    canvas.text(left - 50, (top2 + bottom2) / 2, "pressure [kPa]", 11, "middle", rotate=-90)
    bar_w = min(34.0, plot_w / n / 3)
    for x, r in zip(xs, rows):
        if r["heating_pressure"] is not None:
            value = convert(r["heating_pressure"], "pressure")
            canvas.rect(x - bar_w - 2, py(value), bar_w, bottom2 - py(value), fill="#fff", stroke_width=1.2)
            canvas.text(x - bar_w / 2 - 2, py(value) - 4, _num(value, None, 3), 9.5, "middle")
        if r["pressure"] is not None:
            value = convert(r["pressure"], "pressure")
            canvas.rect(x + 2, py(value), bar_w, bottom2 - py(value), fill=canvas.pattern("diagonal"),
                        stroke_width=1.2)
            canvas.text(x + 2 + bar_w / 2, py(value) - 4, _num(value, None, 3), 9.5, "middle")
        canvas.text(x, bottom2 + 17, r["unit"], 11, "middle", font_weight="bold")
    lx, ly = right + 14, top2 + 8
    canvas.rect(lx, ly - 6, 18, 12, fill="#fff", stroke_width=1.2)
    canvas.text(lx + 24, ly + 4, "heating side", 10)
    canvas.rect(lx, ly + 14, 18, 12, fill=canvas.pattern("diagonal"), stroke_width=1.2)
    canvas.text(lx + 24, ly + 24, "boiling side", 10)
    return canvas.svg(width, bottom2 + 34)


def _wrap(text: str, width: int) -> list[str]:
    words, lines, line = text.split(), [], ""
    for word in words:
        if line and len(line) + 1 + len(word) > width:
            lines.append(line)
            line = word
        else:
            line = f"{line} {word}".strip()
    if line:
        lines.append(line)
    return lines


# ---------------------------------------------------------------------------
# Psychrometric chart


@dataclass
class AirPath:
    """Air states and the steps between them, for the psychrometric chart.

    ``points``: list of (label, T [K], W [kg/kg]); ``steps``: list of
    (from label, to label, unit label); ``pressure``: barometric pressure [Pa].
    """

    points: list[tuple[str, float, float]]
    steps: list[tuple[str, str, str]]
    pressure: float = 101325.0


def air_path(solution) -> AirPath | None:
    """The air streams of a solution and the units they pass through, or None without air.

    An air stream carries ``flow`` (dry air), ``humidity`` (humidity ratio,
    kg/kg) and ``temperature``; every unit with air entering and leaving
    gives a step from each entering state to each leaving state.
    """
    fs = solution.flowsheet
    air = [s for s in solution.streams.values()
           if s.kind == "air" and "humidity" in s.values and "temperature" in s.values]
    if not air:
        return None
    points = [(s.name, s.values["temperature"], s.values["humidity"]) for s in air]
    names = {s.name for s in air}
    steps = []

    def side(port: str) -> str:   # hot_in and hot_out are one side of an exchanger
        for suffix in ("_in", "_out", "in", "out"):
            if port.endswith(suffix):
                return port[: -len(suffix)]
        return port

    for unit in fs.units:
        ins = [(s.name, side(s.target_port)) for s in fs.streams if s.target == unit and s.name in names]
        outs = [(s.name, side(s.source_port)) for s in fs.streams if s.source == unit and s.name in names]
        paired = len(ins) > 1 and len(outs) > 1
        for a, a_side in ins:
            for b, b_side in outs:
                if not paired or a_side == b_side:
                    steps.append((a, b, unit))
    pressures = [s.values["pressure"] for s in air if "pressure" in s.values]
    pressure = sum(pressures) / len(pressures) if pressures else fs.site.get("pressure", 101325.0)
    return AirPath(points, steps, pressure)


def psychrometric_svg(path: AirPath, title: str = "Air path on the psychrometric chart") -> str:
    """A psychrometric chart drawn by `balance` with the air path on it.

    Humidity ratio [g/kg dry air] against dry-bulb temperature [°C] at the
    path's barometric pressure, from `balance.properties.humid_air`:
    relative-humidity curves (solid, the saturation curve heavy), lines of
    constant enthalpy (dotted, kJ/kg dry air, on the datum of
    `balance.properties.humid_air.enthalpy`), and the air states as filled
    dots joined by arrows in the direction of flow, each arrow named by its
    unit.
    """
    from balance.properties import humid_air, water

    p = float(path.pressure)
    canvas = _Canvas("psychro", title, "Psychrometric chart with the air path")
    temps_c = [convert(t, "temperature") for _, t, _ in path.points]
    ws = [w * 1000.0 for _, _, w in path.points]
    t_lo = math.floor((min(temps_c) - 8) / 10) * 10
    t_hi = math.ceil((max(temps_c) + 8) / 10) * 10
    t_lo, t_hi = max(t_lo, -30.0), min(t_hi, 290.0)
    w_top = max(max(ws) * 1.3, 10.0)
    xt = nice_ticks(t_lo, t_hi, 8)
    yt = nice_ticks(0.0, w_top, 7)
    t_lo, t_hi, w_top = xt[0], xt[-1], yt[-1]
    left, right, top, bottom = 70.0, 660.0, 40.0, 420.0
    x = _Axis(t_lo, t_hi, left, right)
    y = _Axis(0.0, w_top, bottom, top)
    _frame(canvas, x, y, xt, yt, "dry-bulb temperature [°C]", "humidity ratio [g/kg dry air]")
    clip = canvas.clip("plot", left, top, right - left, bottom - top)

    def w_at(t_c, rh):
        """Humidity ratio [g/kg] at t_c [°C] and relative humidity rh, None where it cannot exist."""
        t = t_c + 273.15
        if rh * float(water.saturation_pressure(t)) >= 0.98 * p:
            return None
        return 1000.0 * float(humid_air.humidity_ratio_from_relative_humidity(t, rh, p))

    steps = 240
    grid_t = [t_lo + (t_hi - t_lo) * i / steps for i in range(steps + 1)]
    # lines of constant enthalpy
    h_values = []
    h_lo = float(humid_air.enthalpy(t_lo + 273.15, 0.0))
    h_hi = float(humid_air.enthalpy(t_hi + 273.15, w_top / 1000.0))
    for h in nice_ticks(h_lo / 1000.0, h_hi / 1000.0, 10):
        h_values.append(h)
        pts = []
        for t_c in grid_t:
            t = t_c + 273.15
            w = (h * 1000.0 - humid_air.CP_DRY_AIR * (t - 273.15)) / float(humid_air.vapour_enthalpy_ideal_gas(t))
            sat = w_at(t_c, 1.0)
            if w < 0 or (sat is not None and w * 1000.0 > sat):
                continue
            pts.append((x(t_c), y(w * 1000.0)))
        if len(pts) > 1:
            canvas.polyline(pts, stroke_width=0.7, stroke_dasharray="1.5 2.5", clip_path=clip)
            inside = [(px, py) for px, py in pts if left <= px <= right and top <= py <= bottom]
            if inside:   # label at the lower end of the line, inside the plot
                lx, ly = inside[-1]
                canvas.text(min(lx, right) - 3, min(ly, bottom) - 4, f"{h:g}", 8.5, "end", font_style="italic")
    # relative humidity curves, labelled where they leave the plot, lower down when that is taken
    taken: list[tuple[float, float, float, float]] = []
    for rh in (1.0, 0.8, 0.6, 0.4, 0.2, 0.1, 0.05, 0.02, 0.01):
        pts = []
        for t_c in grid_t:
            w = w_at(t_c, rh)
            if w is None or w > w_top * 1.05:
                break
            pts.append((x(t_c), y(w)))
        if len(pts) < 2 or max(bottom - py for _, py in pts) < 0.04 * (bottom - top):
            continue
        canvas.polyline(pts, stroke_width=1.8 if rh == 1.0 else 0.8, clip_path=clip,
                        data_relative_humidity=f"{rh:g}")
        label = f"{rh * 100:g} %"
        w_label = text_width(label, 9) + 4
        for level in range(12):
            target = top + 11 + 15 * level
            hit = next(((px, py) for px, py in pts if py <= target), None)
            if hit is None:
                hit = pts[-1]
                if hit[1] > target:
                    continue
            box = (hit[0] - w_label / 2, target - 9, hit[0] + w_label / 2, target + 3)
            if box[2] < right and box[0] > left and not any(
                    box[0] < b[2] and b[0] < box[2] and box[1] < b[3] and b[1] < box[3] for b in taken):
                taken.append(box)
                canvas.text(box[0] + 1, target, label, 9, halo=True)
                break
    # the path: arrows first, then the states, then labels placed where they collide with nothing
    where = {label: (x(convert(t, "temperature")), y(w * 1000.0)) for label, t, w in path.points}
    placed: list[tuple[float, float, float, float]] = [(px - 5, py - 5, px + 5, py + 5) for px, py in where.values()]

    def free(box) -> bool:
        return (box[0] >= left and box[2] <= right + 120 and box[1] >= top - 12 and box[3] <= bottom + 20
                and not any(box[0] < b[2] and b[0] < box[2] and box[1] < b[3] and b[1] < box[3] for b in placed))

    def place(text, size, candidates, **style):
        w = text_width(text, size) * (1.08 if style.get("font_weight") == "bold" else 1.0)
        for cx, cy, anchor in candidates:
            x0 = cx - w if anchor == "end" else cx - w / 2 if anchor == "middle" else cx
            box = (x0 - 1, cy - size, x0 + w + 1, cy + 3)
            if free(box):
                placed.append(box)
                canvas.text(cx, cy, text, size, anchor, halo=True, **style)
                return
        cx, cy, anchor = candidates[0]
        canvas.text(cx, cy, text, size, anchor, halo=True, **style)

    step_labels = []
    for a, b, unit in path.steps:
        (xa, ya), (xb, yb) = where[a], where[b]
        length = math.hypot(xb - xa, yb - ya)
        if length < 1:
            continue
        ux, uy = (xb - xa) / length, (yb - ya) / length
        canvas.line(xa + ux * 5, ya + uy * 5, xb - ux * 6, yb - uy * 6, stroke_width=2.2)
        if length > 14:
            canvas.arrowhead(xb - ux * 5, yb - uy * 5, ux, uy, 9)
        mx, my = (xa + xb) / 2, (ya + yb) / 2
        nx, ny = (-uy, ux) if ux >= 0 else (uy, -ux)   # the side below the arrow
        near_same = any(u == unit and abs(x0 - mx) < 40 and abs(y0 - my) < 20 for u, x0, y0, _, _ in step_labels)
        if length >= 30 and not near_same:   # short steps stay unnamed: the flowsheet names them
            step_labels.append((unit, mx, my, nx, ny))
    for label, t, w in path.points:
        px, py = where[label]
        canvas.circle(px, py, 4.2, fill="#000", stroke="#fff", stroke_width=1)
    groups: list[tuple[list[str], float, float]] = []   # states drawn on one spot share a label
    for label, t, w in path.points:
        px, py = where[label]
        for names_here, gx, gy in groups:
            if abs(gx - px) < 3 and abs(gy - py) < 3:
                names_here.append(label)
                break
        else:
            groups.append(([label], px, py))
    for names_here, px, py in groups:
        label = " = ".join(names_here)
        place(label, 10, [(px + 7, py - 7, "start"), (px - 7, py - 7, "end"), (px + 7, py + 15, "start"),
                          (px - 7, py + 15, "end"), (px, py - 20, "middle"), (px, py + 27, "middle"),
                          (px + 7, py - 33, "start"), (px - 7, py + 40, "end")], font_weight="bold")
    for unit, mx, my, nx, ny in step_labels:
        place(unit, 10, [(mx + nx * 12, my + ny * 12 + 4, "middle"), (mx - nx * 12, my - ny * 12 + 4, "middle"),
                         (mx + nx * 26, my + ny * 26 + 4, "middle"), (mx - nx * 26, my - ny * 26 + 4, "middle")],
              font_style="italic")
    canvas.text(right + 12, top + 10, f"p = {_num(p, 'pressure', 4)} kPa", 10)
    canvas.text(right + 12, top + 28, "relative humidity:", 10)
    canvas.line(right + 12, top + 40, right + 42, top + 40, stroke_width=0.8)
    canvas.text(right + 46, top + 43.5, "solid", 10)
    canvas.line(right + 12, top + 56, right + 42, top + 56, stroke_width=1.8)
    canvas.text(right + 46, top + 59.5, "saturation", 10)
    canvas.text(right + 12, top + 80, "enthalpy", 10)
    canvas.text(right + 12, top + 93, "[kJ/kg dry air]:", 10)
    canvas.line(right + 12, top + 105, right + 42, top + 105, stroke_width=0.7, stroke_dasharray="1.5 2.5")
    canvas.text(right + 46, top + 108.5, "dotted", 10)
    canvas.circle(right + 18, top + 126, 4.2, fill="#000")
    canvas.text(right + 28, top + 129.5, "air state", 10)
    canvas.line(right + 12, top + 146, right + 38, top + 146, stroke_width=2.2)
    canvas.arrowhead(right + 42, top + 146, 1, 0, 9)
    canvas.text(right + 46, top + 149.5, "through a unit", 10)
    return canvas.svg(right + 150, bottom + 50)


# ---------------------------------------------------------------------------
# Sweeps

_DASHES = ("", "7 4", "2 3", "10 3 2 3", "4 2 1 2 1 2")


def _as_float(value) -> float | None:
    try:
        number = float(value)
    except (TypeError, ValueError):
        return None
    return number if math.isfinite(number) else None


def _truthy(value) -> bool:
    if isinstance(value, str):
        return value.strip().lower() in ("true", "1", "yes", "converged")
    return bool(value)


def sweep_svg(rows: Iterable[dict], x: str, y: str, *, by: str | None = None,
              x_label: str | None = None, y_label: str | None = None,
              x_kind: str | None = None, y_kind: str | None = None,
              converged_key: str = "converged", title: str | None = None) -> str:
    """A key figure against a swept parameter, from the rows of a sweep.

    Parameters
    ----------
    rows : iterable of dict
        One dict per case, as a sweep writes them (CSV rows work: numbers
        given as text are read).
    x, y : str
        Keys of the swept parameter and of the key figure.
    by : str, optional
        Key of a second parameter: one line per value, told apart by line
        style and marker shape.
    x_label, y_label : str, optional
        Axis labels (default: the keys, with the display unit when a kind
        is given).
    x_kind, y_kind : str, optional
        Quantity kinds (`balance.quantities.KINDS`) when the rows hold SI
        values: they are converted to display units (kg/h, °C, kPa, ...).
    converged_key : str
        Key of the converged flag; cases that did not converge are drawn
        as crosses on the x axis (their figures are not an answer) and
        counted in the legend, never dropped.
    title : str, optional

    Returns
    -------
    str
        An SVG document.

    Raises
    ------
    InputError
        If no row has a number for ``x``.
    """
    rows = list(rows)

    def conv(value, kind):
        number = _as_float(value)
        if number is None or kind is None:
            return number
        return convert(number, kind)

    series: dict[Any, list[tuple[float, float]]] = {}
    failed: list[float] = []
    for row in rows:
        xv = conv(row.get(x), x_kind)
        if xv is None:
            continue
        ok = _truthy(row.get(converged_key, True))
        yv = conv(row.get(y), y_kind)
        if not ok or yv is None:
            failed.append(xv)
            continue
        series.setdefault(row.get(by) if by else None, []).append((xv, yv))
    if not series and not failed:
        raise InputError(f"no row has a number for '{x}'", key=x)
    x_label = x_label or (f"{x} [{display_unit(x_kind)}]" if x_kind else x)
    y_label = y_label or (f"{y} [{display_unit(y_kind)}]" if y_kind else y)
    canvas = _Canvas("sweep", title or f"{y} against {x}", f"{y_label} against {x_label}")
    xs = [p[0] for pts in series.values() for p in pts] + failed
    ys = [p[1] for pts in series.values() for p in pts] or [0.0, 1.0]
    y_lo, y_hi = min(ys), max(ys)
    pad = (y_hi - y_lo) * 0.08 or abs(y_hi) * 0.05 or 1.0
    xt = nice_ticks(min(xs), max(xs), 7)
    yt = nice_ticks(y_lo - pad, y_hi + pad, 6)
    left, right, top, bottom = 80.0, 560.0, 40.0, 320.0
    xa = _Axis(xt[0], xt[-1], left, right)
    ya = _Axis(yt[0], yt[-1], bottom, top)
    _frame(canvas, xa, ya, xt, yt, x_label, y_label)
    legend = []
    keys = sorted(series, key=lambda k: (_as_float(k) is None, _as_float(k) or 0.0, str(k)))
    for i, key in enumerate(keys):
        pts = sorted(series[key])
        dash = _DASHES[i % len(_DASHES)]
        shape = _MARKERS[i % 4]
        canvas.polyline([(xa(px), ya(py)) for px, py in pts], stroke_width=1.5, stroke_dasharray=dash or None,
                        data_series=str(key) if by else "all")
        if len(pts) <= 60:
            for px, py in pts:
                _marker(canvas, shape, xa(px), ya(py), 3.3, filled=(i % 2 == 0))
        if by:
            legend.append((f"{by} = {key}", dash, shape, i % 2 == 0))
    for fx in failed:
        _marker(canvas, "cross", xa(fx), bottom - 7, 4.0)
    if failed:
        legend.append((f"not converged ({len(failed)})", None, "cross", True))
    lx, ly = right + 14, top + 8
    for text, dash, shape, filled in legend:
        if dash is not None:
            canvas.line(lx, ly, lx + 30, ly, stroke_width=1.5, stroke_dasharray=dash or None)
        _marker(canvas, shape, lx + 15, ly, 3.3, filled)
        canvas.text(lx + 36, ly + 3.5, text, 10)
        ly += 18
    return canvas.svg(right + (170 if legend else 40), bottom + 50)


# ---------------------------------------------------------------------------
# All figures, files


def figures_for(solution, strict: bool = True) -> dict[str, str]:
    """Every figure that applies to a solution, by file stem, in report order.

    ``flowsheet`` and ``energy_flows`` always; ``effect_profile`` when units
    boil; ``psychrometric_chart`` when air streams carry a humidity. With
    ``strict=False`` a figure that cannot be drawn is replaced by a small SVG
    saying why, so one odd figure never withholds a report.
    """
    makers = [("flowsheet", lambda: flowsheet_svg(solution)),
              ("energy_flows", lambda: energy_flow_svg(solution)),
              ("effect_profile", lambda: effect_profile_svg(solution)),
              ("psychrometric_chart", lambda: (lambda p: psychrometric_svg(p) if p is not None else None)(
                  air_path(solution)))]
    out = {}
    for name, make in makers:
        try:
            svg = make()
        except Exception as exc:  # noqa: BLE001 - reported in the figure's place when not strict
            if strict:
                raise
            svg = _failed_figure(name, exc)
        if svg is not None:
            out[name] = svg
    return out


def _failed_figure(name: str, exc: Exception) -> str:
    canvas = _Canvas(f"failed-{name}", f"{name}: not drawn")
    canvas.text(10, 24, f"The figure '{name}' could not be drawn: {type(exc).__name__}: {exc}"[:160], 11)
    return canvas.svg(900, 40)


def svg_to_png(svg: str, path, scale: float = 2.0) -> None:
    """Write an SVG figure as PNG (needs the optional ``cairosvg``: ``pip install 'balance[report]'``).

    Raises
    ------
    InputError
        When cairosvg (or the cairo library it loads) is not available.
    """
    try:
        import cairosvg
    except (ImportError, OSError) as exc:
        raise InputError(f"PNG figures need cairosvg and the cairo library ({exc})", key="--format",
                         hint="pip install 'balance[report]', or use --format svg") from None
    cairosvg.svg2png(bytestring=svg.encode("utf-8"), write_to=str(path), scale=scale,
                     background_color="white")
