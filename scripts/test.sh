#!/usr/bin/env bash
# Set up, build, and run every test: the plain build's suite through ctest.
set -euo pipefail
cd "$(dirname "$0")/.."
bash scripts/setup.sh
cd build
ctest --output-on-failure -j "$(nproc)"
