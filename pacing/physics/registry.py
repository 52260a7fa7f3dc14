"""Published models listed by name: a read-only mapping that also accepts a name's old spelling.

Registry keys are lower case with hyphens ("cipm-2007", "minetti-2002", "moving-average"), the
spelling the command line uses. A registry renamed from an older spelling keeps accepting it on
lookup (stored plans and user files may hold it) through one alias mapping, while iterating,
listing and menus show only the current names.
"""

from __future__ import annotations

from collections.abc import Iterator, Mapping
from typing import TypeVar

from pacing.errors import InputError

Model = TypeVar("Model")


class ModelRegistry(Mapping[str, Model]):
    """Models by name; ``registry[old_name]`` and ``old_name in registry`` accept old spellings.

    Parameters
    ----------
    models : dict of str to object
        The models under their current names, the default first [-].
    aliases : dict of str to str, optional
        Old spelling → current name, for names that were renamed [-].
    what : str, optional
        What a model is, for error messages, e.g. "air density model" [-].

    Examples
    --------
    >>> registry = ModelRegistry({"new-name": 1}, aliases={"old_name": "new-name"})
    >>> list(registry), registry["old_name"], "old_name" in registry
    (['new-name'], 1, True)
    >>> registry.canonical("old_name")
    'new-name'
    """

    def __init__(self, models: dict[str, Model], aliases: dict[str, str] | None = None,
                 what: str = "model") -> None:
        self._models = dict(models)
        self._aliases = dict(aliases or {})
        self._what = what
        unknown = set(self._aliases.values()) - set(self._models)
        if unknown:
            raise ValueError(f"aliases point to unknown models: {sorted(unknown)}")

    @property
    def aliases(self) -> Mapping[str, str]:
        """Old spellings accepted on lookup, each with its current name."""
        return dict(self._aliases)

    def canonical(self, name: str) -> str:
        """The current name of a model given by its current or old name.

        Parameters
        ----------
        name : str
            A registry key or one of its old spellings [-].

        Returns
        -------
        str
            The current registry key [-]. Raises pacing.errors.InputError (one line) naming the
            choices when `name` is neither.
        """
        current = self._aliases.get(name, name)
        if current not in self._models:
            raise InputError(f"unknown {self._what} {name!r}; choose one of "
                             f"{', '.join(self._models)}")
        return current

    def resolve(self, name: str) -> Model:
        """The model of a current or old name; InputError (one line) for an unknown one.

        Parameters
        ----------
        name : str
            A registry key or one of its old spellings [-].

        Returns
        -------
        object
            The registered model.
        """
        return self._models[self.canonical(name)]

    def __getitem__(self, name: str) -> Model:
        return self._models[self._aliases.get(name, name)]

    def __iter__(self) -> Iterator[str]:
        return iter(self._models)

    def __len__(self) -> int:
        return len(self._models)

    def __repr__(self) -> str:
        return f"ModelRegistry({self._models!r}, aliases={self._aliases!r})"
