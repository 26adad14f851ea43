"""A bad layout on the command line: exit code 2 and one message, never a traceback.

DESIGN.md sections 5 and 6: bad input gets one clear message naming the file, the line,
the element (name and index) and the field; exit code 2.
"""

from __future__ import annotations

import io

import pytest
from rich.console import Console

from benchcheck.cli.main import EXIT_BAD_INPUT, main
from tests.layout.conftest import compose, marked_line

GOOD = """
format = 1

[bench]
wavelength = "1064 nm"

[source]
waist = "1 mm"

[[element]]
name = "L1"
type = "lens"
z = "100 mm"
focal_length = "200 mm"
"""


def run_main(argv: list[str]) -> tuple[int, str]:
    """Run the command with a recording console; return the exit code and what it printed."""
    console = Console(file=io.StringIO(), record=True, soft_wrap=True, color_system=None)
    code = main(argv, console=console)
    return code, console.export_text()


BAD_LAYOUTS = [
    pytest.param(GOOD.replace('z = "100 mm"', 'z = "100 mrad"  #!'), "L1", 1, "z", "expected a length",
                 id="kind mismatch"),
    pytest.param(GOOD.replace('focal_length = "200 mm"', """focal_length = '__import__("os")'  #!"""),
                 "L1", 1, "focal_length", "calls are not allowed", id="call"),
    pytest.param(compose(GOOD, '[[element]]\nname = "L2"\ntype = "lens"\nz = "50 mm"  #!\nfocal_length = "1 m"'),
                 "L2", 2, "z", "comes before 'L1'", id="decreasing z"),
    pytest.param(GOOD.replace('type = "lens"', 'type = "lens"\ntolerance = { z = "0.1 mm", spin = "1 mrad" }  #!'),
                 "L1", 1, "tolerance.spin", "not a degree of freedom", id="unknown dof"),
]


@pytest.mark.parametrize(("text", "element", "number", "field", "says"), BAD_LAYOUTS)
def test_bad_layout_gives_exit_2_and_one_message(text, element, number, field, says, write_layout, capsys):
    path = write_layout(text)
    code, printed = run_main(["trace", str(path)])
    assert code == EXIT_BAD_INPUT
    assert printed.count("error:") == 1
    assert f"{path}:{marked_line(text)}" in printed
    assert f"element '{element}' (#{number})" in printed
    assert f"field '{field}'" in printed
    assert says in printed
    assert "Traceback" not in printed
    captured = capsys.readouterr()
    assert "Traceback" not in captured.out + captured.err


def test_toml_syntax_error_on_the_command_line(write_layout):
    text = GOOD.replace('z = "100 mm"', 'z = "100 mm  #!')
    path = write_layout(text)
    code, printed = run_main(["trace", str(path)])
    assert code == EXIT_BAD_INPUT
    assert f"{path}:{marked_line(text)}" in printed
    assert "not valid TOML" in printed
    assert "Traceback" not in printed


def test_missing_file_gives_exit_2(tmp_path):
    path = tmp_path / "no_such_bench.toml"
    code, printed = run_main(["trace", str(path)])
    assert code == EXIT_BAD_INPUT
    assert str(path) in printed
    assert "no such file" in printed
    assert "Traceback" not in printed


def test_folder_instead_of_file_gives_exit_2(tmp_path):
    code, printed = run_main(["trace", str(tmp_path)])
    assert code == EXIT_BAD_INPUT
    assert "cannot read the file" in printed
    assert "Traceback" not in printed


def test_good_layout_traces(write_layout):
    # The same text without a mistake runs: the failures above come from the mistakes.
    code, printed = run_main(["trace", str(write_layout(GOOD))])
    assert code == 0
    assert "L1" in printed
    assert "error:" not in printed
