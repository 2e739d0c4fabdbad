"""An uploaded history, read within its size limit, and written back as the reader's own CSV.

Django reads a multipart body whole before a view sees the file (in memory up
to ``FILE_UPLOAD_MAX_MEMORY_SIZE``, beyond that into a temporary file), and
the CSRF middleware reads it even earlier, to find the form's token. The
upload view is therefore left out of the middleware's check and first looks
at the size the request declares (``CONTENT_LENGTH``, which also bounds what
Django will read): a request larger than a history file may be, plus room for
the form's other fields, is refused before a byte of its body is read. Only
then does the view run the CSRF check itself and hand the file to
``read_history``, which reads it in bounded chunks.

The preview page carries the parsed history back to the save step as the
reader's own CSV (``canonical_csv``), which the save step reads again with
the same reader and limits, so what is saved is exactly what was shown and a
changed form is refused the same way as a bad file.
"""

from __future__ import annotations

import io

from planner.history_file import MAX_BYTES, History, read_history

# Room for the form's other fields and the multipart framing beside the file.
FORM_ROOM = 64 * 1024
MAX_REQUEST = MAX_BYTES + FORM_ROOM


def declared_size(request) -> int:
    """The body size the request declares (0 when missing or unreadable); reads nothing."""
    try:
        return max(int(request.META.get("CONTENT_LENGTH") or 0), 0)
    except ValueError:
        return 0


def too_large(request, what: str = "a history file") -> str | None:
    """The refusal for a request larger than ``MAX_REQUEST``, or None; reads nothing of the body."""
    size = declared_size(request)
    if size <= MAX_REQUEST:
        return None
    return (
        f"The upload is {_megabytes(size)}; {what} may be at most {_megabytes(MAX_BYTES)}. "
        "Nothing was read or saved. "
        + (
            "Send a shorter stretch of the history, or weekly rows."
            if what == "a history file"
            else "Send a shorter stretch of the log."
        )
    )


def _megabytes(count: int) -> str:
    return f"{count / 2**20:.3g} MB"


def read_upload(upload, *, period: str) -> History:
    """The history in an uploaded file (Django's UploadedFile); HistoryFileError naming row and column."""
    return read_history(upload, period=period, name=upload.name)


def canonical_csv(history: History) -> str:
    """The history as the reader's own CSV: a header, then one row a period (commas, line feeds)."""
    if history.shape == "levels":
        lines = ["date,level"] + [f"{day},{level}" for day, level in zip(history.dates, history.levels, strict=True)]
    else:
        lines = ["date,in,out"] + [
            f"{day},{units_in},{units_out}"
            for day, units_in, units_out in zip(history.dates, history.arrivals, history.demand, strict=True)
        ]
    return "\n".join(lines) + "\n"


def read_canonical(text: str, *, period: str) -> History:
    """Read back what ``canonical_csv`` wrote (the save step); the reader's checks and limits apply again."""
    return read_history(io.BytesIO(text.encode("utf-8")), period=period)
