"""Read one case file (TOML) into a validated, frozen :class:`~envelope.model.Beam`.

This package is the only place input is checked: every value is read, converted
to the consistent units of the file's system (SI: m, kN; US: ft, kip; see
:mod:`envelope.units`) and validated once, so nothing downstream re-checks.
Every problem raises :class:`~envelope.errors.CaseError` with a one-line
message ``<file>: <key path>: <problem>``.

Numbering in key paths: array items are counted from 1, the way engineers
count spans and supports, so ``spans[1]`` is the first span, ``supports[5]``
the fifth joint from the left and ``loads[3]`` the third ``[[loads]]`` item in
the file.  The same 1-based numbers are used for span numbers inside
``spans = [...]`` of a load.  (Inside the model, ``Load.span`` is 0-based.)

Plain numbers are read in the system's customary unit for the quantity (MPa
for E, mm^4 for I in SI, ...); strings such as ``"24 ft"`` are read with their
own unit.  Booleans are never numbers, NaN and infinity are refused, and
unknown keys are refused at every level with the nearest valid key suggested.

The modules, one job each:

- :mod:`~envelope.casefile.reader`: TOML shapes and quantities (the unit system
  is required to read any quantity);
- :mod:`~envelope.casefile.document`: the entry points, top-level keys, ``units``
  and ``id``, and the order the tables are read in;
- :mod:`~envelope.casefile.geometry`: ``[section]``, ``[[spans]]``, ``[[supports]]``;
- :mod:`~envelope.casefile.loads`: ``[[loads]]``;
- :mod:`~envelope.casefile.options`: ``[cases]``, ``[combinations]``,
  ``[patterning]``, ``[output]``;
- :mod:`~envelope.casefile.design`: ``[design]``.
"""

from __future__ import annotations

from envelope.casefile.document import ID_PATTERN, TOP_KEYS, load_case, parse_case

__all__ = ["ID_PATTERN", "TOP_KEYS", "load_case", "parse_case"]
