"""What the family modules share."""

from __future__ import annotations

import numpy as np


def shaped(p: np.ndarray, t: np.ndarray) -> np.ndarray:
    """A column of canonical parameters shaped to broadcast against temperatures ``t``
    (one row per curve).
    """
    return p.reshape((-1,) + (1,) * (t.ndim - 1))
