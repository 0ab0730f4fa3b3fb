#!/usr/bin/python3
"""Exits 0 when two HDF5 files hold the same content, else prints every difference and exits 1.

Same content: the same groups and datasets, each with the same type, shape, declared fill value
and values (exactly: an MPI run must reproduce the serial run bit for bit), and the same
attributes with the same values; object references (dimension scales) compare by the name of
what they point at. Storage (chunking, file offsets) may differ. Attributes named with --ignore
(default: the global `history`, which holds the creation time) are skipped.

    h5_same_content.py A.h5 B.h5 [--ignore /:history ...]
"""
import argparse
import sys

import h5py
import numpy as np


def resolve(f, value):
    """An attribute value with object references replaced by the referenced objects' names."""
    if isinstance(value, h5py.Reference):
        return f[value].name if value else None
    if isinstance(value, np.ndarray):
        if value.dtype.kind == "O":
            return [resolve(f, v) for v in value.ravel()]
        if value.dtype.names:  # compound, e.g. REFERENCE_LIST (reference, index)
            return [tuple(resolve(f, x) for x in row) for row in value.ravel()]
        return value
    if isinstance(value, np.void) and value.dtype.names:
        return tuple(resolve(f, x) for x in value)
    return value


def same(a, b):
    if isinstance(a, np.ndarray) or isinstance(b, np.ndarray):
        a, b = np.asarray(a), np.asarray(b)
        return a.shape == b.shape and a.dtype == b.dtype and np.array_equal(a, b)
    return a == b


def main():
    p = argparse.ArgumentParser()
    p.add_argument("a")
    p.add_argument("b")
    p.add_argument("--ignore", action="append", default=None, help="OBJECT:ATTRIBUTE to skip")
    args = p.parse_args()
    ignore = set(args.ignore or ["/:history"])
    problems = []
    with h5py.File(args.a, "r") as fa, h5py.File(args.b, "r") as fb:
        names = {}
        for f, key in ((fa, "a"), (fb, "b")):
            found = {"/": f}
            f.visititems(lambda n, o: found.__setitem__("/" + n, o))
            names[key] = found
        for n in sorted(set(names["a"]) ^ set(names["b"])):
            problems.append(f"{n}: only in {'A' if n in names['a'] else 'B'}")
        compared = 0
        for n in sorted(set(names["a"]) & set(names["b"])):
            oa, ob = names["a"][n], names["b"][n]
            if isinstance(oa, h5py.Dataset) != isinstance(ob, h5py.Dataset):
                problems.append(f"{n}: a dataset in one file only")
                continue
            if isinstance(oa, h5py.Dataset):
                if oa.dtype != ob.dtype or oa.shape != ob.shape:
                    problems.append(f"{n}: {oa.dtype}{oa.shape} against {ob.dtype}{ob.shape}")
                    continue
                va, vb = oa[()], ob[()]
                if not same(np.asarray(va), np.asarray(vb)):
                    diff = np.argwhere(np.asarray(va) != np.asarray(vb))
                    problems.append(f"{n}: values differ at {len(diff)} place(s), first {diff[0].tolist() if len(diff) else '?'}")
                # (h5py 3.7 crashes reading the fill value of a string dataset: numbers only)
                if oa.dtype.kind in "fiu":
                    fa_, fb_ = oa.fillvalue, ob.fillvalue
                    if not same(np.asarray(fa_), np.asarray(fb_)):
                        problems.append(f"{n}: fill value {fa_} against {fb_}")
                compared += 1
            for k in sorted(set(oa.attrs) | set(ob.attrs)):
                if f"{n}:{k}" in ignore:
                    continue
                if k not in oa.attrs or k not in ob.attrs:
                    problems.append(f"{n}: attribute {k} only in {'A' if k in oa.attrs else 'B'}")
                    continue
                ra, rb = resolve(fa, oa.attrs[k]), resolve(fb, ob.attrs[k])
                if not same(ra, rb):
                    problems.append(f"{n}: attribute {k}: {ra!r:.120} against {rb!r:.120}")
    for line in problems:
        print(f"{args.a} vs {args.b}: {line}", file=sys.stderr)
    if not problems:
        print(f"same content: {args.a} and {args.b} ({compared} datasets)")
    return 1 if problems else 0


if __name__ == "__main__":
    sys.exit(main())
