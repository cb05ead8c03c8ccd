#!/usr/bin/env bash
# Audit benchmark: builds the binary, writes workspaces of generated
# reviews (12 registered trials each, compare/internal/batchgen), and runs
# side by side, ROUNDS times each: 'unshelved audit --format json' to a
# file with the run stored (default options: the shift interval is
# analytic and the bootstrap check is off), the same with
# '--bootstrap BOOT' (default 1000; BOOT=0 leaves this out), and the plain
# statsmodels DerSimonian-Laird + Egger loop of audit_statsmodels.py on
# the same reviews. Prints each run and the
# medians: wall time, CPU time, peak RSS, microseconds per review, the
# speed ratio, and the workspace's growth per run per review.
#
#   testdata/bench/audit.sh [REVIEWS...]      # default 2000 20000
#
# ROUNDS (default 3). WORK=dir keeps the workspaces (default: a temp
# folder, removed at the end). Needs /usr/bin/time and python3-statsmodels
# (installed with apt-get when missing).
set -euo pipefail

SIZES=("$@")
[[ ${#SIZES[@]} -gt 0 ]] || SIZES=(2000 20000)
ROUNDS=${ROUNDS:-3}
BOOT=${BOOT:-1000}
KINDS=(go py)
[[ $BOOT -gt 0 ]] && KINDS=(go go-boot py)
ROOT=$(cd "$(dirname "$0")/../.." && pwd)
if [[ -z "${WORK:-}" ]]; then
	WORK=$(mktemp -d)
	trap 'rm -rf "$WORK"' EXIT
fi
mkdir -p "$WORK"
PY=/usr/bin/python3

need_apt() {
	echo "installing $1 with apt-get" >&2
	(apt-get install -y "$1" >/dev/null 2>&1 || { apt-get update >/dev/null 2>&1 && apt-get install -y "$1" >/dev/null 2>&1; }) ||
		{ echo "could not install $1" >&2; exit 1; }
}
[[ -x /usr/bin/time ]] || need_apt time
"$PY" -c 'import statsmodels' 2>/dev/null || need_apt python3-statsmodels

echo "== machine"
echo "cores: $(nproc)"
echo "cpu: $(grep -m1 'model name' /proc/cpuinfo | cut -d: -f2- | sed 's/^ //')"
echo "load before: $(cut -d' ' -f1-3 /proc/loadavg)"
echo "python: $("$PY" -c 'import statsmodels, numpy, sys; print(sys.version.split()[0], "statsmodels", statsmodels.__version__, "numpy", numpy.__version__)')"

cd "$ROOT"
go build -o "$WORK/unshelved" ./cmd/unshelved
go build -o "$WORK/batchws" ./compare/internal/batchgen/batchws
BIN=$WORK/unshelved

# timed NAME CMD...: runs CMD under /usr/bin/time -v with stdout to
# $WORK/out-NAME; sets T_WALL, T_CPU (s) and T_RSS (MB).
timed() {
	local name=$1
	shift
	local log=$WORK/time-$name.txt
	/usr/bin/time -v "$@" >"$WORK/out-$name" 2>"$log" || {
		echo "$name failed:" >&2
		tail -20 "$log" >&2
		exit 1
	}
	T_WALL=$(awk -F': ' '/Elapsed \(wall clock\)/ {n=split($2,a,":"); s=0; for(i=1;i<=n;i++) s=s*60+a[i]; print s}' "$log")
	T_CPU=$(awk -F': ' '/User time/ {u=$2} /System time/ {s=$2} END {printf "%.2f", u+s}' "$log")
	T_RSS=$(awk -F': ' '/Maximum resident set size/ {printf "%.0f", $2/1024}' "$log")
}
median() { tr ' ' '\n' | grep -v '^$' | sort -g | awk '{a[NR]=$1} END {print (NR%2 ? a[(NR+1)/2] : (a[NR/2]+a[NR/2+1])/2)}'; }
dbsize() { echo $(($(stat -c %s "$1") + $(stat -c %s "$1-wal" 2>/dev/null || echo 0))); }

for N in "${SIZES[@]}"; do
	DB=$WORK/ws-$N.db
	rm -f "$DB" "$DB-wal" "$DB-shm"
	"$WORK/batchws" -db "$DB" -reviews "$N" -studies 12 -seed 1
	echo "== $N reviews of 12 registered trials (workspace $(($(dbsize "$DB") / 1000000)) MB)"
	declare -A W C R
	for k in "${KINDS[@]}"; do W[$k]=""; C[$k]=""; R[$k]=""; done
	GROW=""
	for round in $(seq "$ROUNDS"); do
		for k in "${KINDS[@]}"; do
			case $k in
			go)
				before=$(dbsize "$DB")
				timed "$k" "$BIN" --db "$DB" --quiet --format json audit
				after=$(dbsize "$DB")
				GROW+=" $(awk -v a="$after" -v b="$before" -v n="$N" 'BEGIN {printf "%.0f", (a-b)/n}')"
				;;
			go-boot)
				timed "$k" "$BIN" --db "$DB" --quiet --format json audit --bootstrap "$BOOT"
				;;
			py)
				timed py "$PY" "$ROOT/testdata/bench/audit_statsmodels.py" "$DB" "$WORK/py-$N.json"
				;;
			esac
			W[$k]+=" $T_WALL"
			C[$k]+=" $T_CPU"
			R[$k]+=" $T_RSS"
			printf "round %d %-7s wall %7.2f s  cpu %7.2f s  peak RSS %5s MB\n" "$round" "$k" "$T_WALL" "$T_CPU" "$T_RSS"
		done
	done
	for k in "${KINDS[@]}"; do
		w=$(median <<<"${W[$k]}")
		printf "median %-7s wall %7.2f s  cpu %7.2f s  peak RSS %5s MB  %6.0f us/review (wall)\n" "$k" "$w" \
			"$(median <<<"${C[$k]}")" "$(median <<<"${R[$k]}")" "$(awk -v w="$w" -v n="$N" 'BEGIN {print w/n*1e6}')"
	done
	wpy=$(median <<<"${W[py]}")
	echo "speed vs the Python loop, per review (median wall): $(awk -v a="$wpy" -v b="$(median <<<"${W[go]}")" 'BEGIN {printf "%.2f", a/b}')x; CPU: $(awk -v a="$(median <<<"${C[py]}")" -v b="$(median <<<"${C[go]}")" 'BEGIN {printf "%.2f", a/b}')x"
	[[ $BOOT -gt 0 ]] && echo "with --bootstrap $BOOT: $(awk -v a="$wpy" -v b="$(median <<<"${W[go-boot]}")" 'BEGIN {printf "%.2f", a/b}')x (wall); CPU: $(awk -v a="$(median <<<"${C[py]}")" -v b="$(median <<<"${C[go-boot]}")" 'BEGIN {printf "%.2f", a/b}')x"
	echo "workspace growth per run per review (file and WAL): median $(median <<<"$GROW") bytes"
	"$BIN" --db "$DB" --format csv runs | awk -F, -v n="$N" 'NR > 1 {s += $9; r++} END {printf "stored results per run per review: %.0f bytes\n", s / r / n}'
	echo "load after: $(cut -d' ' -f1-3 /proc/loadavg)"
	rm -f "$DB" "$DB-wal" "$DB-shm" "$WORK"/out-* "$WORK"/py-*.json
done
