#!/bin/sh
# The fronts of `stepdown plan` at two revisions, spec by spec: their sizes
# and the chains each holds that a chain of the other beats on every axis.
#
# Usage, from the repository root:
#
#     testdata/optimize/front_compare.sh OLD_REV NEW_REV > testdata/optimize/front_compare.txt
#     testdata/optimize/front_compare.sh OLD_REV NEW_REV narrow > testdata/optimize/rounding_siblings.txt
#
# It builds both revisions (git worktrees in a temporary folder), writes
# the ten invented receivers and thirty seeded random invented specs of
# front_specs.py and the testdata/specs demos (with "narrow", front_specs.py's
# family of coefficient widths near the target's own instead), plans each
# with both, and prints front_compare.py's line for each (Debian's
# /usr/bin/python3) with each run's wall time.
set -eu
old_rev=$1
new_rev=$2
family=${3:-}
root=$(pwd)
tmp=$(mktemp -d)
trap 'git -C "$root" worktree remove --force "$tmp/old-src" >/dev/null 2>&1 || true; git -C "$root" worktree remove --force "$tmp/new-src" >/dev/null 2>&1 || true; rm -rf "$tmp"' EXIT
for v in old new; do
	rev=$old_rev
	[ $v = new ] && rev=$new_rev
	git worktree add --detach "$tmp/$v-src" "$rev" >/dev/null 2>&1
	(cd "$tmp/$v-src" && go build -o "$tmp/$v" ./cmd/stepdown)
done
mkdir "$tmp/specs"
/usr/bin/python3 testdata/optimize/front_specs.py "$tmp/specs" $family
[ -z "$family" ] && cp testdata/specs/*.toml "$tmp/specs/"
echo "# fronts of $old_rev (old) and $new_rev (new)${family:+, $family family}"
now() { date +%s.%N; }
for s in "$tmp"/specs/*.toml; do
	n=$(basename "$s" .toml)
	rm -rf "$tmp/o_old" "$tmp/o_new"
	t0=$(now)
	"$tmp/old" plan "$s" --out "$tmp/o_old" >/dev/null 2>&1 || true
	t1=$(now)
	"$tmp/new" plan "$s" --out "$tmp/o_new" >/dev/null 2>&1 || true
	t2=$(now)
	line=$(/usr/bin/python3 testdata/optimize/front_compare.py "$n" "$tmp/o_old/report.json" "$tmp/o_new/report.json")
	echo "$line; $(echo "$t0 $t1 $t2" | awk '{printf "%.2f s -> %.2f s", $2-$1, $3-$2}')"
done
