"""One swarm point: process tables, ensemble, tallies, estimators, the DC/AC drives, the time-of-flight and
steady-state Townsend modes, and their result objects. May import ``kernels``, ``gas``, ``constants``, ``errors``.

A point knows no sweep, writes no file and prints nothing (warnings go through :mod:`warnings`).
"""
