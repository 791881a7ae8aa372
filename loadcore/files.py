"""The one file policy: how loadcore reads a user's file and how it writes its own.

Reading (histories, scenarios, model files, uploads):

- only regular files are opened (a folder, a FIFO or a device such as ``/dev/zero`` is refused
  before anything is read), and the size is checked against a cap before reading;
- bytes are decoded with one list of encodings (UTF-8 with or without a byte-order mark, then
  Windows-1252, then Latin-1, each fallback reported by the caller);
- files that are not text are recognised and named (ZIP archives and XLSX workbooks, UTF-16 text,
  other binary data), with what to do about them.

Writing (models, exports, briefs): :func:`write_atomic` writes to a temporary file in the same
folder, flushes it to disk and renames it over the target only when complete, so a full disk or
a crash never leaves a half-written file in place of a good one.
"""

from __future__ import annotations

import math
import numbers
import os
import stat
import tempfile
from dataclasses import dataclass
from pathlib import Path
from typing import Any

from loadcore.errors import InputError, quote

#: Largest file read by default, MB (1 MB = 1,048,576 bytes). Nine years of hourly data is about
#: 3 MB; the cap stops a mistaken file (a disk image, a video) before it fills memory (our choice).
DEFAULT_LIMIT_MB = 50
BYTES_PER_MB = 1024 * 1024

#: Encodings tried in order. UTF-8 first (with or without a byte-order mark), then the usual
#: Windows code page of spreadsheet exports, then Latin-1, which decodes any bytes.
ENCODINGS = ("utf-8-sig", "cp1252", "latin-1")

_ZIP_MAGIC = b"PK\x03\x04"
_UTF16_BOMS = (b"\xff\xfe", b"\xfe\xff")
_OLE_MAGIC = b"\xd0\xcf\x11\xe0"


@dataclass(frozen=True)
class TextFile:
    """A decoded file: ``text``, the ``encoding`` used, a ``label`` for messages, and whether
    the text is the ``complete`` file (False for a head cut by :func:`read_head`)."""

    text: str
    encoding: str
    label: str
    complete: bool = True

    @property
    def fallback(self) -> bool:
        """True when the file was not UTF-8 (the caller may want to say so)."""
        return self.encoding != ENCODINGS[0]


def limit_bytes(limit_mb: float = DEFAULT_LIMIT_MB) -> int:
    return int(limit_mb * BYTES_PER_MB)


def check_size(
    n_bytes: int,
    *,
    limit_mb: float = DEFAULT_LIMIT_MB,
    what: str = "file",
    where: str | None = None,
) -> None:
    """Refuse a file larger than the cap, before it is read."""
    if int(n_bytes) > limit_bytes(limit_mb):
        raise InputError(
            f"The {what} is {int(n_bytes) / BYTES_PER_MB:.1f} MB, more than the "
            f"{limit_mb:g} MB limit",
            where=where,
            fix="Use daily data (one row per day) or cut the file to the years you need",
        )


def check_upload_size(n_bytes: int, limit_mb: float = DEFAULT_LIMIT_MB) -> None:
    """Refuse an upload larger than the limit before reading it (the app's file uploads).

    Parameters
    ----------
    n_bytes : int
        Size of the upload in bytes.
    limit_mb : float, default 50
        The limit in megabytes (1 MB = 1,048,576 bytes here).

    Raises
    ------
    InputError
        When the size is not a non-negative whole number of bytes, the limit is not a positive
        number, or the size exceeds the limit.
    """
    if isinstance(n_bytes, bool) or not isinstance(n_bytes, numbers.Integral) or n_bytes < 0:
        raise InputError(
            f"The upload size must be a whole number of bytes, got {quote(n_bytes)}",
            fix="Pass the file's length in bytes",
        )
    if (
        isinstance(limit_mb, bool)
        or not isinstance(limit_mb, numbers.Real)
        or not math.isfinite(limit_mb)
        or limit_mb <= 0
    ):
        raise InputError(
            f"The upload limit must be a positive number of MB, got {quote(limit_mb)}",
            fix=f"Use the default of {DEFAULT_LIMIT_MB} MB",
        )
    check_size(int(n_bytes), limit_mb=limit_mb, what="file", where="upload")


def read_bytes(
    source: Any, *, what: str = "file", limit_mb: float = DEFAULT_LIMIT_MB
) -> tuple[bytes, str]:
    """The bytes of a path, an open file or a bytes object, and a label for messages.

    A ``str`` is always a path here (the readers take a ``str`` holding a line break as the
    file's text, see :func:`read_text`); a missing path that looks like CSV text says so.

    Raises
    ------
    InputError
        When the path does not exist, is not a regular file, cannot be read, or is over the cap.
    """
    data, label, _ = _read(source, what=what, cap=limit_bytes(limit_mb), whole=True)
    return data, label


