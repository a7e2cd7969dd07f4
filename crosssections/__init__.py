"""Shipped cross-section sets (package data; installed as ``avalanche.gasdata``)."""
