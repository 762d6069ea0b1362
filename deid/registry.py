"""Registries of detectors, operators, readers and writers, looked up by a stable versioned name.

Built-ins register themselves the same way a plugin would::

    from deid.registry import detectors

    @detectors.register("regex.v1")
    def make_regex_detector(...): ...

A failed lookup lists the names that exist.
"""

from __future__ import annotations

from collections.abc import Callable, Iterator
from typing import Generic, TypeVar

from deid.errors import ConfigError

T = TypeVar("T")


class Registry(Generic[T]):
    """A named table of factories.

    Args:
        kind: What the registry holds, used in error messages ("detector").
    """

    def __init__(self, kind: str) -> None:
        self.kind = kind
        self._items: dict[str, T] = {}

    def register(self, name: str) -> Callable[[T], T]:
        """Decorator that files ``obj`` under ``name`` (for example ``"regex.v1"``)."""

        def deco(obj: T) -> T:
            if name in self._items and self._items[name] is not obj:
                raise ConfigError(f"{self.kind} {name!r} is registered twice")
            self._items[name] = obj
            return obj

        return deco

    def get(self, name: str) -> T:
        """Return the entry filed under ``name``; the error lists what exists."""
        try:
            return self._items[name]
        except KeyError:
            known = ", ".join(sorted(self._items)) or "(none)"
            raise ConfigError(f"unknown {self.kind} {name!r}; known: {known}") from None

    def names(self) -> list[str]:
        """Sorted names of every entry."""
        return sorted(self._items)

    def __contains__(self, name: object) -> bool:
        return name in self._items

    def __iter__(self) -> Iterator[str]:
        return iter(self.names())


detectors: Registry[Callable[..., object]] = Registry("detector")
operators: Registry[Callable[..., object]] = Registry("operator")
readers: Registry[Callable[..., object]] = Registry("reader")
writers: Registry[Callable[..., object]] = Registry("writer")
