"""SPICE netlist of a chosen design, so anyone can check the prediction in a simulator.

The timing networks are written part by part as the candidate wires them
(references as on the build sheet: R1, R2, ... C1, ...). The chip is
behavioural, built from the same numbers the model uses:

* Schmitt gate: its input is a hysteresis switch (SPICE ``sw`` model, on
  above VT+, off below VT-); the output is VOH/VOL behind the output
  resistance; a TTL input is its Thevenin source; input and stray
  capacitance sit beside C.
* 555: both comparators and the flip-flop are one hysteresis switch on the
  joined THR/TRIG node (upper and lower comparator levels); the discharge
  transistor is a switch with its on-resistance; the steering diode, when
  used, sits across RB as a SPICE diode with the model's IS, N and RS.
* Propagation delays: the switch state passes through an RC lag per edge
  (delay = RC ln 2) before it moves the output.

The transient run starts in the steady state (capacitor at the voltage where
the output has just gone high) and ``.meas`` lines report period, frequency,
high time and duty. ``ngspice -b FILE.cir`` prints them.

References: ngspice User's Manual (version 39), §3.2.14 "Switches" (sw model
VT/VH hysteresis), §11.4 ".meas"; NE555 data sheet, functional block
diagram (two comparators at 2/3 and 1/3 VCC, flip-flop, discharge transistor).
"""

from __future__ import annotations

import math
import re
import shutil
import subprocess
import tempfile
import unicodedata
from collections.abc import Iterator, Mapping
from dataclasses import dataclass, field
from pathlib import Path

from core import __version__
from core.design.design import Design
from core.design.trim import start_rotation
from core.errors import SetupError, TickbinError
from core.model.circuits.divider import tap
from core.model.timing import Oscillator, Prediction, predict, waveform
from core.parts.networks import Network
from core.units import format_part_value, format_quantity

MEASURES = ("period_s", "frequency_hz", "t_high_s", "duty_pct")
"""The ``.meas`` results the netlist prints (names as in the command-line JSON)."""
_FIRST_RISE, _LAST_RISE = 2, 7


def _num(x: float) -> str:
    """A number as SPICE reads it (plain exponent notation: no SI letters to misread)."""
    return f"{x:.9g}"


def _elements(node: Network, a: str, b: str, counters: dict[str, int], nodes: Iterator[str],
              pot_ohm: float = 0.0) -> list[str]:
    """SPICE lines for ``node`` between nodes ``a`` and ``b``, numbering parts in order.

    A pot is written as the resistance it puts in circuit, ``pot_ohm`` [Ω].
    """
    if node.part is not None:
        part = node.part
        counters[part.kind] = counters.get(part.kind, 0) + 1
        ref = f"{part.kind}{counters[part.kind]}"
        where = f"line {part.stock_line}" + (f", {part.location}" if part.location else "")
        text = format_part_value(part.value, part.kind)
        if part.kind == "P":
            return [f"R{ref} {a} {b} {_num(max(pot_ohm, 1e-3))} ; {text} pot at the start "
                    f"rotation, {where}"]
        return [f"{ref} {a} {b} {_num(part.value)} ; {text}, {where}"]
    lines: list[str] = []
    if node.series:
        ends = [a, *(next(nodes) for _ in node.series[:-1]), b]
        for child, x, y in zip(node.series, ends, ends[1:], strict=False):
            lines += _elements(child, x, y, counters, nodes, pot_ohm)
    else:
        for child in node.parallel:
            lines += _elements(child, a, b, counters, nodes, pot_ohm)
    return lines


def _node_names() -> Iterator[str]:
    i = 0
    while True:
        i += 1
        yield f"n{i}"


