"""Inverse problems: the focusing that makes a wanted cone, fits of measured scans.

From what a user wants or measured back to settings and parameters.
"""
