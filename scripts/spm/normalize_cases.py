#!/usr/bin/python3
"""normalize_cases.py records how the reference normalizes random text
under each precompiled character map of the models in testdata/spm/, and
writes testdata/spm/charsmap-cases.json for bpe/charsmap's tests.

Reference: Debian's python3-sentencepiece (0.1.97), run with
/usr/bin/python3. The map alone is applied by loading each model with its
normalizer's add_dummy_prefix, remove_extra_whitespaces and
escape_whitespaces turned off; the pieces of a byte-fallback model then
spell the normalized text exactly (byte pieces <0xNN> stand for their
byte). A model's user-defined symbols would skip normalization, so only
models without them are used. It also records, per map, the sha256 of
the map's rules as the reference's spm_normalize --decompile lists them.

    /usr/bin/python3 scripts/spm/normalize_cases.py [--serve MODEL]

With --serve it instead reads inputs from standard input (a 4-byte
little-endian length, then the bytes) and writes the normalized text the
same way: the fuzz test's live reference.
"""
import hashlib
import json
import os
import random
import re
import struct
import subprocess
import sys
import tempfile

import sentencepiece as spm

sys.path.insert(0, os.path.dirname(os.path.abspath(__file__)))
import spmproto  # noqa: E402

HERE = os.path.dirname(os.path.abspath(__file__))
OUT = os.path.join(HERE, "..", "..", "testdata", "spm")
MODELS = ["nfkc-bytes", "digits", "nodummy", "keepspace"]
BYTE = re.compile(rb"^<0x([0-9A-F]{2})>$")


def processor(model_bytes):
    bare = spmproto.with_normalizer_flags(
        model_bytes, add_dummy_prefix=False, remove_extra_whitespaces=False, escape_whitespaces=False)
    return spm.SentencePieceProcessor(model_proto=bare)


def normalize(sp, data):
    """The reference's map normalization of bytes data, as bytes."""
    if not data:
        return b""
    out = bytearray()
    for p in sp.encode_as_pieces(data):
        if isinstance(p, str):
            p = p.encode("utf-8")
        m = BYTE.match(p)
        out += bytes([int(m.group(1), 16)]) if m else p
    return bytes(out)


def decompiled_keys(path):
    """The map's rules as (key, value) code point lists, from spm_normalize."""
    with tempfile.NamedTemporaryFile(suffix=".tsv") as f:
        subprocess.run(["spm_normalize", "--model", path, "--decompile", "--output", f.name],
                       check=True, stderr=subprocess.DEVNULL)
        rules = []
        for line in open(f.name, encoding="utf-8"):
            cols = line.rstrip("\n").split("\t")
            key = [int(x, 16) for x in cols[0].split()]
            val = [int(x, 16) for x in cols[1].split()] if cols[1] else []
            rules.append((key, val))
        return rules


def rules_digest(rules):
    """sha256 of the rules as UTF-8 "key\\tvalue\\n" lines in byte order."""
    lines = sorted("".join(map(chr, k)).encode() + b"\t" + "".join(map(chr, v)).encode() + b"\n"
                   for k, v in rules)
    return hashlib.sha256(b"".join(lines)).hexdigest(), len(lines)


INVALID = [b"\x80", b"\xbf", b"\xc0\xaf", b"\xc3", b"\xe2\x82", b"\xed\xa0\x80", b"\xf0\x9f\x98",
           b"\xf4\x90\x80\x80", b"\xf8\x88\x80\x80\x80", b"\xfe", b"\xff", b"\xe0\x80\xaf"]
SPACES = [" ", "  ", "\t", "\r", "\u3000", "\u00a0", "\u2028", "\u200b", "\u2581", "\ufeff", "\x00"]


def random_text(rng, keys):
    parts = []
    for _ in range(rng.randint(1, 24)):
        k = rng.random()
        if k < 0.30:
            parts.append("".join(map(chr, rng.choice(keys))).encode())
        elif k < 0.50:
            parts.append(bytes(rng.randint(0x20, 0x7e) for _ in range(rng.randint(1, 6))))
        elif k < 0.60:
            parts.append(rng.choice(SPACES).encode())
        elif k < 0.70:
            parts.append(rng.choice(INVALID))
        elif k < 0.85:
            c = rng.randint(0x80, 0xffff)
            if 0xd800 <= c < 0xe000:
                c = 0xfffd
            parts.append(chr(c).encode())
        elif k < 0.92:
            parts.append(chr(rng.randint(0x10000, 0x10ffff)).encode())
        else:
            parts.append(bytes([rng.randint(0, 31)]))
    return b"".join(parts)


def case(data, out):
    c = {}
    try:
        c["in"] = data.decode("utf-8")
    except UnicodeDecodeError:
        c["in_hex"] = data.hex()
    try:
        c["out"] = out.decode("utf-8")
    except UnicodeDecodeError:
        c["out_hex"] = out.hex()
    return c


def serve(model):
    sp = processor(open(model, "rb").read())
    stdin, stdout = sys.stdin.buffer, sys.stdout.buffer
    while True:
        head = stdin.read(4)
        if len(head) < 4:
            return
        data = stdin.read(struct.unpack("<I", head)[0])
        out = normalize(sp, data)
        stdout.write(struct.pack("<I", len(out)) + out)
        stdout.flush()


def main():
    if len(sys.argv) == 3 and sys.argv[1] == "--serve":
        serve(sys.argv[2])
        return
    doc = {
        "reference": "Debian python3-sentencepiece %s (/usr/bin/python3), spm_normalize --decompile" % spm.__version__,
        "generator": "scripts/spm/normalize_cases.py",
        "maps": [],
    }
    for name in MODELS:
        path = os.path.join(OUT, name + ".model")
        model = open(path, "rb").read()
        sp = processor(model)
        rules = decompiled_keys(path)
        digest, n = rules_digest(rules)
        rng = random.Random("charsmap:" + name)
        keys = [k for k, _ in rules]
        cases = []
        for _ in range(300):
            data = random_text(rng, keys)
            cases.append(case(data, normalize(sp, data)))
        doc["maps"].append({"model": name + ".model", "rules": n, "rules_sha256": digest, "cases": cases})
    with open(os.path.join(OUT, "charsmap-cases.json"), "w", encoding="utf-8") as f:
        json.dump(doc, f, ensure_ascii=False, indent=1)
        f.write("\n")


if __name__ == "__main__":
    main()
