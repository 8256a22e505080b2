"""Stand-in decision functions for the runner tests: they misbehave on purpose, by claim text."""
from __future__ import annotations

import os
import signal
import time

from verifier.model.verdict import Verdict
from verifier.model.claim import Claim


def misbehave(claim: Claim, timeout: float) -> Verdict:
    text = claim.text
    if text == "sleep forever":
        while True:
            time.sleep(1)
    if text == "allocate 8 GB":
        block = bytearray(8 * 1024**3)  # fails under the worker's address-space limit
        return Verdict(claim, "proved", None, f"allocated {len(block)} bytes", None, None, (), 0.0)
    if text == "kill myself":
        os.kill(os.getpid(), signal.SIGKILL)
    if text == "raise":
        raise ValueError("deliberate failure")
    if text.startswith("nap "):
        time.sleep(float(text.split()[1]))
    if text.startswith("spin "):  # computes (uses CPU) for that many CPU seconds, ignoring its time limit
        end = time.process_time() + float(text.split()[1])
        while time.process_time() < end:
            pass
    return Verdict(claim, "proved", "expansion", f"decided in process {os.getpid()}", None, None, (), 0.0)


def kills_the_fork_server(claim: Claim, timeout: float) -> Verdict:
    """Like ``misbehave``; "kill the fork server" kills the process that forked this worker, when that
    process is a multiprocessing fork server (never the test process itself)."""
    if claim.text == "kill the fork server":
        parent = os.getppid()
        try:
            with open(f"/proc/{parent}/cmdline", "rb") as handle:
                command = handle.read()
        except OSError:
            command = b""
        if b"forkserver" in command:
            os.kill(parent, signal.SIGKILL)
            time.sleep(0.2)
    return misbehave(claim, timeout)


def slow_sampling(seconds: float) -> str:
    """A stand-in for a long accuracy estimate."""
    time.sleep(seconds)
    return f"slept {seconds}"
