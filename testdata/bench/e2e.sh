#!/usr/bin/env bash
# End-to-end ingest benchmark: builds the binary, generates an invented
# corpus with synthcorpus, times the whole ingest (first load, re-ingest of
# unchanged files, --force re-read, and for zip a new download with 2% of
# the records revised), runs two plain Python loaders over the same corpus
# (a minimal one, and one storing the same rows, checked table by table),
# and compares the analysis side with statsmodels.
#
#   testdata/bench/e2e.sh [SIZE] [FORMAT]     # default 200MB zip
#
# SIZE as synthcorpus takes it (200MB, 2GB); FORMAT folder|zip|jsonl|page.
# WORK=dir keeps the corpus and databases there (default: a temp folder,
# removed at the end). SKIP_PYTHON=1 and SKIP_ANALYSIS=1 skip comparisons.
# RESULTS_SHARE sets the share of records with results (default 0.15).
set -euo pipefail

SIZE=${1:-200MB}
FORMAT=${2:-zip}
ROOT=$(cd "$(dirname "$0")/../.." && pwd)
if [[ -z "${WORK:-}" ]]; then
	WORK=$(mktemp -d)
	trap 'rm -rf "$WORK"' EXIT
fi
mkdir -p "$WORK"
PY=/usr/bin/python3

need_apt() {
	if command -v apt-get >/dev/null; then
		echo "installing $1 with apt-get" >&2
		(apt-get install -y "$1" >/dev/null 2>&1 || { apt-get update >/dev/null 2>&1 && apt-get install -y "$1" >/dev/null 2>&1; }) ||
			{ echo "could not install $1" >&2; return 1; }
	else
		echo "no apt-get to install $1" >&2
		return 1
	fi
}
[[ -x /usr/bin/time ]] || need_apt time

echo "== machine"
echo "cores: $(nproc)"
echo "cpu: $(grep -m1 'model name' /proc/cpuinfo | cut -d: -f2- | sed 's/^ //')"
echo "memory: $(awk '/MemTotal/ {printf "%.1f GiB", $2/1048576}' /proc/meminfo)"
echo "load before: $(cut -d' ' -f1-3 /proc/loadavg)"

cd "$ROOT"
go build -o "$WORK/unshelved" ./cmd/unshelved
go build -o "$WORK/synthcorpus" ./cmd/synthcorpus
BIN=$WORK/unshelved

echo "== corpus"
rm -rf "$WORK/corpus"
GEN=$("$WORK/synthcorpus" -out "$WORK/corpus" -size "$SIZE" -format "$FORMAT" -seed 1 -results-share "${RESULTS_SHARE:-0.15}")
echo "$GEN"
RECORDS=$(awk '{print $2}' <<<"$GEN")
JSONBYTES=$(awk '{print $6}' <<<"$GEN")
FILEBYTES=$(du -sb "$WORK/corpus" | cut -f1)
echo "on disk: $FILEBYTES bytes"

# timed NAME CMD...: syncs, runs CMD under /usr/bin/time -v, prints a line of
# wall seconds, CPU seconds and peak RSS, and leaves them in T_WALL,
# T_CPU and T_RSS_MB.
timed() {
	local name=$1
	shift
	local log=$WORK/time-$name.txt
	# Flush what earlier steps wrote (the corpus, the other loaders'
	# databases) first, so that no run pays for another's writeback.
	sync
	/usr/bin/time -v "$@" >"$WORK/out-$name.txt" 2>"$log" || {
		local rc=$?
		if [[ $rc -ne 0 && $rc -ne 3 ]]; then
			echo "$name failed ($rc):" >&2
			tail -20 "$log" >&2
			exit 1
		fi
	}
	T_WALL=$(awk -F': ' '/Elapsed \(wall clock\)/ {n=split($2,a,":"); s=0; for(i=1;i<=n;i++) s=s*60+a[i]; print s}' "$log")
	T_CPU=$(awk -F': ' '/User time/ {u=$2} /System time/ {s=$2} END {printf "%.2f", u+s}' "$log")
	T_RSS_MB=$(awk -F': ' '/Maximum resident set size/ {printf "%.0f", $2/1024}' "$log")
	printf "%-16s wall %7.2f s   cpu %7.2f s   peak RSS %5s MB\n" "$name" "$T_WALL" "$T_CPU" "$T_RSS_MB"
}
rate() { awk -v a="$1" -v b="$2" 'BEGIN { if (b > 0) printf "%.0f", a / b; else print "-" }'; }
ratio() { awk -v a="$1" -v b="$2" 'BEGIN { if (b > 0) printf "%.1f", a / b; else print "-" }'; }

