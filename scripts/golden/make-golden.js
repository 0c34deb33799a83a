// make-golden.js writes testdata/golden/gpt2-ids.json: the token ids that a
// reference BPE library (@huggingface/tokenizers, version pinned in
// package.json) gives for every file in testdata/golden/corpus/ and for a set
// of short inline texts, using the GPT-2 vocabulary pair in
// /work/shared/vocab/gpt2/. bpe/golden_test.go compares the Go engine with
// these ids. The library is used here only to produce expected values.
//
// Run: cd scripts/golden && npm ci && node make-golden.js
// Options: --vocab-dir DIR (default /work/shared/vocab/gpt2),
//          --check (exit 1 if the JSON on disk differs from a fresh run).
//
// With --bundle FILE --name NAME it writes testdata/golden/NAME-ids.json
// instead: the ids of the same texts under a tokenizer bundle
// (tokenizer.json, with tokenizer_config.json beside it when there is one),
// in two modes: "ordinary" (special added tokens left out of the bundle, so
// their strings are text) and "special" (all added tokens), plus the ids a
// single sequence gets from the post-processor ("template" cases).
// node make-golden.js --all-bundles rewrites every bundle golden that
// bpe/bundle_golden_test.go reads.

import { createHash } from "node:crypto";
import { readFileSync, readdirSync, writeFileSync, existsSync } from "node:fs";
import { dirname, join, resolve } from "node:path";
import { fileURLToPath } from "node:url";
import { Tokenizer } from "@huggingface/tokenizers";

const here = dirname(fileURLToPath(import.meta.url));
const root = resolve(here, "..", "..");
const corpusDir = join(root, "testdata", "golden", "corpus");
const outFile = join(root, "testdata", "golden", "gpt2-ids.json");

const LIBRARY = "@huggingface/tokenizers";
const libVersion = JSON.parse(
  readFileSync(join(here, "node_modules", "@huggingface", "tokenizers", "package.json"), "utf8"),
).version;

const END_OF_TEXT = "<|endoftext|>";
const END_OF_TEXT_ID = 50256;

function arg(name, fallback) {
  const i = process.argv.indexOf(name);
  return i >= 0 && i + 1 < process.argv.length ? process.argv[i + 1] : fallback;
}
const vocabDir = arg("--vocab-dir", "/work/shared/vocab/gpt2");
const checkOnly = process.argv.includes("--check");

function fail(msg) {
  console.error(`make-golden: ${msg}`);
  process.exit(1);
}

function sha256(buf) {
  return createHash("sha256").update(buf).digest("hex");
}

// loadPair reads vocab.json and merges.txt and returns them in the shapes the
// library's BPE model takes: an object token -> id and an array of "a b" lines.
function loadPair(dir) {
  const vocabPath = join(dir, "vocab.json");
  const mergesPath = join(dir, "merges.txt");
  const vocabRaw = readFileSync(vocabPath);
  const mergesRaw = readFileSync(mergesPath);
  const vocab = JSON.parse(vocabRaw.toString("utf8"));
  const lines = mergesRaw.toString("utf8").split("\n");
  const merges = [];
  lines.forEach((line, i) => {
    if (i === 0 && line.startsWith("#version")) return;
    if (line === "") {
      if (i !== lines.length - 1) fail(`${mergesPath}:${i + 1}: empty merge line`);
      return;
    }
    const parts = line.split(" ");
    if (parts.length !== 2) fail(`${mergesPath}:${i + 1}: merge ${JSON.stringify(line)} is not two symbols`);
    merges.push(line);
  });
  if (vocab[END_OF_TEXT] !== END_OF_TEXT_ID) {
    fail(`${vocabPath}: ${END_OF_TEXT} has id ${vocab[END_OF_TEXT]}, want ${END_OF_TEXT_ID}`);
  }
  return { vocab, merges, vocabSha: sha256(vocabRaw), mergesSha: sha256(mergesRaw) };
}

