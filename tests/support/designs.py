"""Designs made by hand for the output tests: one drawer part per role, as a search would
hand them on, and the ngspice run of their netlist."""

from __future__ import annotations

from collections.abc import Mapping

from core.design.design import Design
from core.design.search import Candidate
from core.model.circuits.base import Oscillator
from core.model.timing import Prediction, predict
from core.output.netlist import model_prediction, simulate, spice_netlist
from core.parts.networks import Network
from core.parts.part import Part
from core.units import Tolerance
from support.tools import require_tool


def one_part_design(osc: Oscillator, values: Mapping[str, float], steered: bool = False,
                    dielectric: str = "film") -> Candidate:
    """A design with one ±1 % part per role (stock lines from 2, located "bin N")."""
    def node(role: str, value: float, line: int) -> Network:
        kind = "C" if role == "C" else "R"
        return Network(part=Part(kind=kind, value=value, tolerance=Tolerance(0.01, 0.01),
                                 quantity=2, line=line, location=f"bin {line}",
                                 dielectric=dielectric if kind == "C" else ""))
    steered = steered or osc.circuit.always_steered
    pred = predict(osc, values, diode_steered=steered)
    networks = {k: node(k, v, i + 2) for i, (k, v) in enumerate(values.items())}
    return Candidate(osc.circuit.name, dict(values), networks, pred.frequency_hz, 0.0,
                     pred.duty_pct, pred.worst_case_hz, steered)


def ngspice_run(osc: Oscillator, design: Design) -> tuple[dict[str, float], Prediction, str]:
    """(ngspice's measurements, the model's prediction, the netlist) for one design."""
    text = spice_netlist(osc, design)
    return simulate(text, require_tool("ngspice")), model_prediction(osc, design), text
