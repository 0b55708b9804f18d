"""The size limits the README and the command-line help state are the ones the code uses.

The numbers live once, in :mod:`heatloom.defaults`; the help text is built from them, and the README
(prose, not generated) is read here so that a change of a limit cannot leave it stating the old one.
"""

import re
from pathlib import Path

from heatloom import defaults
from heatloom.network import design as design_module
from heatloom.network.tac import layout_search

README = (Path(__file__).resolve().parents[1] / "README.md").read_text(encoding="utf-8")


def _squeezed(text: str) -> str:
    return re.sub(r"\s+", " ", text)


def test_the_modules_use_the_stated_defaults():
    assert design_module.TICK_OFF_ABOVE == defaults.TICK_OFF_ABOVE
    assert layout_search.RESTRUCTURE_STREAMS == defaults.RESTRUCTURE_STREAMS
    assert layout_search.RESTRUCTURE_SHARE == defaults.RESTRUCTURE_SHARE


def test_the_readme_states_the_limits_of_the_code():
    text = _squeezed(README)
    assert f"Above {defaults.TICK_OFF_ABOVE} streams a pinch region" in text
    assert f"on problems of up to {defaults.RESTRUCTURE_STREAMS} streams" in text


def test_the_help_states_the_limits_of_the_code(capsys):
    from heatloom import cli

    try:
        cli.main(["design", "--help"])
    except SystemExit:
        pass
    out = _squeezed(capsys.readouterr().out)
    assert f"mer, above {defaults.TICK_OFF_ABOVE} streams" in out
    assert f"give the last {defaults.RESTRUCTURE_SHARE * 100:g}% of the time limit" in out
    assert f"up to {defaults.RESTRUCTURE_STREAMS} streams of one segment each" in out
