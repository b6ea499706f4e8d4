"""Helpers the circuit modules' vectorised kernels share; numpy is imported inside, on first use."""

from __future__ import annotations

__all__ = ["parallel", "load_conductance", "par_floor", "par_ceiling"]


def parallel(a, b):
    """a ∥ b for positive resistances, with inf meaning open and 0 meaning short."""
    import numpy as np

    with np.errstate(divide="ignore", invalid="ignore"):
        out = 1.0 / (1.0 / a + 1.0 / b)
    return np.where(np.isinf(a), b, np.where(np.isinf(b), a, out))


def load_conductance(rl):
    """1/RL, 0 for no load (RL = inf), so that no infinity reaches complex arithmetic."""
    import numpy as np

    return np.where(np.isfinite(rl), 1.0 / np.where(np.isfinite(rl), rl, 1.0), 0.0)


def par_floor(q, rl: float):
    """The smallest R with R‖rl >= q: 0 where q <= 0, inf where no R reaches it (q >= rl)."""
    import numpy as np

    q = np.asarray(q, float)
    if not np.isfinite(rl):
        return np.maximum(q, 0.0)
    with np.errstate(divide="ignore", invalid="ignore"):
        return np.where(q <= 0, 0.0, np.where(q < rl, q * rl / (rl - q), np.inf))


def par_ceiling(y, rl: float):
    """The largest R with R‖rl <= y: inf where y >= rl (or no load)."""
    import numpy as np

    y = np.asarray(y, float)
    if not np.isfinite(rl):
        return y
    with np.errstate(divide="ignore", invalid="ignore"):
        return np.where(y < rl, y * rl / (rl - y), np.inf)
