"""Orientational order: disordered phases, phase sequences and candidate lower-symmetry phases."""
