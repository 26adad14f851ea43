"""benchcheck: plan and tolerance laser beam-shaping benches from a TOML layout."""

__version__ = "0.1.0"
