#!/usr/bin/env bash
# Runs the root package's integration tests and every case and starter through the capture wrapper.
# usage: capture.sh REPO CAPTURE_DIR
set -u
repo=$1; cap=$2; mkdir -p "$cap"; export FP_CAPTURE=$cap
cd "$repo"
for t in accuracy bad_cases case_parse cli_conventions eddy_cases example_studies guide harvest_figures output_files placement_map robustness rod_coil saturation starters static_physics sweep; do
  exe=$(ls -t target/release/deps/$t-* | grep -v '\.d$' | head -1)
  echo "== $t $exe"
  (cd "$repo" && nice -n 2 "$exe" --test-threads 2 2>&1 | tail -3)
done
tmp=$(mktemp -d)
for c in cases/*.toml; do nice -n 2 target/release/fluxpick -q solve "$c" --out "$tmp/$(basename $c .toml)" >/dev/null 2>&1; echo "case $c: $?"; done
for s in rod feeder three-phase coaxial; do target/release/fluxpick new $s --out "$tmp/$s.toml" >/dev/null; nice -n 2 target/release/fluxpick -q solve "$tmp/$s.toml" --out "$tmp/out-$s" >/dev/null 2>&1; echo "starter $s: $?"; done
rm -rf "$tmp"
