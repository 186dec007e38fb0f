"""Imported by the batch's fork server (:mod:`envelope.batch.forkserver`) before it forks
any worker, so that each worker starts warm.  Never imported elsewhere: it changes the
process it runs in.

In order: one thread per numerical library (``THREAD_VARIABLES``, unless the user set
them), before numpy loads; Ctrl-C ignored (the workers, forked from here, inherit it:
the coordinator handles Ctrl-C); a parent-death signal to the coordinator, which
started this server, on Linux, so that the server dies with it even when it is killed
by SIGKILL (and its workers with it, by theirs); this process's id, which each worker
checks its parent against (:data:`envelope.batch.forkserver.SERVER`); then the engine
and pyarrow.

multiprocessing ignores a preload that fails with ImportError and the server dies of any
other error, so nothing is raised here (:func:`envelope.batch.forkserver.warm`), and each
worker imports the same modules again in ``envelope.batch.local._init_worker``, where a
failure shows as it does with spawned workers (the worker's error, its beams failed).
"""

from __future__ import annotations

import gc
import os
import signal

from envelope.batch import forkserver
from envelope.batch.forkserver import warm
from envelope.batch.local import THREAD_VARIABLES, die_with_parent

for _name in THREAD_VARIABLES:
    os.environ.setdefault(_name, "1")
signal.signal(signal.SIGINT, signal.SIG_IGN)
die_with_parent()  # the coordinator's: see the module's help
forkserver.SERVER = os.getpid()
warm(("envelope.api", "envelope.store"))
# what is imported now stays: the workers' garbage collections need not visit it (nor
# copy the pages they would write to)
gc.freeze()