// build returns a GPT-2 tokenizer: byte-level pre-tokenizer (the GPT-2 split
// pattern, no prefix space), BPE over the pair, byte-level decoder. With
// honorSpecials the end-of-text string is an added special token and maps to
// its id; without, the tokenizer has no added tokens, so that string is
// encoded as ordinary text.
function build(pair, honorSpecials) {
  const byteLevel = { type: "ByteLevel", add_prefix_space: false, trim_offsets: true, use_regex: true };
  const json = {
    version: "1.0",
    truncation: null,
    padding: null,
    added_tokens: honorSpecials
      ? [
          {
            id: END_OF_TEXT_ID,
            content: END_OF_TEXT,
            single_word: false,
            lstrip: false,
            rstrip: false,
            normalized: false,
            special: true,
          },
        ]
      : [],
    normalizer: null,
    pre_tokenizer: byteLevel,
    post_processor: { ...byteLevel, trim_offsets: false },
    decoder: byteLevel,
    model: {
      type: "BPE",
      dropout: null,
      unk_token: null,
      continuing_subword_prefix: null,
      end_of_word_suffix: null,
      fuse_unk: false,
      byte_fallback: false,
      ignore_merges: false,
      vocab: pair.vocab,
      merges: pair.merges,
    },
  };
  return new Tokenizer(json, { clean_up_tokenization_spaces: false });
}

// Code points on which regular-expression dialects disagree about \s
// (JavaScript counts U+FEFF and not U+0085; Unicode White_Space counts U+0085
// and not U+FEFF; some engines count U+001C..U+001F). Golden texts avoid them
// so that the ids do not depend on the library's regex engine.
const DIALECT_SPACES = [0x1c, 0x1d, 0x1e, 0x1f, 0x85, 0xfeff, 0x180e];

function checkText(name, text, raw) {
  if (raw && !Buffer.from(text, "utf8").equals(raw)) fail(`${name}: not valid UTF-8`);
  let line = 1;
  for (const ch of text) {
    const cp = ch.codePointAt(0);
    if (cp === 0x0a) line++;
    if (DIALECT_SPACES.includes(cp)) {
      fail(`${name}:${line}: U+${cp.toString(16).toUpperCase().padStart(4, "0")} is white space in some regex dialects only; leave it out`);
    }
  }
}

// encode returns the ids for text and checks them: every piece must have an
// id (the model has no unknown token, so a missing piece would vanish) and
// the ids must decode back to the text.
function encode(tok, name, text) {
  const enc = tok.encode(text, { add_special_tokens: false });
  enc.ids.forEach((id, i) => {
    if (!Number.isInteger(id)) fail(`${name}: piece ${i} ${JSON.stringify(enc.tokens[i])} has no id`);
  });
  if (enc.ids.length > 0) {
    const back = tok.decode(enc.ids, { clean_up_tokenization_spaces: false });
    if (back !== text) fail(`${name}: ids do not decode back to the text`);
  } else if (text !== "") {
    fail(`${name}: no ids for a non-empty text`);
  }
  return enc.ids;
}

