"""The contract's NODE (DESIGN.md: ``{"line": N}``, ``{"series": [...]}``, ``{"parallel": [...]}``)
read back independently of the engine: its stock lines and its value."""

from __future__ import annotations

from typing import Any

from core.parts.part import Part


def node_value(node: dict[str, Any], by_line: dict[int, Part]) -> float:
    """A contract NODE's value, recomputed here (Horowitz & Hill §1.2.1, §1.4.1)."""
    if "line" in node:
        return by_line[node["line"]].value
    kids = [node_value(k, by_line) for k in node.get("series") or node["parallel"]]
    kind = by_line[node_lines(node)[0]].kind
    adds = ("series" in node) != (kind == "C")
    return sum(kids) if adds else 1.0 / sum(1.0 / k for k in kids)


def node_lines(node: dict[str, Any]) -> list[int]:
    """Stock lines a contract NODE uses, once per part, after checking its shape
    (DESIGN.md: ``{"line": N}``, ``{"series": [NODE, ...]}`` or ``{"parallel": [...]}``)."""
    assert set(node) in ({"line"}, {"series"}, {"parallel"}), node
    if "line" in node:
        assert isinstance(node["line"], int) and not isinstance(node["line"], bool)
        return [node["line"]]
    children = node.get("series") or node["parallel"]
    assert isinstance(children, list) and len(children) >= 2
    return [line for k in children for line in node_lines(k)]
