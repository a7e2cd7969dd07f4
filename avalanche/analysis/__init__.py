"""Analysis of computed coefficients: Townsend-coefficient and fluid-model tables, breakdown, gap geometry, emission.

May import ``store`` (to read results files), ``engine``, ``gas``; never ``sweep``, ``plots`` or ``cli``.
"""