def read_head(source: Any, *, what: str = "file", n_bytes: int) -> TextFile:
    """The decoded beginning of a file, at most ``n_bytes`` long and cut after its last whole
    line; ``complete`` says whether that is the whole file. Nothing beyond is read, so a reader
    that needs only the first rows does not pay for a huge file (the same checks as
    :func:`read_bytes` otherwise: regular files only, spreadsheets and binary data named)."""
    if isinstance(source, str) and ("\n" in source or "\r" in source):
        text = source[:n_bytes]
        complete = len(source) <= n_bytes
        if not complete:
            text = text[: max(text.rfind("\n"), 0)]
        return TextFile(text, "text", "", complete)
    data, label, complete = _read(source, what=what, cap=n_bytes, whole=False)
    if not complete:
        data = data[: max(data.rfind(b"\n"), 0)]
    decoded = decode(data, what=what, label=label)
    return TextFile(decoded.text, decoded.encoding, label, complete)


def _read(source: Any, *, what: str, cap: int, whole: bool) -> tuple[bytes, str, bool]:
    """At most ``cap`` bytes of ``source``, its label, and whether that was all of it. With
    ``whole`` a larger source is refused (its size checked before reading where known)."""

    def over(n_bytes: int) -> bool:
        if n_bytes > cap and whole:
            check_size(n_bytes, limit_mb=cap / BYTES_PER_MB, what=what)
        return n_bytes > cap

    if isinstance(source, bytes | bytearray | memoryview):
        data = bytes(source)
        return (data, "", True) if not over(len(data)) else (data[:cap], "", False)
    if isinstance(source, str | os.PathLike):
        path = Path(source)
        label = str(path)
        _check_regular(path, source, what)
        if whole:
            over(path.stat().st_size)
        try:
            with path.open("rb") as handle:
                data = handle.read(cap + 1)
        except OSError as exc:
            raise InputError(
                f"The {what} cannot be read ({exc.strerror or exc})",
                where=label,
                fix="Check that the file is not open elsewhere and that you may read it",
            ) from None
        return (data, label, True) if not over(len(data)) else (data[:cap], label, False)
    if hasattr(source, "read"):
        label = str(getattr(source, "name", "") or "")
        size = getattr(source, "size", None)
        if isinstance(size, int) and whole:
            over(size)
        data = source.read(cap + 1)
        if isinstance(data, str):
            data = data.encode("utf-8")
        data = bytes(data)
        return (data, label, True) if not over(len(data)) else (data[:cap], label, False)
    raise InputError(
        f"A {what} cannot be read from a {type(source).__name__}",
        fix="Give a file path, an open file or the file's bytes",
    )


def _check_regular(path: Path, source: Any, what: str) -> None:
    """Refuse a path that is missing, a folder, or not a regular file (a device, a pipe)."""
    label = str(path)
    try:
        info = path.stat()
    except FileNotFoundError:
        looks_like_text = isinstance(source, str) and any(c in source for c in ",;\t|")
        raise InputError(
            f"The {what} does not exist",
            where=label,
            fix=(
                "A text without a line break is taken as a file path, and this one looks "
                "like a line of CSV text: give the text with its line breaks (or as bytes), "
                "or check the path"
            )
            if looks_like_text
            else "Check the path and file name",
        ) from None
    except OSError as exc:
        raise InputError(
            f"The {what} cannot be opened ({exc.strerror or exc})",
            where=label,
            fix="Check the path and that you may read it",
        ) from None
    if stat.S_ISDIR(info.st_mode):
        raise InputError(
            f"The {what} is a folder, not a file", where=label, fix="Give the path of a file"
        )
    if not stat.S_ISREG(info.st_mode):
        raise InputError(
            f"The {what} is not a regular file (it is a device, a pipe or a socket)",
            where=label,
            fix="Save the data to an ordinary file and give its path",
        )


def not_text_reason(data: bytes, expected: str = "a CSV file") -> str | None:
    """Why these bytes are not the ``expected`` text (a spreadsheet, a ZIP archive, UTF-16,
    binary data), or None."""
    head = data[:8]
    if head.startswith(_ZIP_MAGIC):
        if b"xl/" in data[:4096] or b"[Content_Types].xml" in data[:4096]:
            return f"an Excel workbook (XLSX), not {expected}"
        return f"a ZIP archive, not {expected}"
    if head.startswith(_OLE_MAGIC):
        return f"an old-style Excel workbook (XLS), not {expected}"
    if head.startswith(_UTF16_BOMS) or (
        len(data) >= 4 and b"\x00\x00" in (data[1:4:2], data[0:4:2]) and data[:4].count(0) == 2
    ):
        return "text in UTF-16, which loadcore does not read"
    if b"\x00" in data[:4096]:
        return "binary data, not a text file"
    return None


def decode(data: bytes, *, what: str = "file", label: str = "") -> TextFile:
    """Decode a user's file with the one encoding list, refusing spreadsheets and binary data."""
    reason = not_text_reason(data)
    if reason:
        raise InputError(
            f"The {what} is {reason}",
            where=label or None,
            fix="Save it as CSV (comma-separated values, UTF-8) and choose that file",
        )
    for encoding in ENCODINGS:
        try:
            return TextFile(data.decode(encoding), encoding, label)
        except UnicodeDecodeError:
            continue
    raise AssertionError("latin-1 decodes any bytes")  # pragma: no cover


