"""The source: laser settings to plasma, the plasma current, the filament column.

What drives the THz current and where it flows.
"""
