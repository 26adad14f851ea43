"""Element types and hologram patterns registered by a plugin reach the loader and engines."""

from __future__ import annotations

import math
import types

import numpy as np
import pytest

from benchcheck import hookimpl
from benchcheck.api import load_layout, simulate, trace
from benchcheck.errors import LayoutError, PluginError
from benchcheck.evaluate.registries import collect_registries
from benchcheck.layout import ElementType, FieldSpec
from benchcheck.optics.matrices import thin_lens
from benchcheck.plugin_manager import make_plugin_manager
from benchcheck.wave.holograms import HologramOutput, HologramPattern


def _cylinder_matrices(element, wavelength):
    """A cylindrical lens: power along x only (a thin lens in one axis; common practice)."""
    return thin_lens(element.value("focal_length")), thin_lens(math.inf)


def _ring_phase(coordinates, params, wavelength):
    return HologramOutput(phase=np.hypot(coordinates.x, coordinates.y) / float(params["ring_period"]) * 2 * np.pi)


def _plugin():
    module = types.SimpleNamespace()

    @hookimpl
    def benchcheck_register_element_types():
        return [ElementType("cylinder", {"focal_length": FieldSpec("length", required=True)},
                            ray_matrices=_cylinder_matrices, description="cylindrical lens")]

    @hookimpl
    def benchcheck_register_hologram_patterns():
        return [HologramPattern("rings", {"ring_period": "length"}, ("ring_period",), _ring_phase, "test pattern")]

    module.benchcheck_register_element_types = benchcheck_register_element_types
    module.benchcheck_register_hologram_patterns = benchcheck_register_hologram_patterns
    return module


LAYOUT = """
format = 1
[bench]
wavelength = "1064 nm"
[source]
waist = "1 mm"
[[element]]
name = "slm"
type = "modulator"
z = "10 mm"
pixel_pitch = "10 um"
pixels = [256, 256]
hologram = { pattern = "rings", ring_period = "0.5 mm" }
[[element]]
name = "C"
type = "cylinder"
z = "100 mm"
focal_length = "200 mm"
[[element]]
name = "p"
type = "plane"
z = "300 mm"
[simulation]
grid = 256
"""


def test_plugin_element_type_and_pattern_are_loaded_traced_and_simulated(tmp_path):
    path = tmp_path / "plugin_bench.toml"
    path.write_text(LAYOUT)
    manager = make_plugin_manager(extra_plugins=[("test_optics", _plugin())])
    with pytest.raises(LayoutError, match="unknown hologram pattern 'rings'"):
        load_layout(path)  # without the plugin its pattern (and type) are unknown
    layout = load_layout(path, manager)
    traced = trace(layout, plugin_manager=manager).plane("C")
    # Power along x only: the x radius of curvature becomes about -f, y stays nearly flat.
    assert traced.radius[0] == pytest.approx(-0.2, rel=0.05)
    assert abs(traced.radius[1]) > 10
    report = simulate(layout, manager)
    assert report.simulation.planes["p"].field.power > 0


def test_duplicate_element_type_is_refused_naming_the_plugin():
    module = types.SimpleNamespace()

    @hookimpl
    def benchcheck_register_element_types():
        return [ElementType("lens", {}, ray_matrices=_cylinder_matrices)]

    module.benchcheck_register_element_types = benchcheck_register_element_types
    manager = make_plugin_manager(autoload=False, extra_plugins=[("clash", module)])
    with pytest.raises(PluginError, match="'lens' is registered twice.*'clash'"):
        collect_registries(manager)
