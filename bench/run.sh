#!/usr/bin/env bash
# Benchmarks scangate against a decode-only baseline on generated inputs (seeded, so the
# same on every machine): (a) one manifest with 100,000 listed partitions, (b) a
# monorepo of 2,000 manifests of about 40 tables (5% of them messy), a dense-findings
# monorepo of 800 such manifests (about half the tables flagged), a stress set where
# every table is messy, (c) the demo, (d) one manifest of 100,000 small tables; then the
# monorepo as --format json (against its text run) and diffed against a copy with 5% of
# its files changed (against one check of the copy); growth with 10k/100k/1M partitions
# and with 1k/10k/100k tables, and the startup time. Prints medians of RUNS runs, the
# ratios against the targets, and the Markdown table README.md's Speed section shows.
#
#   bench/run.sh            RUNS=3 bench/run.sh
set -euo pipefail
cd "$(dirname "$0")/.."
work=$(mktemp -d)
trap 'rm -rf "$work"' EXIT
go build -o "$work/bin/scangate" ./cmd/scangate
go build -o "$work/bin/decodeonly" ./bench/cmd/decodeonly
go run ./bench/cmd/gen -out "$work/in"
cp -r testdata/demo "$work/in/demo"
go run ./bench/cmd/measure -bin "$work/bin" -in "$work/in" -runs "${RUNS:-5}"
