"""Service configuration: limits, the home folder, where Redis is.

Everything the embedded mode keeps lives under one home folder, named by the
environment variable ``NIGHTJAR_HOME`` (default ``~/.nightjar``):

    <home>/redis/          Redis data (append-only file on)
    <home>/token           the owner token the command line uses (mode 600)
    <home>/server.json     where the running embedded service listens
    <home>/logs/           logs of the embedded service's processes

Every limit can be set through an environment variable (``NIGHTJAR_<NAME>``
in capitals, e.g. ``NIGHTJAR_MAX_TIME_LIMIT=600``).
"""

from __future__ import annotations

import os
from dataclasses import dataclass, fields, replace
from pathlib import Path

QUEUE_INTERACTIVE = "nj-interactive"
QUEUE_BATCH = "nj-batch"
QUEUES = (QUEUE_INTERACTIVE, QUEUE_BATCH)   # workers listen in this order

# The shortest time limit a job may ask for, in seconds: the API, submit and
# prove refuse less alike (a usage error on the command line).
MIN_TIME_LIMIT = 0.01


def home_dir() -> Path:
    """The home folder (``NIGHTJAR_HOME`` or ``~/.nightjar``)."""
    h = os.environ.get("NIGHTJAR_HOME")
    return Path(h).expanduser().resolve() if h else Path.home() / ".nightjar"


@dataclass(frozen=True)
class Config:
    redis_url: str | None = None
    default_time_limit: float = 10.0      # seconds per job when none is asked for
    max_time_limit: float = 300.0         # a job may not ask for more
    grace_seconds: float = 10.0           # hard stop = time limit + checking allowance + grace (queue.hard_stop_seconds)
    memory_mb: int = 4096                 # address-space cap of one work horse
    max_upload_bytes: int = 16 * 1024 * 1024
    max_jobs_per_batch: int = 10_000
    max_page: int = 1000                  # jobs per page of a batch listing
    heartbeat_seconds: float = 2.0        # a running job says it is alive this often
    alive_ttl: float = 12.0               # ... and is taken for lost after this long
    max_attempts: int = 2                 # one retry after a lost worker
    sweep_seconds: float = 3.0            # how often the sweeper looks for lost jobs
    stranded_seconds: float = 30.0        # a queued job whose RQ entry is gone this long is sent again

    @classmethod
    def from_env(cls, **over) -> "Config":
        vals = {}
        for f in fields(cls):
            env = os.environ.get("NIGHTJAR_" + f.name.upper())
            if env is None or env == "":
                continue
            if f.type in ("float",):
                vals[f.name] = float(env)
            elif f.type in ("int",):
                vals[f.name] = int(env)
            else:
                vals[f.name] = env
        vals.update({k: v for k, v in over.items() if v is not None})
        return cls(**vals)

    def with_(self, **over) -> "Config":
        return replace(self, **over)
