"""The engine fingerprint (``envelope.engine_version``) is the hash of the package's
sources, and the copy kept between runs never outlives a change to them: a source
written (even to the same size with its modification time put back), added or removed
gives a new fingerprint.  The case file's own hash (``input_sha256``) is SHA-256 as
hashlib computes it."""

from __future__ import annotations

import hashlib
import os
import sys
from pathlib import Path

import pytest

import envelope
from envelope import fingerprint as fp


def _reference(root: Path) -> str:
    """The definition, computed independently: SHA-256 over every ``.py`` file sorted by
    path, then every ``.toml`` file, each as its relative path and its bytes."""
    h = hashlib.sha256()
    for pattern in ("*.py", "*.toml"):
        for path in sorted(p for p in root.rglob(pattern) if "__pycache__" not in p.parts):
            h.update(path.relative_to(root).as_posix().encode())
            h.update(path.read_bytes())
    return h.hexdigest()[:12]


@pytest.fixture
def package(tmp_path: Path) -> Path:
    root = tmp_path / "pkg"
    (root / "sub").mkdir(parents=True)
    (root / "data").mkdir()
    (root / "__pycache__").mkdir()
    (root / "__init__.py").write_text("A = 1\n")
    (root / "sub" / "b.py").write_text("B = 2\n")
    (root / "sub_a.py").write_text("C = 3\n")  # sorts after the folder "sub" by parts
    (root / "data" / "d.toml").write_text("x = 1\n")
    (root / "notes.txt").write_text("not hashed\n")
    (root / "__pycache__" / "stray.py").write_text("not hashed\n")
    return root


@pytest.fixture(autouse=True)
def _bytecode_writing_on(monkeypatch: pytest.MonkeyPatch) -> None:
    monkeypatch.setattr(sys, "dont_write_bytecode", False)


def test_engine_version_carries_the_hash_of_the_package_sources(tmp_path: Path) -> None:
    value = fp.fingerprint(fp.PACKAGE, tmp_path / "cache.txt")
    assert value == _reference(fp.PACKAGE)
    assert envelope.engine_version() == f"{envelope.__version__}+{value}"


def test_the_file_order_is_that_of_sorted_paths(package: Path) -> None:
    names = [rel for rel, _, _ in fp.sources(package)]
    assert names == ["__init__.py", "sub/b.py", "sub_a.py", "data/d.toml"]
    assert fp.fingerprint(package, package.parent / "c.txt") == _reference(package)


def test_the_kept_fingerprint_is_used_while_the_sources_are_unchanged(package: Path) -> None:
    cache = package.parent / "cache" / "fingerprint.txt"
    first = fp.fingerprint(package, cache)
    assert cache.is_file()
    value, _, key = cache.read_text().partition("\n")
    assert value == first
    cache.write_text(f"{'f' * 12}\n{key}")  # a kept value is returned without hashing
    assert fp.fingerprint(package, cache) == "f" * 12


def test_a_source_rewritten_to_the_same_size_and_time_gives_a_new_fingerprint(
        package: Path) -> None:
    cache = package.parent / "fingerprint.txt"
    before = fp.fingerprint(package, cache)
    target = package / "sub" / "b.py"
    st = target.stat()
    target.write_text("B = 7\n")  # same size
    os.utime(target, ns=(st.st_atime_ns, st.st_mtime_ns))  # modification time put back
    after = fp.fingerprint(package, cache)
    assert after != before
    assert after == _reference(package)
    assert cache.read_text().partition("\n")[0] == after


@pytest.mark.parametrize("change", ["add", "remove", "rename", "toml"])
def test_a_source_added_removed_or_renamed_gives_a_new_fingerprint(
        package: Path, change: str) -> None:
    cache = package.parent / "fingerprint.txt"
    before = fp.fingerprint(package, cache)
    if change == "add":
        (package / "sub" / "new.py").write_text("")
    elif change == "remove":
        (package / "sub_a.py").unlink()
    elif change == "rename":
        (package / "sub_a.py").rename(package / "sub_c.py")
    else:
        (package / "data" / "d.toml").write_text("x = 2\n")
    after = fp.fingerprint(package, cache)
    assert after != before
    assert after == _reference(package)


def test_files_that_are_not_sources_do_not_change_it(package: Path) -> None:
    cache = package.parent / "fingerprint.txt"
    before = fp.fingerprint(package, cache)
    (package / "notes.txt").write_text("changed\n")
    (package / "__pycache__" / "stray.py").write_text("changed\n")
    assert fp.fingerprint(package, cache) == before


def test_a_cache_that_cannot_be_written_or_read_is_ignored(package: Path) -> None:
    blocker = package.parent / "a-file"
    blocker.write_text("")
    cache = blocker / "fingerprint.txt"  # its folder is a file: neither read nor written
    assert fp.fingerprint(package, cache) == _reference(package)
    garbled = package.parent / "garbled.txt"
    garbled.write_bytes(b"\xff\xfe not a cache")
    assert fp.fingerprint(package, garbled) == _reference(package)


def test_nothing_is_kept_when_bytecode_writing_is_off(package: Path,
                                                      monkeypatch: pytest.MonkeyPatch) -> None:
    monkeypatch.setattr(sys, "dont_write_bytecode", True)
    cache = package.parent / "fingerprint.txt"
    assert fp.fingerprint(package, cache) == _reference(package)
    assert not cache.exists()


def test_the_cache_lives_beside_the_package_bytecode() -> None:
    from importlib.util import cache_from_source

    where = fp.cache_path()
    assert where.parent == Path(cache_from_source(str(fp.PACKAGE / "__init__.py"))).parent
    assert where.suffix not in (".py", ".toml")


@pytest.mark.parametrize("size", [0, 1, 55, 56, 64, 1000, 1 << 20])
def test_the_input_hash_is_hashlibs_sha256(size: int) -> None:
    from envelope.files import sha256_hex

    data = bytes((i * 7 + size) % 256 for i in range(size))
    assert sha256_hex(data) == hashlib.sha256(data).hexdigest()
