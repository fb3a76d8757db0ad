"""The one exception type that physics and parsing raise for bad input.

The API turns it into ``{"ok": false, "error": {"code", "message", "field"}}``;
``field`` names the request key (dotted for nested keys, e.g. ``groups.0.J``)
so the page can show the message beside the input that caused it.
"""


class InputError(ValueError):
    """Bad or unusable input, with the request field it belongs to."""

    def __init__(self, message: str, field: str | None = None, code: str = "invalid_value") -> None:
        super().__init__(message)
        self.message = message
        self.field = field
        self.code = code

    def at(self, prefix: str) -> "InputError":
        """Return the same error with ``prefix.`` put before its field."""
        field = prefix if self.field is None else f"{prefix}.{self.field}"
        return InputError(self.message, field, self.code)
