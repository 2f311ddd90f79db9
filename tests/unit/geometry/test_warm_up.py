"""The warm-up compiles every kernel for the types its callers pass."""

from __future__ import annotations

from meshprops.geometry import compiled
from meshprops.geometry.warm_up import warm_up


def test_warm_up_covers_every_entry_point_with_the_types_the_callers_pass():
    warm_up()
    for name in compiled.KERNEL_MODULES:
        module = __import__(name, fromlist=["dispatchers"])
        for dispatcher in module.dispatchers():
            assert dispatcher.signatures, f"{name}: {dispatcher.__name__} never compiled"
    weld = compiled.kernels("mesh_kernels").weld_rows
    kinds = {str(signature[0].dtype) for signature in weld.signatures}
    assert {"uint32", "uint64"} <= kinds  # float32 (STL) and float64 (OBJ) rows

