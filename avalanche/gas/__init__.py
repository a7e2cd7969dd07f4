"""Gas data: cross-section sets (file format, validation), the shipped library, mixtures and Penning transfer.

May import only ``constants`` and ``errors``: gas data knows no engine, no kernel and no file of results.
"""
