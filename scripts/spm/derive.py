#!/usr/bin/python3
"""derive.py makes two models from testdata/spm/identity.model that no
trainer setting gives, to check the encoder where the reference's steps
are easy to get wrong:

- unused.model: every seventh merged piece marked UNUSED, which the
  reference still merges into and then splits back into its parts;
- ties.model: scores rounded down to multiples of 16, so that pieces of
  equal score compete and the leftmost pair must go first.

    /usr/bin/python3 scripts/spm/derive.py
"""
import os
import struct
import sys

sys.path.insert(0, os.path.dirname(os.path.abspath(__file__)))
import spmproto  # noqa: E402

OUT = os.path.join(os.path.dirname(os.path.abspath(__file__)), "..", "..", "testdata", "spm")


def rewrite(model, fn):
    """Returns model with each piece message replaced by fn(index, fields)."""
    out = bytearray()
    i = 0
    for num, wt, v, raw in spmproto.fields(model):
        if num != 1:
            out += raw
            continue
        piece = fn(i, {n: x for n, w, x, r in spmproto.fields(v)})
        i += 1
        body = bytearray()
        body += spmproto._put_varint(1 << 3 | 2) + spmproto._put_varint(len(piece[1])) + piece[1]
        body += spmproto._put_varint(2 << 3 | 5) + piece.get(2, b"\0\0\0\0")
        if 3 in piece:
            body += spmproto._put_varint(3 << 3 | 0) + spmproto._put_varint(piece[3])
        out += spmproto._put_varint(1 << 3 | 2) + spmproto._put_varint(len(body)) + body
    return bytes(out)


def main():
    base = open(os.path.join(OUT, "identity.model"), "rb").read()
    merged = []

    def unused(i, p):
        if p.get(3, 1) == 1 and len(p[1].decode()) > 1:
            merged.append(i)
            if len(merged) % 7 == 0:
                p[3] = 5
        return p

    def ties(i, p):
        score = struct.unpack("<f", p.get(2, b"\0\0\0\0"))[0]
        if p.get(3, 1) == 1:
            p[2] = struct.pack("<f", float(int(score // 16) * 16))
        return p

    open(os.path.join(OUT, "unused.model"), "wb").write(rewrite(base, unused))
    open(os.path.join(OUT, "ties.model"), "wb").write(rewrite(base, ties))


if __name__ == "__main__":
    main()
