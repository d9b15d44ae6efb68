"""Files stored for a record: removed again when the write that made them fails, and found
again when nothing points at them."""

from __future__ import annotations

import functools
from collections.abc import Iterable, Iterator
from contextvars import ContextVar

from django.core.files.storage import Storage

_written: ContextVar[list | None] = ContextVar("stored_files_written", default=None)


def removed_on_failure(service):
    """Decorate a service (above its ``@transaction.atomic``) so that the files it stored
    through `file_written` are deleted if it raises: a rolled-back record leaves no file
    behind under the name it would have had.

    A process killed mid-write still leaves its file; `orphan_files` finds those.
    """

    @functools.wraps(service)
    def wrapper(*args, **kwargs):
        outer = _written.get()
        written: list = [] if outer is None else outer
        token = _written.set(written)
        try:
            return service(*args, **kwargs)
        except BaseException:
            if outer is None:  # the outermost service cleans up
                for field_file in written:
                    if field_file.name:
                        field_file.storage.delete(field_file.name)
            raise
        finally:
            _written.reset(token)

    return wrapper


def file_written(field_file) -> None:
    """Note a FieldFile just stored, for the `removed_on_failure` service running now."""
    written = _written.get()
    if written is None:
        raise RuntimeError("file_written() needs a service decorated with @removed_on_failure")
    written.append(field_file)


def stored_names(storage: Storage, folder: str) -> Iterator[str]:
    """Every file name under `folder` of `storage`, at any depth."""
    try:
        folders, files = storage.listdir(folder)
    except FileNotFoundError:
        return
    for name in files:
        yield f"{folder}/{name}"
    for sub in folders:
        yield from stored_names(storage, f"{folder}/{sub}")


def orphan_files(storage: Storage, folder: str, recorded: Iterable[str]) -> list[str]:
    """Files under `folder` that no record names (`recorded`: the names records hold)."""
    known = set(recorded)
    return sorted(name for name in stored_names(storage, folder) if name not in known)
