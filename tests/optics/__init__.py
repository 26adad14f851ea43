"""Tests of the paraxial physics in benchcheck.optics."""
