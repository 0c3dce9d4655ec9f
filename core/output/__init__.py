"""Output: what goes to the bench: the build sheet, its schematic, and the SPICE netlist."""
