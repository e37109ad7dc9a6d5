#!/usr/bin/env bash
# Installs scangate for the action. Two steps, so action.yml can restore a cache in
# between:
#
#   install.sh plan     resolve the version, pick release or source, name the install
#                       directory and the cache key (step outputs)
#   install.sh install  download the release archive for this OS and arch, verify it
#                       against the release's checksums file (SHA-256) and unpack it;
#                       or, for a commit or branch, go install from source. Then put the
#                       directory on GITHUB_PATH.
#
# Environment:
#   INPUT_VERSION          a release tag (v1.2.0), a commit or a branch; empty: the ref
#                          the action was used at
#   ACTION_REF             that ref (github.action_ref); read from GITHUB_ACTION_PATH
#                          (.../_actions/OWNER/REPO/REF/action) when empty
#   ACTION_REPOSITORY      the action's repository (default scangate/scangate)
#   SCANGATE_RELEASE_URL   where release files are, one folder per tag (default
#                          $GITHUB_SERVER_URL/$ACTION_REPOSITORY/releases/download);
#                          file:// works, for tests
#   SCANGATE_INSTALL_DIR   the install directory (install: the plan's dir output)
#   RUNNER_OS, RUNNER_ARCH the platform (uname when unset)
set -euo pipefail

output_file=${GITHUB_OUTPUT:-/dev/null}
tmp= # the download directory, removed on exit
module=github.com/scangate/scangate/cmd/scangate

fail() {
  echo "scangate install: $*" >&2
  exit 2
}

# resolve_version prints the version to install: the input, else the action's ref.
resolve_version() {
  local v=${INPUT_VERSION:-}
  if [ -z "$v" ]; then
    v=${ACTION_REF:-}
  fi
  if [ -z "$v" ] && [ -n "${GITHUB_ACTION_PATH:-}" ]; then
    case "$GITHUB_ACTION_PATH" in
    */_actions/*/*/*/action) v=$(basename "$(dirname "$GITHUB_ACTION_PATH")") ;;
    esac
  fi
  printf '%s' "$v"
}

# kind_of prints release, source or local (the action's own checkout, uses: ./action).
kind_of() {
  case "$1" in
  "") echo local ;;
  latest) fail "version 'latest' is not supported: name a release tag such as v1.2.0, or a commit or branch" ;;
  v[0-9]*.[0-9]*.[0-9]*)
    if [[ $1 =~ ^v[0-9]+\.[0-9]+\.[0-9]+(-[0-9A-Za-z.-]+)?$ ]]; then echo release; else fail "version '$1' is not a release tag (vMAJOR.MINOR.PATCH)"; fi ;;
  v[0-9] | v[0-9][0-9] | v[0-9].[0-9]* | v[0-9][0-9].[0-9]*)
    fail "version '$1' is a moving tag with no release files: name a full release tag such as v1.2.0" ;;
  *)
    if [[ $1 =~ ^[0-9A-Za-z][0-9A-Za-z._/-]*$ ]]; then echo source; else fail "version '$1' is neither a release tag, a commit nor a branch"; fi ;;
  esac
}

platform() {
  local os arch
  case "${RUNNER_OS:-$(uname -s)}" in
  Linux) os=linux ;;
  macOS | Darwin) os=darwin ;;
  Windows | MINGW* | MSYS* | CYGWIN*) os=windows ;;
  *) fail "no release build for OS ${RUNNER_OS:-$(uname -s)}" ;;
  esac
  case "${RUNNER_ARCH:-$(uname -m)}" in
  X64 | x86_64 | amd64) arch=amd64 ;;
  ARM64 | arm64 | aarch64) arch=arm64 ;;
  *) fail "no release build for architecture ${RUNNER_ARCH:-$(uname -m)}" ;;
  esac
  echo "${os}_${arch}"
}

plan() {
  local version kind target base
  version=$(resolve_version)
  kind=$(kind_of "$version")
  target=$(platform)
  base=${RUNNER_TOOL_CACHE:-${RUNNER_TEMP:-${TMPDIR:-/tmp}}}/scangate
  local dir="$base/${version:-local}/$target"
  if [ "$kind" = source ]; then
    dir="$base/source-$(printf '%s' "$version" | tr '/' '-')/$target"
  fi
  {
    echo "version=$version"
    echo "kind=$kind"
    echo "dir=$dir"
    echo "cache-key=scangate-${version}-${target}"
  } | tee -a "$output_file"
}

