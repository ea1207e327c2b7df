#!/usr/bin/env python3
"""Greedy maximum-coverage pick of at most N seed files from a libFuzzer
merge control file (written by `-merge=1 -merge_control_file=CTL`).

    python3 fuzz/pick_seeds.py CTL OUT_DIR [N=200]

The hand-made seeds (file names that are not 40-hex SHA-1s) are always
kept; then the file reaching the most edges (COV lines) not yet reached is
added, the smaller on a tie, until N files or no gain. Used when `-merge=1`
keeps more files than the seed folders should hold (see fuzz/README.md).
"""
import os, shutil, sys


def main():
    ctl, out = sys.argv[1], sys.argv[2]
    cap = int(sys.argv[3]) if len(sys.argv) > 3 else 200
    lines = open(ctl).read().split("\n")
    n = int(lines[0])
    files = lines[2:2 + n]
    cov = {}
    for l in lines[2 + n:]:
        parts = l.split()
        if parts and parts[0] == "COV":
            cov[int(parts[1])] = set(parts[2:])
    hand = lambda p: not (len(os.path.basename(p)) == 40 and all(c in "0123456789abcdef" for c in os.path.basename(p)))
    picked, seen, names = [], set(), set()
    for i, p in enumerate(files):
        if hand(p) and os.path.basename(p) not in names:
            picked.append(p); names.add(os.path.basename(p)); seen |= cov.get(i, set())
    rest = {i for i in range(n) if not hand(files[i])}
    while len(picked) < cap and rest:
        best = max(rest, key=lambda i: (len(cov.get(i, set()) - seen), -os.path.getsize(files[i])))
        gain = len(cov.get(best, set()) - seen)
        if gain == 0:
            break
        rest.discard(best)
        if os.path.basename(files[best]) in names:
            continue
        picked.append(files[best]); names.add(os.path.basename(files[best])); seen |= cov[best]
    all_edges = set().union(*cov.values()) if cov else set()
    os.makedirs(out, exist_ok=True)
    for p in picked:
        shutil.copy(p, os.path.join(out, os.path.basename(p)))
    print(f"{len(picked)} files reach {len(seen)} of {len(all_edges)} edges")


if __name__ == "__main__":
    main()
