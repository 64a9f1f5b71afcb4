"""The README's Python example runs as written."""

import os
import re

ROOT = os.path.join(os.path.dirname(os.path.abspath(__file__)), "..", "..")


def test_readme_python_example():
    with open(os.path.join(ROOT, "README.md"), encoding="utf-8") as f:
        blocks = re.findall(r"```python\n(.*?)```", f.read(), re.S)
    assert len(blocks) == 1
    assert len(blocks[0].strip().splitlines()) <= 12
    exec(compile(blocks[0], "README.md", "exec"), {})
