"""The subcommands of ``thzarray``, grouped by what they answer.

``common`` holds what they share (flags with units, output, file writing).
"""
