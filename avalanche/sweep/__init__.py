"""Sweeps: run files (grids of E/N, frequency and composition; gap sweeps over voltage, pressure, wire radius
and frequency), local and Dask execution, resume.

May import ``store``, ``gaps``, ``engine``, ``gas``, ``constants``, ``errors``; never ``analysis``, ``plots``
or ``cli``.
"""
