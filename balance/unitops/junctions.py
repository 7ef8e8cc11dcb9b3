"""Mixers and splitters: streams of one kind joining or dividing, adiabatically.

Mixer: total mass, solids (liquor) and enthalpy are conserved; a vapour
header takes the pressure of its first inlet, into which the others throttle.
Splitter: every outlet has the inlet's composition, temperature and
pressure; ``fraction_1 .. fraction_(n-1)`` are the shares of the inlet flow
sent to the first outlets, the last outlet takes the rest.
"""

from __future__ import annotations

from balance.unitops.base import Guess, Port, QuantitySpec, Setting, UnitOperation, register


@register
class Mixer(UnitOperation):
    """Adiabatic junction of two or more streams of one kind."""

    type_name = "mixer"
    description = "adiabatic junction of streams of one kind"

    @classmethod
    def settings(cls):
        return [Setting("inlets", "integer", "number of inlets", 2, lower=2, upper=50),
                Setting("stream", "text", "kind of stream", "liquor", choices=("liquor", "vapour", "water"))]

    def ports(self):
        kind = self.setting("stream")
        n = int(self.setting("inlets"))
        return [Port(f"in{i}", kind, "in", optional=i > 1) for i in range(1, n + 1)] + [Port("out", kind, "out")]

    def _inlets(self, ctx):
        n = int(self.setting("inlets"))
        return [s for s in (ctx.port(f"in{i}") for i in range(1, n + 1)) if s is not None]

    def equations(self, ctx):
        ins, out = self._inlets(ctx), ctx.port("out")
        ctx.equation("mass balance", sum(s.flow for s in ins) - out.flow, "mass")
        if self.setting("stream") == "liquor":
            ctx.equation("solids balance", sum(s.solids_flow for s in ins) - out.solids_flow, "mass")
        if self.setting("stream") == "vapour":
            ctx.equation("header pressure", out.pressure - ins[0].pressure, "pressure")
        ctx.equation("energy balance", sum(s.enthalpy_flow for s in ins) - out.enthalpy_flow, "energy")

    def guess(self, inlets, hints):
        ins = [v for k, v in sorted(inlets.items()) if v]
        flow = sum(s.get("flow", 0.0) for s in ins)
        out = {"flow": flow,
               "temperature": sum(s.get("flow", 0.0) * s["temperature"] for s in ins) / max(flow, 1e-12)}
        if self.setting("stream") == "liquor":
            out["solids"] = sum(s.get("flow", 0.0) * s["solids"] for s in ins) / max(flow, 1e-12)
        if self.setting("stream") == "vapour":
            out["pressure"] = ins[0]["pressure"]
        return Guess(streams={"out": out})


@register
class Splitter(UnitOperation):
    """Division of one stream into two or more of the same state."""

    type_name = "splitter"
    description = "division of a stream into streams of the same state"

    @classmethod
    def settings(cls):
        return [Setting("outlets", "integer", "number of outlets", 2, lower=2, upper=50),
                Setting("stream", "text", "kind of stream", "liquor", choices=("liquor", "vapour", "water"))]

    def ports(self):
        kind = self.setting("stream")
        n = int(self.setting("outlets"))
        return [Port("in", kind, "in")] + [Port(f"out{i}", kind, "out") for i in range(1, n + 1)]

    def quantities(self):
        n = int(self.setting("outlets"))
        return [QuantitySpec(f"fraction_{i}", "fraction", f"share of the inlet flow sent to out{i}",
                             0.0, 1.0, 0.5) for i in range(1, n)]

    def equations(self, ctx):
        n = int(self.setting("outlets"))
        feed = ctx.port("in")
        outs = [ctx.port(f"out{i}") for i in range(1, n + 1)]
        for i, out in enumerate(outs[:-1], start=1):
            ctx.equation(f"flow to out{i}", out.flow - ctx.quantity(f"fraction_{i}") * feed.flow, "mass")
        ctx.equation("mass balance", feed.flow - sum(o.flow for o in outs), "mass")
        for name in feed.kind.variable_names:
            if name == "flow":
                continue
            for i, out in enumerate(outs, start=1):
                ctx.equation(f"{name} of out{i}", out[name] - feed[name],
                             {"solids": "fraction", "pressure": "pressure"}.get(name, "temperature"))

    def guess(self, inlets, hints):
        feed = inlets["in"]
        n = int(self.setting("outlets"))
        fixed = hints.get("fixed", {})
        fractions = [fixed.get(f"fraction_{i}", 1.0 / n) for i in range(1, n)]
        # what the outlets' units ask for: the free fractions follow the demands, the sum goes upstream
        demand = hints.get("demand", {})
        asked = [demand.get(f"out{i}", {}).get("flow") for i in range(1, n + 1)]
        inlets = {}
        if None not in asked and sum(asked) > 0.0:
            inlets["in"] = {"flow": sum(asked)}
            if not any(f"fraction_{i}" in fixed for i in range(1, n)):
                fractions = [a / sum(asked) for a in asked[:-1]]
        fractions.append(max(1.0 - sum(fractions), 0.0))
        streams = {f"out{i}": dict(feed, flow=feed["flow"] * f) for i, f in enumerate(fractions, start=1)}
        return Guess(streams=streams, quantities={f"fraction_{i}": f for i, f in enumerate(fractions[:-1], 1)},
                     inlets=inlets)
