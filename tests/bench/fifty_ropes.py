"""The 50-rope rig the canvas, drag and analysis benchmarks share (demo data, invented numbers)."""

from __future__ import annotations

from tests import rigs


def fifty_rope_rig():
    """Ten 3:1-with-redirect hauling systems side by side, each with a two-sling anchor: 50 ropes.

    Per system: main line load -> redirect pulley -> grab -> anchor pulley -> grab -> haul (1 rope),
    two slings from two anchors to a master point (2), a tag line to a hand (1) and a back-tie (1).
    """
    pts, ropes, forces = [], [], []
    for k in range(10):
        x = 30.0 * k
        pts += [rigs.load(f"L{k}", x, 0), rigs.anchor(f"R{k}", x + 6, 12), rigs.anchor(f"S{k}", x - 4, 20),
                rigs.anchor(f"T{k}", x - 1, 21), rigs.free(f"M{k}", x - 2, 17), rigs.free(f"G{k}", x - 1, 14),
                rigs.haul(f"H{k}", x - 8, 20, 600.0), rigs.anchor(f"B{k}", x - 12, 24),
                rigs.anchor(f"P{k}", x + 10, 2), rigs.free(f"V{k}", x + 5, 1)]
        ropes += [
            rigs.rope(f"main{k}", [f"L{k}", (f"R{k}", "pulley", "pul"), f"G{k}", (f"M{k}", "pulley", "pul"),
                                   (f"G{k}", "pulley", "pul"), (f"H{k}", "hauled")]),
            rigs.rope(f"sa{k}", [f"S{k}", f"M{k}"]),
            rigs.rope(f"sb{k}", [f"T{k}", f"M{k}"]),
            rigs.rope(f"tag{k}", [f"L{k}", (f"V{k}", "sliding"), f"P{k}"], pretension_N=200.0),
            rigs.rope(f"tie{k}", [f"M{k}", f"B{k}"], pretension_N=100.0),
        ]
        forces.append(rigs.force(f"V{k}", 80.0, 270.0))
    return rigs.make_rig(pts, ropes, forces, hardware=[rigs.pulley("pul", 0.9)], ea=6e4)
