"""Build the demo meshes in sample_meshes/ (small files, committed).

Scenario (our own): a small lab builds a desk-top rover that carries a camera
gimbal. Each part is modelled in its own local frame, in millimetres, the way a
CAD package exports single parts. Densities are listed in sample_meshes/README.md.

Run from the repository root:  python scripts/make_samples.py
"""

from __future__ import annotations

from pathlib import Path

from meshprops.geometry import shapes
from meshprops.io.writers import write_ascii_stl, write_binary_stl, write_obj, write_ply

OUT = Path(__file__).resolve().parent.parent / "sample_meshes"


def main() -> None:
    OUT.mkdir(exist_ok=True)
    # Chassis plate, aluminium: 160 x 100 x 4 mm, lying on z = 0.
    write_binary_stl(
        OUT / "chassis_plate.stl",
        shapes.triangles_of(*shapes.box((160.0, 100.0, 4.0), (0.0, 0.0, 2.0))),
        header=b"solid-looking header: desk-top rover chassis plate, binary STL, mm",
    )
    # Wheel hub, printed PLA: tube r 23 mm, axle bore r 4 mm, 16 mm wide, axis z.
    write_obj(OUT / "wheel_hub.obj", *shapes.tube(23.0, 4.0, 16.0, sections=72), comment="desk-top rover wheel hub, mm")
    # Tyre, printed TPU: torus, 30 mm to the tube centre, tube r 6 mm, axis z.
    write_ply(OUT / "tyre.ply", *shapes.torus(30.0, 6.0, 72, 24), binary=False)
    # Drive motor stand-in, steel can: r 14 mm, 36 mm long, axis z.
    write_ply(OUT / "motor_can.ply", *shapes.cylinder(14.0, 36.0, sections=48), binary=True)
    # Camera gimbal arm, aluminium L bracket, 20 mm thick.
    arm = shapes.extrusion([(8, 8), (8, 60), (0, 60), (0, 0), (40, 0), (40, 8)], height=20.0)
    write_ascii_stl(OUT / "gimbal_arm.stl", shapes.triangles_of(*arm), name="gimbal_arm")
    # Counterweight, brass block 40 x 30 x 20 mm with a sealed 20 x 10 x 10 mm cavity (inward shell).
    weight = shapes.hollow_box((40.0, 30.0, 20.0), (20.0, 10.0, 10.0))
    write_binary_stl(OUT / "counterweight.stl", shapes.triangles_of(*weight), header=b"counterweight with cavity, mm")
    for path in sorted(OUT.iterdir()):
        print(f"{path.name:24} {path.stat().st_size:8d} bytes")


if __name__ == "__main__":
    main()
