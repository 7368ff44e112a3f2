"""Fixtures and the Hypothesis profile; shared data and builders live in tests/helpers/."""
import copy
import os

import pytest
from hypothesis import settings

from tests.helpers.data import CONE, PLATE

# the test session is the caller that owns the process's global state (as the command line is
# for a run): pictures through VTK's off-screen EGL window, no X server needed
os.environ.setdefault("VTK_DEFAULT_OPENGL_WINDOW", "vtkEGLRenderWindow")

# no test reads or writes the user's cache of the verification table: one scratch folder per session
# (tests that need a stored table make it there themselves)
if "CLUTCHFE_CACHE_DIR" not in os.environ:
    import tempfile
    os.environ["CLUTCHFE_CACHE_DIR"] = tempfile.mkdtemp(prefix="clutchfe-test-cache-")

# CI explores the same examples every run (same input, same output); local runs keep exploring
settings.register_profile("ci", derandomize=True, deadline=None)
if os.environ.get("CI"):
    settings.load_profile("ci")


@pytest.fixture
def cone_dict():
    return copy.deepcopy(CONE)


@pytest.fixture
def plate_dict():
    return copy.deepcopy(PLATE)
