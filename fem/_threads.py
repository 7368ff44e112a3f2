"""One BLAS thread around small dense work (docs/solver-notes.md: multithreaded BLAS made it 15 x slower).

threadpoolctl scans the loaded libraries each time ``threadpool_limits`` is entered (about 2 ms);
one controller made once keeps re-solves in a loop cheap.
"""
from threadpoolctl import ThreadpoolController

_controller = None


def one_blas_thread():
    global _controller
    if _controller is None:
        _controller = ThreadpoolController()
    return _controller.limit(limits=1)
