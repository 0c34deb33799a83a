#!/usr/bin/python3
"""make-bundles.py writes the small tokenizer bundles of testdata/bundles/
that bpe's tests use for components the two real bundles lack.

Each bundle's vocabulary is learned here from the golden corpus
(testdata/golden/corpus/) by plain BPE: count adjacent symbol pairs over
the words, merge the most frequent (ties by the pair's text), repeat. The
merges need not be good; they must exist and be consistent.

- words.json: normalizers NFKC, Lowercase, Strip, Replace (Regex);
  pre-tokenizers WhitespaceSplit, Digits, Split (Regex, Isolated); a model
  with end_of_word_suffix and an unk token (not fused: the reference library
  fuses unknown tokens across pre-tokens, where the model fuses them within
  one; bpe tests fuse_unk by hand); added tokens with lstrip
  and rstrip. Goldens from the reference library (make-golden.js).
- precompiled.json: the Precompiled normalizer with the character map of
  testdata/spm/nfkc-bytes.model, a Metaspace pre-tokenizer and byte
  fallback. The reference library only approximates Precompiled (NFKC), so
  bpe checks this normalizer against Debian's sentencepiece instead.

    /usr/bin/python3 scripts/golden/make-bundles.py
"""
import base64
import collections
import json
import os
import re
import sys
import unicodedata

HERE = os.path.dirname(os.path.abspath(__file__))
ROOT = os.path.join(HERE, "..", "..")
sys.path.insert(0, os.path.join(ROOT, "scripts", "spm"))
import spmproto  # noqa: E402

CORPUS = os.path.join(ROOT, "testdata", "golden", "corpus")
OUT = os.path.join(ROOT, "testdata", "bundles")


def corpus_words(norm):
    words = collections.Counter()
    for name in sorted(os.listdir(CORPUS)):
        if name.startswith("."):
            continue
        with open(os.path.join(CORPUS, name), encoding="utf-8") as f:
            for w in re.split(r"\s+", norm(f.read())):
                if w:
                    words[w] += 1
    return words


def learn(words, merges_wanted, suffix="", prefix_char=""):
    """Returns (vocab list, merges list) learned over words."""
    seqs = {}
    vocab = {}
    for w, c in words.items():
        syms = list(prefix_char + w)
        if suffix:
            syms[-1] += suffix
        seqs[w] = (syms, c)
        for s in syms:
            vocab.setdefault(s, len(vocab))
    merges = []
    for _ in range(merges_wanted):
        pairs = collections.Counter()
        for syms, c in seqs.values():
            for a, b in zip(syms, syms[1:]):
                pairs[(a, b)] += c
        if not pairs:
            break
        best = max(pairs.items(), key=lambda kv: (kv[1], kv[0]))[0]
        merges.append(best)
        new = best[0] + best[1]
        vocab.setdefault(new, len(vocab))
        for w, (syms, c) in seqs.items():
            i, out = 0, []
            while i < len(syms):
                if i + 1 < len(syms) and (syms[i], syms[i + 1]) == best:
                    out.append(new)
                    i += 2
                else:
                    out.append(syms[i])
                    i += 1
            seqs[w] = (out, c)
    return vocab, merges


def write(name, bundle):
    path = os.path.join(OUT, name)
    with open(path, "w", encoding="utf-8") as f:
        json.dump(bundle, f, ensure_ascii=False, indent=1, sort_keys=False)
        f.write("\n")
    print("make-bundles: wrote", path)


def words_bundle():
    def norm(t):
        return re.sub(r"\s+", " ", unicodedata.normalize("NFKC", t).lower()).strip()

    words = corpus_words(norm)
    # Split as the pre-tokenizers will: digits alone, punctuation alone.
    parts = collections.Counter()
    for w, c in words.items():
        for p in re.findall(r"[0-9]|[.,;:!?]|[^0-9.,;:!?]+", w):
            parts[p] += c
    vocab, merges = learn(parts, 600, suffix="</w>")
    vocab = {"<unk>": 0, **{k: i + 1 for k, i in vocab.items()}}
    n = len(vocab)
    added = [
        {"id": n, "content": "[MASK]", "single_word": False, "lstrip": True, "rstrip": True, "normalized": False, "special": True},
        {"id": n + 1, "content": "<sep>", "single_word": False, "lstrip": False, "rstrip": True, "normalized": False, "special": False},
        {"id": 0, "content": "<unk>", "single_word": False, "lstrip": False, "rstrip": False, "normalized": False, "special": True},
    ]
    return {
        "version": "1.0",
        "truncation": None,
        "padding": None,
        "added_tokens": added,
        "normalizer": {"type": "Sequence", "normalizers": [
            {"type": "NFKC"},
            {"type": "Lowercase"},
            {"type": "Strip", "strip_left": True, "strip_right": True},
            {"type": "Replace", "pattern": {"Regex": "\\s+"}, "content": " "},
        ]},
        "pre_tokenizer": {"type": "Sequence", "pretokenizers": [
            {"type": "WhitespaceSplit"},
            {"type": "Digits", "individual_digits": True},
            {"type": "Split", "pattern": {"Regex": "[.,;:!?]"}, "behavior": "Isolated", "invert": False},
        ]},
        "post_processor": None,
        "decoder": None,
        "model": {"type": "BPE", "dropout": None, "unk_token": "<unk>", "continuing_subword_prefix": None,
                  "end_of_word_suffix": "</w>", "fuse_unk": False, "byte_fallback": False, "ignore_merges": False,
                  "vocab": vocab, "merges": [a + " " + b for a, b in merges]},
    }


def precompiled_bundle():
    with open(os.path.join(ROOT, "testdata", "spm", "nfkc-bytes.model"), "rb") as f:
        blob = spmproto.charsmap(f.read())

    def norm(t):
        return unicodedata.normalize("NFKC", t).replace(" ", "\u2581")

    words = collections.Counter()
    for w, c in corpus_words(norm).items():
        for p in w.split("\u2581"):
            if p:
                words["\u2581" + p] += c
    vocab, merges = learn(words, 300)
    vocab.setdefault("\u2581", len(vocab))
    full = {f"<0x{b:02X}>": b for b in range(256)}
    for k in sorted(vocab, key=vocab.get):
        if k not in full:
            full[k] = len(full)
    return {
        "version": "1.0",
        "truncation": None,
        "padding": None,
        "added_tokens": [],
        "normalizer": {"type": "Precompiled", "precompiled_charsmap": base64.b64encode(blob).decode()},
        "pre_tokenizer": {"type": "Metaspace", "replacement": "\u2581", "prepend_scheme": "always", "split": True},
        "post_processor": None,
        "decoder": None,
        "model": {"type": "BPE", "dropout": None, "unk_token": None, "continuing_subword_prefix": None,
                  "end_of_word_suffix": None, "fuse_unk": False, "byte_fallback": True, "ignore_merges": False,
                  "vocab": full, "merges": [[a, b] for a, b in merges]},
    }


def main():
    os.makedirs(OUT, exist_ok=True)
    write("words.json", words_bundle())
    write("precompiled.json", precompiled_bundle())


main()
