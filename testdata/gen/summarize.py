#!/usr/bin/python3
"""Print, for each CSV given, its last row and the best validation value with
its epoch: the numbers the READMEs quote. Needs only the standard library.

Run: /usr/bin/python3 testdata/gen/summarize.py testdata/frameworks/*.plain.csv
"""
import csv
import sys


def main(paths):
    for path in paths:
        with open(path) as f:
            rows = list(csv.DictReader(f))
        last = rows[-1]
        out = [f"{path}: {len(rows)} rows; last " + ", ".join(
            f"{k}={v}" for k, v in last.items() if v != "")]
        for key, pick in (("val_loss", min), ("val_acc", max)):
            vals = [(float(r[key]), r["epoch"]) for r in rows
                    if r.get(key) not in (None, "")]
            if vals:
                best = pick(vals, key=lambda p: p[0])
                out.append(f"best {key}={best[0]:g} at epoch {best[1]}")
        print("; ".join(out))


if __name__ == "__main__":
    main(sys.argv[1:])
