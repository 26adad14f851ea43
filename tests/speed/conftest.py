"""The 4f example on a coarser window, shared by the speed and consistency tests."""

from __future__ import annotations

from pathlib import Path

LAYOUT = Path(__file__).resolve().parents[2] / "layouts" / "relay_4f_vortex.toml"


def scaled_relay_text(grid: int, extra: str = "") -> str:
    """The 4f example with ``grid`` pixels across its window: the pitch grows by 1024 / grid
    and the carrier keeps its 64 µm period, so window, beam and iris stay those of the example."""
    scale = 1024 // grid
    text = LAYOUT.read_text().replace("grid = 1024", f"grid = {grid}")
    text = text.replace('pixel_pitch = "8 um"', f'pixel_pitch = "{8 * scale} um"')
    text = text.replace("period_px = 8,", f"period_px = {8 // scale},")
    return text + extra
