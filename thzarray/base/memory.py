"""Memory budget of one evaluation: results must fit, temporaries are chunked to fit.

No global setting: every evaluation that can be large takes ``memory_budget`` (bytes) and
passes it here.
"""

from __future__ import annotations

__all__ = ["DEFAULT_MEMORY_BUDGET", "check_result_fits", "chunk_points"]

DEFAULT_MEMORY_BUDGET = 2 * 2**30  # bytes


def _gib(n):
    return f"{n / 2**30:.3g} GiB"


def check_result_fits(what: str, result_bytes: int, memory_budget: float,
                      smaller: str = "a smaller grid (fewer frequencies, angles or points)"
                      ) -> None:
    """Raise ValueError when the result alone exceeds the budget (chunking cannot help).

    ``smaller`` says what the caller can shrink (for the message).
    """
    if not memory_budget > 0:
        raise ValueError(f"memory_budget = {memory_budget!r} is not allowed; allowed: > 0 bytes")
    if result_bytes > memory_budget:
        raise ValueError(f"{what}: the result needs {_gib(result_bytes)}, more than "
                         f"memory_budget = {_gib(memory_budget)}; allowed: {smaller} or a larger "
                         "memory_budget")


def chunk_points(memory_budget: float, result_bytes: int, bytes_per_point: int,
                 minimum: int = 1024) -> int:
    """Points per chunk so that temporaries fit in what the result leaves of the budget."""
    spare = max(memory_budget - result_bytes, 0)
    return max(minimum, int(spare // bytes_per_point))