sha256() {
  if command -v sha256sum >/dev/null 2>&1; then
    sha256sum "$1" | cut -d' ' -f1
  else
    shasum -a 256 "$1" | cut -d' ' -f1
  fi
}

# install_release VERSION DIR: download, verify, unpack. Nothing lands in DIR unless
# the archive's SHA-256 is the one the checksums file lists for it.
install_release() {
  local version=$1 dir=$2 target ext archive sums url want got exe=""
  target=$(platform)
  ext=tar.gz
  case "$target" in windows_*) ext=zip exe=.exe ;; esac
  archive="scangate_${version}_${target}.${ext}"
  sums="scangate_${version}_checksums.txt"
  if [ -x "$dir/scangate$exe" ] && [ -f "$dir/scangate.sha256" ] && [ "$(sha256 "$dir/scangate$exe")" = "$(cat "$dir/scangate.sha256")" ]; then
    echo "scangate install: $version for $target from the cache"
    return
  fi
  url=${SCANGATE_RELEASE_URL:-${GITHUB_SERVER_URL:-https://github.com}/${ACTION_REPOSITORY:-scangate/scangate}/releases/download}/$version
  tmp=$(mktemp -d "${RUNNER_TEMP:-${TMPDIR:-/tmp}}/scangate-install.XXXXXX")
  trap 'rm -rf "$tmp"' EXIT
  echo "scangate install: downloading $url/$archive"
  curl -fsSL --retry 3 -o "$tmp/$sums" "$url/$sums" || fail "cannot download $url/$sums"
  curl -fsSL --retry 3 -o "$tmp/$archive" "$url/$archive" || fail "cannot download $url/$archive"
  want=$(awk -v f="$archive" '$2 == f || $2 == "*" f { print $1 }' "$tmp/$sums")
  [ -n "$want" ] || fail "$sums does not list $archive; refusing to install it"
  got=$(sha256 "$tmp/$archive")
  if [ "$got" != "$want" ]; then
    fail "checksum mismatch for $archive: $sums lists sha256 $want, the download has $got; refusing to install it"
  fi
  mkdir -p "$tmp/unpacked"
  case "$ext" in
  zip) if command -v unzip >/dev/null 2>&1; then unzip -q "$tmp/$archive" -d "$tmp/unpacked"; else tar -xf "$tmp/$archive" -C "$tmp/unpacked"; fi ;;
  *) tar -xzf "$tmp/$archive" -C "$tmp/unpacked" ;;
  esac
  [ -f "$tmp/unpacked/scangate$exe" ] || fail "$archive holds no scangate$exe"
  mkdir -p "$dir"
  mv -f "$tmp/unpacked/scangate$exe" "$dir/scangate$exe"
  chmod +x "$dir/scangate$exe"
  sha256 "$dir/scangate$exe" >"$dir/scangate.sha256"
  echo "scangate install: $version for $target verified (sha256 $got)"
}

# install_source VERSION DIR: go install at a commit or branch, or from the action's own
# checkout when VERSION is empty.
install_source() {
  local version=$1 dir=$2
  command -v go >/dev/null 2>&1 || fail "building scangate at '${version:-the action checkout}' needs Go"
  mkdir -p "$dir"
  if [ -z "$version" ]; then
    (cd "${GITHUB_ACTION_PATH:-.}/.." && GOBIN="$dir" go install ./cmd/scangate)
  else
    GOBIN="$dir" go install "$module@$version"
  fi
}

install() {
  local version kind dir
  version=$(resolve_version)
  kind=$(kind_of "$version")
  dir=${SCANGATE_INSTALL_DIR:-}
  [ -n "$dir" ] || fail "SCANGATE_INSTALL_DIR is not set (the plan step's dir output)"
  case "$kind" in
  release) install_release "$version" "$dir" ;;
  *) install_source "$version" "$dir" ;;
  esac
  if [ -n "${GITHUB_PATH:-}" ]; then
    echo "$dir" >>"$GITHUB_PATH"
  fi
}

case "${1:-}" in
plan) plan ;;
install) install ;;
*) fail "usage: install.sh plan|install" ;;
esac
