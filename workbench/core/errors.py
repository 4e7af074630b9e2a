"""The one exception type that user-facing inputs raise.

Every loader and validator raises :class:`InputError` with a single line that names the file
or field and says how to fix it; the command line prints that line and exits with status 2,
and the panels show it beside the field. Anything else that escapes is a bug.
"""

from __future__ import annotations


class InputError(ValueError):
    """A user-supplied value, file or option is wrong.

    Parameters
    ----------
    where : str
        What is wrong, as the user names it: a file path, a key path
        (``candidates[2].price``), a CLI option (``--phi``) or a widget label.
    message : str
        What is wrong with it and how to fix it, one line.

    Notes
    -----
    Line breaks and runs of white space in either part (a file name or a quoted value may carry
    them) are written as one space, so the error is always one line.
    """

    def __init__(self, where: str, message: str) -> None:
        self.where = " ".join(str(where).split()) or "input"
        self.message = " ".join(str(message).split())
        super().__init__(f"{self.where}: {self.message}")
