"""Edges that write: atomic outputs, tables and JSON, pick files, figures, the HTML report.

Owns how results reach disk and screen; it computes no physics of its own.
"""
