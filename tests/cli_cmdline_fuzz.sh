#!/usr/bin/env bash
# cli_cmdline_fuzz.sh - 20 seconds of the command-line fuzzer
# (tests/fuzz/cmdline_fuzz.sh: mostly `report`, hostile option values and
# outputs, under a memory limit) with a fixed seed, so that the plain suite
# and the ASan+UBSan stage of scripts/test.sh both run `report` on hostile
# command lines; the fuzz stage runs it longer with a fresh seed.
set -u
HC=${HOLDCOUNT:?HOLDCOUNT must name the binary}
exec bash "$(dirname "$0")/fuzz/cmdline_fuzz.sh" "$HC" 20 1
