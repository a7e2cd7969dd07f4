"""Results files: HDF5 writing and reading of single points (time of flight, steady-state Townsend) and sweeps.

May import ``gaps`` (gap results), ``engine`` (result objects), ``gas``, ``constants``, ``errors``; never ``sweep``,
``analysis`` or ``cli``. ``gap`` holds the layout of an avalanche run in an electrode gap.
"""
