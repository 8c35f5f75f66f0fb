"""Decoding the text files instruments write."""

from __future__ import annotations

from pathlib import Path

from .._errors import ZfitInputError

__all__ = ["file_text", "is_number"]


def file_text(path: Path, kind: str) -> str:
    """Return the text of an instrument's file, whatever its encoding.

    UTF-16 with a byte-order mark (bench software on Windows), UTF-8 with or
    without a mark, else Latin-1 (instruments write a degree sign or "Ohm"
    with an umlaut in comments).

    Parameters
    ----------
    path : pathlib.Path
        The file.
    kind : str
        What the file should be, for the message about a binary file
        (``"text table"``, ``"Touchstone text file"``).

    Raises
    ------
    ZfitInputError
        For a binary file, or UTF-16 that cannot be decoded.
    """
    raw = Path(path).read_bytes()
    if raw[:2] in (b"\xff\xfe", b"\xfe\xff"):
        try:
            return raw.decode("utf-16")
        except UnicodeDecodeError:
            raise ZfitInputError("starts as UTF-16 text but cannot be decoded as such", path) from None
    if b"\x00" in raw[:4096]:
        raise ZfitInputError(f"is a binary file, not a {kind}", path)
    try:
        return raw.decode("utf-8-sig")
    except UnicodeDecodeError:
        return raw.decode("latin-1")


def is_number(token: str, decimal_comma: bool = False) -> bool:
    """Return whether a field of a text file reads as a number.

    Parameters
    ----------
    token : str
        The field; surrounding blanks and double quotes (spreadsheet exports)
        are ignored.
    decimal_comma : bool
        Read a comma as the decimal mark (``4,7e-6``).
    """
    t = token.strip().strip('"')
    if decimal_comma:
        t = t.replace(",", ".")
    if "_" in t:
        return False  # Python reads "1_0" as 10; no instrument writes it, numpy refuses it
    try:
        float(t)
    except ValueError:
        return False
    return True
