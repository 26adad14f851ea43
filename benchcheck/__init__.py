"""benchcheck: plan and tolerance laser beam-shaping benches from a TOML layout."""

__version__ = "0.1.0"

from benchcheck.api import load_layout, trace  # noqa: E402
from benchcheck.hookspecs import hookimpl  # noqa: E402

__all__ = ["__version__", "hookimpl", "load_layout", "trace"]
