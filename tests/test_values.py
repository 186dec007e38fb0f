"""``envelope.values.dataclass`` (the engine's value classes, compiled once per class)
behaves as the standard ``dataclasses.dataclass`` it stands in for: the same
``__init__`` (positional, defaults, factories, keyword-only, ``__post_init__``), repr,
equality, hash, frozen errors, pickling, ``replace`` and ``fields``.  Each check builds
the same class with both decorators and compares them."""

from __future__ import annotations

import copy
import dataclasses
import inspect
import pickle
from typing import Any, ClassVar

import numpy as np
import pytest

from envelope import model, values
from envelope.values import dataclass, field

OPTIONS = [dict(frozen=True, slots=True), dict(frozen=True), dict(slots=True), {},
           dict(frozen=True, slots=True, eq=False), dict(frozen=True, repr=False),
           dict(frozen=True, slots=True, kw_only=True)]


def _pair(build: Any) -> tuple[type, type]:
    """The class ``build(decorator)`` makes with the standard decorator and with ours."""
    return build(dataclasses.dataclass), build(dataclass)


def _sample(deco: Any, **options: Any) -> type:
    @deco(**options)
    class Sample:
        """A sample value."""

        kind: ClassVar[str] = "sample"
        a: int
        b: float
        c: str = "c"
        d: tuple[int, ...] = field(default_factory=tuple)
        e: list[int] = field(default_factory=list, compare=False)
        f: float = field(default=2.5, repr=False)
        g: int = field(default=7, hash=False)
        h: int = field(init=False, default=3)
        i: tuple[int, ...] = field(init=False, default_factory=lambda: (1,))

    return Sample


def _construct(cls: type, kw_only: bool) -> Any:
    return cls(a=1, b=2.0) if kw_only else cls(1, 2.0)


@pytest.mark.parametrize("options", OPTIONS, ids=[str(o) for o in OPTIONS])
def test_a_sample_class_behaves_as_the_standard_one(options: dict[str, Any]) -> None:
    std, ours = _pair(lambda deco: _sample(deco, **options))
    kw = bool(options.get("kw_only"))
    x, y = _construct(std, kw), _construct(ours, kw)
    if options.get("repr", True):
        assert repr(x) == repr(y)
    assert [f.name for f in dataclasses.fields(x)] == [f.name for f in dataclasses.fields(y)]
    assert dataclasses.asdict(x) == dataclasses.asdict(y)
    assert str(inspect.signature(std)) == str(inspect.signature(ours))
    assert std.__match_args__ == ours.__match_args__
    assert ("__slots__" in vars(std)) == ("__slots__" in vars(ours))
    assert std.__dataclass_params__.frozen == ours.__dataclass_params__.frozen
    assert std.__dataclass_params__.eq == ours.__dataclass_params__.eq
    assert std.__dataclass_params__.repr == ours.__dataclass_params__.repr
    y2 = _construct(ours, kw)
    x2 = _construct(std, kw)
    assert (x == x2) == (y == y2)
    assert (y == _construct(std, kw)) is False  # another class is never equal
    assert y.__eq__(1) is NotImplemented or not options.get("eq", True)
    if std.__hash__ is None:
        assert ours.__hash__ is None
    elif options.get("eq", True):
        assert hash(x) == hash(y)  # the same tuple of hashed fields
    else:
        assert hash(y) == object.__hash__(y)
    changed_std = dataclasses.replace(x, c="z", g=9)
    changed = dataclasses.replace(y, c="z", g=9)
    assert (changed_std == x) == (changed == y)
    assert dataclasses.astuple(changed_std) == dataclasses.astuple(changed)


@pytest.mark.parametrize("options", OPTIONS, ids=[str(o) for o in OPTIONS])
def test_frozen_and_unfrozen_fields_and_pickling_as_the_standard_one(
        options: dict[str, Any]) -> None:
    std, ours = _pair(lambda deco: _sample(deco, **options))
    kw = bool(options.get("kw_only"))
    for cls in (std, ours):
        obj = _construct(cls, kw)
        if options.get("frozen"):
            with pytest.raises(dataclasses.FrozenInstanceError, match="cannot assign to field 'a'"):
                obj.a = 5
            with pytest.raises(dataclasses.FrozenInstanceError, match="cannot delete field 'b'"):
                del obj.b
            if cls is ours or not options.get("slots"):
                # (the standard one, with slots, raises TypeError from its super() call)
                with pytest.raises(dataclasses.FrozenInstanceError):
                    obj.other = 1
        else:
            obj.a = 5
            assert obj.a == 5
    x, y = _construct(std, kw), _construct(ours, kw)
    globals()["Sample"] = ours  # pickle finds the class by name
    ours.__qualname__ = "Sample"
    try:
        back = pickle.loads(pickle.dumps(y))
    finally:
        del globals()["Sample"]
    assert dataclasses.astuple(back) == dataclasses.astuple(y)
    assert dataclasses.astuple(copy.deepcopy(y)) == dataclasses.astuple(x)


