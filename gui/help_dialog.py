"""The help page (F1): how to drive the window, the words it uses, and the safety notes."""

from __future__ import annotations

from PySide6.QtWidgets import QDialog, QDialogButtonBox, QTextBrowser, QVBoxLayout, QWidget

SAFETY = (
    "<p><b>Before you build</b></p><ul>"
    "<li>Use a current-limited, low-voltage bench supply (for example 5 V, limit "
    "around 50 mA) while you try the circuit.</li>"
    "<li>Electrolytic and tantalum capacitors are polarised: the + lead goes to the "
    "more positive node, and the rated voltage must be well above the supply.</li>"
    "<li>Keep the supply inside the chip's range shown in the target form.</li>"
    "<li>Nothing here is meant for mains-connected equipment: for that, follow your "
    "local codes and licensed practice.</li></ul>")

GLOSSARY: dict[str, str] = {
    "VT+ (upper threshold)": "The input voltage at which a Schmitt inverter's output falls "
    "(for a 555: the threshold pin's level, normally two thirds of the supply). The timing "
    "capacitor charges up to it.",
    "VT− (lower threshold)": "The input voltage at which the output rises again (for a 555: "
    "the trigger level, normally one third of the supply). The capacitor discharges down "
    "to it. The gap between VT+ and VT− is the hysteresis.",
    "Worst case": "The lowest and highest frequency over every corner of the parts' "
    "tolerances and the chip's data-sheet threshold range (and leakage, where it matters). "
    "A design whose worst case starts at 0 Hz stops oscillating at some corner.",
    "Guaranteed band": "For a trimmer design: the frequencies the pot reaches at every "
    "tolerance corner. Its low end is the highest full-rotation frequency over the corners, "
    "its high end the lowest zero-rotation frequency.",
    "Resolution": "How finely the trimmer sets the frequency: the change per degree or per "
    "percent of rotation near the target. A narrower range ratio means a finer setting.",
    "Network notation": "Several parts making one value, as written in the candidates "
    "table, the text output and the sheet. The legend under the candidates (hover the "
    "value columns' headers) spells out which sign means series and which parallel.",
    "Duty": "The share of each period the output spends high, in percent. With a duty "
    "target, a candidate is a hit only within the duty tolerance (points of duty) as well "
    "as within the frequency error.",
    "Error": "How far the nominal prediction lies from the target, in percent of the target.",
    "Calibration": "Thresholds fitted to a frequency (and duty) you measured on a real build. "
    "Its uncertainty comes from the tolerances of the parts you measured with: calibrate "
    "with 1 % resistors and C0G or film capacitors.",
}

USING = (
    "<p><b>Using the window</b></p><ol>"
    "<li>Fill the drawer on the left: one row per bin, with kind (R, P, C), value and "
    "quantity. A cell Tickbin cannot read turns red and keeps your text.</li>"
    "<li>Set the target on the right: circuit, chip, supply and a frequency, a period or a "
    "band to trim.</li>"
    "<li>Pick a candidate: the plots show its waveform, its spread over simulated builds "
    "and, for a band, frequency against pot rotation.</li>"
    "<li>Build menu: the sheet to print, the SPICE netlist, and taking the parts out of the "
    "drawer (undoable).</li></ol>"
    "<p>Tab and Shift+Tab move between the panels; the arrow keys move inside a table.</p>")


def help_html() -> str:
    """The whole page as HTML: use, glossary, safety."""
    terms = "".join(f"<dt><b>{term}</b></dt><dd>{text}</dd>" for term, text in GLOSSARY.items())
    return f"{USING}<p><b>Words used here</b></p><dl>{terms}</dl>{SAFETY}"


class HelpDialog(QDialog):
    """A non-modal page that stays open beside the window while you work."""

    def __init__(self, parent: QWidget | None = None):
        super().__init__(parent)
        self.setWindowTitle("Tickbin help")
        self.browser = QTextBrowser(self)
        self.browser.setHtml(help_html())
        self.browser.setOpenExternalLinks(False)
        buttons = QDialogButtonBox(QDialogButtonBox.StandardButton.Close, parent=self)
        buttons.rejected.connect(self.close)
        layout = QVBoxLayout(self)
        layout.addWidget(self.browser)
        layout.addWidget(buttons)
        self.resize(560, 620)
