"""Sweeps: run files (grids of E/N, frequency and composition), local and Dask execution, resume.

May import ``store``, ``engine``, ``gas``, ``constants``, ``errors``; never ``analysis``, ``plots`` or ``cli``.
"""
