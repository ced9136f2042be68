#!/bin/sh
# compare_outputs.sh BEFORE_BIN AFTER_BIN SGDIFF_BIN [SCRATCH]
# Runs two swellgrid binaries on every fixture in testdata/ (run from the
# repository root) with 1 and 2 workers and in two shards merged, each into the same
# output path, and compares the outputs with
# sgdiff. Prints one line per case and the differing columns; exit 1 when any
# table differs.
set -u
before=$1; after=$2; sgdiff=$3; scratch=${4:-$(mktemp -d)}
mkdir -p "$scratch"
status=0
inputs="testdata/bulk_monthly $(ls testdata/*.nc)"
for in in $inputs; do
  for cfg in "w1:--workers 1" "w2:--workers 2" "shards2:--workers 2"; do
    name=${cfg%%:*}; flags=${cfg#*:}
    for side in before after; do
      bin=$before; [ $side = after ] && bin=$after
      rm -rf "$scratch/out"
      if [ $name = shards2 ]; then # two shards (cell ranges run apart), then merged
        rm -rf "$scratch/sh"; ok=1
        for i in 1 2; do
          $bin run --input "$in" --out "$scratch/sh/$i" --restart --shard $i/2 $flags >>"$scratch/$side.log" 2>&1 || ok=0
        done
        [ $ok = 1 ] && $bin merge --out "$scratch/out" "$scratch/sh/1" "$scratch/sh/2" >>"$scratch/$side.log" 2>&1 || ok=0
      else
        ok=1; $bin run --input "$in" --out "$scratch/out" --restart $flags >"$scratch/$side.log" 2>&1 || ok=0
      fi
      if [ $ok = 0 ]; then
        echo "$in $name: $side run failed: $(tail -1 "$scratch/$side.log")"; status=1; continue 2
      fi
      rm -rf "$scratch/$side"; mv "$scratch/out" "$scratch/$side"
    done
    if out=$($sgdiff "$scratch/before" "$scratch/after"); then
      echo "$in $name : identical"
    else
      echo "$in $name : DIFFERS"; echo "$out" | sed 's/^/    /'; status=1
    fi
  done
done
exit $status
