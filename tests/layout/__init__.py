"""Tests of the layout loader (benchcheck.layout) and the quantity reader (benchcheck.units)."""
