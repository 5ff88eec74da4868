#!/usr/bin/env bash
# arm64 check (issue 12, docs/HASHES.md "Same numbers on every machine"):
# a chain is bit-identical whether an amd64 or an arm64 machine solved it.
# Cross-compiles the golden-number test of package batch and the gridstage
# command for arm64 and runs both under Debian's qemu-user-static:
#   1. TestNumericsGolden: the 37 golden specs of testdata/numerics, every
#      number compared with the amd64-recorded chains.txt;
#   2. every bundled example (examples/*.yaml) solved with --cache off by
#      the amd64 and the arm64 build of this tree; run.json must be
#      byte-identical (spec, chain and content hashes and each file's
#      SHA-256), and the per-job hashes are compared first to name a
#      difference.
# Run on an amd64 host from the repository root or anywhere; it installs
# qemu-user-static when missing. About 1-3 minutes, mostly the arm64
# compilation.
set -euo pipefail
cd "$(dirname "$0")/.."
export DEBIAN_FRONTEND=noninteractive

if [ "$(go env GOHOSTARCH)" != amd64 ]; then
  echo "arm64-check: the host must be amd64 (it is $(go env GOHOSTARCH)); the check compares amd64 with emulated arm64" >&2
  exit 2
fi
if ! command -v qemu-aarch64-static >/dev/null 2>&1; then
  apt-get update -qq
  apt-get install -y -qq --no-install-recommends qemu-user-static >/dev/null
fi

work=$(mktemp -d)
trap 'rm -rf "$work"' EXIT

GOARCH=arm64 go test -c -o "$work/batch-arm64.test" ./batch
GOARCH=arm64 go build -o "$work/gridstage-arm64" ./cmd/gridstage
go build -o "$work/gridstage-amd64" ./cmd/gridstage

echo "arm64-check: golden numbers under qemu-aarch64-static"
(cd batch && qemu-aarch64-static "$work/batch-arm64.test" -test.run 'TestNumericsGolden$' -test.count=1)

# hashes FILE: one line per job (process, point, spec hash, chain hash,
# status) and per file (path, content hash, bytes), from run.json.
hashes() {
  python3 -c '
import json, sys
d = json.load(open(sys.argv[1]))
for j in d["jobs"]:
    print("job", j["process"], j["point"], j["spec_hash"], j.get("chain_hash", "-"), j["status"])
for f in d["files"]:
    print("file", f["path"], f["content_hash"], f.get("bytes_sha256", "-"))
' "$1"
}

status=0
jobs=0
for manifest in examples/*.yaml; do
  name=$(basename "$manifest" .yaml)
  "$work/gridstage-amd64" run "$manifest" --out "$work/amd64/$name" --cache off >/dev/null
  qemu-aarch64-static "$work/gridstage-arm64" run "$manifest" --out "$work/arm64/$name" --cache off >/dev/null
  hashes "$work/amd64/$name/run.json" >"$work/$name.amd64"
  hashes "$work/arm64/$name/run.json" >"$work/$name.arm64"
  n=$(grep -c '^job' "$work/$name.amd64")
  jobs=$((jobs + n))
  if ! diff -u "$work/$name.amd64" "$work/$name.arm64" >"$work/$name.diff"; then
    echo "arm64-check: $manifest: arm64 and amd64 differ:" >&2
    cat "$work/$name.diff" >&2
    status=1
  elif ! cmp -s "$work/amd64/$name/run.json" "$work/arm64/$name/run.json"; then
    echo "arm64-check: $manifest: run.json differs between arm64 and amd64 beyond the hashes:" >&2
    diff "$work/amd64/$name/run.json" "$work/arm64/$name/run.json" >&2 || true
    status=1
  else
    echo "arm64-check: $manifest: identical on arm64 and amd64 (jobs: $n)"
  fi
done
if [ "$status" -eq 0 ]; then
  echo "arm64-check: the golden specs and all $jobs jobs of examples/*.yaml bit-identical on arm64 (qemu) and amd64"
fi
exit "$status"
