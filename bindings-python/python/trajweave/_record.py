"""Read-only result objects: attributes over the core's JSON, and ``to_dict()``."""

import copy
import json


class Record:
    """A result with one attribute per field; nested objects are records too.

    Lists of objects stay lists of plain dicts; ``to_dict()`` returns a deep copy of the
    whole result, exactly as the core produced it (the same as the CLI's JSON).
    """

    __slots__ = ("_data",)

    def __init__(self, data):
        object.__setattr__(self, "_data", data)

    @classmethod
    def from_json(cls, text):
        return cls(json.loads(text))

    def __getattr__(self, name):
        try:
            value = self._data[name]
        except KeyError:
            raise AttributeError(
                f"{type(self).__name__} has no field {name!r}; fields: {', '.join(self._data)}"
            ) from None
        return Record(value) if isinstance(value, dict) else value

    def __setattr__(self, name, value):
        raise AttributeError(f"{type(self).__name__} is read-only")

    def __dir__(self):
        return list(self._data) + ["to_dict"]

    def __eq__(self, other):
        return isinstance(other, Record) and self._data == other._data

    def __repr__(self):
        return f"{type(self).__name__}({', '.join(self._data)})"

    def to_dict(self):
        """The whole result as plain dicts and lists (a copy)."""
        return copy.deepcopy(self._data)
