"""The thread count of the BLAS libraries loaded in this process."""

from __future__ import annotations

__all__ = ["blas_threads", "restore_blas_threads"]


_BLAS_SYMBOLS = (
    ("openblas_get_num_threads", "openblas_set_num_threads"),
    ("openblas_get_num_threads64_", "openblas_set_num_threads64_"),
    ("scipy_openblas_get_num_threads", "scipy_openblas_set_num_threads"),
    ("scipy_openblas_get_num_threads64_", "scipy_openblas_set_num_threads64_"),
)


def _blas_libraries() -> list:
    """The OpenBLAS libraries loaded in this process (numpy and scipy each
    bring their own), as ctypes handles; empty where that cannot be told."""
    import ctypes

    try:
        with open("/proc/self/maps") as fh:
            paths = sorted({ln.split()[-1] for ln in fh if "openblas" in ln.lower() and ".so" in ln})
    except OSError:
        return []
    libs = []
    for path in paths:
        try:
            libs.append(ctypes.CDLL(path))
        except OSError:
            pass
    return libs


def blas_threads(n: int | None) -> list:
    """Set the thread count of every loaded OpenBLAS to `n` (None: leave);
    return the previous counts, for `restore_blas_threads`.

    One part's linear algebra is small (hundreds of rows, a few columns):
    OpenBLAS threads do not speed it up, and beside worker processes they
    oversubscribe the cores and spin.  Measured on a lot of 200 parts of 801
    points: 2.7 times the CPU time with OpenBLAS's default of one thread per
    core.  The usual remedy (OPENBLAS_NUM_THREADS=1) only works before numpy
    is imported, hence the library calls.
    """
    before = []
    for lib in _blas_libraries():
        for get_name, set_name in _BLAS_SYMBOLS:
            get, put = getattr(lib, get_name, None), getattr(lib, set_name, None)
            if get is not None and put is not None:
                before.append((put, int(get())))
                if n is not None:
                    put(int(n))
                break
    return before


def restore_blas_threads(before: list) -> None:
    """Put back the thread counts `blas_threads` returned."""
    for put, n in before:
        put(n)
