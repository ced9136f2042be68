#!/bin/sh
# compare_runs.sh BEFORE_BIN AFTER_BIN [SCRATCH]
# Runs two swellgrid binaries on the demo and on every fixture in testdata/
# (run from the repository root; one worker, then two shards merged), each
# into the same output path, and compares EVERY file of the run directories
# byte for byte, save what records time: manifest.json (and a shard's
# shard.json) are compared with "timings_s" (and "wall_s") removed, key
# order kept, and the report's summary page with its "Run time" cell
# blanked. The run directories' state folders (.swellgrid: checkpoints
# record the inputs' modification times) are left out. Prints one line per
# case and the differing files; exit 1 when any file differs or is missing.
set -u
before=$1; after=$2; scratch=${3:-$(mktemp -d)}
mkdir -p "$scratch"
status=0
# normalise FILE: what may differ between two runs of the same build
normalise() {
  case $1 in
    */manifest.json|*/shard.json) python3 -c 'import json,sys,collections; d=json.load(open(sys.argv[1]),object_pairs_hook=collections.OrderedDict); d.pop("timings_s",None); d.pop("wall_s",None); print(json.dumps(d,indent=1))' "$1" ;;
    */report/index.html) sed -E 's#<th>Run time</th><td>[^<]*</td>#<th>Run time</th><td>-</td>#' "$1" ;;
    *) cat "$1" ;;
  esac
}
compare_dirs() { # compare_dirs LABEL DIR_BEFORE DIR_AFTER
  label=$1; a=$2; b=$3; bad=""
  files=$( (cd "$a" && find . -type f ! -path '*/.swellgrid/*'; cd "$b" && find . -type f ! -path '*/.swellgrid/*') | sort -u)
  n=0
  for f in $files; do
    n=$((n+1))
    if [ ! -f "$a/$f" ] || [ ! -f "$b/$f" ]; then bad="$bad $f(missing)"; continue; fi
    if ! cmp -s "$a/$f" "$b/$f"; then
      if [ "$(normalise "$a/$f" | md5sum)" != "$(normalise "$b/$f" | md5sum)" ]; then bad="$bad $f"; fi
    fi
  done
  if [ -z "$bad" ]; then echo "$label: $n files identical"; else echo "$label: DIFFERS:$bad"; status=1; fi
}
for side in before after; do
  bin=$before; [ $side = after ] && bin=$after
  rm -rf "$scratch/demo"
  if ! $bin demo --out "$scratch/demo" >"$scratch/$side.demo.log" 2>&1; then echo "demo: $side failed: $(tail -1 "$scratch/$side.demo.log")"; status=1; fi
  rm -rf "$scratch/demo-$side"; mv "$scratch/demo" "$scratch/demo-$side"
done
compare_dirs demo "$scratch/demo-before" "$scratch/demo-after"
inputs="testdata/bulk_monthly $(ls testdata/*.nc)"
for in in $inputs; do
  for cfg in w1 shards2; do
    for side in before after; do
      bin=$before; [ $side = after ] && bin=$after
      rm -rf "$scratch/out" "$scratch/sh"; ok=1
      if [ $cfg = shards2 ]; then
        for i in 1 2; do
          $bin run --input "$in" --out "$scratch/sh/$i" --restart --shard $i/2 --workers 2 >>"$scratch/$side.log" 2>&1 || ok=0
        done
        [ $ok = 1 ] && { $bin merge --out "$scratch/out" "$scratch/sh/1" "$scratch/sh/2" >>"$scratch/$side.log" 2>&1 || ok=0; }
      else
        $bin run --input "$in" --out "$scratch/out" --restart --workers 1 >"$scratch/$side.log" 2>&1 || ok=0
      fi
      echo "$ok" >"$scratch/ok-$side"
      mkdir -p "$scratch/out"; rm -rf "$scratch/$side"; mv "$scratch/out" "$scratch/$side"
      tail -1 "$scratch/$side.log" >"$scratch/last-$side"
    done
    if [ "$(cat "$scratch/ok-before")" != "$(cat "$scratch/ok-after")" ]; then
      echo "$in $cfg: one side failed: before $(cat "$scratch/last-before") / after $(cat "$scratch/last-after")"; status=1; continue
    fi
    if [ "$(cat "$scratch/ok-before")" = 0 ] && ! cmp -s "$scratch/last-before" "$scratch/last-after"; then
      echo "$in $cfg: both refused, with different messages"; status=1; continue
    fi
    compare_dirs "$in $cfg" "$scratch/before" "$scratch/after"
  done
done
exit $status
