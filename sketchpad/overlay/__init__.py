"""The force overlay: the solver's Result drawn over the sketch by a few items that paint many labels.

What a planner sees after every solve: each rope piece under a band coloured by its utilization and
labelled with its tension; the turn at every redirect; an arrow at every anchor; the force delivered
to each load and the haul; danger zones; a legend.  A failed solve shows a banner with the named
reason and keeps the last good overlay, greyed.  One module per job:

* :mod:`~sketchpad.overlay.labels` -- the label model: what each label says and where it hangs;
* :mod:`~sketchpad.overlay.placement` -- where each label goes on screen (pure geometry, no Qt);
* :mod:`~sketchpad.overlay.force_item` -- the item that paints labels, arrows and rings, with
  :mod:`~sketchpad.overlay.bands` (utilization bands) and :mod:`~sketchpad.overlay.layer`;
* :mod:`~sketchpad.overlay.zones` -- danger zones;
* :mod:`~sketchpad.overlay.legend` -- the legend and the failure banner on the viewport;
* :mod:`~sketchpad.overlay.controller` -- :class:`ResultOverlay`, which ties them to the canvas.

``from sketchpad.overlay import X`` gives the public names below.  Importing the package itself loads
none of its modules: each name loads its module on first use, so that the placement engine can be
imported (``sketchpad.overlay.placement``) without Qt.
"""

from __future__ import annotations

import importlib

#: Each public name and the module that holds it.
_HOME = {
    "ResultOverlay": "controller",
    "ForceItem": "force_item",
    "LAYERS": "labels", "OverlayLabel": "labels", "PerPoint": "labels", "build_labels": "labels",
    "scene_positions": "labels",
    "Legend": "legend", "summary_lines": "legend",
    "ObstacleCache": "placement", "place_labels": "placement", "placement_memo": "placement",
    "ZoneItem": "zones", "geometry_path": "zones",
}

__all__ = sorted(_HOME)


def __getattr__(name: str):
    home = _HOME.get(name)
    if home is None:
        raise AttributeError(f"module {__name__!r} has no attribute {name!r}")
    value = getattr(importlib.import_module(f"{__name__}.{home}"), name)
    globals()[name] = value  # looked up once
    return value


def __dir__() -> list[str]:
    return sorted(list(globals()) + __all__)
