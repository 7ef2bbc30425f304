"""The job model: one (system, property, functional, settings) computation.

A job's key is the SHA-256 of the canonical JSON of its system identity,
property, functional, settings and the ks1d version, so the same job in two
sweeps (or two runs of one sweep) is stored once, and a change of any input
— or of ks1d itself — makes a new job.

The engine treats the system as opaque: any object with a ``name``, an
``identity()`` (the dict that enters the key) and a ``to_dict()`` will do.
Turning the dict back into a system is the registry's business
(:meth:`Job.from_dict` takes the decoder).
"""
from __future__ import annotations

import hashlib
import json
from collections.abc import Callable
from dataclasses import dataclass, field
from typing import Any

from ..._version import __version__


def canonical_json(obj: Any) -> str:
    """JSON with sorted keys and no whitespace: the hashing form."""
    return json.dumps(obj, sort_keys=True, separators=(",", ":"), ensure_ascii=True, allow_nan=False)


@dataclass(frozen=True)
class Job:
    """One unit of sweep work, run by one worker, stored as one row."""

    system: Any  # see the module docstring: name, identity(), to_dict()
    property: str
    functional: str
    settings: tuple[tuple[str, Any], ...] = field(default=())
    version: str = __version__

    @property
    def settings_dict(self) -> dict[str, Any]:
        return {k: _thaw(v) for k, v in self.settings}

    def identity(self) -> dict[str, Any]:
        return {
            "system": self.system.identity(),
            "property": self.property,
            "functional": self.functional.strip().lower(),
            "settings": self.settings_dict,
            "ks1d": self.version,
        }

    @property
    def key(self) -> str:
        return hashlib.sha256(canonical_json(self.identity()).encode()).hexdigest()

    def to_dict(self) -> dict[str, Any]:
        return {
            "system": self.system.to_dict(),
            "property": self.property,
            "functional": self.functional,
            "settings": self.settings_dict,
            "version": self.version,
        }

    @classmethod
    def from_dict(cls, d: dict[str, Any], system_from_dict: Callable[[dict[str, Any]], Any]) -> Job:
        """The job of :meth:`to_dict`; ``system_from_dict`` rebuilds its system (the registry's decoder)."""
        return cls(
            system=system_from_dict(d["system"]),
            property=d["property"],
            functional=d["functional"],
            settings=freeze_settings(d.get("settings") or {}),
            version=d.get("version", __version__),
        )


def _freeze(v: Any) -> Any:
    if isinstance(v, dict):
        return tuple(sorted((k, _freeze(x)) for k, x in v.items()))
    if isinstance(v, list):
        return ("__list__",) + tuple(_freeze(x) for x in v)
    return v


def _thaw(v: Any) -> Any:
    if isinstance(v, tuple):
        if v and v[0] == "__list__":
            return [_thaw(x) for x in v[1:]]
        return {k: _thaw(x) for k, x in v}
    return v


def freeze_settings(settings: dict[str, Any]) -> tuple[tuple[str, Any], ...]:
    """A hashable, order-independent form of a settings mapping."""
    return tuple(sorted((k, _freeze(v)) for k, v in settings.items()))
