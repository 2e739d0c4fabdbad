"""Reading a kind's saved parameters back from the model's JSON: the checks every kind's ``from_json`` makes."""

from __future__ import annotations

import dataclasses


def saved_fields(cls, data, required: tuple[str, ...]) -> dict:
    """``data`` checked against the dataclass ``cls``: an object, no unknown keys, every ``required`` key
    present; ValueError naming what is wrong. The values are left for ``cls`` itself to check."""
    if not isinstance(data, dict):
        raise ValueError("parameters must be an object")
    unknown = sorted(set(data) - {field.name for field in dataclasses.fields(cls)})
    if unknown:
        raise ValueError(f"parameters has unknown keys: {', '.join(unknown)}")
    missing = [name for name in required if name not in data]
    if missing:
        raise ValueError(f"parameters must include {missing[0]}")
    return data
