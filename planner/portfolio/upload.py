"""An uploaded table of items, read within its size limit (the rule of ``planner.history.upload``).

The upload view is left out of the CSRF middleware (which would read the
body to find the token) and first looks at the size the request declares:
a request larger than a table of items may be, plus room for the form, is
refused before a byte of its body is read. Then the view checks the CSRF
token itself and hands the file to ``read_items``, which reads it in
bounded chunks.
"""

from __future__ import annotations

from planner.history.upload import FORM_ROOM, declared_size
from planner.portfolio.items_file import MAX_BYTES, ItemsFile, read_items

MAX_REQUEST = MAX_BYTES + FORM_ROOM


def too_large(request) -> str | None:
    """The refusal for a request larger than ``MAX_REQUEST``, or None; reads nothing of the body."""
    size = declared_size(request)
    if size <= MAX_REQUEST:
        return None
    return (
        f"The upload is {size / 2**20:.3g} MB; a table of items may be at most {MAX_BYTES / 2**20:.3g} MB. "
        "Nothing was read or saved. Split the table into several runs."
    )


def read_upload(upload) -> ItemsFile:
    """The items in an uploaded file (Django's UploadedFile); ItemsFileError for a file refused whole."""
    return read_items(upload, name=upload.name)
