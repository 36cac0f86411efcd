"""Large memory blocks handed back to the system when freed (glibc's malloc).

glibc serves a block of at least its *mmap threshold* (128 KB at start) from a mapping
of its own, unmapped when the block is freed. But each time such a block is freed it
raises the threshold to that block's size (up to 32 MB, "dynamic mmap threshold"
in ``mallopt(3)``). From then on the large, short-lived tables of a long run (a
growing dict or set, a NumPy array, a sorted list) come from the heap, and the holes
they leave keep the process's memory up: about 6 MB by the end of a
100,000-document run. Setting the threshold explicitly turns the adjustment off.
"""

from __future__ import annotations

import ctypes
import ctypes.util

M_MMAP_THRESHOLD = -3  # from glibc's <malloc.h>
LARGE_BLOCK_BYTES = 64 * 1024


def release_large_blocks(threshold: int = LARGE_BLOCK_BYTES) -> bool:
    """Serve every block of ``threshold`` bytes or more from its own mapping, in this
    process and in the processes it forks later. True when the C library took the
    setting; False where there is no glibc (nothing changes there)."""
    try:
        libc = ctypes.CDLL(ctypes.util.find_library("c") or "libc.so.6")
        mallopt = libc.mallopt
    except (OSError, AttributeError):
        return False
    mallopt.argtypes = (ctypes.c_int, ctypes.c_int)
    mallopt.restype = ctypes.c_int
    return bool(mallopt(M_MMAP_THRESHOLD, threshold))
