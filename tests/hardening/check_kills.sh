#!/usr/bin/env bash
# Crash safety: writing commands killed (SIGKILL) at random moments, again
# and again. After every kill the store must be the previous complete one or
# the new complete one (it reads, and verify re-runs it to the same
# datasets), the tables folder a complete set (its manifest present), and the
# next run must complete and leave no temporary file behind.
#
#   check_kills.sh GAZEMILL_BINARY FIXTURES_DIR [KILLS]   (default 50)
set -uo pipefail
gazemill="$1"
fixtures="$2"
kills="${3:-50}"
work=$(mktemp -d /tmp/gazemill-kills-XXXXXX)
trap 'rm -rf "$work"' EXIT
fail() { echo "FAIL after kill $k: $*"; exit 1; }

cp -r "$fixtures/demo-study" "$work/study"
proto="$work/study/gazemill.toml"
printf '\n[[cleaning]]\nname = "short"\nkind = "delete_short_fixations"\nmin_duration_ms = 70\n' >> "$proto"
out="$work/out"
store="$out/harbour-news.gzm.h5"
"$gazemill" -q run "$proto" -o "$out" || { echo "FAIL: the first run"; exit 1; }

RANDOM=2026
k=0
for k in $(seq 1 "$kills"); do
  # Something to do each time: the cleaning threshold changes, or a stage is forced.
  sed -i "s/min_duration_ms = [0-9]*/min_duration_ms = $((60 + RANDOM % 40))/" "$proto"
  case $((RANDOM % 5)) in
    0) cmd=(run "$proto" -o "$out") ;;
    1) cmd=(detect "$proto" -s "$store") ;;
    2) cmd=(clean "$proto" -s "$store" -o "$work/clean-tables") ;;
    3) cmd=(ingest "$proto" -o "$work/second.gzm.h5") ;;
    4) cmd=(run "$proto" -o "$out" --jobs 1) ;;
  esac
  "$gazemill" -q "${cmd[@]}" > /dev/null 2>&1 &
  pid=$!
  sleep "0.$(printf '%03d' $((RANDOM % 400)))"
  kill -KILL "$pid" 2> /dev/null
  wait "$pid" 2> /dev/null
  "$gazemill" inspect "$store" > /dev/null 2>&1 || fail "${cmd[0]}: the store does not read"
  if [ $((k % 5)) -eq 0 ]; then
    "$gazemill" verify "$store" > "$work/verify.log" 2>&1 || { cat "$work/verify.log"; fail "${cmd[0]}: the store does not verify"; }
  fi
  for t in "$out/tables" "$work/clean-tables"; do
    [ -d "$t" ] && { [ -f "$t/manifest.json" ] || fail "${cmd[0]}: $t is a set without its manifest"; }
  done
  if [ -e "$work/second.gzm.h5" ]; then
    "$gazemill" inspect "$work/second.gzm.h5" > /dev/null 2>&1 || fail "ingest: the second store does not read"
  fi
done

# What a run killed while writing its report or summary leaves, planted for
# certain (a kill seldom lands there): a dead writer's temporary files.
true & dead=$!
wait "$dead"
touch "$out/.report.html.partial-$dead" "$out/.run-summary.json.partial-$dead"
# The threshold changes once more, so that the run writes its report again.
sed -i "s/min_duration_ms = [0-9]*/min_duration_ms = 101/" "$proto"
# A run after all that completes, cleans up what the killed ones left, and verifies.
"$gazemill" -q run "$proto" -o "$out" || { echo "FAIL: the run after the kills"; exit 1; }
"$gazemill" -q ingest "$proto" -o "$work/second.gzm.h5" || { echo "FAIL: the ingest after the kills"; exit 1; }
# A killed writer's scratch is removed by the next writer of the same output,
# so the clean tables are written once more too.
"$gazemill" -q clean "$proto" -s "$store" -o "$work/clean-tables" || { echo "FAIL: the clean after the kills"; exit 1; }
left=$(find "$work" -name '.*.partial-*' | wc -l)
[ "$left" -eq 0 ] || { find "$work" -name '.*.partial-*'; echo "FAIL: $left temporary files left after the next runs"; exit 1; }
"$gazemill" verify "$store" > /dev/null || { echo "FAIL: the final store does not verify"; exit 1; }
echo "$kills kills at random moments: the store always read and verified, every table set was whole, and the next run cleaned up"
