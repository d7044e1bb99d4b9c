#!/usr/bin/env bash
# Set up, build, and run the main job on the bundled demo universe.
set -euo pipefail
cd "$(dirname "$0")/.."
bash scripts/setup.sh
out=holdcount-report
./build/holdcount report --demo --force -o "$out"
echo "demo: the report folder is $(pwd)/$out; open the committee's document:"
echo "$(pwd)/$out/report.html"
