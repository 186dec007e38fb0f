"""The whole case file: the entry points, the top-level keys and the order of reading.

``units`` is read first, with a reader that knows no unit system; every other
table is read by a :class:`~envelope.casefile.reader.Reader` made with that
system.  The tables are then read in file-contract order (geometry, cases,
loads, options, design) and the beam is checked for stability last.
"""

from __future__ import annotations

import os
import re
import tomllib
from pathlib import Path
from typing import Any

from envelope import config, stability
from envelope.casefile import geometry, loads, options, redistribution
from envelope.casefile.reader import Reader, TomlReader, misplaced_hint, one_line
from envelope.errors import CaseError
from envelope.files import UnreadableFile, read_regular, sha256_hex
from envelope.model import Beam
from envelope.units import SYSTEMS, UnitSystem

TOP_KEYS = ("id", "title", "units", "section", "spans", "supports", "cases", "loads",
            "combinations", "patterning", "output", "design")
ID_PATTERN = re.compile(r"[A-Za-z0-9._-]{1,64}")


def load_case(path: str | os.PathLike[str], parsed: tuple[str, bytes] | None = None) -> Beam:
    """Read, check and convert the case file at ``path``.

    ``Beam.input_sha256`` is the SHA-256 of the file's raw bytes, so a result
    can be traced to the exact input it came from.  A UTF-8 byte-order mark is
    accepted (some editors write one).  Only a regular file of at most
    ``config.CASE_FILE_MAX_BYTES`` is read (a FIFO or a device is refused without
    waiting on it), and values nested more than ``config.CASE_NESTING_MAX`` deep are
    refused.

    Parameters
    ----------
    path : str or path-like
        A TOML case file (docs/case-format.md).
    parsed : (str, bytes), optional
        The SHA-256 of a file's bytes and their TOML document, pickled, as a batch's
        coordinator read them (:func:`envelope.batch.discovery.identify`): taken instead
        of parsing the file again when the file still holds those bytes (the same
        hash), so a batch parses each file once.

    Returns
    -------
    Beam
        The checked beam, frozen, in the consistent units of its system.

    Raises
    ------
    envelope.errors.CaseError
        For any bad input, naming the file, the key path and the problem.
    """
    source = os.fspath(path)
    try:
        raw = read_regular(source, config.CASE_FILE_MAX_BYTES)
    except UnreadableFile as exc:
        raise CaseError(source, "", str(exc)) from None
    sha256 = sha256_hex(raw)
    try:
        text = raw.decode("utf-8-sig")
    except UnicodeDecodeError as exc:
        raise CaseError(
            source, "",
            f"the file is not UTF-8 text (byte 0x{raw[exc.start]:02x} at offset {exc.start})",
        ) from None
    try:
        if parsed is not None and parsed[0] == sha256:
            import pickle  # a document the batch's own coordinator parsed from these bytes

            data = pickle.loads(parsed[1])
        else:
            data = tomllib.loads(text)
    except tomllib.TOMLDecodeError as exc:
        raise CaseError(source, "", f"not valid TOML: {one_line(str(exc))}") from None
    except RecursionError:  # the parser recurses once per level of nesting
        data = None
    if data is None or nesting(data) > config.CASE_NESTING_MAX:
        raise CaseError(source, "", f"values nested more than {config.CASE_NESTING_MAX} "
                                    "levels deep (arrays or tables inside each other); "
                                    "a case file needs a few")
    if not data:
        raise CaseError(source, "", "the file is empty (no keys, only blanks or comments)")
    return parse_case(data, source, sha256)


def nesting(data: Any) -> int:
    """How deep arrays and tables are nested in ``data`` (the document itself is 1, a
    ``[[spans.sections]]`` item 5), counted without recursion."""
    deepest = 0
    stack: list[tuple[Any, int]] = [(data, 1)]
    while stack:
        value, depth = stack.pop()
        deepest = max(deepest, depth)
        children = value.values() if isinstance(value, dict) else value
        stack.extend((v, depth + 1) for v in children if isinstance(v, dict | list))
    return deepest


def parse_case(data: dict[str, Any], source: str, sha256: str = "") -> Beam:
    """Check and convert an already-parsed case file (the TOML document as a dict).

    ``source`` names the file in every message; the default id is its stem.
    """
    toml = TomlReader(source)
    toml.table(data, "")
    toml.known_keys(data, "", TOP_KEYS)
    r = Reader(source, units(toml, data))
    beam_id = read_id(r, data)
    title = r.string(data["title"], "title") if "title" in data else ""
    default = geometry.default_section(r, data)
    spans = geometry.spans(r, data, default)
    supports = geometry.supports(r, data, spans)
    cases = options.cases(r, data)
    beam_loads = loads.loads(r, data, spans, cases)
    loads.check_settled_supports(r, beam_loads, supports)
    combinations = options.combinations(r, data, cases)
    options.check_reductions(r, cases, combinations)
    patterning = options.patterning(r, data)
    output = options.output(r, data)
    design_table = None
    if "design" in data:  # its readers (and envelope.design) load only when needed
        from envelope.casefile.design import design

        design_table = design(r, data, tuple(sp.length for sp in spans))
    redistribution.check_supports(r, design_table, spans, supports)
    geometry.check_depths(r, spans, design_table)
    stability.check(spans, supports, source, length_unit=r.length_unit())
    return Beam(
        id=beam_id, title=title, units=r.system, spans=spans, supports=supports,
        cases=cases, loads=beam_loads, combinations=combinations, patterning=patterning,
        output=output, design=design_table, source=source, input_sha256=sha256,
    )


def units(toml: TomlReader, data: dict[str, Any]) -> UnitSystem:
    """The unit system named by ``units`` (required): read before any quantity."""
    if "units" not in data:
        toml.fail("units", 'required: units = "SI" or units = "US"'
                           + misplaced_hint(data, "units"))
    name = toml.string(data["units"], "units")
    if name not in SYSTEMS:
        toml.fail("units", f'unknown unit system {name!r}; use "SI" or "US"')
    return SYSTEMS[name]


def read_id(r: TomlReader, data: dict[str, Any]) -> str:
    """The beam's id: ``id`` if given, else the file's stem; a safe file name either way."""
    if "id" in data:
        beam_id = data["id"]  # its own pattern below, which refuses control characters
        if not isinstance(beam_id, str):
            r.string(beam_id, "id")
        given = "id"
    else:
        beam_id = Path(r.source).stem
        given = "the file name"
    if not ID_PATTERN.fullmatch(beam_id) or beam_id in (".", ".."):
        hint = "" if given == "id" else "; give an id in the file"
        r.fail("id", f"{given} {beam_id!r} is not a valid id: use 1 to 64 letters, "
                     f"digits, '.', '_' or '-', and not '.' or '..'{hint}")
    return beam_id
