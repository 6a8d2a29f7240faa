"""After fieldwork: velocity from hyperbola, CMP and calibration picks; layered time ↔ depth.

Owns the fits and their uncertainties; files of picks are read in :mod:`subsurf.io`.
"""
