"""Designs beyond one buffer: a pH series, a broad-range mixture, a plate of wells from stocks."""
