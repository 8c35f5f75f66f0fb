import sys
from pathlib import Path

import numpy as np
import pytest

sys.path.insert(0, str(Path(__file__).parent))


@pytest.fixture
def rng():
    """A seeded generator: every random test is repeatable."""
    return np.random.default_rng(20261201)
