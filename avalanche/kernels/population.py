"""Population control between chunks, shared by the steady-state Townsend passes (``engine/townsend.py``) and the
avalanches in gaps (``gaps/simulation.py``): which electrons a population of n keeps, or repeats, to reach a fixed
size, and the weight factor that keeps every tally unbiased.

It is plain numpy (it draws from a :class:`numpy.random.Generator` in Python between kernel calls, so it is not
jitted); it lives in ``kernels`` because both the engine and ``gaps`` may import this layer.
"""

from __future__ import annotations

import numpy as np


def resample_population(gen: np.random.Generator, n: int, size: int) -> tuple[np.ndarray, float]:
    """Indices of the electrons that carry a population of ``n`` to ``size``, and the weight factor n/size.

    For n > size a uniformly random subset of ``size`` electrons without replacement, in increasing order; for
    n ≤ size every electron once, followed by size − n drawn uniformly with replacement. Each electron then
    appears size/n times on average, so multiplying the weight by n/size keeps every tally's expectation
    (unbiased splitting and Russian roulette: common practice, e.g. Hammersley J M & Handscomb D C 1964, *Monte
    Carlo Methods*, Methuen, ch. 5 — from memory).

    Parameters
    ----------
    gen : numpy.random.Generator
        The replica's (or avalanche's) population-control stream.
    n : int
        Electrons present (> 0).
    size : int
        Electrons wanted (> 0).

    Returns
    -------
    (ndarray of int64, float)
        ``size`` indices into the population, and n / size.
    """
    if n > size:
        index = np.sort(gen.choice(n, size, replace=False))
    else:
        index = np.concatenate((np.arange(n), gen.integers(0, n, size - n)))
    return index, n / size
