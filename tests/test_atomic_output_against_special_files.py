"""Outputs never replace a device, FIFO or socket (POSIX file types, os.stat).

The atomic write renames a temporary file over its target; done over a device node or a
FIFO it would replace that node with a plain file, so such targets are refused with one
line and left as they were.
"""
from __future__ import annotations

import os
import stat

import pytest

from cage.atomicfile import write_text
from cage.errors import InputError


@pytest.mark.skipif(not hasattr(os, "mkfifo"), reason="no FIFOs on this platform")
def test_fifo_target_is_refused_and_kept(tmp_path):
    fifo = tmp_path / "pipe"
    os.mkfifo(fifo)
    with pytest.raises(InputError, match="not a regular file"):
        write_text(fifo, "x\n")
    assert stat.S_ISFIFO(os.stat(fifo).st_mode)
    assert [p.name for p in tmp_path.iterdir()] == ["pipe"]  # no temporary left behind


def test_link_to_a_device_is_refused(tmp_path):
    if not os.path.exists("/dev/null"):
        pytest.skip("no /dev/null")
    link = tmp_path / "out.csv"
    link.symlink_to("/dev/null")
    with pytest.raises(InputError, match="not a regular file"):
        write_text(link, "x\n")
    assert stat.S_ISCHR(os.stat("/dev/null").st_mode)


def test_regular_file_is_replaced(tmp_path):
    target = tmp_path / "out.csv"
    target.write_text("old\n")
    write_text(target, "new\n")
    assert target.read_text() == "new\n"
