#!/usr/bin/env bash
# Writes what biasfit prints and saves for every demo into OUT_DIR, so that two builds can be compared byte
# for byte: every example and starter through design, order, check, spread, verify, fix, ideal, stock and new,
# in text and --json, with the files they write (CSV, SVG, HTML, the edited stock and its backup). The
# solver's elapsed time is the one thing that differs between runs; it is masked as `T s`.
#
#   scripts/demo-outputs.sh OUT_DIR            write the outputs (builds the release binary first)
#   scripts/demo-outputs.sh --diff DIR1 DIR2   compare two such folders; exit 0 when they are the same
#   scripts/demo-outputs.sh --hashes OUT_DIR   print one sha256 line per file (for a listing to keep)
#
# A restructuring that is meant to change no output must leave the diff empty:
#   scripts/demo-outputs.sh /tmp/before && (change the code) && scripts/demo-outputs.sh /tmp/after
#   scripts/demo-outputs.sh --diff /tmp/before /tmp/after
# scripts/demo-outputs.sha256 is the listing for the commit that last changed it; after a change meant to keep
# every output, `scripts/demo-outputs.sh --hashes DIR | diff scripts/demo-outputs.sha256 -` shows none.
set -uo pipefail

case "${1:-}" in
--diff)
  a=${2:?usage: scripts/demo-outputs.sh --diff DIR1 DIR2}
  b=${3:?usage: scripts/demo-outputs.sh --diff DIR1 DIR2}
  if diff -r "$a" "$b"; then
    echo "same: $(find "$a" -type f | wc -l) files"
  else
    exit 1
  fi
  exit 0
  ;;
--hashes)
  dir=${2:?usage: scripts/demo-outputs.sh --hashes DIR}
  (cd "$dir" && find . -type f | LC_ALL=C sort | xargs sha256sum)
  exit 0
  ;;
-* | "")
  echo "usage: scripts/demo-outputs.sh OUT_DIR | --diff DIR1 DIR2 | --hashes DIR" >&2
  exit 2
  ;;
esac

out=$1
cd "$(dirname "$0")/.."
cargo build --release -q || exit 1
bin=$PWD/target/release/biasfit
rm -rf "$out"
mkdir -p "$out"
out=$(cd "$out" && pwd)
export NO_COLOR=1
n=0

# The elapsed time ("200 variants in 0.01 s", "stopped after 1.2 s", "seconds": 0.013) and the output
# folder's own name are masked in every file written.
mask() {
  sed -i -E "s#$out#OUT#g; s/[0-9]+(\.[0-9]+)? s([,)]| |$)/T s\2/g; s/\"seconds\": ?[0-9.e+-]+/\"seconds\":T/g" "$@"
}

run() { # name, args...: stdout, stderr and the exit code
  local name=$1
  shift
  "$bin" "$@" >"$out/$name.out" 2>"$out/$name.err"
  echo "exit $?" >>"$out/$name.out"
  mask "$out/$name.out" "$out/$name.err"
  n=$((n + 1))
}

