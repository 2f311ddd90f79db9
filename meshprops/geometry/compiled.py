"""When the compiled (numba) kernels answer, loading them, and the notice of their first compile.

Two kernel modules: :mod:`meshprops.geometry.crossing_kernels` (the self-intersection finder)
and :mod:`meshprops.geometry.mesh_kernels` (welding, the closed-and-oriented test, duplicate
and zero-area faces). Both are compiled on first use and cached on disk by numba
(``cache=True``: beside the kernel modules in ``__pycache__``, or in ``NUMBA_CACHE_DIR`` / the
user's cache folder when that is read-only). The first compile takes tens of seconds; the
command line has it announced (:func:`on_first_compile`), and it is never repeated while the
cache stands. numba is imported on first use only: its import and the loading of the cached
kernels cost ~0.6 s, more than all the numpy work on a part below :data:`COMPILED_FROM_FACES`.

Every kernel has a numpy twin that answers for small parts; the two are tested to agree.
"""

from __future__ import annotations

import importlib
import os
import sys
from dataclasses import dataclass

#: From this many faces the compiled kernels answer (below, the numpy and rtree code does, unless
#: the kernels are already loaded in the process or a batch asked for them:
#: :func:`use_compiled_at_every_size`).
COMPILED_FROM_FACES = 30_000
#: From this many faces the kernels run on all cores (unless :func:`one_thread`); below, in one
#: thread: starting the threads costs more than the work.
PARALLEL_FROM_FACES = 20_000

KERNEL_MODULES = ("meshprops.geometry.crossing_kernels", "meshprops.geometry.mesh_kernels")

_notice = {"callback": None, "given": False}
#: ``numpy_only`` is for the tests that hold each kernel against its numpy twin.
_policy = {"every_size": False, "numpy_only": False, "one_thread": False}


def kernels_loaded() -> bool:
    """Whether any kernel module is loaded in this process (numba with it)."""
    return any(name in sys.modules for name in KERNEL_MODULES)


def compiled_answers(count: int) -> bool:
    """Whether the compiled kernels answer for a mesh of ``count`` faces (see :data:`COMPILED_FROM_FACES`)."""
    if _policy["numpy_only"]:
        return False
    return (
        count >= COMPILED_FROM_FACES
        or _policy["every_size"]
        or kernels_loaded()  # no import left to pay
    )


def use_compiled_at_every_size() -> bool:
    """Have the compiled kernels answer at every size in this process, if they are cached on disk.

    For a process that checks many files (a batch worker): numba's import is paid once and
    each small part then costs ~1 ms instead of ~16 ms. With a cold cache nothing changes
    (a first compile takes tens of seconds). The answers are the same on either path
    (tested). Returns whether the compiled kernels are now used at every size.
    """
    if not _policy["every_size"] and kernel_cache().warm:
        _policy["every_size"] = True
    return _policy["every_size"]


def use_one_thread() -> None:
    """Have every kernel run in one thread in this process (a worker of a local pool).

    The pool already keeps every core busy, and a worker forked from a process whose
    OpenMP threads have started must not start its own (GNU OpenMP aborts it).
    """
    _policy["one_thread"] = True


def one_thread() -> bool:
    """Whether the kernels must run in one thread in this process (see :func:`use_one_thread`)."""
    return _policy["one_thread"]


def all_cores(count: int) -> bool:
    """Whether the kernels run on all cores for a mesh of ``count`` faces."""
    return count >= PARALLEL_FROM_FACES and not one_thread()


def thread_count() -> int:
    """Threads numba's parallel kernels run on (numba is imported by then)."""
    import numba

    return int(numba.get_num_threads())


def on_first_compile(callback) -> None:
    """Have ``callback(text)`` told, once per process, just before the kernels compile for the first time.

    The command line passes its stderr writer; nothing in this layer prints.
    """
    _notice["callback"] = callback


def kernels(name: str):
    """The kernel module ``name`` (``"crossing_kernels"`` or ``"mesh_kernels"``), imported on first use.

    A first compile is announced once per process (see :func:`on_first_compile`).
    """
    if not _notice["given"] and _notice["callback"] is not None:
        _notice["given"] = True
        cache = kernel_cache()
        if not cache.warm:
            _notice["callback"](
                "compiling the mesh kernels once (about 30-60 s); "
                f"they are cached in {cache.folder} for later runs"
            )
    return importlib.import_module(f"meshprops.geometry.{name}")


@dataclass(frozen=True, slots=True, eq=False)
class KernelCache:
    """``warm``: every kernel loads from disk; ``folder``: where numba keeps them."""

    warm: bool
    folder: str


def kernel_cache() -> KernelCache:
    """Whether numba's on-disk cache holds every kernel for its current source, and where it is."""
    dispatchers = []
    for name in KERNEL_MODULES:
        module = importlib.import_module(name)
        dispatchers.extend(module.dispatchers())
    warm = all(_cache_is_warm(dispatcher) for dispatcher in dispatchers)
    return KernelCache(warm, _cache_folder(dispatchers[0]))


def _cache_folder(dispatcher) -> str:
    try:
        return str(dispatcher._cache._cache_path)
    except AttributeError:  # numba's cache internals moved: say where it would usually be
        return os.environ.get("NUMBA_CACHE_DIR", "__pycache__ beside meshprops/geometry/")


def _cache_is_warm(dispatcher) -> bool:
    """Whether numba's on-disk cache holds this kernel for the current source (best effort)."""
    try:
        return bool(dispatcher._cache._cache_file._load_index())
    except Exception:  # noqa: BLE001 - unknown numba internals: stay quiet rather than guess
        return True
