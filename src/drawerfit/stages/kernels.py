"""Helpers the circuit modules' vectorised kernels share; numpy is imported inside, on first use."""

from __future__ import annotations

__all__ = ["parallel", "load_conductance"]


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