def _delay_and_output(osc: Oscillator, out_high_v: float, out_low_v: float,
                      r_high: float, r_low: float, extra: list[str],
                      inverted: str = "out") -> list[str]:
    """Switch state -> RC lags per edge -> combined delayed state -> output switches
    (``inverted``: the node of the output that inverts the state).

    The output goes low ``delay_hl`` after the input state rises and high
    ``delay_lh`` after it falls; with the longer delay on the rising edge both
    lags must agree (AND), otherwise either suffices (OR).
    """
    d = osc.device
    t_hl, t_lh = max(d.delay_hl_s, 1e-12), max(d.delay_lh_s, 1e-12)
    lag = 1e3
    and_gate = t_hl >= t_lh
    lines = [
        "* propagation delays: RC lags of the switch state, delay = R C ln 2",
        "Est stb 0 st 0 1",
        f"Rdh stb dh {_num(lag)}",
        f"Cdh dh 0 {_num(t_hl / (lag * math.log(2)))} ; tPHL = "
        f"{format_quantity(d.delay_hl_s, 'time')}",
        f"Rdl stb dl {_num(lag)}",
        f"Cdl dl 0 {_num(t_lh / (lag * math.log(2)))} ; tPLH = "
        f"{format_quantity(d.delay_lh_s, 'time')}",
        f"* delayed state lo: output low once {'both lags have' if and_gate else 'one lag has'}"
        " passed 0.5 V",
    ]
    if and_gate:
        lines += ["Sla one nlo dh 0 logic", "Slb nlo lo dl 0 logic"]
    else:
        lines += ["Sla one lo dh 0 logic", "Slb one lo dl 0 logic"]
    return [
        *lines,
        "Rlo lo 0 1e6",
        "Elo lob 0 lo 0 1",
        "* output stage: Thevenin sources behind the output resistance",
        f"Voh voh 0 DC {_num(out_high_v)}",
        f"Vol vol 0 DC {_num(out_low_v)}",
        "Shi outh voh 0 lob logic_inv",
        f"Roh outh {inverted} {_num(r_high)}",
        "Slo outl vol lob 0 logic",
        f"Rol outl {inverted} {_num(r_low)}",
        *extra,
        ".model logic sw vt=0.5 vh=0 ron=1e-3 roff=1e12",
        ".model logic_inv sw vt=-0.5 vh=0 ron=1e-3 roff=1e12",
    ]


def _run_lines(period: float, shortest: float, v_mid: float, divide_by: int = 1) -> list[str]:
    """Transient run and measurements; the step resolves the shorter phase (``shortest`` [s])
    in at least 2000 steps as well as the oscillator's ``period`` [s]. With ``divide_by``
    the oscillator's period is measured and scaled by the counter's exact ratio."""
    n = _FIRST_RISE, _LAST_RISE
    step = min(period, 10 * shortest) / 2000
    name = "period_s" if divide_by == 1 else "osc_period_s"
    lines = [
        f".tran {_num(2 * step)} {_num((n[1] + 1.2) * period)} 0 {_num(step)}",
        ".options reltol=1e-5 abstol=1e-12 vntol=1e-7",
        f".meas tran t_rise_a WHEN v(out)={_num(v_mid)} RISE={n[0]}",
        f".meas tran t_rise_b WHEN v(out)={_num(v_mid)} RISE={n[1]}",
        f".meas tran t_fall_a WHEN v(out)={_num(v_mid)} FALL={n[0] + 1}",
        f".meas tran {name} PARAM='(t_rise_b - t_rise_a) / {n[1] - n[0]}'",
    ]
    if divide_by == 1:
        lines += [".meas tran frequency_hz PARAM='1 / period_s'",
                  ".meas tran t_high_s PARAM='t_fall_a - t_rise_a'",
                  ".meas tran duty_pct PARAM='100 * t_high_s / period_s'"]
    else:
        lines += [f".meas tran period_s PARAM='{divide_by} * osc_period_s'",
                  ".meas tran frequency_hz PARAM='1 / period_s'",
                  ".meas tran t_high_s PARAM='period_s / 2'",
                  ".meas tran duty_pct PARAM='50 + 0 * period_s'"]
    return [*lines, ".end"]


