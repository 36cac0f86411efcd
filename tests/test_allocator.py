"""Large blocks served from mappings of their own once the run sets glibc's mmap
threshold. The reference is glibc itself: ``mallinfo2()`` counts the blocks it serves
from mappings (``hblks``), as documented in mallinfo(3) and mallopt(3)."""

from __future__ import annotations

import platform
import subprocess
import sys

import pytest

pytestmark = pytest.mark.skipif(platform.libc_ver()[0] != "glibc", reason="glibc's malloc only")

# Run in a new interpreter: the allocator's state is per process, and a test that runs
# the command line in this process has already set the threshold here.
MEASURE = """
import ctypes, ctypes.util, sys
from summarize.runs.allocator import release_large_blocks

class MallInfo2(ctypes.Structure):
    _fields_ = [(name, ctypes.c_size_t) for name in ("arena", "ordblks", "smblks", "hblks", "hblkhd",
                "usmblks", "fsmblks", "uordblks", "fordblks", "keepcost")]

libc = ctypes.CDLL(ctypes.util.find_library("c"))
libc.mallinfo2.restype = MallInfo2
libc.malloc.restype, libc.malloc.argtypes = ctypes.c_void_p, (ctypes.c_size_t,)
libc.free.argtypes = (ctypes.c_void_p,)
libc.free(libc.malloc(1 << 20))  # by default glibc now raises its threshold above 1 MB
if sys.argv[1] == "release":
    assert release_large_blocks()
before = libc.mallinfo2().hblks
blocks = [libc.malloc(200 * 1024) for _ in range(20)]
print(libc.mallinfo2().hblks - before)
"""


def _mapped_blocks(mode: str) -> int:
    done = subprocess.run([sys.executable, "-c", MEASURE, mode], capture_output=True, text=True, check=True)
    return int(done.stdout)


# External check: glibc's mallinfo2 and mallopt (mallinfo(3), mallopt(3) manual pages)
def test_large_blocks_get_their_own_mappings_once_the_threshold_is_set():
    assert _mapped_blocks("default") == 0  # glibc's dynamic threshold: served from the heap
    assert _mapped_blocks("release") == 20  # each 200 KB block mapped, so unmapped when freed
