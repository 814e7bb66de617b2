#!/usr/bin/env bash
# The end of a transfer day at the (invented) Harbourside Sound Archive: synthesise the demo archive,
# scan it against the preservation-master profile with spectrograms, keep a JSON report, then check
# fixity against that report. Run from anywhere:  examples/scan-folder.sh [ARCHIVE_DIR] [OUT_DIR]
set -euo pipefail
cd "$(dirname "$0")/.."

ARCHIVE="${1:-examples/audio/archive}"
OUT="${2:-examples/audio/out}"
mkdir -p "$OUT"

node --import tsx examples/make-demo-archive.ts "$ARCHIVE"

# A scan exits 1 when a file fails its profile: the demo has deliberate faults, so 1 is expected here.
scan() {
  local status=0
  npx tidemark scan "$ARCHIVE" --profile preservation-master --resume "$OUT/state.jsonl" "$@" || status=$?
  if [ "$status" -gt 1 ]; then exit "$status"; fi
}

rm -f "$OUT/state.jsonl"
echo
echo "\$ tidemark scan $ARCHIVE --profile preservation-master --spectrograms $OUT/spectrograms --format table"
scan --spectrograms "$OUT/spectrograms" --format table --quiet

# Same scan again, as JSON: --resume takes every unchanged file from the state file instead of measuring it.
scan --spectrograms "$OUT/spectrograms" --out "$OUT/report.json" --quiet
echo
echo "\$ tidemark verify $ARCHIVE --against $OUT/report.json"
npx tidemark verify "$ARCHIVE" --against "$OUT/report.json"
