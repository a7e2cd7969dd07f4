"""The jit settings of every numba kernel of avalanche (one place sets them).

Every kernel module decorates its functions with :data:`jit` or :data:`jit_parallel`: compiled code is cached on
disk (``cache=True``), division by zero follows IEEE rules instead of raising (``error_model="numpy"``), and
fastmath stays off so that results never depend on reassociation.
"""

from __future__ import annotations

import numba

JIT_OPTIONS = {"cache": True, "error_model": "numpy", "fastmath": False, "nogil": True}
"""The jit options of every kernel (fastmath stays off: results must not depend on reassociation)."""
jit = numba.njit(**JIT_OPTIONS)
jit_parallel = numba.njit(parallel=True, **JIT_OPTIONS)