# Stage designs: the examples, the test designs and the stage starters.
stages=(examples/*.toml tests/fixtures/designs/*.toml)
for s in divider split-emitter collector-feedback dual-supply base-resistor; do
  stages+=("examples/starters/$s.toml")
done
for f in "${stages[@]}"; do
  d=$(basename "$f" .toml)
  case $f in examples/starters/*) d=starter-$d ;; esac
  run "ideal-$d" ideal "$f"
  run "ideal-$d-json" ideal "$f" --json
  for s in hobby-drawer e12-kit; do
    run "design-$d-$s" design "$f" --stock "stock/$s.csv" --time-limit 30
    run "design-$d-$s-json" design "$f" --stock "stock/$s.csv" --json --time-limit 30
  done
  run "design-$d-parts3" design "$f" --stock stock/e12-kit.csv --parts 3 --time-limit 30
  run "design-$d-files" design "$f" --stock stock/hobby-drawer.csv --svg "$out/svg-$d" --html "$out/sheet-$d.html" --time-limit 30
  run "design-$d-robust" design "$f" --stock stock/hobby-drawer.csv --robust --alternatives 2 --time-limit 30
  run "design-$d-copies" design "$f" --stock stock/hobby-drawer.csv --copies 2 --json --time-limit 30
  # Read back by spread and stock withdraw as written; masked with the rest at the end.
  "$bin" design "$f" --stock stock/hobby-drawer.csv --json --time-limit 30 >"$out/result-$d.json" 2>/dev/null
  run "spread-$d" spread "$f" --result "$out/result-$d.json" --seed 1
  run "spread-$d-json" spread "$f" --result "$out/result-$d.json" --seed 1 --json
  run "order-$d" order "$f" --stock stock/hobby-drawer.csv --catalog stock/demo-catalogue.csv --copies 3 --time-limit 30
  run "order-$d-json" order "$f" --stock stock/hobby-drawer.csv --catalog stock/demo-catalogue.csv --copies 3 --json --csv "$out/order-$d.csv" --time-limit 30
  run "order-$d-e12" order "$f" --stock stock/e12-kit.csv --catalog stock/demo-catalogue.csv --time-limit 30
  # Withdraw the design from a copy of the stock, then add the order back: the stock file as rewritten.
  cp stock/hobby-drawer.csv "$out/stock-after-$d.csv"
  run "withdraw-$d-dry" stock withdraw "$out/stock-after-$d.csv" --result "$out/result-$d.json" --dry-run
  run "withdraw-$d" stock withdraw "$out/stock-after-$d.csv" --result "$out/result-$d.json" --json
  if [ -f "$out/order-$d.csv" ]; then
    run "add-$d" stock add "$out/stock-after-$d.csv" --order "$out/order-$d.csv"
  fi
done

# The line driver by hand: check, verify (good and faulty readings) and spread from given networks.
ld=(examples/line-driver.toml --use R1=39k,R2=7k5,RC=2k7,RE=560+39)
run check-line-driver check "${ld[@]}"
run check-line-driver-json check "${ld[@]}" --json
run check-line-driver-files check "${ld[@]}" --svg "$out/svg-check-line-driver" --html "$out/sheet-check-line-driver.html"
run spread-line-driver-use spread "${ld[@]}" --seed 1
run verify-line-driver verify "${ld[@]}" --measured VB=1.84,VE=1.19,VC=5.2
run verify-line-driver-json verify "${ld[@]}" --measured VB=1.84,VE=1.19,VC=5.2 --json
run verify-line-driver-fault verify "${ld[@]}" --measured VB=1.84,VE=1.19,VC=9.5
run verify-line-driver-fault-json verify "${ld[@]}" --measured VB=1.84,VE=1.19,VC=9.5 --json

# Circuit starters, built from the E12 values of tests/starters.rs: check, spread, and verify with each
# node read 5 % high (the first node that is not a rail).
builds=(follower:R1=9k1,R2=10k switch:RB=1k3 tail-pair:RT=7k5 zener-current-source:RE=2k2 mirror:RREF=8k2
  jfet-self-bias:RD=3k9,RS=1k mosfet-divider:R1=3M3,R2=1M2 led-string:R1=470 regulator-feedback:R1=240,R2=1k5
  gain-pair:RF=10k,RG=2k7)
for b in "${builds[@]}"; do
  c=${b%%:*}
  use=${b#*:}
  f=examples/starters/$c.toml
  run "check-starter-$c" check "$f" --use "$use"
  run "check-starter-$c-json" check "$f" --use "$use" --json
  run "check-starter-$c-files" check "$f" --use "$use" --html "$out/sheet-starter-$c.html"
  run "spread-starter-$c" spread "$f" --use "$use" --seed 1
  run "spread-starter-$c-json" spread "$f" --use "$use" --seed 1 --json
  reading=$("$bin" check "$f" --use "$use" --json | jq -r '.circuits[0] as $c | ($c.nodes | to_entries
    | map(select(.key != "gnd" and .value != 0)) | map(select(.key as $k | ($c.rails // {}) | has($k) | not))
    | .[-1] | "\(.key)=\(.value * 1.05 * 1000 | round / 1000)")')
  run "verify-starter-$c" verify "$f" --use "$use" --measured "$reading"
  run "verify-starter-$c-json" verify "$f" --use "$use" --measured "$reading" --json
done
run ideal-circuit-refused ideal examples/starters/follower.toml
run check-circuit-svg-refused check examples/starters/follower.toml --use R1=9k1,R2=10k --svg "$out/svg-refused"
run verify-mosfet-docs verify examples/starters/mosfet-divider.toml --use R1=3M3,R2=1M2 --measured d=12.6

for s in stock/*.csv; do
  run "stock-$(basename "$s" .csv)" stock "$s"
  run "stock-$(basename "$s" .csv)-json" stock "$s" --json
done
for v in 4k7 14k6 486R 3M3 0R22; do
  run "fix-$v" fix "$v" --stock stock/hobby-drawer.csv
  run "fix-$v-json" fix "$v" --stock stock/hobby-drawer.csv --json
  run "fix-$v-3" fix "$v" --stock stock/e96-box.csv --parts 3
done
run new new
for s in examples/starters/*.toml; do
  run "new-$(basename "$s" .toml)" new "$(basename "$s" .toml)"
done
run help --help
for c in design order fix check ideal spread verify new stock; do
  run "help-$c" "$c" --help
done
mask "$out"/*.csv "$out"/*.html "$out"/*.json
find "$out" -name '*.svg' -exec sed -i -E "s#$out#OUT#g" {} +
echo "$n commands; $(find "$out" -type f | wc -l) files in $out"
