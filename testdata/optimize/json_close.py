#!/usr/bin/python3
"""Compare two report.json files number by number to SIG significant digits.

Usage: json_close.py A.json B.json [SIG]   (SIG defaults to 6)

Prints "same to SIG significant digits", or the differing paths (at most
20) and their count, and exits 1 when any differ. Used by speed_compare.sh
when a change moves results at rounding level only (a design started from
another reference converges to the same optimum within rounding).
"""
import json
import sys


def main():
    a, b = json.load(open(sys.argv[1])), json.load(open(sys.argv[2]))
    sig = int(sys.argv[3]) if len(sys.argv) > 3 else 6
    diffs = []

    def walk(x, y, path):
        if isinstance(x, float) and isinstance(y, (int, float)) or isinstance(y, float) and isinstance(x, (int, float)):
            if float('%.*g' % (sig, x)) != float('%.*g' % (sig, y)):
                diffs.append('%s: %r vs %r' % (path, x, y))
        elif type(x) is not type(y):
            diffs.append('%s: %.60r vs %.60r' % (path, x, y))
        elif isinstance(x, dict):
            for k in sorted(set(x) | set(y)):
                if k not in x or k not in y:
                    diffs.append('%s/%s: only in one' % (path, k))
                else:
                    walk(x[k], y[k], path + '/' + k)
        elif isinstance(x, list):
            if len(x) != len(y):
                diffs.append('%s: %d vs %d items' % (path, len(x), len(y)))
            else:
                for i, (u, v) in enumerate(zip(x, y)):
                    walk(u, v, '%s/%d' % (path, i))
        elif x != y:
            diffs.append('%s: %.60r vs %.60r' % (path, x, y))

    walk(a, b, '')
    if not diffs:
        print('same to %d significant digits' % sig)
        return 0
    for d in diffs[:20]:
        print(d)
    print('%d values differ' % len(diffs))
    return 1


if __name__ == '__main__':
    sys.exit(main())
