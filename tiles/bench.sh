#!/usr/bin/env bash
# Reruns the headline benchmarks of BENCHMARKS.md and prints (or, with
# --write, puts into BENCHMARKS.md between the "bench:begin" and
# "bench:end" markers) one table: every figure with wall time, CPU time
# (user + system), peak RSS and the load average when the run began.
#
#   bash tiles/bench.sh [--runs N] [--national] [--write] [BINARY ...]
#
# BINARY: stipple binaries to compare (default: one built from this tree).
# With several, runs alternate between them (A B A B …), because the
# build machines are shared and their speed wanders from minute to minute.
# --national adds the national map (../shared/data/us-counties.geojson
# beside the repository root, zooms 0–12, one person per dot: about 5
# minutes a run on 2 cores). Output goes to $BENCH_DIR (default /tmp),
# on disk; tmpfs figures use /dev/shm.
set -euo pipefail
cd "$(dirname "$0")/.."
runs=3 national=0 write=0 bins=()
while [ $# -gt 0 ]; do
	case "$1" in
	--runs) runs=$2; shift 2 ;;
	--national) national=1; shift ;;
	--write) write=1; shift ;;
	*) bins+=("$1"); shift ;;
	esac
done
work=${BENCH_DIR:-/tmp}/stipple-bench.$$
mkdir -p "$work"
trap 'rm -rf "$work"' EXIT
if [ ${#bins[@]} -eq 0 ]; then
	go build -o "$work/stipple" ./cmd/stipple
	bins=("$work/stipple")
fi
rows="$work/rows"
: >"$rows"

# measure LABEL BINARY ARGS…: one timed run, one table row.
measure() {
	local label=$1 bin=$2
	shift 2
	local load
	load=$(cut -d' ' -f1-3 /proc/loadavg)
	rm -rf "$work/out"
	/usr/bin/time -f '%e %U %S %M' -o "$work/time" "$bin" "$@" >"$work/log" 2>&1 || {
		echo "failed: $bin $*" >&2
		cat "$work/log" >&2
		return 1
	}
	read -r wall user sys rss <"$work/time"
	printf '| %s | %s | %.0f s | %.0f s (%.0f + %.0f) | %.0f%% | %d MiB | %s |\n' \
		"$label" "$(basename "$bin")@$("$bin" version 2>/dev/null | head -1 | tr -d '|')" \
		"$wall" "$(echo "$user + $sys" | bc)" "$user" "$sys" \
		"$(echo "100 * $sys / ($user + $sys + 0.001)" | bc)" "$((rss / 1024))" "$load" >>"$rows"
}

for ((r = 0; r < runs; r++)); do
	for b in "${bins[@]}"; do
		measure "invented 10 M people, z0–10, disk" "$b" bench --people 10000000 --max-zoom 10 --out "$work/out"
		measure "invented 10 M people, z0–10, tmpfs" "$b" bench --people 10000000 --max-zoom 10 --out "/dev/shm/stipple-bench.$$"
		rm -rf "/dev/shm/stipple-bench.$$"
		if [ $national = 1 ]; then
			measure "national z0–12, 1 person per dot" "$b" render examples/us-counties-synthetic/map.toml --out "$work/out"
		fi
	done
done

# Per-file costs, disk and tmpfs (no binary: the sink benchmark).
go test -c -o "$work/sink.test" ./tiles/sink
for fs in "$work" /dev/shm; do
	for ((r = 0; r < runs; r++)); do
		load=$(cut -d' ' -f1-3 /proc/loadavg)
		for m in put crossdir samedir inplace; do
			sync
			ns=$(STIPPLE_BENCH_DIR=$fs "$work/sink.test" -test.run '^$' -test.bench "TileFiles/$m\$" -test.benchtime 20000x | awk '/^Benchmark/ {print $3}')
			kind=disk
			[ "$fs" = /dev/shm ] && kind=tmpfs
			printf '| tile file, %s, %s | sink.test | %.0f µs/file | — | — | — | %s |\n' "$m" "$kind" "$(echo "$ns / 1000" | bc -l)" "$load" >>"$rows"
		done
	done
done

table=$(
	echo "| benchmark | binary | wall | CPU (user + sys) | sys share | peak RSS | load (1, 5, 15 min) at start |"
	echo "|---|---|---|---|---|---|---|"
	cat "$rows"
	echo
	echo "Machine: $(nproc) cores, $(grep -m1 'model name' /proc/cpuinfo | cut -d: -f2 | sed 's/^ //'), $(date -u +%Y-%m-%d); rerun: bash tiles/bench.sh$([ $national = 1 ] && echo ' --national') --runs $runs."
)
if [ $write = 1 ]; then
	awk -v table="$table" '
		/<!-- bench:begin -->/ { print; print table; skip = 1; next }
		/<!-- bench:end -->/ { skip = 0 }
		!skip { print }
	' BENCHMARKS.md >"$work/B.md"
	cp "$work/B.md" BENCHMARKS.md
else
	echo "$table"
fi
