"""Plane waves in a medium and through interfaces: γ = α + jβ, v, λ, Z, R, T, time ↔ depth.

Owns the one derivation of wave properties from ε(f) and σ; every other layer calls it.
"""
