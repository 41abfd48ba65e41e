#!/bin/sh
# The two-tier search's front against the exhaustive search's (every
# feasible candidate designed for real) on the invented specs of
# front_specs.py, under each spec's own settings (the cascade rule by
# default), without design caps. Specs whose exhaustive search takes over
# 60 s are reported as unfinished. About 5 minutes on two cores for the
# default selection.
#
# Usage, from the repository root:
#
#     testdata/optimize/exhaustive_compare.sh ['[dr][019]*'] > testdata/optimize/exhaustive_compare.txt
set -eu
sel=${1:-'[dr][019]*'}
tmp=$(mktemp -d)
trap 'rm -rf "$tmp"' EXIT
/usr/bin/python3 testdata/optimize/front_specs.py "$tmp"
echo "# two-tier against exhaustive fronts at $(git log -1 --format=%h), specs $sel of front_specs.py"
STEPDOWN_EXHAUSTIVE="$tmp/$sel.toml" go test -count=1 -v -run '^TestExhaustiveCompare$' -timeout 3000s ./optimize/ |
	grep -v '^=== \|^--- \|^PASS\|^ok '
