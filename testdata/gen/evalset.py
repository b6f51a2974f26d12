"""Shared pieces of runs.py and curves.py: learning-rate schedules, the
per-epoch CSV of a run, and the README table written from the files. Not
run on its own; see digits.py for how to rerun and the package versions."""
import csv
import math
import os

from digits import fit, write_csv

COLUMNS = ["epoch", "train_loss", "val_loss", "train_acc", "val_acc", "lr"]


def grow(lr0, factor):
    """A range test left running: the rate times factor per epoch."""
    return lambda t: lr0 * factor ** t


def warmup(peak, epochs):
    """Linear warm-up from 0 to peak over `epochs`, then held."""
    return lambda t: peak * min(1.0, (t + 0.02) / epochs)


def steps(lr0, at, factor=0.1):
    """The rate times factor after each epoch in `at`."""
    return lambda t: lr0 * factor ** sum(t >= a for a in at)


def cosine(lr0, epochs, warm=0):
    """Optional linear warm-up, then cosine decay to 0 at `epochs`."""
    def rate(t):
        if t < warm:
            return lr0 * (t + 0.02) / warm
        return 0.5 * lr0 * (1 + math.cos(math.pi * (t - warm) /
                                         (epochs - warm)))
    return rate


def read(path):
    with open(path) as f:
        return [{k: int(v) if k in ("epoch", "train_size") else float(v)
                 for k, v in r.items()} for r in csv.DictReader(f)]


def facts(rows):
    """What happened, in numbers: best and final validation error (%),
    final training error, the validation loss's minimum (epoch) and last
    value, the training loss's minimum, maximum after that minimum, and last
    value, and whether the run ended at chance (validation error ≥ 80 %;
    chance is 90 % for 10 classes) or printed a non-finite value."""
    err = [100 * (1 - r["val_acc"]) for r in rows]
    best = min(range(len(err)), key=err.__getitem__)
    tl = [r["train_loss"] for r in rows]
    tmin = min(range(len(tl)), key=tl.__getitem__)
    vmin = min(range(len(rows)), key=lambda i: rows[i]["val_loss"])
    finite = all(math.isfinite(v) for r in rows for v in r.values())
    return (f"{err[best]:.1f} @ {rows[best]['epoch']} | {err[-1]:.1f} | "
            f"{100 * (1 - rows[-1]['train_acc']):.1f} | "
            f"{rows[vmin]['val_loss']:.3g} @ {rows[vmin]['epoch']} → "
            f"{rows[-1]['val_loss']:.3g} | {tl[tmin]:.3g} → "
            f"{max(tl[tmin:]):.3g} → {tl[-1]:.3g} | "
            + ("**yes**" if err[-1] >= 80 else "no")
            + ("" if finite else ", non-finite"))


HEADER = ("| file | what the run did | seed | best val error % @ epoch | "
          "final val error % | final train error % | val loss min @ epoch "
          "→ final | train loss min → max after it → final | at chance |\n"
          "|---|---|---|---|---|---|---|---|---|")


def generate(runs, outdir, names, extra=None):
    """Train every run of `runs` [(name, what, cfg)] named in `names` (all
    when empty) into outdir/<name>.csv, then rewrite the table after the
    `<!-- table -->` mark of outdir/README.md from all the files there.
    extra(cfg) gives constant columns to add (e.g. train_size)."""
    results = {}
    for name, what, cfg in runs:
        path = f"{outdir}/{name}.csv"
        if not names or name in names:
            cols = dict(extra(cfg)) if extra else {}
            rows = [dict(cols, **{k: m[k] for k in COLUMNS})
                    for m in fit(cfg)]
            write_csv(path, COLUMNS + list(cols), rows, digits=6)
            print(name, flush=True)
        if os.path.exists(path):
            results[name] = facts(read(path))
    with open(f"{outdir}/README.md") as f:
        head = f.read().split("<!-- table -->")[0]
    lines = [head + "<!-- table -->", HEADER]
    for name, what, cfg in runs:
        if name in results:
            seed = cfg.get("seed", 1)
            lines.append(f"| `{name}.csv` | {what} | {seed} | "
                         + results[name] + " |")
    with open(f"{outdir}/README.md", "w") as f:
        f.write("\n".join(lines) + "\n")
