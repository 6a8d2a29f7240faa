"""Edges that write: atomic outputs, the one CF NetCDF encoder, tables and JSON, figures, the HTML report.

Owns how results reach disk and screen (one figure style, one NetCDF encoding); it computes no physics of its own.
"""
