"""Compare two report.json fronts of one spec (front_compare.sh).

Usage: front_compare.py NAME OLD/report.json NEW/report.json

A run that found no chain writes no report.json: its front is empty.

Prints the front sizes and, each way, the chains of one front that a chain
of the other beats on every axis (no more multiplies, memory bits and
latency, and less of one): the chains one front holds that the other
shows to be beaten.
"""
import json
import sys


def points(path):
    """The front's points; none when the run wrote no report (no chain met)."""
    out = []
    try:
        front = json.load(open(path))["front"]
    except FileNotFoundError:
        return out
    for c in front:
        cost = c.get("multiplies_per_output", c.get("multiplies_per_input"))
        out.append((cost, c["memory_bits"], c["latency_s"], c["notation"]))
    return out


def beats(a, b):
    return (a[0] <= b[0] and a[1] <= b[1] and a[2] <= b[2]
            and (a[0] < b[0] or a[1] < b[1] or a[2] < b[2]))


name, old_path, new_path = sys.argv[1:4]
old, new = points(old_path), points(new_path)
old_beaten = [p[3] for p in old if any(beats(q, p) for q in new)]
new_beaten = [p[3] for p in new if any(beats(q, p) for q in old)]
print("%-20s front %2d -> %2d; old chains beaten by new: %d %s; new chains beaten by old: %d %s"
      % (name, len(old), len(new), len(old_beaten), old_beaten[:3], len(new_beaten), new_beaten))
