#!/usr/bin/python3
"""reference.py writes testdata/spm/reference-ids.json: the ids that the
reference encoder gives, under every model in testdata/spm/, for the
golden corpus (testdata/golden/corpus/) and a set of short cases chosen
for what each model's settings change.

Reference: Debian's python3-sentencepiece 0.1.97 (SentencePieceProcessor
.encode on the text's bytes), run with /usr/bin/python3. For each model it
also records a digest of the pieces (text, score, type) as the module
reads them, so the Go reader is checked piece for piece.

    /usr/bin/python3 scripts/spm/reference.py
"""
import hashlib
import json
import os
import struct

import sentencepiece as spm

HERE = os.path.dirname(os.path.abspath(__file__))
ROOT = os.path.join(HERE, "..", "..")
MODELS = os.path.join(ROOT, "testdata", "spm")
CORPUS = os.path.join(ROOT, "testdata", "golden", "corpus")
NAMES = ["nfkc-bytes", "identity", "digits", "userdef", "nodummy", "keepspace", "suffix", "unused", "ties"]

# Short cases: (name, bytes). Each exercises something the settings change.
SHORT = [
    ("empty", b""),
    ("one space", b" "),
    ("spaces only", b"   \t  "),
    ("word", b"hello"),
    ("two words", b"hello world"),
    ("leading and trailing space", b"  hello world  "),
    ("inner space run", b"a    b\t\tc"),
    ("newlines", b"line one\nline two\r\nline three\n"),
    ("tabs", b"key\tvalue\t\tend"),
    ("digits", b"In 2024 there were 1234567 requests, 3.14159 of them odd."),
    ("fullwidth", "ＡＢＣ　ｄｅｆ　１２３".encode()),
    ("ligatures", "ﬁle ﬂow ﬀ ﬃ".encode()),
    ("circled and superscript", "① ② x² H₂O ㎏ ™".encode()),
    ("combining", "e\u0301 a\u0308 n\u0303 Å".encode()),
    ("case", "Straße İstanbul ΣΑΣ MORSEL".encode()),
    ("cjk", "日本語のテキストと中文文本".encode()),
    ("hangul jamo", "\u1100\u1161\u11a8 한국어".encode()),
    ("emoji", "weigh 🚀 then 👩‍👩‍👧 and 🇫🇷".encode()),
    ("mark in text", "a\u2581b \u2581\u2581 c\u2581".encode()),
    ("control strings", b"<s> text </s> <unk> <pad> <0x41> <ctl>"),
    ("user symbols", b"<sep>[MASK]##morsel ##x <cls>user defined[MASK][MASK]"),
    ("user symbols spaced", b"a <sep> b [MASK] c morsel user  defined"),
    ("user symbols the map would change", "ﬁ ﬁle ＡＢ ＡＢＣ ｆｉ".encode()),
    ("invalid utf-8", b"ok \xff\xfe bad \xc3( \xed\xa0\x80 end\x80"),
    ("nul and controls", b"a\x00b\x01c\x7fd\x1be"),
    ("long word", b"Pneumonoultramicroscopicsilicovolcanoconiosis" * 3),
    ("no space line", b"abcdefghijklmnopqrstuvwxyz0123456789" * 20),
    ("url", b"https://example.invalid/path?query=1&x=y#frag"),
    ("code", b"func main() {\n\tfmt.Println(\"hi\")\n}\n"),
    ("nbsp and ideographic space", "a\u00a0b\u3000c\u2003d\u200be".encode()),
    ("only marks", "\u2581\u2581\u2581".encode()),
    ("unknown run", "\u0b85\u0b86\u0b87 \u0d05\u0d06 \u16a0\u16a1".encode()),
]


def pieces_digest(sp):
    h = hashlib.sha256()
    for i in range(sp.get_piece_size()):
        if sp.is_unknown(i):
            t = 2
        elif sp.is_control(i):
            t = 3
        elif sp.is_unused(i):
            t = 5
        elif sp.is_byte(i):
            t = 6
        else:
            t = 1  # normal and user-defined look alike to the module
        h.update(sp.id_to_piece(i).encode() + b"\t" + struct.pack("<f", sp.get_score(i)) + bytes([t]) + b"\n")
    return h.hexdigest()


def main():
    doc = {
        "reference": "Debian python3-sentencepiece %s (/usr/bin/python3), SentencePieceProcessor.encode" % spm.__version__,
        "generator": "scripts/spm/reference.py",
        "models": [],
    }
    texts = []
    for name in sorted(os.listdir(CORPUS)):
        with open(os.path.join(CORPUS, name), "rb") as f:
            texts.append(("corpus", name, f.read()))
    texts += [("inline", n, b) for n, b in SHORT]
    for name in NAMES:
        path = os.path.join(MODELS, name + ".model")
        sp = spm.SentencePieceProcessor(model_file=path)
        cases = []
        for source, n, data in texts:
            c = {"name": n, "source": source}
            if source == "inline":
                try:
                    c["text"] = data.decode("utf-8")
                except UnicodeDecodeError:
                    c["hex"] = data.hex()
            c["sha256"] = hashlib.sha256(data).hexdigest()
            c["ids"] = sp.encode(data) if data else []
            cases.append(c)
        doc["models"].append({
            "model": name + ".model",
            "pieces": sp.get_piece_size(),
            "pieces_sha256": pieces_digest(sp),
            "bos_id": sp.bos_id(),
            "cases": cases,
        })
    out = os.path.join(MODELS, "reference-ids.json")
    with open(out, "w", encoding="utf-8") as f:
        f.write("{\n")
        for k in ("reference", "generator"):
            f.write(' "%s": %s,\n' % (k, json.dumps(doc[k])))
        f.write(' "models": [\n')
        for i, m in enumerate(doc["models"]):
            f.write('  {"model": %s, "pieces": %d, "pieces_sha256": %s, "bos_id": %d, "cases": [\n'
                    % (json.dumps(m["model"]), m["pieces"], json.dumps(m["pieces_sha256"]), m["bos_id"]))
            f.write(",\n".join("   " + json.dumps(c, ensure_ascii=False) for c in m["cases"]))
            f.write("\n  ]}%s\n" % ("," if i + 1 < len(doc["models"]) else ""))
        f.write(" ]\n}\n")


if __name__ == "__main__":
    main()