// Short texts that probe the split pattern and the merges. mode "ordinary"
// encodes special strings as text; mode "special" maps them to their ids.
const INLINE = [
  ["contractions-upper", "I'M here, They'RE there, WE'LL see, YOU'VE got it, HE'D go, IT'S ok, DON'T."],
  ["contractions-lower", "don't can't won't I'm you're we've they'll she'd it's"],
  ["contractions-mixed", "They'Re We'lL it'S I'd'Ve o'clock rock'n'roll"],
  ["apostrophe-s-alone", "'s"],
  ["apostrophe-runs", "''s '''t 's's ' s"],
  ["spaces-between", "a   b"],
  ["tabs-then-space", "\t\t x"],
  ["crlf-alone", "\r\n"],
  ["crlf-lines", "one\r\ntwo\r\n\r\nthree\r\n"],
  ["trailing-spaces", "end   "],
  ["trailing-newlines", "end\n\n\n"],
  ["only-spaces", "      "],
  ["single-space", " "],
  ["space-newline-space", "a \n b\n\n  c"],
  ["long-space-run", "x" + " ".repeat(100) + "y"],
  ["empty", ""],
  ["numbers", "12345 3.14159 1,000,000"],
  ["long-number", "123456789012345678901234567890"],
  ["number-letter-mix", "v1.2.3 x86_64 4K 2nd 0xFF 1e-9"],
  ["unicode-spaces", "a\u00a0b\u3000c\u2003d\u202fe"],
  ["combining-marks", "e\u0301 n\u0303 a\u0308\u0304"],
  ["mixed-script-word", "abc\u0414\u0415\u0416\u65e5\u672c \u0928\u092e\u0938\u094d\u0924\u0947"],
  ["emoji-zwj-family", "\u{1F468}\u200D\u{1F469}\u200D\u{1F467}\u200D\u{1F466}"],
  ["emoji-zwj-mixed", "\u{1F44D}\u{1F3FD} \u{1F3F3}\uFE0F\u200D\u{1F308} \u{1F1E9}\u{1F1EA} \u2764\uFE0F\u200D\u{1F525} \u{1F9D1}\u{1F3FF}\u200D\u{1F680}"],
  ["endoftext-ordinary", END_OF_TEXT],
  ["endoftext-in-text-ordinary", `Hello${END_OF_TEXT}World ${END_OF_TEXT} again`],
];
const INLINE_SPECIAL = [
  ["endoftext-special", END_OF_TEXT],
  ["endoftext-in-text-special", `Hello${END_OF_TEXT}World ${END_OF_TEXT} again`],
  ["endoftext-twice-special", `${END_OF_TEXT}${END_OF_TEXT}x`],
  ["endoftext-partial-special", "<|endoftext|"],
];

// BUNDLES lists the bundle goldens: the real bundles from ../shared/vocab
// and the small ones under testdata/bundles/.
const BUNDLES = [
  ["qwen3", "/work/shared/vocab/qwen3/tokenizer.json"],
  ["metaspace-32k", "/work/shared/vocab/metaspace-32k/tokenizer.json"],
];

// Short texts for bundles: the inline texts above, and some that probe
// added tokens, digits, case and spaces.
const BUNDLE_INLINE = [
  ...INLINE,
  ["digits-run", "0123456789 12 345 6789 3.14159 1,000,000 ١٢٣ ①②"],
  ["digits-in-words", "x86_64 v1.2.3 2nd 0xFF 1e-9 H2O"],
  ["case-contractions", "I'M WE'LL YOU'RE THEY'VE SHE'D IT'S 'S 'Ll"],
  ["leading-symbols", "(hello) [world] {x} \"quoted\" 'single' --flag ..dots"],
  ["newline-runs", "a\n\nb\r\n\r\nc \n d\t\n\te"],
  ["spaces-only-lines", "line one   \n   \n\tline two\n"],
  ["metaspace-char", "a \u2581 b\u2581\u2581c \u2581"],
  ["leading-space", " starts with a space"],
  ["two-leading-spaces", "  two spaces"],
  ["nfc-nfd", "e\u0301 caf\u00e9 cafe\u0301 \u212b \u00c5"],
  ["added-in-text", "Ask <think>why</think> then <tool_call>{\"a\":1}</tool_call>"],
  ["added-glued", "x<think>y</think>z<|fim_prefix|>"],
  ["special-strings-as-text", "<|endoftext|> and <|im_start|>user<|im_end|> and <s> </s> <unk>"],
  ["byte-fallback", "\u{1F9EC} \u{10348} \u0f3a \u2a6d6 \uABCD"],
];
const BUNDLE_INLINE_SPECIAL = [
  ["special-strings", "<|endoftext|> and <|im_start|>user<|im_end|> and <s> </s> <unk>"],
  ["special-glued", "<|im_start|>system\nYou help.<|im_end|>\n<s>x</s>"],
  ["special-twice", "<|endoftext|><|endoftext|>x<s><s>"],
];

