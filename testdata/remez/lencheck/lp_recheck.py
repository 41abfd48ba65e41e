#!/usr/bin/python3
"""Re-check the shorter lengths where the density-16 LP bound was <= 1:
LP on a 4x denser grid (density 64), then the LP solution's own dense
measurement (does that filter meet the targets?)."""
import json
import numpy as np
import lencheck as L
for fn in ("results_seed20240611.json", "results_seed7.json"):
    for row in json.load(open(fn))["rows"]:
        for n, dl in row["lp_delta"].items():
            n = int(n)
            if dl is None or dl <= 1 + 1e-6:
                sp = row["spec"]
                d64 = L.lp_bound(n, sp, density=64)
                print(f"{fn} spec {row['i']} N={row['N']} n={n}: LP16 {dl} -> LP64 {d64}", flush=True)
