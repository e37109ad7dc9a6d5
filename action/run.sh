#!/usr/bin/env bash
# The action's logic: run `scangate check` (and `scangate diff` against a base revision
# when asked), write the step outputs, and exit with scangate's exit code so the job
# goes red. action.yml passes every input as an INPUT_<NAME> environment variable; no
# input is ever pasted into code. Runs the same outside GitHub Actions: without
# GITHUB_OUTPUT or GITHUB_STEP_SUMMARY those parts are skipped.
#
# Environment:
#   SCANGATE_BIN          the scangate binary (default: scangate on PATH)
#   INPUT_PATHS           manifests and directories, separated by spaces or newlines (default .)
#   INPUT_CONFIG          project config file (default: the nearest .scangate.yaml)
#   INPUT_FAIL_ON         error | warning | note | never (default error)
#   INPUT_BASELINE        baseline file
#   INPUT_DIFF_BASE       git revision to compare with (runs scangate diff --base)
#   INPUT_MAX_ADDED_MS    with diff-base: fixed ms per scan a change may add to one table
#   INPUT_MAX_ADDED_SEGMENTS  with diff-base: segments a change may add to one table
#   INPUT_SARIF_FILE      where the SARIF report goes (default scangate.sarif)
#   INPUT_SUMMARY         true | false: add the Markdown reports to the job summary (default true)
#   INPUT_UPLOAD_SARIF    true | false: written back as the upload-sarif output (default true)
#   INPUT_SARIF_CATEGORY  code-scanning category (default scangate/$GITHUB_JOB/<sarif file>)
#
# Booleans read true/yes/1 and false/no/0 in any case, as a YAML boolean may be written.
#
# Exit code: the larger of check's and diff's (0 clean, 1 findings, 2 invalid input or usage).
set -euo pipefail

bin=${SCANGATE_BIN:-scangate}
paths_input=${INPUT_PATHS:-.}
config=${INPUT_CONFIG:-}
fail_on=${INPUT_FAIL_ON:-error}
baseline=${INPUT_BASELINE:-}
diff_base=${INPUT_DIFF_BASE:-}
max_added_ms=${INPUT_MAX_ADDED_MS:-}
max_added_segments=${INPUT_MAX_ADDED_SEGMENTS:-}
sarif=${INPUT_SARIF_FILE:-scangate.sarif}
summary=${INPUT_SUMMARY:-true}
upload_sarif=${INPUT_UPLOAD_SARIF:-true}
output_file=${GITHUB_OUTPUT:-/dev/null}

fail() { # usage problems of the action itself exit 2, like scangate's own
  echo "scangate action: $*" >&2
  echo "exit-code=2" >>"$output_file"
  exit 2
}

