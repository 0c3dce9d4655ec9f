"""Model: the chips' data, the oscillator physics, spread over tolerances, and calibration."""
