"""Where the plan writes each site feature's name ("eddy behind Heron Rock", "bank (gravel)"), as obstacles the
overlay's label placer keeps its labels off.

A feature's name is a text item that ignores the view's zoom (``sketchpad.items.FeatureItem``): its box is a
fixed pixel rect hung from a fixed scene point, so the boxes change only when the features do, never with the
zoom.  :class:`FeatureNameBoxes` keeps the last list for the rig's features (the very tuples, as the placer's
obstacle cache compares them by identity) and makes it again when they change.
"""

from __future__ import annotations

import threading


def feature_name_boxes(scene, features) -> list | None:
    """(scene point, (x, y, w, h) px relative to it) of the shown name of each of ``features`` in ``scene``; None
    when the scene's feature items do not show these features yet (the scene syncs after the rig changed)."""
    out = []
    for f in features:
        item = scene.item_for(("feature", f.id))
        if item is None or item.feature != f:
            return None
        if not item.isVisible():
            continue
        for child in item.childItems():
            if not child.isVisible() or not hasattr(child, "text") or not child.text():
                continue
            at = item.mapToScene(child.pos())  # (scenePos would count the px offset below as metres)
            r = child.transform().mapRect(child.boundingRect())  # px: the text ignores the view's zoom
            out.append(((at.x(), at.y()), (r.x(), r.y(), r.width(), r.height())))
    return out


class FeatureNameBoxes:
    """:func:`feature_name_boxes` of a rig's features, kept while the features are the same (one overlay's memo;
    locked so that a worker thread could ask too)."""

    def __init__(self) -> None:
        self._lock = threading.Lock()
        self._last: tuple | None = None  # (features, boxes) of the last call made from synced items

    def of(self, scene, rig) -> list:
        """The boxes of ``rig``'s feature names (a list the caller may extend: a copy of the kept one)."""
        features = rig.site.features
        with self._lock:
            last = self._last
        if last is not None and (last[0] is features or last[0] == features):
            return list(last[1])
        boxes = feature_name_boxes(scene, features)
        if boxes is None:
            return []
        with self._lock:
            self._last = (features, boxes)
        return list(boxes)
