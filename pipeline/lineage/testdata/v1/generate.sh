#!/bin/sh
# Regenerates ledger-v1.parquet and ledger-v1.json in this folder: a
# lineage ledger of layout version 1 (absolute paths, no numeric_version
# column) written by the ledger code of commit 2c15248^, the last that
# wrote version 1, and the records it holds. Needs git history and Go;
# fetches nothing but the Go modules that commit requires.
#
#   sh pipeline/lineage/testdata/v1/generate.sh
set -eu
here=$(cd "$(dirname "$0")" && pwd)
repo=$(git -C "$here" rev-parse --show-toplevel)
tmp=$(mktemp -d)
trap 'rm -rf "$tmp"' EXIT
git -C "$repo" archive --format=tar 2c15248^ | tar -x -C "$tmp"
mkdir -p "$tmp/cmd/writev1"
cp "$here/writev1.go" "$tmp/cmd/writev1/main.go"
(cd "$tmp" && go run ./cmd/writev1 "$here/ledger-v1.parquet" "$here/ledger-v1.json")
