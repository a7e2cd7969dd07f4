"""The shared population-control sampler (avalanche.kernels.population): unbiased weights, uniform selection."""

from __future__ import annotations

import numpy as np
from scipy import stats

from avalanche.kernels.population import resample_population


def test_resampling_keeps_every_electron_equally_likely_and_the_total_weight():
    # unbiased splitting / Russian roulette (common practice): each electron's expected number of copies times the
    # weight factor is 1, so any weighted tally keeps its expectation; selection is uniform (χ² on the counts of
    # each index over many draws, 1 % level, fixed seed)
    gen = np.random.default_rng(3)
    for n, size in ((10, 4), (4, 10), (7, 7)):
        copies = np.zeros(n)
        draws = 4000
        for _ in range(draws):
            index, factor = resample_population(gen, n, size)
            assert index.size == size and factor == n / size
            assert index.min() >= 0 and index.max() < n
            if n > size:
                assert np.all(np.diff(index) > 0)  # distinct, in order
            else:
                np.testing.assert_array_equal(index[:n], np.arange(n))  # everyone kept once
            copies += np.bincount(index, minlength=n)
        np.testing.assert_allclose(copies * factor / draws, 1.0, rtol=0.05)
        if n != size:
            extra = copies - (draws if n < size else 0)
            assert stats.chisquare(extra).pvalue > 0.01


def test_the_sampler_repeats_the_former_draws():
    # the gap run's former code (a sorted choice without replacement) and the Townsend pass's (everyone once plus
    # uniform repeats) draw the same numbers from the same stream, so fixed-seed results stay bitwise the same
    a, b = np.random.default_rng(9), np.random.default_rng(9)
    np.testing.assert_array_equal(resample_population(a, 50, 20)[0], np.sort(b.choice(50, 20, replace=False)))
    np.testing.assert_array_equal(resample_population(a, 5, 12)[0],
                                  np.concatenate((np.arange(5), b.integers(0, 5, 7))))
