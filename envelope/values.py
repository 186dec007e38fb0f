"""``dataclass`` for the engine's value classes, made at import for less.

The standard ``dataclasses.dataclass`` compiles every method it generates from source
text, one ``exec`` each: ``__init__``, ``__repr__``, ``__eq__``, ``__hash__`` and, for a
frozen class, ``__setattr__`` and ``__delattr__``.  On this kind of machine a compile
costs about 0.2 ms, so the ~45 value classes a plain run imports cost some 50 ms of
its start-up.  This decorator takes the same arguments and lets the standard one
collect the fields (defaults, ``field()``, ``ClassVar``, ``__slots__``,
``__match_args__``), then compiles only ``__init__`` (the same code the standard one
writes: a frozen class sets its fields with ``object.__setattr__``) and gives the other
methods as closures over the class's fields, made without compiling anything.  They
behave as the generated ones do:

- ``__repr__``: ``Name(field=value, ...)`` over the fields with ``repr=True``, ``...``
  for a recursive reference;
- ``__eq__``: ``NotImplemented`` unless both are of the same class, else the tuples
  of the fields with ``compare=True`` compared;
- ``__hash__`` (``eq`` and ``frozen``): the hash of the tuple of the fields with
  ``hash=True``, or ``hash=None`` and ``compare=True``; ``eq`` without ``frozen``
  makes the class unhashable, as the standard one does;
- frozen: assigning or deleting a field raises ``dataclasses.FrozenInstanceError``
  (any attribute, on an instance of the class itself); with ``slots``, pickling
  through ``__getstate__``/``__setstate__``.

Where the class asks for what this does not cover (``order``, ``unsafe_hash``,
``InitVar`` fields, its own dunder methods, a dataclass base) the standard decorator
does all of it.  Type checkers see the standard decorator itself.
"""

from __future__ import annotations

import dataclasses
import inspect
from _thread import get_ident
from operator import attrgetter
from typing import TYPE_CHECKING, Any

__all__ = ["dataclass", "field"]

field = dataclasses.field

#: Methods a class may define itself that make the standard decorator do everything
#: (its rules for them are many); a class's own ``__init__`` or ``__repr__`` is kept.
_OWN = ("__eq__", "__hash__", "__setattr__", "__delattr__", "__getstate__",
        "__setstate__")


class _Factory:
    """The default of a parameter whose field has a ``default_factory``."""

    def __repr__(self) -> str:
        return "<factory>"


_FACTORY = _Factory()


def _dataclass_bases(cls: type) -> list[Any]:
    """The ``__dataclass_params__`` of the dataclasses ``cls`` derives from."""
    return [base.__dict__["__dataclass_params__"] for base in cls.__mro__[1:]
            if "__dataclass_params__" in base.__dict__]


def _standard_only(cls: type, order: bool, unsafe_hash: bool, frozen: bool) -> bool:
    """True where the standard decorator must do everything (or raise its error)."""
    annotations = inspect.get_annotations(cls)
    return (order or unsafe_hash or any(name in cls.__dict__ for name in _OWN)
            or any(base.frozen != frozen for base in _dataclass_bases(cls))
            or any("InitVar" in str(kind) for kind in annotations.values()))


def _key(names: tuple[str, ...]) -> Any:
    """A function of an instance: the tuple of its ``names`` attributes."""
    if len(names) > 1:
        return attrgetter(*names)  # a tuple already
    if len(names) == 1:
        one = attrgetter(names[0])
        return lambda self: (one(self),)
    return lambda self: ()


def _repr_of(names: tuple[str, ...]) -> Any:
    getters = tuple((f"{name}=", attrgetter(name)) for name in names)
    running: set[tuple[int, int]] = set()

    def __repr__(self: Any) -> str:
        mark = id(self), get_ident()
        if mark in running:
            return "..."
        running.add(mark)
        try:
            body = ", ".join(label + repr(get(self)) for label, get in getters)
        finally:
            running.discard(mark)
        return f"{self.__class__.__qualname__}({body})"

    return __repr__


