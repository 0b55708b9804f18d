"""Shared fixtures; the helpers themselves live in refdata.py."""

import pytest
from refdata import load_reference


@pytest.fixture
def reference():
    return load_reference