# Written for bash 3.2 too (the system bash of some runners): no ${x,,}, and empty
# arrays are expanded as ${a[@]+"${a[@]}"} under set -u.
# boolean NAME VALUE prints true or false, or fails naming the input.
boolean() {
  case "$(printf '%s' "$2" | tr '[:upper:]' '[:lower:]')" in
  true | yes | 1) echo true ;;
  false | no | 0) echo false ;;
  *) fail "input $1 must be true or false (or yes/no, 1/0), got '$2'" ;;
  esac
}
summary=$(boolean summary "$summary")
upload_sarif=$(boolean upload-sarif "$upload_sarif")
case "$sarif" in
"") fail "input sarif-file must name a file" ;;
*$'\n'* | *$'\r'*) fail "input sarif-file must not hold a line break" ;; # it becomes an output line
esac
# One category per job and SARIF file, so two runs in one workflow do not replace each
# other's results.
category=${INPUT_SARIF_CATEGORY:-scangate/${GITHUB_JOB:-job}/$sarif}
case "$category" in
*$'\n'* | *$'\r'*) fail "input sarif-category must not hold a line break" ;;
esac
command -v "$bin" >/dev/null 2>&1 || fail "cannot run '$bin'; install scangate or set SCANGATE_BIN"
case "$bin" in
*/*) bin="$(cd "$(dirname "$bin")" && pwd)/$(basename "$bin")" ;; # still found after the cd below
esac

# Paths resolve against the repository checkout, as the annotations and SARIF expect.
if [ -n "${GITHUB_WORKSPACE:-}" ]; then
  cd "$GITHUB_WORKSPACE"
fi

"$bin" version

# read splits the paths on whitespace and, unlike an unquoted $var, never globs or
# evaluates them: scangate walks directories itself.
read -r -d '' -a paths <<<"$paths_input" || true
if [ "${#paths[@]}" -eq 0 ]; then
  paths=(.)
fi

tmp=$(mktemp -d "${RUNNER_TEMP:-${TMPDIR:-/tmp}}/scangate.XXXXXX")
trap 'rm -rf "$tmp"' EXIT
report="$tmp/report.json"

shared=()
if [ -n "$config" ]; then
  shared+=("--config=$config")
fi

# check appends its own Markdown summary to GITHUB_STEP_SUMMARY whenever the github
# format is on and the variable is set, so the script never writes that part itself:
# it only hides the variable from check when the summary is turned off.
step_summary=${GITHUB_STEP_SUMMARY:-}
if [ "$summary" = false ]; then
  step_summary=
fi

# A SARIF file left by an earlier run must not be uploaded as this run's.
rm -f -- "$sarif"

args=(check "--fail-on=$fail_on" --format=text --format=github "--format=sarif=$sarif" "--format=json=$report" ${shared[@]+"${shared[@]}"})
if [ -n "$baseline" ]; then
  args+=("--baseline=$baseline")
fi
set +e
GITHUB_STEP_SUMMARY=$step_summary "$bin" "${args[@]}" -- "${paths[@]}"
check_code=$?
set -e
code=$check_code

if [ -n "$diff_base" ]; then
  diff_md="$tmp/diff.md"
  echo
  set +e
  gate=()
  if [ -n "$max_added_ms" ]; then gate+=("--max-added-ms=$max_added_ms"); fi
  if [ -n "$max_added_segments" ]; then gate+=("--max-added-segments=$max_added_segments"); fi
  "$bin" diff "--base=$diff_base" --format=text "--format=markdown=$diff_md" ${gate[@]+"${gate[@]}"} ${shared[@]+"${shared[@]}"} -- "${paths[@]}"
  diff_code=$?
  set -e
  if [ -n "$step_summary" ] && [ -s "$diff_md" ]; then
    cat "$diff_md" >>"$step_summary"
  fi
  if [ "$diff_code" -gt "$code" ]; then
    code=$diff_code
  fi
fi

# count KEY reads summary.KEY from the JSON report. It relies on the report's stable
# layout: pretty-printed with two spaces per level and one key per line, so the
# top-level "summary" object spans from `  "summary": {` to the next `  }` and its
# counts sit at four spaces. action/run_test.go checks the numbers against a JSON
# parser, so a change of layout fails the tests, not the pipelines.
count() {
  sed -n '/^  "summary": {$/,/^  }/s/^    "'"$1"'": \([0-9][0-9]*\),\{0,1\}$/\1/p' "$report"
}

outputs=()
if [ -s "$report" ]; then
  errors=$(count errors)
  warnings=$(count warnings)
  notes=$(count notes)
  if [ -z "$errors" ] || [ -z "$warnings" ] || [ -z "$notes" ]; then
    fail "cannot read summary.errors, .warnings and .notes from the JSON report"
  fi
  outputs+=("findings=$((errors + warnings + notes))" "errors=$errors" "warnings=$warnings")
fi
if [ -f "$sarif" ]; then
  outputs+=("sarif-file=$sarif" "sarif-category=$category" "upload-sarif=$upload_sarif")
fi
outputs+=("exit-code=$code")
printf '%s\n' "${outputs[@]}" >>"$output_file"
echo "scangate action: ${outputs[*]}"
exit "$code"
