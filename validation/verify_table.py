"""Write, or check with --check, a validation table in `coilfield verify`'s layout
(case, parameters, reference, tolerance, tolerance_kind, source), for the scripts whose rows
are recomputed from their own parameters (fem_refs.py, fem_skfem.py)."""

import csv
import sys


def write_or_check(out, header, rows, agrees, script):
    """Write `rows` under `header` to `out`; with --check, instead require the stored table to
    have that header, every stored reference to agree with its row's parameters recomputed
    (`agrees(row)` -> None, or why not), and the rows to be exactly those `script` writes."""
    name = out.split("/")[-1]
    if "--check" not in sys.argv:
        with open(out, "w", newline="") as f:
            w = csv.writer(f)
            w.writerow(header)
            w.writerows(rows)
        return
    with open(out, newline="") as f:
        reader = csv.reader(f)
        stored_header = next(reader)
        stored = [r for r in reader if r]
    bad = []
    if stored_header != header:
        bad.append(f"header {stored_header}, expected {header}")
    for i, r in enumerate(stored, 1):
        # Each stored reference against its own parameters, recomputed here.
        why = agrees(r)
        if why:
            bad.append(f"row {i} ({r[0]}): {why}")
    if stored != rows:
        bad.append(f"the rows differ from those {script} writes")
    if bad:
        print(f"validation/{name} disagrees with {script}:", *bad, sep="\n  ")
        sys.exit(1)
    print(f"{name}: {len(rows)} rows agree")
