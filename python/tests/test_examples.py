"""The examples run and keep their own checks."""

import os
import subprocess
import sys

HERE = os.path.dirname(os.path.abspath(__file__))


def test_gauge_softmax_example(tmp_path):
    script = os.path.join(HERE, "..", "examples", "gauge_softmax.py")
    done = subprocess.run([sys.executable, script], capture_output=True, text=True, timeout=600, cwd=tmp_path)
    assert done.returncode == 0, done.stderr
    assert "cross-entropy" in done.stdout