// DERIVED lists bundles made from another by replacing its pre-tokenizer,
// for the split patterns no real bundle here has: [name, base, patterns].
// cjk-sequence is qwen3 with a Sequence of three Isolated Splits (numbers
// in groups of three, then Han and kana runs, then letters with their marks)
// and a ByteLevel without its own regex; the patterns are bpe's
// NumberGroupsPattern, KanaHanPattern and LettersMarksPattern, which
// bpe/bundle_golden_test.go checks against the golden's copy.
const DERIVED = [
  [
    "cjk-sequence",
    "/work/shared/vocab/qwen3/tokenizer.json",
    [
      "\\p{N}{1,3}",
      "[\u4e00-\u9fa5\u3040-\u309f\u30a0-\u30ff]+",
      "[!\"#$%&'()*+,\\-./:;<=>?@\\[\\\\\\]^_`{|}~][A-Za-z]+|[^\\r\\n\\p{L}\\p{P}\\p{S}]?[\\p{L}\\p{M}]+| ?[\\p{P}\\p{S}]+[\\r\\n]*|\\s*[\\r\\n]+|\\s+(?!\\S)|\\s+",
    ],
  ],
];

// chainOf returns the pre-tokenizer of a derived bundle.
function chainOf(patterns) {
  const splits = patterns.map((p) => ({ type: "Split", pattern: { Regex: p }, behavior: "Isolated", invert: false }));
  return { type: "Sequence", pretokenizers: [...splits, { type: "ByteLevel", add_prefix_space: false, trim_offsets: true, use_regex: false }] };
}

// buildBundle returns a tokenizer for the bundle; without honorSpecials
// the special added tokens are left out, so their strings are text. With
// patterns, the pre-tokenizer is replaced by their chain (chainOf).
function buildBundle(file, honorSpecials, patterns) {
  const json = JSON.parse(readFileSync(file, "utf8"));
  if (patterns) json.pre_tokenizer = chainOf(patterns);
  const cfgFile = join(dirname(file), "tokenizer_config.json");
  const cfg = existsSync(cfgFile) ? JSON.parse(readFileSync(cfgFile, "utf8")) : {};
  if (!honorSpecials) json.added_tokens = (json.added_tokens ?? []).filter((t) => !t.special);
  return new Tokenizer(json, { ...cfg, clean_up_tokenization_spaces: false });
}

function bundleGolden(name, file, patterns) {
  const raw = readFileSync(file);
  const plain = buildBundle(file, false, patterns);
  const honor = buildBundle(file, true, patterns);
  const ids = (tok, text) => tok.encode(text, { add_special_tokens: false }).ids;
  const cases = [];
  const files = readdirSync(corpusDir).filter((f) => !f.startsWith(".")).sort();
  for (const f of files) {
    const buf = readFileSync(join(corpusDir, f));
    const text = buf.toString("utf8");
    checkText(f, text, buf);
    cases.push({ name: f, source: "corpus", mode: "ordinary", bytes: buf.length, sha256: sha256(buf), ids: ids(plain, text) });
  }
  for (const [n, text] of BUNDLE_INLINE) {
    const buf = Buffer.from(text, "utf8");
    cases.push({ name: n, source: "inline", mode: "ordinary", text, bytes: buf.length, sha256: sha256(buf), ids: ids(plain, text) });
  }
  for (const [n, text] of BUNDLE_INLINE_SPECIAL) {
    const buf = Buffer.from(text, "utf8");
    cases.push({ name: n, source: "inline", mode: "special", text, bytes: buf.length, sha256: sha256(buf), ids: ids(honor, text) });
  }
  // What the post-processor adds to one sequence: the ids of a text with
  // the template, less those without.
  const text = "template probe";
  const withT = honor.encode(text, { add_special_tokens: true }).ids;
  const without = ids(honor, text);
  const head = {
    library: LIBRARY,
    version: libVersion,
    generator: "scripts/golden/make-golden.js --bundle",
    bundle: name,
    bundle_sha256: sha256(raw),
    modes: {
      ordinary: "special added tokens left out of the bundle: their strings are text",
      special: "every added token as the bundle has it",
    },
    template_probe: { text, with_template: withT, without_template: without },
  };
  if (patterns) {
    head.derived = "the bundle of bundle_sha256 with its pre_tokenizer replaced by a Sequence of these Isolated Splits and a ByteLevel (use_regex false)";
    head.split_patterns = patterns;
  }
  const headJSON = JSON.stringify(head, null, 2);
  return headJSON.slice(0, -2) + ',\n  "cases": [\n' + cases.map((c) => "    " + JSON.stringify(c)).join(",\n") + "\n  ]\n}\n";
}