def read_text(source: Any, *, what: str = "file", limit_mb: float = DEFAULT_LIMIT_MB) -> TextFile:
    """:func:`read_bytes` then :func:`decode`; text given as ``str`` is passed through."""
    if isinstance(source, str) and ("\n" in source or "\r" in source):
        return TextFile(source, "text", "")
    data, label = read_bytes(source, what=what, limit_mb=limit_mb)
    return decode(data, what=what, label=label)


def same_file(a: str | os.PathLike[str], b: str | os.PathLike[str]) -> bool:
    """True when two paths name the same file (after resolving links)."""
    pa, pb = Path(a), Path(b)
    try:
        if pa.exists() and pb.exists():
            return os.path.samefile(pa, pb)
    except OSError:
        pass
    return pa.resolve() == pb.resolve()


def refuse_overwriting_inputs(
    out: str | os.PathLike[str], *inputs: Any, option: str = "--out"
) -> None:
    """Refuse an output path that is one of the command's own input files."""
    for given in inputs:
        if isinstance(given, str | os.PathLike) and same_file(out, given):
            raise InputError(
                "The output file is one of the input files, so writing it would destroy the input",
                where=f"{option} {out}",
                fix="Write the output to a new file name",
            )


def output_target(path: str | os.PathLike[str], *, what: str = "file") -> Path:
    """The file an output at ``path`` goes to, checked before anything is written.

    A symbolic link is followed, so the file it points to is replaced and the link is kept.

    Raises
    ------
    InputError
        When the folder does not exist, or the path is a folder, a device, a pipe or a socket
        (writing there would replace it or never finish).
    """
    given = Path(path)
    target = Path(os.path.realpath(given)) if given.is_symlink() else given
    folder = target.parent if str(target.parent) else Path(".")
    if not folder.is_dir():
        raise InputError(
            f"The folder for the {what} does not exist",
            where=str(folder),
            fix="Create the folder first or write somewhere else",
        )
    try:
        info = target.stat()
    except FileNotFoundError:
        return target
    except OSError as exc:
        raise InputError(
            f"The path for the {what} cannot be used ({exc.strerror or exc})",
            where=str(given),
            fix="Check the path and that you may write there",
        ) from None
    if stat.S_ISDIR(info.st_mode):
        raise InputError(
            f"The path for the {what} is a folder", where=str(given), fix="Give a file name"
        )
    if not stat.S_ISREG(info.st_mode):
        raise InputError(
            f"The path for the {what} is not a regular file (it is a device, a pipe or a socket)",
            where=str(given),
            fix="Give the name of an ordinary file",
        )
    return target


def write_atomic(path: str | os.PathLike[str], data: bytes | str, *, what: str = "file") -> Path:
    """Write ``data`` to ``path`` all at once: a temporary file in the same folder, flushed to
    disk, then renamed over the target (and the folder flushed). On failure the old file (if
    any) is left as it was and no temporary file stays behind.

    ``path`` is checked first by :func:`output_target` (a link is followed; folders, devices,
    pipes and sockets are refused).

    Returns
    -------
    Path
        The file written.

    Raises
    ------
    InputError
        When the path cannot be used or the file cannot be written, naming the file.
    """
    target = output_target(path, what=what)
    payload = data.encode("utf-8") if isinstance(data, str) else bytes(data)
    folder = target.parent if str(target.parent) else Path(".")
    tmp_name = None
    try:
        fd, tmp_name = tempfile.mkstemp(prefix=f".{target.name}.", suffix=".tmp", dir=folder)
        with os.fdopen(fd, "wb") as handle:
            handle.write(payload)
            handle.flush()
            os.fsync(handle.fileno())
        if target.exists():
            try:
                os.chmod(tmp_name, stat.S_IMODE(target.stat().st_mode))
            except OSError:
                pass
        else:
            os.chmod(tmp_name, 0o666 & ~_umask())
        os.replace(tmp_name, target)
        tmp_name = None
        _sync_folder(folder)
    except OSError as exc:
        raise InputError(
            f"The {what} could not be written ({exc.strerror or exc}); any earlier file there is "
            "unchanged",
            where=str(path),
            fix="Free some disk space or choose a folder you can write to",
        ) from None
    finally:
        if tmp_name is not None:
            try:
                os.unlink(tmp_name)
            except OSError:
                pass
    return target


def _sync_folder(folder: Path) -> None:
    """Flush a folder's entry list to disk after a rename (where the system allows it)."""
    try:
        fd = os.open(folder, os.O_RDONLY)
    except OSError:
        return
    try:
        os.fsync(fd)
    except OSError:
        pass
    finally:
        os.close(fd)


def _umask() -> int:
    mask = os.umask(0)
    os.umask(mask)
    return mask
