"""Every file procplan writes is the old or the new version, never half of one, and never replaces a saved file
unless told; new files get the permissions the user's umask allows."""

from __future__ import annotations

import os
import signal
import subprocess
import sys
import time

import pytest

from procplan.errors import InvalidInputError
from procplan.files.tomlfile import parse_toml, write_atomic


def test_refuses_to_replace_without_overwrite(tmp_path):
    target = tmp_path / "plan.toml"
    write_atomic(target, "title = 'a'\n")
    with pytest.raises(InvalidInputError, match="exists"):
        write_atomic(target, "title = 'b'\n")
    assert target.read_text() == "title = 'a'\n"
    write_atomic(target, "title = 'b'\n", overwrite=True)
    assert target.read_text() == "title = 'b'\n"


def test_bytes_are_written_as_given(tmp_path):
    payload = bytes(range(256)) * 10
    write_atomic(tmp_path / "sheet.pdf", payload)
    assert (tmp_path / "sheet.pdf").read_bytes() == payload


@pytest.mark.parametrize("mask", [0o022, 0o077, 0o002])
def test_new_files_honour_the_umask(tmp_path, mask):
    old = os.umask(mask)
    try:
        target = write_atomic(tmp_path / f"f{mask:o}.csv", "a,b\n")
    finally:
        os.umask(old)
    assert target.stat().st_mode & 0o777 == 0o666 & ~mask


def test_leftover_temporaries_are_cleaned_on_the_next_save(tmp_path):
    stale = tmp_path / ".plan.toml.abc123.tmp"
    stale.write_text("half a fi")
    write_atomic(tmp_path / "plan.toml", "title = 'a'\n")
    assert not stale.exists()
    assert sorted(p.name for p in tmp_path.iterdir()) == ["plan.toml"]


def test_deeply_nested_toml_is_refused_by_name():
    text = "x = " + "[" * 5000 + "]" * 5000 + "\n"
    with pytest.raises(InvalidInputError, match="nested too deeply"):
        parse_toml(text, "equipment/broken.toml")


WRITER = """
import sys
from procplan.files.tomlfile import write_atomic
path, n = sys.argv[1], int(sys.argv[2])
print("ready", flush=True)
i = 0
while True:
    i += 1
    write_atomic(path, (str(i % 10) * n) + "\\n", overwrite=True)
"""


def test_a_killed_writer_never_leaves_a_truncated_file(tmp_path):
    # A child rewrites a 2 MB file in a loop and is killed at arbitrary moments; after every kill the file
    # must hold one complete version (2 MB of one digit and a newline).
    target = tmp_path / "history.csv"
    n = 2_000_000
    write_atomic(target, "0" * n + "\n")
    for delay in (0.05, 0.13, 0.21, 0.34, 0.55):
        child = subprocess.Popen(
            [sys.executable, "-c", WRITER, str(target), str(n)], stdout=subprocess.PIPE, text=True
        )
        assert child.stdout.readline().strip() == "ready"  # killed while writing, not while importing
        time.sleep(delay)
        child.send_signal(signal.SIGKILL)
        child.wait()
        child.stdout.close()
        text = target.read_text()
        assert len(text) == n + 1 and text.endswith("\n") and len(set(text[:-1])) == 1
    # the next save cleans what the kills left
    write_atomic(target, "done\n", overwrite=True)
    assert sorted(p.name for p in tmp_path.iterdir()) == ["history.csv"]
