#!/usr/bin/env bash
# Set up, build, and run the main job on the bundled demo universe.
set -euo pipefail
cd "$(dirname "$0")/.."
bash scripts/setup.sh
out=holdcount-report
./build/holdcount report --force -o "$out"
echo "demo: the report is in $(pwd)/$out (start with $out/summary.md)"
