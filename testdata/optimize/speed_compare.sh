#!/bin/sh
# Whole-process time of `stepdown plan` before and after a change, and of
# one 4095-tap lowpass by SciPy's remez (the yardstick of the plan's speed
# targets), in one run, on the same machine.
#
# Usage, from the repository root:
#
#     testdata/optimize/speed_compare.sh OLD_REV [RUNS] > testdata/optimize/speed_compare.txt
#
# It builds stepdown at OLD_REV (git worktree in a temporary folder) and from
# the working tree, writes the built-in example and five invented specs,
# and runs each spec with the two binaries in turn (old, new, old, new, ...)
# RUNS times each (default 5), timing each whole process with
# /usr/bin/time. The SciPy yardstick (testdata/optimize/scipy_remez4095.py,
# Debian's /usr/bin/python3) alternates with the new binary's D = 4096 and D = 2^20
# plans. Each line gives the median wall and CPU (user + system) seconds
# and the median of the pairwise ratios; it then checks that report.json
# is byte-identical between the binaries for every spec, or else whether
# every number agrees to 6 significant digits (json_close.py). The machine may
# be shared: the load average is printed before and after.
set -eu
old_rev=$1
runs=${2:-5}
root=$(pwd)
tmp=$(mktemp -d)
trap 'git -C "$root" worktree remove --force "$tmp/old-src" >/dev/null 2>&1 || true; rm -rf "$tmp"' EXIT

git worktree add --detach "$tmp/old-src" "$old_rev" >/dev/null 2>&1
(cd "$tmp/old-src" && go build -o "$tmp/old" ./cmd/stepdown)
go build -o "$tmp/new" ./cmd/stepdown

mkdir "$tmp/specs"
spec() { # name rate_in rate_out passband ripple rejection signal [coefficient bits]
	{
		printf 'input_rate = "%s"\noutput_rate = "%s"\npassband = "%s"\n' "$2" "$3" "$4"
		printf 'ripple = "%s"\nrejection = "%s"\nsignal = "%s"\n' "$5" "$6" "$7"
		if [ $# -ge 8 ]; then printf '[words]\ninput = 14\noutput = 20\ncoefficients = %s\n' "$8"; fi
	} > "$tmp/specs/$1.toml"
}
# Invented specs. d4096: the receiver of BenchmarkPlanD4096; d2to20: that
# of BenchmarkPlanD2to20. The fractional demo (testdata/specs/fractional.toml)
# is run from the working tree's copy.
spec d4096 "122.88 MHz" "30 kHz" "10 kHz" "0.1 dB" "90 dB" real
spec d4096_80dB "122.88 MHz" "30 kHz" "10 kHz" "0.1 dB" "80 dB" real
spec d1000_complex "100 MHz" "100 kHz" "35 kHz" "0.2 dB" "85 dB" complex 18
spec d65536 "65.536 MHz" "1 kHz" "300 Hz" "0.1 dB" "90 dB" real
spec d2to20 "1048.576 MHz" "1 kHz" "300 Hz" "0.1 dB" "90 dB" real

# once LABEL CMD...: one timed run, "wall cpu" appended to $tmp/LABEL.
once() {
	label=$1
	shift
	/usr/bin/time -f '%e %U %S' -o "$tmp/t" "$@" >/dev/null 2>&1 || { echo "$label: exit $?" >&2; exit 1; }
	awk '{ printf "%s %.3f\n", $1, $2 + $3 }' "$tmp/t" >> "$tmp/$label"
}
# report NAME A B: medians of A's and B's wall and CPU, and of A/B pair by pair
# (A and B name files $tmp/A_NAME, or $tmp/scipy).
report() {
	fb=$tmp/$3_$1
	[ "$3" = scipy ] && fb=$tmp/scipy
	paste -d' ' "$tmp/$2_$1" "$fb" | awk -v name="$1" -v a="$2" -v b="$3" '
	function med(v, n,   i, j, t) {
		for (i = 1; i <= n; i++) for (j = i + 1; j <= n; j++) if (v[j] < v[i]) { t = v[i]; v[i] = v[j]; v[j] = t }
		return n % 2 ? v[(n + 1) / 2] : (v[n / 2] + v[n / 2 + 1]) / 2
	}
	{ n++; aw[n] = $1; ac[n] = $2; bw[n] = $3; bc[n] = $4; rw[n] = $1 / $3; rc[n] = $2 / $4 }
	END { printf "%-14s %-3s %7.2f %7.2f | %-5s %7.2f %7.2f | %8.2f %5.2f\n", name, a, med(aw, n), med(ac, n), b, med(bw, n), med(bc, n), med(rw, n), med(rc, n) }'
}

echo "stepdown plan, whole process: $(git -C "$tmp/old-src" log -1 --format=%h) (old) vs working tree on $(git log -1 --format=%h) (new); $runs runs each, alternating"
echo "$(nproc) CPUs; load average before: $(cut -d' ' -f1-3 /proc/loadavg)"
/usr/bin/python3 -c 'import scipy, numpy; print("SciPy", scipy.__version__, "numpy", numpy.__version__)'
printf '%-14s %-3s %7s %7s | %-5s %7s %7s | %8s %5s\n' spec A "wall s" "cpu s" B "wall s" "cpu s" "A/B wall" "cpu"
for s in example d4096 d4096_80dB d1000_complex d65536 d2to20 fractional; do
	f="$tmp/specs/$s.toml"
	[ "$s" = example ] && f=
	[ "$s" = fractional ] && f="$root/testdata/specs/fractional.toml"
	rm -f "$tmp/new_$s" "$tmp/old_$s" "$tmp/scipy"
	i=0
	while [ $i -lt "$runs" ]; do
		once "old_$s" "$tmp/old" plan $f --out "$tmp/out-old-$s" --quiet
		once "new_$s" "$tmp/new" plan $f --out "$tmp/out-new-$s" --quiet
		case $s in d4096 | d2to20) once scipy /usr/bin/python3 "$root/testdata/optimize/scipy_remez4095.py" ;; esac
		i=$((i + 1))
	done
	report "$s" new old
	case $s in d4096 | d2to20) report "$s" new scipy ;; esac
	if cmp -s "$tmp/out-old-$s/report.json" "$tmp/out-new-$s/report.json"; then
		echo "$s: report.json identical" >> "$tmp/same"
	else
		echo "$s: report.json differs in bytes; $(/usr/bin/python3 "$root/testdata/optimize/json_close.py" "$tmp/out-old-$s/report.json" "$tmp/out-new-$s/report.json" | tr '\n' ';')" >> "$tmp/same"
	fi
done
cat "$tmp/same"
echo "load average after: $(cut -d' ' -f1-3 /proc/loadavg)"
