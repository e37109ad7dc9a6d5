#!/usr/bin/env bash
# The pre-commit hook's entry (language: script). The framework's Go support runs
# `go install ./...`, which also builds the bench tools; this builds only scangate, once
# per hook checkout (the framework keeps one per rev), then runs it with the hook's
# arguments and the staged files.
set -euo pipefail
repo=$(cd "$(dirname "$0")/.." && pwd)
bin="$repo/.pre-commit-bin/scangate"
if [ ! -x "$bin" ]; then
  command -v go >/dev/null 2>&1 || { echo "scangate hook: building scangate needs Go on PATH" >&2; exit 2; }
  (cd "$repo" && go build -trimpath -o "$bin.tmp" ./cmd/scangate) && mv -f "$bin.tmp" "$bin"
fi
exec "$bin" "$@"
