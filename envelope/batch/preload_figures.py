"""Imported by the fork server of a batch with figures: :mod:`envelope.batch.preload`,
then matplotlib and the figure's modules the lean way (:mod:`envelope.leanimport`); a
failure is kept, not raised (:func:`envelope.batch.forkserver.warm`)."""

from __future__ import annotations

import gc

from envelope.batch import preload  # noqa: F401  (first: before numpy, see there)
from envelope.batch.forkserver import warm

warm(("envelope.leanimport",), lean=True)
gc.freeze()
