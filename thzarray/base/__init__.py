"""Ground floor: argument checks, the memory budget, band quadrature and geometry.

Shared by every layer above; imports nothing from the package but itself.
"""
