"""A hologram registration error as a translation of the modulated field.

A study models ``shift_x`` / ``shift_y`` by translating the modulated field (pattern and
pixels together, the hologram computed once); the fuller model computes the pattern again
at the shifted pixel positions on the fixed pixels. For a pattern smooth on the pixel scale
the two sample one continuous field in two ways, so they may differ only by the phase
quantisation: with 256 levels the rounding error is uniform over ±π/256, rms 2π/(256·√12) =
7.1e-3 rad per model (common practice: quantisation noise of a uniform quantiser), and two
independent such errors cost at most about their variance sum, 1e-4, of the overlap of the
two camera fields (Maréchal: 1 − σ²).
"""

from __future__ import annotations

import pytest

from benchcheck.api import load_layout
from benchcheck.evaluate.factory import make_evaluator
from benchcheck.evaluate.panel_hologram import PanelHologram
from benchcheck.optics.beam_trace import trace_realization
from benchcheck.wave.sums import inner_product, power_sum
from tests.speed.conftest import scaled_relay_text

PITCH = 16e-6  # pixel pitch of the 512-pixel copy: the example's 8 µm times 1024 / 512


@pytest.fixture(scope="module")
def evaluator(tmp_path_factory):
    path = tmp_path_factory.mktemp("registration") / "relay.toml"
    path.write_text(scaled_relay_text(512, '\n[[spec]]\nmetric = "mode_purity"\nat = "cam"\nmin = 0.5\n'))
    return make_evaluator(load_layout(path))


def _re_rendered_camera_field(evaluator, shift: float):
    """The camera field with the pattern computed again at x = ix·p − shift on fixed pixels."""
    simulator = evaluator.simulate
    kept = simulator._holograms["slm"]
    simulator._holograms["slm"] = PanelHologram(kept.compute_phase, kept.pixels, kept.pitch, (shift, 0.0))
    try:
        realization = evaluator.realization()
        return simulator.simulate(realization, trace_realization(realization), with_targets=False).planes["cam"].field
    finally:
        simulator._holograms["slm"] = kept


@pytest.mark.parametrize("pixels", [0.37, 2.6])
def test_translation_agrees_with_the_re_rendered_pattern(evaluator, pixels):
    shift = pixels * PITCH
    evaluator.evaluate(wave=True)  # the nominal run computes the hologram
    translated = evaluator.evaluate({"slm.shift_x": shift}, wave=True).simulation.planes["cam"].field
    re_rendered = _re_rendered_camera_field(evaluator, shift)
    # the same camera samples (the translated field's centre differs by rounding only)
    assert translated.grid.shape == re_rendered.grid.shape and translated.grid.pitch == re_rendered.grid.pitch
    assert translated.grid.center == pytest.approx(re_rendered.grid.center, abs=1e-12)
    overlap = abs(inner_product(translated.values, re_rendered.values)) ** 2 / (
        power_sum(translated.values) * power_sum(re_rendered.values))
    # 1e-4: two independent 256-level quantisation errors (see the module docstring)
    assert overlap > 1 - 1e-4
    # the same bound on the power that reaches the camera (the iris passes the first order)
    assert translated.power == pytest.approx(re_rendered.power, rel=1e-4)


def test_a_registration_error_moves_the_vortex_off_the_target(evaluator):
    # The target is the nominal ideal field: a core 2.6 pixels off its axis loses purity,
    # and more than a core 0.37 pixels off (LG overlap falls with the displacement squared,
    # Siegman, Lasers (1986), ch. 16).
    purity = {pixels: evaluator.evaluate({"slm.shift_x": pixels * PITCH}, wave=True).metrics["cam.mode_purity"]
              for pixels in (0.0, 0.37, 2.6)}
    assert purity[0.0] > purity[0.37] > purity[2.6]
