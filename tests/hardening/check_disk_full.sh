#!/usr/bin/env bash
# A full disk: every writing command, into a small tmpfs, must end with exit 1
# and one error line naming the store and the system's reason, never a crash,
# and leave no temporary file behind; a store already there stays as it was.
# Exits 77 (skipped) where a tmpfs cannot be mounted (not root, no mount rights).
#
#   check_disk_full.sh GAZEMILL_BINARY FIXTURES_DIR
set -uo pipefail
gazemill="$1"
fixtures="$2"
skip() { echo "SKIPPED: $*"; exit 77; }
fail() { echo "FAIL: $*"; exit 1; }
[ "$(id -u)" -eq 0 ] || skip "mounting a small tmpfs needs root"
mnt=$(mktemp -d /tmp/gazemill-full-XXXXXX)
cleanup() { umount "$mnt" 2> /dev/null; rm -rf "$mnt"; }
trap cleanup EXIT
mount -t tmpfs -o size=1100k tmpfs "$mnt" 2> /dev/null || skip "cannot mount a tmpfs here"
proto="$fixtures/demo-study/gazemill.toml"
checks=0
expect_full() {  # what, then the command
  local what="$1"; shift
  "$@" > "$mnt/../gazemill-full-out.txt" 2> "$mnt/../gazemill-full-err.txt"
  local code=$?
  local err; err=$(cat "$mnt/../gazemill-full-err.txt")
  [ "$code" -eq 1 ] || fail "$what: exit $code, expected 1 (stderr: $err)"
  [ "$(echo "$err" | grep -c '^error:')" -eq 1 ] || fail "$what: expected one error line, got: $err"
  # The system's reason, or the preflight's when the room was too small from the start.
  echo "$err" | grep -Eq "No space left on device|not enough free space in $mnt" || fail "$what: the system's reason is not named: $err"
  echo "$err" | grep -q "HDF5-DIAG" && fail "$what: HDF5's own diagnostics leaked: $err"
  [ -z "$(find "$mnt" -name '.*.partial-*')" ] || fail "$what: a temporary file was left behind"
  checks=$((checks + 1))
}
# Far too little room is found before any work (preflight: under half the
# store's estimate from the inputs' sizes, about 0.45 MB here).
umount "$mnt"; mount -t tmpfs -o size=300k tmpfs "$mnt"
err=$("$gazemill" ingest "$proto" -o "$mnt/s.gzm.h5" 2>&1 > /dev/null)
code=$?
[ "$code" -eq 1 ] || fail "ingest into 300k: exit $code, expected 1 (stderr: $err)"
echo "$err" | grep -q "^error: $mnt/s.gzm.h5: not enough free space in $mnt: " || fail "ingest into 300k: preflight not named: $err"
[ -e "$mnt/s.gzm.h5" ] && fail "ingest into 300k: a store was left"
checks=$((checks + 1))
# Tight room passes the preflight with a warning, and the disk fills during the ingest.
umount "$mnt"; mount -t tmpfs -o size=600k tmpfs "$mnt"
expect_full "ingest" "$gazemill" ingest "$proto" -o "$mnt/s.gzm.h5"
[ -e "$mnt/s.gzm.h5" ] && fail "ingest: a store was left"
# A store that fits, then detect and run that need room for a copy.
umount "$mnt"; mount -t tmpfs -o size=1100k tmpfs "$mnt"
"$gazemill" -q ingest "$proto" -o "$mnt/s.gzm.h5" || fail "the ingest that fits"
before=$(sha256sum "$mnt/s.gzm.h5" | cut -d' ' -f1)
expect_full "detect" "$gazemill" detect "$proto" -s "$mnt/s.gzm.h5"
[ "$(sha256sum "$mnt/s.gzm.h5" | cut -d' ' -f1)" = "$before" ] || fail "detect: the store that was there changed"
expect_full "run" "$gazemill" run "$proto" -o "$mnt/run"
rm -f "$mnt/../gazemill-full-out.txt" "$mnt/../gazemill-full-err.txt"
echo "disk full: $checks commands ended with exit 1 and one line naming the reason, nothing left behind, the store kept"
