"""The commands, run as their own processes, end without printing anything of their own on stderr
(the exit path freezes the garbage collector only where no library counts its objects at shutdown)."""

import subprocess
import sys
from pathlib import Path

import pytest

ROOT = Path(__file__).resolve().parents[1]


def _cli(*args):
    return subprocess.run([sys.executable, "-m", "screening.cli", *args], cwd=ROOT, capture_output=True, text=True)


@pytest.mark.parametrize("args", [("check", "cases/kq-n2-014.toml"),
                                  ("batch", "cases/inventory.csv", "--quiet")])
def test_a_command_ends_quietly(args):
    done = _cli(*args)
    assert done.returncode in (0, 1)
    assert done.stderr == ""
