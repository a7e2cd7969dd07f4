"""Checks of run settings shared by :func:`avalanche.swarm` and :func:`avalanche.townsend`: each raises
:class:`~avalanche.errors.ConfigError` naming the function, the argument, its value and what it must be."""

from __future__ import annotations

import math

import numpy as np

from ..errors import ConfigError
from ..gas.crosssections import _did_you_mean


def fail(where: str, name: str, value, requirement: str):
    """Raise ``ConfigError("<where>: argument <name> = <value> must be <requirement>")``."""
    raise ConfigError(f"{where}: argument {name} = {value!r} must be {requirement}")


def positive(where: str, name: str, value, integer: bool = False, allow_none: bool = False,
             minimum: float | None = None, integral_float: bool = False):
    """``value`` as a positive finite float (or int with ``integer``); None passes with ``allow_none``; with
    ``integral_float`` an integer argument also takes a float of integral value (e.g. 2e7); ``minimum`` is an
    inclusive lower bound."""
    if value is None and allow_none:
        return None
    if integer and integral_float and isinstance(value, float) and value.is_integer():
        value = int(value)
    kinds = (int, np.integer) if integer else (int, float, np.integer, np.floating)
    if isinstance(value, bool) or not isinstance(value, kinds) or not math.isfinite(float(value)) or value <= 0:
        fail(where, name, value, "a positive integer" if integer else "a positive finite number")
    if minimum is not None and value < minimum:
        fail(where, name, value, f">= {minimum}")
    return int(value) if integer else float(value)


def choice(where: str, name: str, value, choices) -> str:
    """``value`` if it is one of ``choices``, else a ConfigError listing them (with a close match if any)."""
    if value not in choices:
        raise ConfigError(f"{where}: argument {name} = {value!r} is not valid{_did_you_mean(str(value), choices)};"
                          f" choose one of {list(choices)}")
    return value


def seed(where: str, value) -> int | tuple[int, ...]:
    """A master seed: a non-negative integer or a non-empty tuple of them."""
    def ok(v):
        return isinstance(v, (int, np.integer)) and not isinstance(v, bool) and v >= 0
    if ok(value):
        return int(value)
    if isinstance(value, (tuple, list)) and value and all(ok(v) for v in value):
        return tuple(int(v) for v in value)
    fail(where, "seed", value, "a non-negative integer or a tuple of them (e.g. (master_seed, point_index))")
