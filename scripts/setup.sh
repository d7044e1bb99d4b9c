#!/usr/bin/env bash
# Install what holdcount needs (Debian 12 packages) and build it into build/.
# Safe to run again: installs only what is missing, rebuilds incrementally.
set -euo pipefail
cd "$(dirname "$0")/.."

PACKAGES=(build-essential cmake pkg-config libgsl-dev libopenblas-dev libcsv-dev
          libcjson-dev libcmocka-dev python3 python3-numpy gnuplot-nox clang
          libclang-rt-14-dev valgrind strace time
          groff-base man-db dpkg-dev util-linux
          chromium poppler-utils)   # the browser test of report.html (tests/cli_report_html.sh)

missing=()
for p in "${PACKAGES[@]}"; do
  dpkg-query -W -f='${Status}' "$p" 2>/dev/null | grep -q "install ok installed" || missing+=("$p")
done
if [ ${#missing[@]} -gt 0 ]; then
  echo "setup: installing ${missing[*]}" >&2
  if [ "$(id -u)" -ne 0 ]; then SUDO=sudo; else SUDO=; fi
  $SUDO apt-get update -qq
  DEBIAN_FRONTEND=noninteractive $SUDO apt-get install -y -qq --no-install-recommends "${missing[@]}" >/dev/null
fi

cmake -S . -B build -DCMAKE_BUILD_TYPE=RelWithDebInfo >/dev/null
cmake --build build -j "$(nproc)" >/dev/null
echo "setup: built build/holdcount" >&2
