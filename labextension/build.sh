#!/usr/bin/env bash
# Build the JupyterLab plugin into prebuilt/ (committed, so installing orbitledger needs no
# Node.js). Needs Node.js 18+ and the Python environment's JupyterLab (its staging folder gives
# the versions of the packages JupyterLab shares with plugins).
set -euo pipefail
cd "$(dirname "$0")"
npm install --no-audit --no-fund --loglevel=error
core="$(python -c 'import jupyterlab, os; print(os.path.join(os.path.dirname(jupyterlab.__file__), "staging"))')"
rm -rf prebuilt
node node_modules/@jupyterlab/builder/lib/build-labextension.js --core-path "$core" .