def model_values(osc: Oscillator, candidate: Design,
                 rotation_pct: float | None = None) -> tuple[dict[str, float], float, float]:
    """(model values [Ω, F], pot rotation [%], pot resistance in circuit [Ω]) of a design.

    A trim design's pot sits at ``rotation_pct`` (default: the middle of the
    band); fixed designs give rotation and pot resistance 0.
    """
    if not candidate.has_pot:
        return candidate.values_at(), 0.0, 0.0
    rotation = start_rotation(osc, candidate) if rotation_pct is None else float(rotation_pct)
    return candidate.values_at(rotation), rotation, candidate.pot_share(rotation)


def model_prediction(osc: Oscillator, candidate: Design,
                     rotation_pct: float | None = None) -> Prediction:
    """What the timing model predicts for the design the netlist describes."""
    values, _, _ = model_values(osc, candidate, rotation_pct)
    return predict(osc, values, diode_steered=candidate.diode_steered)


def spice_netlist(osc: Oscillator, candidate: Design,
                  rotation_pct: float | None = None, title: str = "") -> str:
    """The design as a SPICE netlist (text), ready for ``ngspice -b``.

    For a trim design the pot sits at ``rotation_pct`` [%] (default: the middle
    of the band, as on the build sheet).
    """
    osc.circuit.require_designed("the netlist")
    trim = candidate.has_pot
    d = osc.device
    steered = candidate.diode_steered
    values, rotation, share = model_values(osc, candidate, rotation_pct)
    pred = model_prediction(osc, candidate, rotation_pct)
    _, v_cap, _ = waveform(osc, values, periods=1, points=2, diode_steered=steered)
    v_start = float(v_cap[0])
    circuit = osc.circuit.oscillator + (", diode-steered" if steered and not
                                        osc.circuit.always_steered else "")
    head = [
        f"* {title or circuit}: {d.family.name} at {d.supply_v:g} V",
        f"* Tickbin {__version__}. Run: ngspice -b THIS_FILE.cir",
        f"* Model prediction: f = {_num(pred.frequency_hz)} Hz, period = {_num(pred.period_s)} s,"
        f" duty = {pred.duty_pct:.2f} %",
        f"* Thresholds: upper {osc.vt_plus_v:.4g} V, lower {osc.vt_minus_v:.4g} V"
        + (f" (calibration {osc.calibration})" if osc.calibration
           else " (given)" if osc.thresholds_given else " (device table, typical)"),
    ]
    if trim:
        head.append(f"* Pot at {rotation:.1f} % rotation ({candidate.taper} taper): "
                    f"{_num(share)} ohm in circuit. Edit RP1 to explore the range.")
    body = [f"Vsupply vdd 0 DC {_num(d.supply_v)}", "Vone one 0 DC 1"]
    timing, output_stage = ELEMENTS[osc.circuit.drawing_id]
    body += timing(_Build(osc, candidate, share, v_start))
    output, v_mid = output_stage(osc)
    body += output
    if osc.divide_by > 1:
        head.append(f"* The counter is not simulated: it divides the oscillator by exactly "
                    f"{osc.divide_by} ({tap(osc.divide_by)}, 50 % duty), so the run measures "
                    "the oscillator at OUT and scales its period.")
    n = osc.divide_by
    shortest = min(pred.t_high_s, pred.t_low_s) / n
    lines = [*head, *body, *_run_lines(pred.period_s / n, shortest, v_mid, n)]
    return "\n".join(spice_text(line) for line in lines) + "\n"


