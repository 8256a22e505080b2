"""The first module the worker fork server imports: it makes the server ignore Ctrl-C before the heavy
imports that follow.

A Ctrl-C goes to the whole process group; the fork server would otherwise print a KeyboardInterrupt
traceback from the middle of importing sympy.  The parent cannot pass the ignored signal on: the fork
server is started through an exec that resets signal handlers.  The server sets the same itself, but only
after its preloads; its workers inherit it.  Nothing else imports this module.
"""
from __future__ import annotations

import signal
import sys

if sys.argv[:1] == ["-c"] and "multiprocessing.forkserver" in sys.modules:  # only inside the fork server
    signal.signal(signal.SIGINT, signal.SIG_IGN)
