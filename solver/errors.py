"""Our own exception types: each carries where the problem is and a message a rigger reads."""

from __future__ import annotations


class RopewrightError(Exception):
    """Base of every error Ropewright raises on purpose; ``str()`` is the user message."""

    def __init__(self, message: str, where: str = "") -> None:
        self.where = where
        self.message = message
        super().__init__(f"{where}: {message}" if where else message)


class RigFileError(RopewrightError):
    """A rig file that cannot be read: broken JSON, a missing field, a bad value.

    ``where`` is the field path, e.g. ``ropes[2].path[3]``.
    """


class RigModelError(RopewrightError):
    """A rig whose content makes no sense to solve (bad reference, coincident points ...).

    ``subject`` is the id of the point, rope or spec at fault.
    """

    def __init__(self, message: str, where: str = "", subject: str = "") -> None:
        super().__init__(message, where)
        self.subject = subject


class UnitError(RopewrightError):
    """A typed quantity that cannot be read in the expected unit."""