def _eq_of(names: tuple[str, ...]) -> Any:
    key = _key(names)

    def __eq__(self: Any, other: Any) -> Any:
        if other.__class__ is self.__class__:
            return key(self) == key(other)
        return NotImplemented

    return __eq__


def _hash_of(names: tuple[str, ...]) -> Any:
    key = _key(names)

    def __hash__(self: Any) -> int:
        return hash(key(self))

    return __hash__


def _parameter(f: dataclasses.Field[Any], names: dict[str, Any]) -> str:
    """The parameter of ``__init__`` for field ``f`` (its default put in ``names``)."""
    if f.default is not dataclasses.MISSING:
        names[f"__envelope_default_{f.name}__"] = f.default
        return f"{f.name}=__envelope_default_{f.name}__"
    if f.default_factory is not dataclasses.MISSING:
        return f"{f.name}=__envelope_factory__"
    return f.name


def _value(f: dataclasses.Field[Any], names: dict[str, Any]) -> str | None:
    """What ``__init__`` sets field ``f`` to (None: nothing)."""
    default = f"__envelope_default_{f.name}__"
    if f.default_factory is not dataclasses.MISSING:
        names[default] = f.default_factory
        return (f"{default}() if {f.name} is __envelope_factory__ else {f.name}"
                if f.init else f"{default}()")
    if f.init:
        return f.name
    if f.default is not dataclasses.MISSING:
        names[default] = f.default
        return default
    return None


def _init_of(cls: type, fields: tuple[dataclasses.Field[Any], ...], frozen: bool) -> Any:
    """``__init__`` as the standard decorator writes it, compiled once."""
    names: dict[str, Any] = {"__envelope_factory__": _FACTORY,
                             "__envelope_setattr__": object.__setattr__}
    positional: list[str] = []
    keyword: list[str] = []
    body: list[str] = []
    for f in fields:
        if f.init:
            param = _parameter(f, names)
            if f.kw_only:
                keyword.append(param)
            elif param == f.name and positional and positional[-1].count("="):
                raise TypeError(f"non-default argument {f.name!r} follows default argument")
            else:
                positional.append(param)
        value = _value(f, names)
        if value is not None:
            body.append(f"__envelope_setattr__(self, {f.name!r}, {value})" if frozen
                        else f"self.{f.name} = {value}")
    if hasattr(cls, "__post_init__"):
        body.append("self.__post_init__()")
    params = ", ".join(["self", *positional, *(["*", *keyword] if keyword else [])])
    text = (f"def __envelope_make__({', '.join(names)}):\n"
            f" def __init__({params}):\n"
            + "".join(f"  {line}\n" for line in body or ["pass"])
            + " return __init__\n")
    space: dict[str, Any] = {}
    exec(text, {}, space)  # the one compile of the class
    init = space["__envelope_make__"](**names)
    init.__annotations__ = {**{f.name: f.type for f in fields if f.init}, "return": None}
    return init


def _frozen_of(cls: type, names: frozenset[str]) -> tuple[Any, Any, Any, Any]:
    """``__setattr__``, ``__delattr__``, ``__getstate__``, ``__setstate__`` of a frozen
    class, as the standard decorator gives them."""
    from dataclasses import FrozenInstanceError

    def __setattr__(self: Any, name: str, value: Any) -> None:
        if type(self) is cls or name in names:
            raise FrozenInstanceError(f"cannot assign to field {name!r}")
        super(cls, self).__setattr__(name, value)  # type: ignore[arg-type]

    def __delattr__(self: Any, name: str) -> None:
        if type(self) is cls or name in names:
            raise FrozenInstanceError(f"cannot delete field {name!r}")
        super(cls, self).__delattr__(name)  # type: ignore[arg-type]

    def __getstate__(self: Any) -> list[Any]:
        return [getattr(self, f.name) for f in dataclasses.fields(self)]

    def __setstate__(self: Any, state: list[Any]) -> None:
        for f, value in zip(dataclasses.fields(self), state, strict=False):
            object.__setattr__(self, f.name, value)

    return __setattr__, __delattr__, __getstate__, __setstate__