@dataclass
class _Build:
    """What a circuit's netlist elements are written from: the oscillator, the design
    (its networks, diode steering and the pot's role), the pot's resistance in circuit
    [Ω], the steady-state start [V], and the running part and node numbering."""

    osc: Oscillator
    design: Design
    pot_ohm: float
    v_start: float
    counters: dict[str, int] = field(default_factory=dict)
    names: Iterator[str] = field(default_factory=lambda: _node_names())

    def net(self, role: str, a: str, b: str) -> list[str]:
        """The role's network from node ``a`` to ``b`` (a trim design's pot after it where
        it trims that role)."""
        nets = [self.design.networks[role]]
        if self.design.has_pot and role == self.design.trimmed:
            nets.append(self.design.networks["P"])
        ends = [a, *(next(self.names) for _ in nets[:-1]), b]
        lines: list[str] = []
        for n, x, y in zip(nets, ends, ends[1:], strict=False):
            lines += _elements(n, x, y, self.counters, self.names, self.pot_ohm)
        return lines

    def pot_note(self, role: str) -> str:
        return (", then the pot (wiper tied to one end)"
                if self.design.has_pot and role == self.design.trimmed else "")


def _grounded_c(b: _Build) -> list[str]:
    """C (with input and stray capacitance) from the timing node to ground, the input's
    hysteresis switch on it, and the steady-state start."""
    osc = b.osc
    d = osc.device
    upper, lower = osc.vt_plus_v, osc.vt_minus_v
    return [
        "* timing capacitor from the timing node to ground",
        *b.net("C", "tn", "0"),
        f"Cnode tn 0 {_num(d.input_capacitance_f + osc.stray_capacitance_f)} ; input "
        f"{format_quantity(d.input_capacitance_f, 'capacitance')} + stray "
        f"{format_quantity(osc.stray_capacitance_f, 'capacitance')}",
        "* input: hysteresis switch, on above the upper threshold, off below the lower",
        "Sst one st tn 0 hysteresis",
        "Rst st 0 1e6",
        f".model hysteresis sw vt={_num((upper + lower) / 2)} vh={_num((upper - lower) / 2)} "
        "ron=1e-3 roff=1e12",
        "* start in the steady state: the output has just gone high",
        f".ic v(tn)={_num(b.v_start)}",
    ]


def _astable_timing(b: _Build) -> list[str]:
    """RA and RB (a trim design's pot after the one it trims; the steering diode across
    RB), C."""
    body = [f"* RA from the supply to DIS (pin 7){b.pot_note('RA')}", *b.net("RA", "vdd", "dis"),
            f"* RB from DIS to THR/TRIG (pins 6 and 2){b.pot_note('RB')}",
            *b.net("RB", "dis", "tn")]
    if b.design.diode_steered:
        diode = b.osc.steering_diode
        body += [f"* steering diode ({diode.name}) across RB, anode at DIS; DC model "
                 "as in the timing model",
                 f"D1 dis tn {diode.name.lower()}", diode.spice_model()]
    return body + _grounded_c(b)


def _schmitt_timing(b: _Build) -> list[str]:
    """R (then the pot, if the design has one) from the gate output to the timing node, C."""
    return [f"* timing resistance from the gate output to the timing node{b.pot_note('R')}",
            *b.net("R", "out", "tn"), *_grounded_c(b)]


def _steered_schmitt_timing(b: _Build) -> list[str]:
    """RH and a diode into the timing node, a diode and RL back out of it; C."""
    diode = b.osc.steering_diode
    return [
        "* RH from the gate output, then D1 into the timing node (charges C while high)",
        *b.net("RH", "out", "ach"), f"D1 ach tn {diode.name.lower()}",
        "* D2 out of the timing node, then RL to the gate output (discharges C while low)",
        f"D2 tn kdis {diode.name.lower()}", *b.net("RL", "kdis", "out"),
        f"* steering diodes ({diode.name}): DC model as in the timing model",
        diode.spice_model(), *_grounded_c(b)]


CLAMP_EMISSION = 0.05
"""Emission coefficient of the netlist's clamp diodes: sharp enough that their drop
stays within a few tens of millivolts of the model's fixed ``input_clamp_v`` over the
currents RS passes (the rest is a DC source in series)."""


