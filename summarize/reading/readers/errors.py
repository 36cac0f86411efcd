"""The one exception readers raise."""


class ReadError(Exception):
    """The content cannot be turned into a document. ``str()`` is a one-line reason
    without the path (the caller knows the path)."""