def _methods(new: type, init: bool, repr: bool, eq: bool, frozen: bool,
             slots: bool) -> dict[str, Any]:
    """The methods the standard decorator would generate for ``new``, by name."""
    fields = dataclasses.fields(new)
    methods: dict[str, Any] = {}
    if init:
        methods["__init__"] = _init_of(new, fields, frozen)
    if repr:
        methods["__repr__"] = _repr_of(tuple(f.name for f in fields if f.repr))
    if eq:
        methods["__eq__"] = _eq_of(tuple(f.name for f in fields if f.compare))
        if frozen:
            methods["__hash__"] = _hash_of(tuple(
                f.name for f in fields if (f.compare if f.hash is None else f.hash)))
    if frozen:
        setter, deleter, getstate, setstate = _frozen_of(new, frozenset(f.name for f in fields))
        methods.update(__setattr__=setter, __delattr__=deleter)
        if slots:
            methods.update(__getstate__=getstate, __setstate__=setstate)
    return methods


def _process(cls: type, init: bool, repr: bool, eq: bool, order: bool, unsafe_hash: bool,
             frozen: bool, match_args: bool, kw_only: bool, slots: bool,
             weakref_slot: bool) -> type:
    if _standard_only(cls, order, unsafe_hash, frozen):
        return dataclasses.dataclass(  # type: ignore[no-any-return, call-overload]
            cls, init=init, repr=repr, eq=eq, order=order, unsafe_hash=unsafe_hash,
            frozen=frozen, match_args=match_args, kw_only=kw_only, slots=slots,
            weakref_slot=weakref_slot)
    documented = bool(cls.__doc__)
    bases = _dataclass_bases(cls)  # all frozen as this one is, or none
    own = {name for name in ("__init__", "__repr__") if name in cls.__dict__}
    # the standard decorator collects the fields and makes the slots; it compiles nothing
    # (told that this class is not frozen, so its frozen bases are let be so meanwhile)
    for base in bases:
        base.frozen = False
    try:
        new: type = dataclasses.dataclass(  # type: ignore[call-overload]
            cls, init=False, repr=False, eq=False, frozen=False, match_args=match_args,
            kw_only=kw_only, slots=slots, weakref_slot=weakref_slot)
    finally:
        for base in bases:
            base.frozen = frozen
    for name, method in _methods(new, init and "__init__" not in own,
                                 repr and "__repr__" not in own, eq, frozen, slots).items():
        method.__qualname__ = f"{new.__qualname__}.{name}"
        setattr(new, name, method)
    if eq and not frozen:
        new.__hash__ = None  # type: ignore[assignment]
    if not documented and init:
        new.__doc__ = new.__name__ + str(inspect.signature(new)).replace(" -> None", "")
    params = new.__dataclass_params__  # type: ignore[attr-defined]
    params.init, params.repr, params.eq, params.frozen = init, repr, eq, frozen
    return new


if TYPE_CHECKING:
    from dataclasses import dataclass as dataclass
else:
    def dataclass(cls=None, /, *, init=True, repr=True, eq=True, order=False,
                  unsafe_hash=False, frozen=False, match_args=True, kw_only=False,
                  slots=False, weakref_slot=False):
        """``dataclasses.dataclass``, made with one compile per class (see the
        module's notes)."""

        def wrap(cls):
            return _process(cls, init, repr, eq, order, unsafe_hash, frozen, match_args,
                            kw_only, slots, weakref_slot)

        return wrap if cls is None else wrap(cls)
