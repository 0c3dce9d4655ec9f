"""The Schmitt model against ngspice (Debian package ngspice), batch mode.

An ideal Schmitt inverter made of two SPICE voltage-controlled switches with
hysteresis (``sw`` model, vt/vh): one pulls the output to ground when the
capacitor rises above VT+, the other to the supply when it falls below VT-.
R from the output to the capacitor, C to ground. ngspice's transient period
and duty must match the textbook charge equation to 0.5 %.
"""

from __future__ import annotations

import re
import subprocess

import pytest
from support.tools import require_tool

from core.model.timing import make_oscillator, schmitt_times

pytestmark = pytest.mark.spice

NETLIST = """* ideal hysteresis Schmitt inverter RC oscillator
Vdd vdd 0 DC {v}
Einv inv 0 vdd cap 1
Slow out 0 cap 0 swlow
Shigh vdd out inv 0 swhigh
R1 out cap {r}
C1 cap 0 {c}
.model swlow sw vt={vt_low} vh={vh} ron=1m roff=1e12
.model swhigh sw vt={vt_high} vh={vh} ron=1m roff=1e12
.ic v(cap)=0
.tran {step} {stop} 0 {step} uic
.meas tran rise2 when v(out)={half} rise=2
.meas tran fall3 when v(out)={half} fall=3
.meas tran rise3 when v(out)={half} rise=3
.end
"""


def _ngspice(netlist: str, tmp_path) -> dict[str, float]:
    exe = require_tool("ngspice")
    path = tmp_path / "osc.cir"
    path.write_text(netlist)
    run = subprocess.run([exe, "-b", str(path)], capture_output=True, text=True, timeout=120,
                         cwd=tmp_path)
    found = dict(re.findall(r"^(rise2|fall3|rise3)\s*=\s*([-+0-9.eE]+)", run.stdout, re.M))
    assert len(found) == 3, run.stdout[-2000:] + run.stderr[-2000:]
    return {k: float(v) for k, v in found.items()}


@pytest.mark.parametrize(("vt_plus", "vt_minus", "r", "c"), [
    (2.8, 1.9, 21.7e3, 1e-6),   # the bench thresholds (issue 3)
    (3.3, 1.0, 10e3, 100e-9),   # a wide, off-centre window
    (2.0, 1.6, 4.7e3, 10e-9),
])
def test_ideal_schmitt_period_and_duty_match_ngspice(vt_plus, vt_minus, r, c, tmp_path):
    v = 5.0
    osc = make_oscillator("schmitt", "74HC14", v).idealised()
    t_high, t_low = (float(x) for x in schmitt_times(osc, r, c, vt_plus, vt_minus))
    period = t_high + t_low
    mid, half_width = 0.5 * (vt_plus + vt_minus), 0.5 * (vt_plus - vt_minus)
    netlist = NETLIST.format(v=v, r=r, c=c, vt_low=mid, vt_high=v - mid, vh=half_width,
                             half=v / 2, step=period / 4000, stop=5 * period)
    m = _ngspice(netlist, tmp_path)
    spice_period = m["rise3"] - m["rise2"]
    spice_high = m["fall3"] - m["rise2"]
    assert period == pytest.approx(spice_period, rel=5e-3)
    assert t_high / period == pytest.approx(spice_high / spice_period, rel=5e-3)
