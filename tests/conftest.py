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

# every run of the test command explores the same examples (same input, same output, on any
# machine); CLUTCHFE_EXPLORE=1 lets Hypothesis search new ones (and the fuzz benchmark does)
settings.register_profile("ci", derandomize=True, deadline=None)
settings.register_profile("explore", deadline=None)
settings.load_profile("explore" if os.environ.get("CLUTCHFE_EXPLORE") else "ci")


@pytest.fixture
def cone_dict():
    return copy.deepcopy(CONE)


@pytest.fixture
def plate_dict():
    return copy.deepcopy(PLATE)
