#!/usr/bin/env bash
# Replay floor: the same year of events replayed by two jars, side by side in one run.
#
#   bench/replay-floor.sh OLD.jar NEW.jar [ROUNDS]
#
# Makes about 1.1 million records (simulate, seed 13, 52 weeks at 21,200 a week) with NEW.jar, then
# replays them with bench/replay-year.yaml (daily 28-day windows; a binary, two categorical and one
# more binary term), alternating OLD and NEW for ROUNDS rounds (default 5). Prints each run's wall
# and CPU seconds, the medians, the ratio NEW/OLD of the medians, and whether the two jars wrote
# byte-identical estimates and alerts.
set -euo pipefail
old=$1 new=$2 rounds=${3:-5}
here=$(cd "$(dirname "$0")" && pwd)
work=$(mktemp -d)
trap 'rm -rf "$work"' EXIT
java -jar "$new" simulate --seed 13 --span 52w --rate 21200 --out "$work/year.jsonl" >/dev/null
echo "records: $(wc -l <"$work/year.jsonl"), machine: $(nproc) cores, $(uname -m), java $(java -version 2>&1 | head -1)"

run() { # jar label round -> "wall cpu"
  local out="$work/out-$2-$3"
  local TIMEFORMAT='%R %U %S'
  { time java -jar "$1" replay --config "$here/replay-year.yaml" --input "$work/year.jsonl" --out "$out" \
      >/dev/null 2>&1; } 2>"$work/time"
  awk '{printf "%.2f %.2f\n", $1, $2 + $3}' "$work/time"
}
median() { sort -n | awk '{v[NR]=$1} END {print (NR % 2) ? v[(NR+1)/2] : (v[NR/2] + v[NR/2+1]) / 2}'; }

: >"$work/old" ; : >"$work/new"
for r in $(seq 1 "$rounds"); do
  o=$(run "$old" old "$r"); n=$(run "$new" new "$r")
  echo "round $r: old wall ${o% *} s cpu ${o#* } s | new wall ${n% *} s cpu ${n#* } s (load $(cut -d' ' -f1 /proc/loadavg))"
  echo "$o" >>"$work/old"; echo "$n" >>"$work/new"
done
ow=$(cut -d' ' -f1 "$work/old" | median); nw=$(cut -d' ' -f1 "$work/new" | median)
oc=$(cut -d' ' -f2 "$work/old" | median); nc=$(cut -d' ' -f2 "$work/new" | median)
echo "median wall: old $ow s, new $nw s, new/old $(awk "BEGIN {printf \"%.3f\", $nw / $ow}")"
echo "median cpu:  old $oc s, new $nc s, new/old $(awk "BEGIN {printf \"%.3f\", $nc / $oc}")"
for f in estimates.jsonl alerts.jsonl; do
  if cmp -s "$work/out-old-1/$f" "$work/out-new-1/$f"; then echo "$f: identical"; else echo "$f: DIFFERENT"; fi
done
