"""Input limits of case files (issue 16): the kind and size of the file.

Every refusal is checked as the user meets it: exit status 2 and ONE line on stderr naming
the file and the field or the reason, nothing read beyond the limit, the file unchanged.
Outside reference: POSIX file types (stat(2)).
"""

from __future__ import annotations

import copy
import json
import os
import subprocess
import sys

from orbitledger.case.starter import STARTER_DATA
from orbitledger.cli.main import main
from orbitledger.limits import MAX_CASE_FILE_BYTES


def summary(capsys, path):
    status = main(["summary", str(path)])
    out, err = capsys.readouterr()
    assert status == 2 and out == "", (status, out, err)
    assert err.count("\n") == 1 and "Traceback" not in err, err
    assert err.startswith(f"orbitledger summary: {path}"), err
    return err.strip()


def starter_text(**changes) -> str:
    raw = copy.deepcopy(STARTER_DATA)
    for dotted, value in changes.items():
        section, field = dotted.split("__")
        raw[section][field] = value
    return json.dumps(raw, indent=2)


# --- the file itself ------------------------------------------------------------------------


def test_a_fifo_is_refused_without_blocking(tmp_path):
    fifo = tmp_path / "pipe.case.json"
    os.mkfifo(fifo)
    # A separate process with a timeout: opening a FIFO for reading would block for ever.
    done = subprocess.run(
        [sys.executable, "-m", "orbitledger", "summary", str(fifo)],
        capture_output=True,
        text=True,
        timeout=60,
        check=False,
    )
    assert done.returncode == 2 and done.stdout == ""
    assert done.stderr == f"orbitledger summary: {fifo}: is a FIFO (named pipe), not a case file\n"


def test_a_device_is_refused_before_it_is_read(capsys):
    # /dev/zero never ends: reading it would fill memory (a character device, stat(2)).
    line = summary(capsys, "/dev/zero")
    assert line == "orbitledger summary: /dev/zero: is a character device, not a case file"


def test_a_folder_is_refused(tmp_path, capsys):
    folder = tmp_path / "folder.case.json"
    folder.mkdir()
    assert summary(capsys, folder).endswith(": is a folder, not a case file")


def test_a_file_over_the_size_limit_is_refused_and_one_at_the_limit_is_read(tmp_path, capsys):
    text = starter_text().encode()
    at_limit = tmp_path / "at-limit.case.json"
    at_limit.write_bytes(text + b" " * (MAX_CASE_FILE_BYTES - len(text)))
    assert main(["summary", str(at_limit)]) == 0
    capsys.readouterr()
    over = tmp_path / "over.case.json"
    over.write_bytes(text + b" " * (MAX_CASE_FILE_BYTES + 1 - len(text)))
    before = over.read_bytes()
    line = summary(capsys, over)
    assert line.endswith(": is 4,194,305 bytes; a case file is at most 4 MiB (4,194,304 bytes)")
    assert over.read_bytes() == before
