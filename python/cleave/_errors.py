"""The exception cleave raises."""


class CleaveError(Exception):
    """A model that cannot be read or a computation that cannot be done.

    ``str(err)`` is the text that the command line prints for the same input (for an error in
    the model: ``FILE:LINE:COL: message``, the source line and a caret).

    Attributes:
        message: what is wrong, without the location.
        file: the display name of the model (its path, or ``<model>`` for text).
        line, column: 1-based position of the error in the model, or ``None`` when it is not
            about a place in the model (a bad fixed value, a computation that cannot be done).
        status: the command line's exit status for it: 2 for bad input, 1 for a computation
            that cannot be done.
    """

    def __init__(self, rendered, message, file, line, column, status):
        super().__init__(rendered.rstrip("\n"))
        self.rendered = rendered
        self.message = message
        self.file = file
        self.line = line
        self.column = column
        self.status = status