@pytest.mark.parametrize("deco", [dataclasses.dataclass, dataclass])
def test_the_same_errors_for_a_missing_or_an_unknown_argument(deco: Any) -> None:
    cls = _sample(deco, frozen=True, slots=True)
    with pytest.raises(TypeError, match="missing 1 required positional argument: 'b'"):
        cls(1)
    with pytest.raises(TypeError, match="unexpected keyword argument 'z'"):
        cls(1, 2.0, z=1)
    with pytest.raises(TypeError, match="non-default argument 'y' follows default argument"):
        @deco
        class Bad:
            x: int = 1
            y: int  # type: ignore[misc]
    with pytest.raises(ValueError, match="mutable default"):
        @deco
        class Mutable:
            x: list[int] = []  # noqa: RUF012


def test_factories_run_per_instance_and_post_init_runs_last() -> None:
    calls: list[str] = []

    @dataclass(frozen=True, slots=True)
    class Box:
        items: list[int] = field(default_factory=list)
        total: int = field(init=False, repr=False, compare=False)

        def __post_init__(self) -> None:
            calls.append("post")
            object.__setattr__(self, "total", sum(self.items))

    a, b = Box(), Box()
    assert a.items is not b.items
    assert Box([1, 2]).total == 3 and calls == ["post"] * 3
    assert repr(Box([4])) == "test_factories_run_per_instance_and_post_init_runs_last." \
        "<locals>.Box(items=[4])"


def test_recursive_repr_and_array_fields_as_the_standard_one() -> None:
    std, ours = _pair(lambda deco: deco(type("Node", (), {"__annotations__": {"x": "object"}})))
    for cls in (std, ours):
        node = cls([])
        node.x.append(node)
        assert repr(node) == "Node(x=[...])"
        arrays = cls(np.arange(3))
        with pytest.raises(ValueError, match="ambiguous"):
            _ = arrays == cls(np.arange(3))


def test_own_methods_are_kept_and_dataclass_bases_are_followed() -> None:
    @dataclass(frozen=True, slots=True)
    class Own:
        x: int

        def __repr__(self) -> str:
            return "own"

    @dataclass(frozen=True, slots=True)
    class Base:
        x: int

    @dataclass(frozen=True, slots=True)
    class Child(Base):
        y: int = 0

    assert repr(Own(1)) == "own" and Own(1) == Own(1) and hash(Own(1)) == hash((1,))
    assert Child(1, 2) == Child(1, 2) and Child(1, 2) != Child(1, 3)
    assert repr(Child(1, 2)).endswith("Child(x=1, y=2)") and hash(Child(1, 2)) == hash((1, 2))
    assert Base.__dataclass_params__.frozen and Child.__dataclass_params__.frozen
    with pytest.raises(dataclasses.FrozenInstanceError):
        Child(1, 2).x = 3
    for deco in (dataclasses.dataclass, dataclass):
        with pytest.raises(TypeError, match="cannot inherit non-frozen dataclass from a frozen"):
            @deco
            class Loose(Base):
                z: int = 0


def test_a_class_with_its_own_equality_gets_the_standard_methods() -> None:
    @dataclass(frozen=True)
    class Eq:
        x: int

        def __eq__(self, other: object) -> bool:
            return True

    assert values._standard_only(Eq, False, False, True)
    assert Eq(1) == Eq(2) and hash(Eq(1)) == hash((1,))


def test_the_engine_value_classes_compile_only_their_init() -> None:
    for cls in (model.Beam, model.Load, model.Span):
        own_repr = cls is model.Beam  # a one-line repr of its own, kept
        assert (cls.__repr__.__code__.co_filename == model.__file__) is own_repr
        assert (cls.__repr__.__code__.co_filename == values.__file__) is not own_repr
        assert cls.__eq__.__code__.co_filename == values.__file__
        assert cls.__setattr__.__code__.co_filename == values.__file__
        assert cls.__init__.__code__.co_filename == "<string>"
        assert cls.__dataclass_params__.frozen and cls.__hash__ is not None
