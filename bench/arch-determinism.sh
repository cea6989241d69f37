#!/usr/bin/env bash
# Checks that rankplan's results do not depend on the instruction set it was built for:
# builds rankplan for linux/amd64 with GOAMD64=v1 (no FMA) and v3 (FMA allowed), and for
# linux/arm64 (FMA fused by default), runs every example plan with each build and
# compares the results.json bytes; before that it runs the stats tests that hash the bits
# of the numerical functions on seeded grids (names ending in "Bits") in each build. The
# arm64 builds run under qemu-aarch64-static (Debian package qemu-user-static) when it is
# installed; otherwise that leg is reported as skipped, never as passed.
#
# Usage: bash bench/arch-determinism.sh        (from the repository root)
set -euo pipefail
cd "$(dirname "$0")/.."
work=$(mktemp -d)
trap 'rm -rf "$work"' EXIT

builds=("amd64-v1" "amd64-v3")
GOOS=linux GOARCH=amd64 GOAMD64=v1 go build -o "$work/rankplan-amd64-v1" ./cmd/rankplan
GOOS=linux GOARCH=amd64 GOAMD64=v3 go build -o "$work/rankplan-amd64-v3" ./cmd/rankplan
runner=()
if command -v qemu-aarch64-static >/dev/null; then
  GOOS=linux GOARCH=arm64 go build -o "$work/rankplan-arm64" ./cmd/rankplan
  builds+=("arm64")
else
  echo "SKIPPED arm64: qemu-aarch64-static not installed (apt-get install qemu-user-static)"
fi

status=0
# The numerical functions on seeded grids: the stats tests whose names end in "Bits" hash
# the float64 bits of their results and compare with a value recorded on amd64.
GOOS=linux GOARCH=amd64 GOAMD64=v1 go test -c -o "$work/stats-amd64-v1.test" ./stats
GOOS=linux GOARCH=amd64 GOAMD64=v3 go test -c -o "$work/stats-amd64-v3.test" ./stats
if [ "${builds[*]}" = "amd64-v1 amd64-v3 arm64" ]; then
  GOOS=linux GOARCH=arm64 go test -c -o "$work/stats-arm64.test" ./stats
fi
for b in "${builds[@]}"; do
  cmd=("$work/stats-$b.test")
  [ "$b" = arm64 ] && cmd=(qemu-aarch64-static "$work/stats-$b.test")
  if (cd stats && "${cmd[@]}" -test.run 'Bits$' -test.count=1 >"$work/bits-$b.txt" 2>&1); then
    echo "stats bit hashes: $b matches"
  else
    echo "DIFFERENT stats bit hashes on $b:"
    cat "$work/bits-$b.txt"
    status=1
  fi
done

for plan in examples/*/plan.yaml; do
  name=$(basename "$(dirname "$plan")")
  ref=""
  for b in "${builds[@]}"; do
    exe="$work/rankplan-$b"
    cmd=("$exe")
    [ "$b" = arm64 ] && cmd=(qemu-aarch64-static "$exe")
    "${cmd[@]}" run "$plan" --out "$work/$name-$b" --workers 2 >/dev/null
    sum=$(sha256sum < "$work/$name-$b/results.json" | cut -d' ' -f1)
    if [ -z "$ref" ]; then
      ref=$sum
    elif [ "$sum" != "$ref" ]; then
      echo "DIFFERENT $name: $b gives $sum, amd64-v1 gives $ref"
      diff "$work/$name-amd64-v1/results.json" "$work/$name-$b/results.json" | head -20 || true
      status=1
    fi
  done
  echo "$name: ${builds[*]}: results.json sha256 $ref"
done
[ $status = 0 ] && echo "identical results.json on: ${builds[*]}"
exit $status
