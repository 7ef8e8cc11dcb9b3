"""The flowsheet: unit operations as nodes of a networkx graph, streams as its edges, and the file format."""

from balance.flowsheet.graph import Flowsheet, Stream

__all__ = ["Flowsheet", "Stream"]
