#!/usr/bin/env bash
# train.sh trains the small SentencePiece BPE models under testdata/spm/ on
# open text of this machine (Debian package documentation under
# /usr/share/doc), one model for each setting that changes encoding. It
# needs Debian's sentencepiece package (spm_train). The models are
# committed; rerun this only to remake them, then run normalize_cases.py
# and reference.py. derive.py makes two more from identity.model.
set -euo pipefail
here=$(cd "$(dirname "$0")" && pwd)
out="$here/../../testdata/spm"
mkdir -p "$out"
# A fixed folder: the trainer records its input and output paths in the
# model, so that the same text gives the same bytes.
work=/tmp/morsel-spm-train
rm -rf "$work" && mkdir -p "$work"
trap 'rm -rf "$work"' EXIT

# The training text: every package's copyright file and then its
# compressed changelogs and READMEs, in name order, cut at 4 MB.
{
	find /usr/share/doc -type f -name copyright | LC_ALL=C sort | xargs cat
	find /usr/share/doc -type f \( -name 'changelog*.gz' -o -name 'README*.gz' -o -name 'NEWS*.gz' \) |
		LC_ALL=C sort | xargs zcat 2>/dev/null
} | head -c 4000000 >"$work/train.txt" || true

# train NAME VOCAB [spm_train flags...]
train() {
	local name=$1 size=$2
	shift 2
	spm_train --input="$work/train.txt" --model_prefix="$work/$name" --model_type=bpe \
		--vocab_size="$size" --num_threads=1 --minloglevel=2 "$@" >"$work/$name.log" 2>&1 ||
		{ cat "$work/$name.log"; exit 1; }
	cp "$work/$name.model" "$out/$name.model"
	echo "$name: $(stat -c %s "$out/$name.model") bytes, flags: $*"
}

train nfkc-bytes 8000 --byte_fallback
train identity 4000 --normalization_rule_name=identity
train digits 4000 --normalization_rule_name=nfkc --split_digits --byte_fallback
train userdef 4000 --byte_fallback --user_defined_symbols='<sep>,<cls>,[MASK],##,▁morsel,user defined,ﬁ,ＡＢ' \
	--control_symbols='<ctl>'
train nodummy 4000 --normalization_rule_name=nmt_nfkc_cf --add_dummy_prefix=false --byte_fallback
train keepspace 4000 --normalization_rule_name=nfkc_cf --remove_extra_whitespaces=false --byte_fallback \
	--allow_whitespace_only_pieces
train suffix 4000 --treat_whitespace_as_suffix --byte_fallback --split_digits
/usr/bin/python3 "$here/derive.py"
spm_train --version >"$out/VERSION" 2>&1 || true
dpkg-query -W -f='Debian ${Package} ${Version}\n' sentencepiece python3-sentencepiece >>"$out/VERSION"
