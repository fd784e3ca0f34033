#!/usr/bin/env bash
# ClearKit build, serve and test.
#   ./build.sh          build the page into site/ (clearkit.wasm, wasm_exec.js, precache.js)
#   ./build.sh serve    build, then serve site/ on http://127.0.0.1:8080
#   ./build.sh test     build, then run every test (installs Chromium if missing)
#   ./build.sh bench    build, then run the benchmarks
set -euo pipefail
cd "$(dirname "$0")"

GOROOT_WASM="$(go env GOROOT)/lib/wasm"

version() {
  local v
  v=$(git describe --always --dirty 2>/dev/null || true)
  echo "${v:-dev}"
}

build() {
  local v
  v=$(version)
  echo "build: site/clearkit.wasm (version $v)"
  GOOS=js GOARCH=wasm go build -trimpath -ldflags "-s -w -X clearkit/core/api.Version=$v" \
    -o site/clearkit.wasm ./wasm
  cp "$GOROOT_WASM/wasm_exec.js" site/wasm_exec.js
  # Last: the service worker's file list and cache version, a hash of
  # everything above (see site/precache.go).
  go run ./site/precache -dir site
}

# need_node makes sure Node.js is there: go_js_wasm_exec runs the bridge tests in it.
need_node() {
  command -v node >/dev/null 2>&1 && return
  install_debian nodejs "Node.js (for the WebAssembly bridge tests)"
}

# need_chromium makes sure a Chromium for the browser tests is there.
need_chromium() {
  if [ -n "${CLEARKIT_CHROMIUM:-}" ] && [ -x "$CLEARKIT_CHROMIUM" ]; then return; fi
  command -v chromium >/dev/null 2>&1 && return
  install_debian chromium "Chromium (for the browser tests)"
}

install_debian() {
  local pkg=$1 what=$2
  if [ "$(id -u)" != 0 ] || ! command -v apt-get >/dev/null 2>&1; then
    echo "build.sh: $what is missing. Install it with: sudo apt-get install -y $pkg" >&2
    exit 1
  fi
  echo "build.sh: installing $what from Debian packages"
  export DEBIAN_FRONTEND=noninteractive
  apt-get update -qq
  apt-get install -y -qq "$pkg" >/dev/null
}

run_tests() {
  need_node
  need_chromium
  build
  echo "test: gofmt and go vet"
  local unformatted
  unformatted=$(gofmt -l core wasm site)
  if [ -n "$unformatted" ]; then
    echo "gofmt would change: $unformatted" >&2
    exit 1
  fi
  go vet ./...
  go vet -tags bench ./site
  GOOS=js GOARCH=wasm go vet ./wasm/...
  echo "test: core, api and browser (native)"
  go test -count=1 ./...
  echo "test: WebAssembly bridge under Node"
  PATH="$PATH:$GOROOT_WASM" GOOS=js GOARCH=wasm go test -count=1 ./wasm/...
  node wasm/bench/bench.mjs --check site/clearkit.wasm "$GOROOT_WASM/wasm_exec.js"
  run_fuzz
}

# run_fuzz runs every fuzz target (func FuzzX in a _test.go file) for
# CLEARKIT_FUZZTIME each (default 5s). A failure is written to the
# package's testdata/fuzz/ and fails the run: commit it as a seed.
run_fuzz() {
  local fuzztime=${CLEARKIT_FUZZTIME:-5s} file target
  for file in $(grep -l '^func Fuzz' --include='*_test.go' -r core wasm site internal 2>/dev/null); do
    for target in $(sed -n 's/^func \(Fuzz[A-Za-z0-9_]*\)(.*/\1/p' "$file"); do
      echo "test: fuzz $target in ./$(dirname "$file") for $fuzztime"
      fuzz_once "$target" "$(dirname "$file")" "$fuzztime" || fuzz_once "$target" "$(dirname "$file")" "$fuzztime" again
    done
  done
}

# corpus_size counts the inputs kept in a fuzz corpus directory (0 when
# there is none).
corpus_size() {
  { ls "$1" 2>/dev/null || true; } | wc -l
}

# fuzz_once runs one fuzz target. Go's fuzzing engine now and then stops
# with "context deadline exceeded" as its time runs out, having found
# nothing (no input written to testdata/fuzz/); fuzz_once then returns 1
# so that run_fuzz runs the target once more. Any other failure (an input
# that fails, written to testdata/fuzz/TARGET) fails the run at once.
fuzz_once() {
  local target=$1 dir=$2 fuzztime=$3 again=${4:-} out corpus before
  corpus="$dir/testdata/fuzz/$target"
  before=$(corpus_size "$corpus")
  if out=$(go test -run '^$' -fuzz "^$target\$" -fuzztime "$fuzztime" "./$dir" 2>&1); then
    echo "$out"
    return 0
  fi
  echo "$out"
  if [ -z "$again" ] && grep -q 'context deadline exceeded' <<<"$out" &&
    [ "$(corpus_size "$corpus")" = "$before" ]; then
    echo "test: fuzz $target stopped at its deadline having found nothing; once more"
    return 1
  fi
  exit 1
}

run_bench() {
  need_node
  need_chromium
  build
  echo "bench: core and api (native)"
  go test -run '^$' -bench . -benchmem ./core/...
  echo "bench: WebAssembly bridge under Node, called from Go"
  PATH="$PATH:$GOROOT_WASM" GOOS=js GOARCH=wasm go test -run '^$' -bench . ./wasm/...
  # Called from JavaScript as the page calls it, against a plain JS peer.
  node wasm/bench/bench.mjs site/clearkit.wasm "$GOROOT_WASM/wasm_exec.js"
  # Start-up and input in Chromium at 4x CPU throttle, the compare, check and
  # size views (site/bench_browser_test.go).
  go test -tags bench -count=1 -run '^TestBenchBrowser' -v ./site | grep -v -e '^=== RUN' -e '^--- PASS' -e '^PASS$'
  local raw gz
  raw=$(wc -c < site/clearkit.wasm)
  gz=$(gzip -9c site/clearkit.wasm | wc -c)
  echo "size: site/clearkit.wasm $raw bytes raw, $gz bytes gzip -9 ($(awk "BEGIN{printf \"%.3f\", $gz/1e6}") MB; target <= 2.2 MB)"
}

case "${1:-build}" in
  build) build ;;
  serve) build; exec go run ./site/serve -addr 127.0.0.1:8080 -dir site ;;
  test) run_tests ;;
  bench) run_bench ;;
  *) echo "usage: ./build.sh [build|serve|test|bench]" >&2; exit 2 ;;
esac
