#!/usr/bin/env bash
# Reruns the headline benchmarks of BENCHMARKS.md and prints (or, with
# --write, puts into BENCHMARKS.md between the "bench:begin" and
# "bench:end" markers) one table: every figure with wall time, CPU time
# (user + system), peak RSS and the load average when the run began.
#
#   bash tiles/bench.sh [--runs N] [--national] [--deep] [--shards N]
#                       [--no-small] [--write] [BINARY ...]
#
# BINARY: stipple binaries to compare (default: one built from this tree).
# With several, runs alternate between them (A B A B …), because the
# build machines are shared and their speed wanders from minute to minute.
# --national adds the national map (../shared/data/us-counties.geojson
# beside the repository root, zooms 0–12, one person per dot: about 5
# minutes a run on 2 cores). --deep adds the national map to zoom 14
# (about 4.5 million tiles: 7 minutes and 20–26 GB of disk a run, and many
# minutes to remove). --shards N adds the national map to zoom 14 cut into
# N parts, run one after another on this machine, then the final step: one
# row per set, with the largest part's wall time over the mean. --no-small
# leaves out the invented map and the per-file rows. Output goes to
# $BENCH_DIR (default /tmp), on disk; tmpfs figures use /dev/shm. With
# BENCH_KEEP=1 outputs are left in place (point BENCH_DIR at a fresh file
# system per run and drop it afterwards: much faster than removing
# millions of files).
#
# A disk run's output is removed after it is measured, and the next disk
# run waits $BENCH_SETTLE seconds (default 300) after that removal: on ext4
# without a journal, the build machines' disk, creating files within about
# five minutes of deleting many makes the kernel skip the freshly freed
# inodes one by one, which doubled a national run's CPU time
# (BENCHMARKS.md, "Deleting before rendering").
set -euo pipefail
cd "$(dirname "$0")/.."
deepz=${BENCH_DEEP_ZOOM:-14} # a smaller zoom makes a quick trial of --deep and --shards
runs=3 national=0 deep=0 shards=0 small=1 write=0 bins=()
while [ $# -gt 0 ]; do
	case "$1" in
	--runs) runs=$2; shift 2 ;;
	--national) national=1; shift ;;
	--deep) deep=1; shift ;;
	--shards) shards=$2; shift 2 ;;
	--no-small) small=0; shift ;;
	--write) write=1; shift ;;
	*) bins+=("$1"); shift ;;
	esac
done
work=${BENCH_DIR:-/tmp}/stipple-bench.$$
mkdir -p "$work"
if [ "${BENCH_KEEP:-0}" = 1 ]; then
	trap 'find "$work" -mindepth 1 -maxdepth 1 ! -name out -exec rm -rf {} +' EXIT
else
	trap 'rm -rf "$work"' EXIT
