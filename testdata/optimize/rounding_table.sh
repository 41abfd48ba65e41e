#!/bin/sh
# Prints how many front chains meet the spec with their taps rounded to the
# coefficient width, in the floating-point search (before) and in the search
# on rounded taps (after), with each recommended chain, for the built-in
# example and three invented specs at 14, 16 and 18 bits.
# Run from the repository root: sh testdata/optimize/rounding_table.sh
set -e
STEPDOWN_TABLE=1 go test -count=1 -timeout 30m -run '^TestRoundingTable$' ./optimize/ | grep -v '^ok\|^PASS'
