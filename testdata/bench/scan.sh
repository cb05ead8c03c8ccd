#!/usr/bin/env bash
# Scan benchmark at registry scale: generates an invented workspace of
# TRIALS registry trials (the trials of QUESTIONS generated questions, 14
# each, plus background trials that fit no question, 12% of them flagged
# with results) straight into SQLite with genscan, loads the questions
# file, then times the one command from questions to a summary
# (summary --scan) and a full scan with CSV output, each with its peak
# resident memory (/usr/bin/time).
#
#   testdata/bench/scan.sh [TRIALS] [QUESTIONS]     # default 600000 1000
#
# WORK=dir keeps the workspace there (default: a temp folder, removed at
# the end).
set -euo pipefail

TRIALS=${1:-600000}
QUESTIONS=${2:-1000}
ROOT=$(cd "$(dirname "$0")/../.." && pwd)
if [[ -z "${WORK:-}" ]]; then
	WORK=$(mktemp -d)
	trap 'rm -rf "$WORK"' EXIT
fi
mkdir -p "$WORK"
[[ -x /usr/bin/time ]] || { echo "needs /usr/bin/time (apt-get install time)" >&2; exit 1; }

echo "== machine"
echo "cores: $(nproc)"
echo "cpu: $(grep -m1 'model name' /proc/cpuinfo | cut -d: -f2- | sed 's/^ //')"
echo "load before: $(cut -d' ' -f1-3 /proc/loadavg)"

cd "$ROOT"
go build -o "$WORK/unshelved" ./cmd/unshelved
go build -o "$WORK/genscan" ./compare/internal/corpus/genscan
rm -f "$WORK/ws.db" "$WORK/ws.db-wal" "$WORK/ws.db-shm"

echo "== generate $TRIALS trials, $QUESTIONS questions"
/usr/bin/time -f "generate: %e s wall, peak RSS %M KB" \
	"$WORK/genscan" -db "$WORK/ws.db" -questions "$WORK/questions.csv" -n "$QUESTIONS" -trials "$TRIALS"
ls -l "$WORK/ws.db" | awk '{printf "workspace: %.0f MB\n", $5/1e6}'
"$WORK/unshelved" --db "$WORK/ws.db" -q ingest reviews "$WORK/questions.csv"

echo "== summary --scan (questions to summary in one command)"
/usr/bin/time -f "summary --scan: %e s wall, %U s user, peak RSS %M KB" \
	"$WORK/unshelved" --db "$WORK/ws.db" -q summary --scan >"$WORK/summary.txt"
sed -n '1,12p' "$WORK/summary.txt"

echo "== scan --format csv"
/usr/bin/time -f "scan: %e s wall, %U s user, peak RSS %M KB" \
	"$WORK/unshelved" --db "$WORK/ws.db" -q --format csv scan >"$WORK/scan.csv"
echo "scan rows: $(($(wc -l <"$WORK/scan.csv") - 1))"
