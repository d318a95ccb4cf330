"""Detection: receivers that record a field, and the range budget through humid air.

What a detector at a real distance records.
"""