fi
if [ ${#bins[@]} -eq 0 ]; then
	go build -o "$work/stipple" ./cmd/stipple
	bins=("$work/stipple")
fi
rows="$work/rows"
: >"$rows"
: >"$work/notes"

settle=${BENCH_SETTLE:-300}
removed=0 # when an output was last removed (seconds since the epoch)

# clean DIR: remove a measured output, noting when if it held many files
# (the national map's 310,000; the invented map's few thousand do not
# count).
clean() {
	if [ "${BENCH_KEEP:-0}" = 1 ]; then
		return
	fi
	if [ -e "$1" ]; then
		local many=0
		if [ "$(find "$1" -type f | head -50000 | wc -l)" -ge 50000 ]; then
			many=1
		fi
		rm -rf "$1"
		if [ $many = 1 ]; then
			removed=$(date +%s)
		fi
	fi
}

# measure LABEL BINARY ARGS…: one timed run, one table row. The output
# (in $work/out) is removed after it is measured, never just before.
measure() {
	local label=$1 bin=$2
	shift 2
	local load wait
	wait=$((removed + ${SETTLE:-$settle} - $(date +%s)))
	if [ $wait -gt 0 ]; then
		sleep $wait
	fi
	load=$(cut -d' ' -f1-3 /proc/loadavg)
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
	clean "$work/out"
}

# shardset BINARY N: the national map to zoom 14 in N parts, one after
# another, then the final step; one row: the parts' mean and largest wall
# time, their ratio, the final step's wall time and peak RSS, and the CPU
# time of all N + 1 runs.
shardset() {
	local bin=$1 n=$2 wait load i wall user sys rss
	local walls=() tu=0 ts=0
	wait=$((removed + settle - $(date +%s)))
	if [ $wait -gt 0 ]; then
		sleep $wait
	fi
	load=$(cut -d' ' -f1-3 /proc/loadavg)
	for ((i = 0; i <= n; i++)); do
		local part=$i/$n
		[ $i = $n ] && part=final/$n
		/usr/bin/time -f '%e %U %S %M' -o "$work/time" "$bin" render examples/us-counties-synthetic/map.toml \
			--max-zoom "$deepz" --shard "$part" --out "$work/out" >"$work/log" 2>&1 || {
			echo "failed: $bin --shard $part" >&2
			cat "$work/log" >&2
			return 1
		}
		read -r wall user sys rss <"$work/time"
		tu=$(echo "$tu + $user" | bc)
		ts=$(echo "$ts + $sys" | bc)
		[ $i -lt $n ] && walls+=("$wall")
	done
	printf '%s, %s parts, wall seconds of each: %s\n' "$(basename "$bin")" "$n" "${walls[*]}" >>"$work/notes"
	local stats
	stats=$(printf '%s\n' "${walls[@]}" | awk '{s += $1; if ($1 > m) m = $1} END {printf "parts: mean %.1f s, largest %.1f s (%.2f); final %.1f s", s / NR, m, m / (s / NR), '"$wall"'}')
	printf '| %s | %s | %s | %.0f s (%.0f + %.0f) | %.0f%% | %d MiB (final) | %s |\n' \
		"national z0–$deepz in $n parts" "$(basename "$bin")@$("$bin" version 2>/dev/null | head -1 | tr -d '|')" \
		"$stats" "$(echo "$tu + $ts" | bc)" "$tu" "$ts" \
		"$(echo "100 * $ts / ($tu + $ts + 0.001)" | bc)" "$((rss / 1024))" "$load" >>"$rows"
	clean "$work/out"
}

for ((r = 0; r < runs; r++)); do
	for b in "${bins[@]}"; do
		if [ $deep = 1 ]; then
			measure "national z0–$deepz, 1 person per dot" "$b" render examples/us-counties-synthetic/map.toml --max-zoom "$deepz" --out "$work/out"
		fi
		if [ "$shards" -gt 0 ]; then
			shardset "$b" "$shards"
		fi
		if [ $small = 1 ]; then
			measure "invented 10 M people, z0–10, disk" "$b" bench --people 10000000 --max-zoom 10 --out "$work/out"
			# tmpfs has no such inode scan: no wait.
			SETTLE=0 measure "invented 10 M people, z0–10, tmpfs" "$b" bench --people 10000000 --max-zoom 10 --out "/dev/shm/stipple-bench.$$"
			rm -rf "/dev/shm/stipple-bench.$$"
		fi
		if [ $national = 1 ]; then
			measure "national z0–12, 1 person per dot" "$b" render examples/us-counties-synthetic/map.toml --out "$work/out"
		fi
	done
done

# Per-file costs, disk and tmpfs (no binary: the sink benchmark). All modes
# run in one process, which removes its trees only at the end; on disk the
# next round waits $BENCH_SETTLE seconds after that removal.
fss=()
if [ $small = 1 ]; then
	go test -c -o "$work/sink.test" ./tiles/sink
	fss=("$work" /dev/shm)
fi
for fs in "${fss[@]}"; do
	kind=disk
	[ "$fs" = /dev/shm ] && kind=tmpfs
	for ((r = 0; r < runs; r++)); do
		if [ $kind = disk ]; then
			wait=$((removed + settle - $(date +%s)))
			[ $wait -gt 0 ] && sleep $wait
		fi
		sync
		load=$(cut -d' ' -f1-3 /proc/loadavg)
		STIPPLE_BENCH_DIR=$fs "$work/sink.test" -test.run '^$' -test.bench 'TileFiles' -test.benchtime 20000x |
			awk -v kind=$kind -v load="$load" '/^BenchmarkTileFiles/ {
				split($1, a, "/"); sub(/-[0-9]+$/, "", a[2])
				what = (a[1] ~ /TwoWriters/) ? "two writers, " : ""
				printf "| tile file, %s%s, %s | sink.test | %.0f µs/file | — | — | — | %s |\n", what, a[2], kind, $3 / 1000, load
			}' >>"$rows"
		[ $kind = disk ] && removed=$(date +%s)
	done
done

table=$(
	echo "| benchmark | binary | wall | CPU (user + sys) | sys share | peak RSS | load (1, 5, 15 min) at start |"
	echo "|---|---|---|---|---|---|---|"
	cat "$rows"
	echo
	if [ -s "$work/notes" ]; then
		sed 's/^/- /' "$work/notes"
		echo
	fi
	echo "Machine: $(nproc) cores, $(grep -m1 'model name' /proc/cpuinfo | cut -d: -f2 | sed 's/^ //'), $(date -u +%Y-%m-%d); rerun: bash tiles/bench.sh$([ $national = 1 ] && echo ' --national')$([ $deep = 1 ] && echo ' --deep')$([ "$shards" -gt 0 ] && echo " --shards $shards")$([ $small = 0 ] && echo ' --no-small') --runs $runs."
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
