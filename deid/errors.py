"""Exceptions the library raises. The CLI turns each into a message and an exit code.

The library never exits the process and never puts note text, identifiers or
key material into an exception message: messages name the note, file, line or
setting and the problem.
"""

from __future__ import annotations


class DeidError(Exception):
    """Base class of every chartveil error."""


class ConfigError(DeidError):
    """A policy, pattern file, column mapping or option is wrong (exit code 2)."""


class KeyFileError(ConfigError):
    """The secret key is missing, unreadable or malformed."""


class InputError(DeidError):
    """An input file or table cannot be read at all (exit code 2).

    Problems with a single note are not raised: they become a reject record.
    """


class NoteRejected(DeidError):
    """One note cannot be processed; carried to the rejects file, never raised to the user.

    Args:
        note_id: The note's id (or a placeholder naming its position).
        reason: A short, text-free reason such as ``"empty text"``.
    """

    def __init__(self, note_id: str, reason: str) -> None:
        super().__init__(f"note {note_id!r}: {reason}")
        self.note_id = note_id
        self.reason = reason
