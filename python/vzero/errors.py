"""Errors raised by vzero: the library's InputError and UsageError as Python exceptions."""


class InputError(ValueError):
    """An input vzero cannot read or judge: where, what, and how to fix it.

    Attributes: file, line, column (1-based; 0 = not known), message (without the place),
    fixes (list of suggested fixes: the option or profile key to change), text (the line).
    str(error) is the text the command line prints.
    """

    def __init__(self, formatted, file="", line=0, column=0, message="", fixes=(), text=""):
        super().__init__(formatted)
        self.file = file
        self.line = line
        self.column = column
        self.message = message
        self.fixes = list(fixes)
        self.text = text


class UsageError(ValueError):
    """A bad option name or value (the command line's exit status 2)."""
