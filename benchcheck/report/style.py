"""Colours and the figure helpers every report figure shares.

Lines use the Okabe–Ito qualitative palette, chosen to stay distinct for the common forms
of colour-vision deficiency (Okabe and Ito, Color Universal Design (2008); reprinted in
Wong, Nat. Methods 8, 441 (2011)). Images use perceptually uniform colour maps: viridis
for intensity and cividis for phase (Nuñez, Anderton and Renslow, PLoS ONE 13, e0199239
(2018)). matplotlib is an optional dependency (``pip install benchcheck[plot]``).
"""

from __future__ import annotations

import importlib
import io

from benchcheck.errors import BenchcheckError

__all__ = [
    "LINE_COLOURS",
    "SPEC_COLOUR",
    "PASS_COLOUR",
    "FAIL_COLOUR",
    "INTENSITY_MAP",
    "PHASE_MAP",
    "PLOT_INSTALL_HINT",
    "require_matplotlib",
    "new_figure",
    "png_bytes",
]

#: Okabe–Ito colours in the order lines take them: blue, orange, bluish green, reddish
#: purple, sky blue, vermillion, yellow, black.
LINE_COLOURS = ("#0072B2", "#E69F00", "#009E73", "#CC79A7", "#56B4E9", "#D55E00", "#F0E442", "#000000")
SPEC_COLOUR = "#D55E00"  # vermillion: spec limits
PASS_COLOUR = "#0072B2"  # blue: margins of at least 1
FAIL_COLOUR = "#D55E00"  # vermillion: margins below 1
INTENSITY_MAP = "viridis"
PHASE_MAP = "cividis"

PLOT_INSTALL_HINT = "pip install 'benchcheck[plot]'"


def require_matplotlib():
    """Import matplotlib for drawing without a display, or say how to install it.

    Raises
    ------
    BenchcheckError
        When matplotlib is not installed (the message gives the install command).
    """
    try:
        matplotlib = importlib.import_module("matplotlib")
        importlib.import_module("matplotlib.figure")
    except ImportError:
        raise BenchcheckError(
            f"the report draws its figures with matplotlib, which is not installed: {PLOT_INSTALL_HINT}"
        ) from None
    return matplotlib


def new_figure(width: float, height: float):
    """A matplotlib Figure not tied to any window or global state (inches)."""
    from matplotlib.figure import Figure

    return Figure(figsize=(width, height), layout="constrained")


def png_bytes(figure, dpi: int = 110) -> bytes:
    """The figure as PNG bytes (the Agg renderer; no display needed)."""
    buffer = io.BytesIO()
    figure.savefig(buffer, format="png", dpi=dpi)
    return buffer.getvalue()