def _ring_timing(b: _Build) -> list[str]:
    """R from the first output (o1) to the timing node, C from the second output (out) to
    it, RS on to the first input (in1) with its clamp diodes to the rails; the
    first inverter switches at the one switching voltage."""
    osc = b.osc
    d = osc.device
    vd = osc.family.input_clamp_v
    # The clamp's fixed drop: a source plus a sharp diode at the typical clamp current.
    i_clamp = 0.25 * d.supply_v / b.design.networks["RS"].value
    sharp = CLAMP_EMISSION * 0.025865 * math.log(i_clamp / 1e-14)
    node = d.voh_v - b.v_start  # the model's capacitor voltage is V(OUT) - V(node)
    return [
        f"* R from the first inverter's output to the timing node{b.pot_note('R')}",
        *b.net("R", "o1", "tn"),
        "* C from the second inverter's output (OUT) to the timing node",
        *b.net("C", "out", "tn"),
        f"Cnode out tn {_num(d.input_capacitance_f + osc.stray_capacitance_f)} ; input + "
        "stray, beside C as the model lumps them",
        "* RS from the timing node to the first inverter's input",
        *b.net("RS", "tn", "in1"),
        f"* input clamp diodes: {vd:g} V as the model (a source and a sharp diode)",
        f"Vchi chi vdd DC {_num(vd - sharp)}",
        "Dhi in1 chi clamp",
        f"Vclo 0 clo DC {_num(vd - sharp)}",
        "Dlo clo in1 clamp",
        f".model clamp d is=1e-14 n={CLAMP_EMISSION:g}",
        "* first inverter's input: switches at the switching voltage",
        "Sst one st in1 0 hysteresis",
        "Rst st 0 1e6",
        f".model hysteresis sw vt={_num(osc.vt_plus_v)} vh=1e-3 ron=1e-3 roff=1e12",
        "* start in the steady state: OUT has just gone high, the node above the rail",
        f".ic v(tn)={_num(node)} v(in1)={_num(min(node, d.supply_v + vd))}",
    ]


def _astable_output(osc: Oscillator) -> tuple[list[str], float]:
    """The discharge transistor and the output stage; the output's middle level [V]."""
    d = osc.device
    extra = ["* discharge transistor (pin 7): on while the output is low",
             "Sdis dis 0 lob 0 discharge",
             f".model discharge sw vt=0.5 vh=0 ron={_num(d.discharge_r_ohm)} roff=1e12"]
    return (_delay_and_output(osc, d.output_high_v, 0.0, 1.0, 1.0, extra),
            0.5 * d.output_high_v)


def _schmitt_output(osc: Oscillator) -> tuple[list[str], float]:
    """A TTL input's source, a load, and the gate's output stage; its middle level [V]."""
    d = osc.device
    extra = []
    if math.isfinite(d.input_r_ohm):
        extra += ["* TTL input: its Thevenin source at the timing node",
                  f"Vin vin 0 DC {_num(d.input_v_open_v)}",
                  f"Rin tn vin {_num(d.input_r_ohm)}"]
    if osc.load_ohm is not None:
        extra.append(f"Rload out 0 {_num(osc.load_ohm)}")
    return (_delay_and_output(osc, d.voh_v, d.vol_v, d.r_out_high_ohm, d.r_out_low_ohm, extra),
            0.5 * (d.voh_v + d.vol_v))


def _ring_output(osc: Oscillator) -> tuple[list[str], float]:
    """Both inverters' outputs from the delayed state: o1 inverts it, OUT follows it."""
    d = osc.device
    extra = ["* second inverter (OUT): high while the first input is high",
             "Shi2 outh2 voh lob 0 logic",
             f"Roh2 outh2 out {_num(d.r_out_high_ohm)}",
             "Slo2 outl2 vol 0 lob logic_inv",
             f"Rol2 outl2 out {_num(d.r_out_low_ohm)}"]
    return (_delay_and_output(osc, d.voh_v, d.vol_v, d.r_out_high_ohm, d.r_out_low_ohm, extra,
                              inverted="o1"), 0.5 * (d.voh_v + d.vol_v))