function writeOrCheck(outPath, out) {
  if (checkOnly) {
    const old = existsSync(outPath) ? readFileSync(outPath, "utf8") : "";
    if (old !== out) fail(`${outPath} is out of date; run node make-golden.js`);
    console.log(`make-golden: ${outPath} is up to date`);
    return;
  }
  writeFileSync(outPath, out);
  console.log(`make-golden: wrote ${outPath}`);
}

function main() {
  const bundleFile = arg("--bundle", null);
  if (bundleFile || process.argv.includes("--all-bundles")) {
    const list = bundleFile ? [[arg("--name", "bundle"), bundleFile]] : allBundles();
    for (const [name, file] of list) writeOrCheck(join(root, "testdata", "golden", `${name}-ids.json`), bundleGolden(name, file));
    if (!bundleFile) {
      for (const [name, file, patterns] of DERIVED) writeOrCheck(join(root, "testdata", "golden", `${name}-ids.json`), bundleGolden(name, file, patterns));
    }
    return;
  }
  const pair = loadPair(vocabDir);
  const plain = build(pair, false);
  const honor = build(pair, true);

  const cases = [];
  const files = readdirSync(corpusDir)
    .filter((f) => !f.startsWith("."))
    .sort();
  if (files.length === 0) fail(`${corpusDir}: no corpus files`);
  for (const f of files) {
    const raw = readFileSync(join(corpusDir, f));
    const text = raw.toString("utf8");
    checkText(f, text, raw);
    if (text.includes(END_OF_TEXT)) fail(`${f}: contains ${END_OF_TEXT}; corpus files are ordinary text`);
    cases.push({ name: f, source: "corpus", mode: "ordinary", bytes: raw.length, sha256: sha256(raw), ids: encode(plain, f, text) });
  }
  for (const [name, text] of INLINE) {
    checkText(name, text, null);
    const raw = Buffer.from(text, "utf8");
    cases.push({ name, source: "inline", mode: "ordinary", text, bytes: raw.length, sha256: sha256(raw), ids: encode(plain, name, text) });
  }
  for (const [name, text] of INLINE_SPECIAL) {
    const raw = Buffer.from(text, "utf8");
    cases.push({ name, source: "inline", mode: "special", text, bytes: raw.length, sha256: sha256(raw), ids: encode(honor, name, text) });
  }

  // One case per line keeps diffs readable.
  const head = {
    library: LIBRARY,
    version: libVersion,
    generator: "scripts/golden/make-golden.js",
    vocab_sha256: pair.vocabSha,
    merges_sha256: pair.mergesSha,
    modes: {
      ordinary: `no added tokens: ${END_OF_TEXT} is encoded as ordinary text`,
      special: `${END_OF_TEXT} is an added special token with id ${END_OF_TEXT_ID}`,
    },
  };
  const headJSON = JSON.stringify(head, null, 2);
  const out =
    headJSON.slice(0, -2) +
    ',\n  "cases": [\n' +
    cases.map((c) => "    " + JSON.stringify(c)).join(",\n") +
    "\n  ]\n}\n";

  const total = cases.reduce((n, c) => n + c.ids.length, 0);
  if (checkOnly) {
    const old = existsSync(outFile) ? readFileSync(outFile, "utf8") : "";
    if (old !== out) fail(`${outFile} is out of date; run node make-golden.js`);
    console.log(`make-golden: ${outFile} is up to date (${cases.length} cases, ${total} ids)`);
    return;
  }
  writeFileSync(outFile, out);
  console.log(`make-golden: wrote ${cases.length} cases, ${total} ids with ${LIBRARY} ${libVersion} to ${outFile}`);
}

// SMALL_BUNDLES are the bundles of testdata/bundles/ (written by
// make-bundles.py) whose components this library implements as the
// tokenizers library does. precompiled.json is not among them: this
// library's Precompiled normalizer applies NFKC and a few replacements
// instead of the bundle's character map, so bpe checks that one against
// Debian's sentencepiece.
const SMALL_BUNDLES = ["words"];

function allBundles() {
  return [...BUNDLES, ...SMALL_BUNDLES.map((n) => [n, join(root, "testdata", "bundles", n + ".json")])];
}

main();
