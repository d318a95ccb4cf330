"""Fields of filaments: far and finite-distance fields, the cone, polarization, scan surfaces.

The radiation integral of the traveling line current and everything read directly off it.
"""