ELEMENTS = {"schmitt": (_schmitt_timing, _schmitt_output),
            "schmitt-steered": (_steered_schmitt_timing, _schmitt_output),
            "555": (_astable_timing, _astable_output),
            "cmos-astable": (_ring_timing, _ring_output),
            "divider": (_ring_timing, _ring_output)}
"""Each circuit's netlist elements by its drawing id (``Circuit.drawing_id``): its timing
parts, input switch and start (``.ic``), and its output stage."""


_ASCII = str.maketrans({"Ω": "ohm", "µ": "u", "−": "-", "…": "...", "∥": "||"})


def spice_text(line: str) -> str:
    """One netlist line as printable ASCII, the one way any text enters a netlist.

    A drawer location may hold line breaks: copied raw into a comment they would start
    new cards (``.control`` / ``shell`` runs programs in ngspice). Letters lose their
    accents (NFKD); every other character outside printable ASCII (C0 and C1 controls,
    DEL, NEL, U+2028/2029 ...) is written as a visible escape such as ``\\n``, so the
    line stays one line for every SPICE and the comment stays readable.
    """
    folded = unicodedata.normalize("NFKD", line.translate(_ASCII))
    return "".join(ch if " " <= ch <= "~" else "" if unicodedata.combining(ch)
                   else ch.encode("unicode_escape").decode("ascii") for ch in folded)


AGREEMENT_WARN_PCT = 1.0
"""Above this period disagreement [%] between ngspice and the model, say so (issue 11)."""


def simulation_warnings(agreement_pct: float) -> list[str]:
    """What to say about ngspice's period against the model's (``agreement_pct`` [%])."""
    if abs(agreement_pct) <= AGREEMENT_WARN_PCT:
        return []
    return [f"ngspice's period differs from the model's by {agreement_pct:+.2f} % (more than "
            f"{AGREEMENT_WARN_PCT:g} %): trust neither blindly; check the netlist's parts and "
            "the simulation step"]


def simulate(netlist: str, ngspice: str | None = None, timeout_s: float = 120.0
             ) -> dict[str, float]:
    """Run ``netlist`` in ngspice batch mode; returns the ``.meas`` results (MEASURES).

    TickbinError when ngspice is missing, fails, or prints no measurement.
    """
    exe = ngspice or shutil.which("ngspice")
    if exe is None:
        raise TickbinError("ngspice is not installed (Debian/Ubuntu: apt install ngspice)")
    with tempfile.TemporaryDirectory(prefix="tickbin-spice-") as tmp:
        path = Path(tmp) / "design.cir"
        path.write_text(netlist, encoding="utf-8")
        try:
            run = subprocess.run([exe, "-b", str(path)], capture_output=True, text=True,
                                 timeout=timeout_s, cwd=tmp, check=False)
        except (OSError, subprocess.TimeoutExpired) as e:
            raise TickbinError(f"ngspice did not run: {e}") from None
    found = _parse_measures(run.stdout)
    missing = [m for m in MEASURES if m not in found]
    if missing:
        last = (run.stderr or run.stdout).strip().splitlines()[-1:] or ["no output"]
        raise SetupError(f"ngspice gave no {', '.join(missing)} (exit {run.returncode}): "
                         f"{last[0]}")
    return found


def _parse_measures(text: str) -> Mapping[str, float]:
    out = {}
    for m in re.finditer(r"^\s*(\w+)\s*=\s*([-+0-9.eE]+)", text, re.MULTILINE):
        if m[1].lower() in MEASURES:
            out[m[1].lower()] = float(m[2])
    return out
