"""Fixtures of the command-line tests.

Under pytest's capture stderr is not a terminal, so the commands would draw no progress bars
(:func:`heatloom.commands.common.stderr_is_terminal`); the command-line tests that check the bars run as if
stderr were a terminal.  tests/cli/test_input_safety.py checks the rule itself (no bars into a file).
"""

import pytest

import heatloom.commands.common as common


@pytest.fixture(autouse=True)
def stderr_as_terminal(monkeypatch):
    monkeypatch.setattr(common, "stderr_is_terminal", lambda: True)