echo "== unshelved ingest registry"
DB=$WORK/e2e.db
rm -f "$DB" "$DB-wal" "$DB-shm"
timed first "$BIN" --db "$DB" --quiet --format json ingest registry "$WORK/corpus"
FIRST=$T_WALL
FIRST_RSS=$T_RSS_MB
ROWS=$($PY - "$DB" <<'PYEOF'
import sqlite3, sys
con = sqlite3.connect(sys.argv[1])
names = [r[0] for r in con.execute("SELECT name FROM sqlite_schema WHERE type='table' AND name NOT LIKE 'sqlite_%'")]
print(sum(con.execute('SELECT count(*) FROM "%s"' % n).fetchone()[0] for n in names))
PYEOF
)
"$BIN" --db "$DB" --format json db info >"$WORK/info.json"
MEAS=$($PY -c 'import json,sys; d=json.load(open(sys.argv[1])); print(d["measurements"])' "$WORK/info.json")
DBBYTES=$(( $(stat -c %s "$DB") + $(stat -c %s "$DB-wal" 2>/dev/null || echo 0) ))
echo "records/s      $(rate "$RECORDS" "$FIRST")"
echo "MB/s (JSON)    $(awk -v b="$JSONBYTES" -v s="$FIRST" 'BEGIN {printf "%.1f", b/1e6/s}')"
echo "rows stored    $ROWS ($MEAS measurements)"
echo "rows/s         $(rate "$ROWS" "$FIRST")"
echo "db bytes/1000 records  $(awk -v d="$DBBYTES" -v n="$RECORDS" 'BEGIN {printf "%.2f MB", d/n*1000/1e6}')"

timed reingest "$BIN" --db "$DB" --quiet ingest registry "$WORK/corpus"
echo "re-ingest (unchanged files skipped by hash) speed-up  $(ratio "$FIRST" "$T_WALL")x"
timed force "$BIN" --db "$DB" --quiet ingest registry --force "$WORK/corpus"
echo "re-ingest --force (zip entries recognised by checksum, other records by content hash) speed-up  $(ratio "$FIRST" "$T_WALL")x"
"$BIN" --db "$DB" db check >/dev/null && echo "db check: ok"

if [[ -z "${SKIP_PYTHON:-}" ]]; then
	echo "== plain Python loader, minimal (json + sqlite3, one row per trial and per measurement, two tables)"
	rm -f "$WORK/plain.db"*
	timed python "$PY" "$ROOT/testdata/bench/plain_ingest.py" "$WORK/plain.db" "$WORK/corpus"
	cat "$WORK/out-python.txt"
	echo "Python MB/s    $(awk -v b="$JSONBYTES" -v s="$T_WALL" 'BEGIN {printf "%.1f", b/1e6/s}')"
	echo "unshelved / minimal Python speed  $(ratio "$T_WALL" "$FIRST")x (that script stores a sixth of the rows)"

	echo "== plain Python loader, same rows (json + sqlite3, unshelved's schema, every table)"
	rm -f "$WORK/full.db"*
	timed pyfull "$PY" "$ROOT/testdata/bench/full_ingest.py" "$WORK/full.db" "$WORK/corpus"
	cat "$WORK/out-pyfull.txt"
	echo "Python MB/s    $(awk -v b="$JSONBYTES" -v s="$T_WALL" 'BEGIN {printf "%.1f", b/1e6/s}')"
	echo "unshelved / same-rows Python speed  $(ratio "$T_WALL" "$FIRST")x"
	"$PY" "$ROOT/testdata/bench/compare_rows.py" "$DB" "$WORK/full.db" | tail -1
	rm -f "$WORK/full.db"* "$WORK/plain.db"*
fi

if [[ "$FORMAT" == zip ]]; then
	echo "== a new download: the same zip with 2% of the records revised"
	ZIP=$(ls "$WORK"/corpus/*.zip | head -1)
	"$PY" "$ROOT/testdata/bench/redownload.py" "$ZIP" "$WORK/new-download.zip" 50
	timed redownload "$BIN" --db "$DB" --quiet --format json ingest registry "$WORK/new-download.zip"
	"$PY" -c 'import json,sys; d=json.load(open(sys.argv[1])); print("records %d unchanged %d replaced %d" % (d["records"], d["unchanged"], d["replaced"]))' "$WORK/out-redownload.txt"
	echo "re-ingest of a new download (unchanged entries recognised by checksum) speed-up  $(ratio "$FIRST" "$T_WALL")x"
	rm -f "$WORK/new-download.zip"
fi

if [[ -z "${SKIP_ANALYSIS:-}" ]]; then
	echo "== analysis: 10,000 meta-analyses of k = 10"
	$PY -c 'import statsmodels' 2>/dev/null || need_apt python3-statsmodels
	SM=$($PY "$ROOT/testdata/bench/pool_statsmodels.py" 10000 10)
	echo "statsmodels combine_effects(dl) + Egger WLS: $SM"
	SMNS=$(awk '{print $6}' <<<"$SM")
	GO=$(go test -run '^$' -bench 'BenchmarkPool$|BenchmarkRun$' -benchtime 3x ./analysis/... | grep -E '^Benchmark')
	echo "$GO"
	POOLNS=$(awk '/^BenchmarkPool/ {for (i=1;i<=NF;i++) if ($(i+1)=="ns/meta-analysis") print $i}' <<<"$GO")
	RUNNS=$(awk '/^BenchmarkRun/ {for (i=1;i<=NF;i++) if ($(i+1)=="ns/meta") print $i}' <<<"$GO")
	echo "statsmodels / analysis.Pool (fixed, random REML, tests, leave-one-out)  $(ratio "$SMNS" "$POOLNS")x"
	echo "statsmodels / bias.Run (battery without the selection model)  $(ratio "$SMNS" "$RUNNS")x"
fi
echo "load after: $(cut -d' ' -f1-3 /proc/loadavg)"
