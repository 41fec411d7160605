"""The memory reserve of a work horse (worker/reserve.py): address space set
aside before the cap and given back by the first MemoryError handler."""

import subprocess
import sys


def test_the_reserve_is_address_space_given_back_at_once():
    code = r'''
import resource
from worker import reserve

def vm():
    return int(open("/proc/self/statm").read().split()[0]) * resource.getpagesize()

before = vm()
reserve.hold(16)
held = vm()
assert reserve.held() and held - before >= 16 << 20, (before, held)
# under a cap just above what is mapped, 8 MB more cannot be had ...
resource.setrlimit(resource.RLIMIT_AS, (held + (4 << 20), resource.RLIM_INFINITY))
try:
    x = bytearray(8 << 20)
    raise SystemExit("8 MB were allocated over the cap")
except MemoryError:
    reserve.release()          # ... until the reserve is released
x = bytearray(8 << 20)
assert not reserve.held()
reserve.release()              # a second release does nothing
print("ok")
'''
    out = subprocess.run([sys.executable, "-c", code], capture_output=True, text=True,
                         timeout=60)
    assert out.returncode == 0 and out.stdout.strip() == "ok", out.stderr + out.stdout
