#!/usr/bin/env bash
# Creates a virtual environment (default: python/.venv) with what the Python
# package needs to build and test (maturin, numpy, pytest, hypothesis, from
# PyPI) and installs the package into it from this folder.
#   bash python/setup-venv.sh [VENV_DIR]
set -euo pipefail
here="$(cd "$(dirname "$0")" && pwd)"
venv="${1:-$here/.venv}"
python="${PYTHON:-python3}"
"$python" -m venv "$venv"
"$venv/bin/python" -m pip install --quiet --upgrade pip
"$venv/bin/python" -m pip install --quiet "maturin>=1.5,<2" "numpy>=1.21" "pytest>=7" "hypothesis>=6"
"$venv/bin/python" -m pip install --quiet "$here"
(cd / && "$venv/bin/python" -c "import subrange; print('subrange', subrange.__file__)")
