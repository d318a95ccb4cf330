"""The air: optical and THz indices (Ciddor, ITU-R P.453) and gaseous absorption (P.676).

One object, :class:`~thzarray.air.medium.Medium`, carries both the indices and the conditions.
"""
