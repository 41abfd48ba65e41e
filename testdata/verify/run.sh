#!/bin/sh
# Reproduces testdata/verify/recompute_output.txt: builds stepdown, plans every
# invented spec in specs/, checks a few hand-picked chains, then recomputes
# every report.json with recompute.py (NumPy/SciPy only, independent of
# stepdown's code). Usage, from the repository root:
#   sh testdata/verify/run.sh [WORKDIR]      (default WORKDIR /tmp/stepdown-verify)
set -u
HERE=$(cd "$(dirname "$0")" && pwd)
W=${1:-/tmp/stepdown-verify}
mkdir -p "$W/out" "$W/chk" "$W/logs"
go build -o "$W/sd" ./cmd/stepdown || exit 1
cd "$W"
for f in "$HERE"/specs/s*.toml; do
  b=$(basename "$f" .toml)
  case $b in s03u_*) continue;; esac        # check-only spec
  ./sd plan "$f" --out "out/$b" --timeout 300s > "logs/$b.txt" 2>&1
  echo "plan $b: exit $?" >&2
done
chk() { ./sd check "$HERE/specs/$2.toml" --chain "$3" --out "chk/$1" > "logs/chk_$1.txt" 2>&1; echo "check $1 ($2: $3): exit $?" >&2; }
chk c1 s01_real_d4800 "cic2m1r50 > fir12 > fir8"
chk c2 s02_cplx_d8_wide "cic7m2r2 > hb > fir2"
chk c3 s04_cplx_d256_14b "cic3m1r32 > fir8L"
chk c4 s10_real_d2048_auto_4bit "cic5m1r512 > hb > fir2"
chk c5 s05_real_d80_auto_unity "cic4m2r10 > hb > hb > fir2"
chk c6 s09_cplx_d32_2bit_unity "hb > hb > hb > hb > fir2"
chk c7 s03_real_d5000_narrow "cic4m1r1000 > fir5"
chk c8 s06_cplx_d250_2bit "cic3m1r50 > fir5L"
chk x1 s04_cplx_d256_14b "hb > hb > hb > hb > hb > hb > hb > hb"
chk x2 s04_cplx_d256_14b "fir256"
chk x3 s04_cplx_d256_14b "cic11m1r128 > fir2"
chk x4 s04_cplx_d256_14b "cic5m5r128 > fir2"
chk x5 s03u_real_d5000_unity_cic_only "cic2m1r5000"
/usr/bin/python3 "$HERE/recompute.py" --sim out/*/report.json chk/*/report.json
