#!/usr/bin/env bash
# Writes what biasfit prints and saves for every demo into OUT_DIR (text, JSON, CSV, SVG, HTML), with the
# solver's elapsed time filtered out, so two builds can be compared byte for byte:
#   scripts/demo-outputs.sh /tmp/before && (change the code) && scripts/demo-outputs.sh /tmp/after
#   diff -r /tmp/before /tmp/after
# A restructuring that is meant to change no output must leave the diff empty.
set -uo pipefail
out=${1:?usage: scripts/demo-outputs.sh OUT_DIR}
cd "$(dirname "$0")/.."
cargo build --release -q || exit 1
bin=$PWD/target/release/biasfit
rm -rf "$out"; mkdir -p "$out"
export NO_COLOR=1
n=0
run() { # name, args...: stdout, stderr and the exit code, elapsed times masked
  local name=$1; shift
  "$bin" "$@" >"$out/$name.out" 2>"$out/$name.err"
  echo "exit $?" >>"$out/$name.out"
  sed -i -E "s#$out#OUT#g" "$out/$name.out" "$out/$name.err"; sed -i -E 's/[0-9]+(\.[0-9]+)? s([,)]| |$)/T s\2/g; s/"seconds": ?[0-9.e+-]+/"seconds":T/g' "$out/$name.out" "$out/$name.err"
  n=$((n + 1))
}
for f in examples/*.toml tests/fixtures/designs/*.toml; do
  d=$(basename "$f" .toml)
  run "ideal-$d" ideal "$f"
  run "ideal-$d-json" ideal "$f" --json
  for s in hobby-drawer e12-kit; do
    run "design-$d-$s" design "$f" --stock "stock/$s.csv" --time-limit 30
    run "design-$d-$s-json" design "$f" --stock "stock/$s.csv" --json --time-limit 30
  done
  run "design-$d-files" design "$f" --stock stock/hobby-drawer.csv --svg "$out/svg-$d" --html "$out/sheet-$d.html" --time-limit 30
  run "design-$d-robust" design "$f" --stock stock/hobby-drawer.csv --robust --alternatives 2 --time-limit 30
  "$bin" design "$f" --stock stock/hobby-drawer.csv --json --time-limit 30 >"$out/result-$d.json" 2>/dev/null
  run "spread-$d" spread "$f" --result "$out/result-$d.json" --seed 1
  run "spread-$d-json" spread "$f" --result "$out/result-$d.json" --seed 1 --json
  run "order-$d" order "$f" --stock stock/hobby-drawer.csv --catalog stock/demo-catalogue.csv --copies 3 --time-limit 30
  run "order-$d-json" order "$f" --stock stock/hobby-drawer.csv --catalog stock/demo-catalogue.csv --copies 3 --json --csv "$out/order-$d.csv" --time-limit 30
done
for s in stock/*.csv; do
  run "stock-$(basename "$s" .csv)" stock "$s"
  run "stock-$(basename "$s" .csv)-json" stock "$s" --json
done
for v in 4k7 14k6 486R 3M3; do
  run "fix-$v" fix "$v" --stock stock/hobby-drawer.csv
  run "fix-$v-3" fix "$v" --stock stock/e96-box.csv --parts 3
done
run check-line-driver check examples/line-driver.toml --use R1=39k,R2=7k5,RC=2k7,RE=560+39
run verify-line-driver verify examples/line-driver.toml --use R1=39k,R2=7k5,RC=2k7,RE=560+39 --measured VB=1.84,VE=1.19,VC=5.2
run verify-line-driver-fault verify examples/line-driver.toml --use R1=39k,R2=7k5,RC=2k7,RE=560+39 --measured VB=1.84,VE=1.19,VC=9.5
echo "$n commands; outputs in $out"
