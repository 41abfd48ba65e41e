#!/bin/sh
# Prints how many front chains meet the spec with their taps rounded to the
# coefficient width, in the floating-point search (before) and in the search
# on rounded taps (after), with each recommended chain, for the built-in
# example and three invented specs at 14, 16 and 18 bits (about a minute on
# two cores). rounding_table.txt is its output when last committed.
# Run from the repository root: sh testdata/optimize/rounding_table.sh
set -e
STEPDOWN_TABLE=1 go test -count=1 -v -timeout 30m -run '^TestRoundingTable$' ./optimize/ |
	grep -v -e '^=== RUN' -e '^--- PASS' -e '^PASS' -e '^ok'
