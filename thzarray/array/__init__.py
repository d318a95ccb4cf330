"""Arrays of filaments: layouts, the array sum, steering delays, beam report, gain, tolerance.

What phasing several columns does toward a target.
"""
