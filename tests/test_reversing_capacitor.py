"""A timing capacitor whose voltage reverses every cycle is never polarised.

In the two-inverter CMOS astable (and the same oscillator inside a 4060) the
capacitor sits between two outputs that swap every half cycle, so its voltage
reverses (textbook: the node swings beyond both rails by the output step;
Philips HEF4069UB application note on the RC oscillator). An aluminium electrolytic
or tantalum capacitor there is reverse-biased half the time, which its makers'
data sheets forbid beyond about 1 V (common practice, no published source for the
exact figure). The Schmitt inverter charges its capacitor from ground upwards, so
an electrolytic with + to the timing node is fine there.
"""

from __future__ import annotations

from core.design.request import Request
from core.parts.part import Part
from core.units import Tolerance

FIVE = Tolerance(0.05, 0.05)
TWENTY = Tolerance(0.2, 0.2)


def _drawer() -> list[Part]:
    resistors = [Part("R", v, FIVE, 4, location=f"R{k}", line=k + 2)
                 for k, v in enumerate((10e3, 22e3, 47e3, 100e3, 220e3))]
    return [*resistors,
            Part("C", 10e-6, TWENTY, 2, dielectric="electrolytic", location="elko", line=20),
            Part("C", 4.7e-6, TWENTY, 2, dielectric="tantalum", location="tant", line=21),
            Part("C", 1e-6, FIVE, 2, dielectric="film", location="film", line=22)]


def test_reversing_circuits_get_no_polarised_capacitor() -> None:
    for circuit, family in (("cmos-astable", "CD4069UB"), ("divider", "CD4060B")):
        request = Request(circuit=circuit, family=family, supply_v=9.0, target_hz=2.0)
        kept = [p for p in request.usable(_drawer()) if p.kind == "C"]
        assert [p.location for p in kept] == ["film"], circuit
        osc = request.oscillator()
        result = request.run(_drawer(), osc)
        assert result.candidates, circuit
        for cand in result.candidates:
            assert all(not p.polarised for p in cand.networks["C"].parts()), circuit


def test_schmitt_keeps_its_electrolytic() -> None:
    request = Request(circuit="schmitt", family="74HC14", supply_v=5.0, target_hz=2.0)
    kept = {p.location for p in request.usable(_drawer()) if p.kind == "C"}
    assert kept == {"elko", "tant", "film"}
