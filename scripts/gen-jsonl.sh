#!/usr/bin/env bash
# Writes a JSON Lines corpus of N records (default 1,000,000), each an
# object with an id and a "text" of 20 words drawn from a fixed
# invented word list, about 130 bytes a record: the shape of a ticket or
# chat export, the common batch input. The output is the same for the same
# N and SEED, so that timings of builds compare.
#
#   scripts/gen-jsonl.sh OUT.jsonl [N] [SEED]
set -euo pipefail
out=${1:?usage: $0 OUT.jsonl [N] [SEED]}
n=${2:-1000000}
seed=${3:-7}
awk -v n="$n" -v seed="$seed" 'BEGIN {
  split("harbor crane ledger parcel ferry quay tide dock anchor berth cargo manifest pallet route signal beacon relay valve gauge pump filter hull rudder mast sail rope knot buoy chart compass lantern cabin galley deck hatch keel bow stern port starboard fathom current draft ballast winch hoist tackle the a of to and in is for on with as was by at it from that this be", w, " ")
  nw = length(w)
  srand(seed)
  for (i = 1; i <= n; i++) {
    t = ""
    for (j = 0; j < 20; j++) {
      t = t (j ? " " : "") w[int(rand() * nw) + 1]
    }
    printf "{\"id\":%d,\"text\":\"%s\"}\n", i, t
  }
}' >"$out"
