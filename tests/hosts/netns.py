"""Test hosts made of Linux network namespaces (``ip netns``, Debian's
iproute2), linked to a Redis namespace by veth pairs.

Only addresses in 10.77.0.0/16 that these helpers give to interfaces inside
namespaces they create are used; everything is removed again by
:meth:`Hosts.close`, also after a failure.
"""

from __future__ import annotations

import contextlib
import ctypes
import os
import shutil
import subprocess

CLONE_NEWNET = 0x40000000


def ip(*args: str, check: bool = True) -> subprocess.CompletedProcess:
    return subprocess.run(["ip", *args], capture_output=True, text=True, check=check,
                          timeout=20)


def why_unavailable() -> str | None:
    """None if network namespaces can be made here, else the reason."""
    if os.geteuid() != 0:
        return "needs root (network namespaces)"
    if shutil.which("ip") is None:
        return "the 'ip' command (Debian package iproute2) is not installed"
    probe = f"nj-probe-{os.getpid()}"
    r = ip("netns", "add", probe, check=False)
    if r.returncode != 0:
        return f"'ip netns add' failed: {r.stderr.strip()}"
    ip("netns", "del", probe, check=False)
    return None


_libc = ctypes.CDLL(None, use_errno=True)


def _setns(fd: int) -> None:
    if _libc.setns(fd, CLONE_NEWNET) != 0:
        err = ctypes.get_errno()
        raise OSError(err, os.strerror(err))


@contextlib.contextmanager
def inside(name: str):
    """Run the calling thread inside namespace ``name`` (sockets it opens
    there stay there); back to its own namespace afterwards."""
    own = os.open("/proc/thread-self/ns/net", os.O_RDONLY)
    target = os.open(f"/run/netns/{name}", os.O_RDONLY)
    try:
        _setns(target)
        try:
            yield
        finally:
            _setns(own)
    finally:
        os.close(target)
        os.close(own)


class Hosts:
    """A hub namespace (Redis) and leaf namespaces (worker hosts), each leaf
    on its own veth pair: hub 10.77.<k>.1 <-> leaf 10.77.<k>.2."""

    def __init__(self, tag: str | None = None):
        self.tag = tag or str(os.getpid())
        self.hub = f"nj-redis-{self.tag}"
        self.leaves: dict[str, dict] = {}
        self.made: list[str] = []
        self._add_ns(self.hub)

    def _add_ns(self, name: str) -> None:
        ip("netns", "del", name, check=False)        # a leftover of a killed run
        ip("netns", "add", name)
        self.made.append(name)
        ip("-n", name, "link", "set", "lo", "up")

    def add_leaf(self, label: str) -> dict:
        k = len(self.leaves) + 1
        ns = f"nj-{label}-{self.tag}"
        self._add_ns(ns)
        hub_if, leaf_if = f"njh{k}", f"njl{k}"
        ip("link", "add", hub_if, "netns", self.hub, "type", "veth",
           "peer", "name", leaf_if, "netns", ns)
        hub_addr, leaf_addr = f"10.77.{k}.1", f"10.77.{k}.2"
        ip("-n", self.hub, "addr", "add", f"{hub_addr}/24", "dev", hub_if)
        ip("-n", ns, "addr", "add", f"{leaf_addr}/24", "dev", leaf_if)
        ip("-n", self.hub, "link", "set", hub_if, "up")
        ip("-n", ns, "link", "set", leaf_if, "up")
        leaf = {"ns": ns, "if": leaf_if, "hub_if": hub_if, "addr": leaf_addr,
                "hub_addr": hub_addr}
        self.leaves[label] = leaf
        return leaf

    def cut(self, label: str) -> None:
        """Take the leaf's link down (its cable pulled)."""
        leaf = self.leaves[label]
        ip("-n", leaf["ns"], "link", "set", leaf["if"], "down")

    def mend(self, label: str) -> None:
        leaf = self.leaves[label]
        ip("-n", leaf["ns"], "link", "set", leaf["if"], "up")

    def close(self) -> None:
        for name in reversed(self.made):
            ip("netns", "del", name, check=False)
        self.made.clear()

    def __enter__(self):
        return self

    def __exit__(self, *exc):
        self.close()
