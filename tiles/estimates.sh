#!/usr/bin/env bash
# Compares the size estimate of stipple plan (the same as inspect --map)
# with what a render writes, on the maps of BENCHMARKS.md "Size
# estimates", and prints one table row per map.
#
#   bash tiles/estimates.sh [--national]
#
# Needs ogr2ogr (Debian gdal-bin) to cut the state subsets out of
# ../shared/data/us-counties.geojson (real county shapes, synthetic
# counts). --national adds the two national renders (309 million dots at
# zooms 0–9, and 31 million at zooms 0–12; about 4 minutes together on 2
# cores). Output goes to $BENCH_DIR (default /tmp).
set -euo pipefail
cd "$(dirname "$0")/.."
national=0
[ "${1:-}" = "--national" ] && national=1
data=$(cd .. && pwd)/shared/data
work=${BENCH_DIR:-/tmp}/stipple-estimates.$$
mkdir -p "$work"
trap 'rm -rf "$work"' EXIT
go build -o "$work/stipple" ./cmd/stipple
bin=$work/stipple
base=examples/us-counties-synthetic/map.toml

# mapfile NAME INPUT SED…: a copy of the national map file on INPUT, edited.
mapfile() {
	local name=$1 input=$2
	shift 2
	sed -e "s#^file = .*#file = \"$input\"#" "$@" "$base" >"$work/$name.toml"
}
# keep N FILE: the map file with only its first N categories.
keep() {
	awk -v n="$1" '/^\[\[category\]\]/{k++} k<=n' "$2" >"$2.tmp" && mv "$2.tmp" "$2"
}
row() {
	local label=$1 name=$2
	local tiles mb
	# The estimate's own totals are the JSON's keys at four spaces in.
	"$bin" plan "$work/$name.toml" --json >"$work/plan.json"
	tiles=$(sed -nE 's/^    "tiles": ([0-9.e+]+),?$/\1/p' "$work/plan.json" | head -1)
	mb=$(sed -nE 's/^    "bytes": ([0-9.e+]+),?$/\1/p' "$work/plan.json" | head -1 | awk '{print $1 / 1e6}')
	rm -rf "$work/out"
	"$bin" render "$work/$name.toml" --out "$work/out" >/dev/null
	local n b
	n=$(find "$work/out" -regextype posix-extended -regex '.*/[0-9]+/[0-9]+/[0-9]+(@2x)?\.png' | wc -l)
	b=$(find "$work/out" -regextype posix-extended -regex '.*/[0-9]+/[0-9]+/[0-9]+(@2x)?\.png' -printf '%s\n' | awk '{s+=$1} END {print s}')
	awk -v l="$label" -v t="$tiles" -v m="$mb" -v n="$n" -v b="$b" 'BEGIN {
		printf "| %s | %d | %d | %.2f | %.1f | %.1f | %.2f |\n", l, t, n, t / n, m, b / 1e6, m * 1e6 / b }'
}

ogr2ogr -f GeoJSON "$work/nynj.geojson" "$data/us-counties.geojson" -where "substr(geoid,1,2) IN ('34','36')"
ogr2ogr -f GeoJSON "$work/tx.geojson" "$data/us-counties.geojson" -where "substr(geoid,1,2) = '48'"

echo "| map | tiles estimated | tiles written | ratio | MB estimated | MB written | ratio |"
echo "|---|---|---|---|---|---|---|"
"$bin" demo "$work/demo" >/dev/null
cp "$work/demo/source/"* "$work/"
row "demo (invented city), 5 groups, 1 dot = 10, z9–15" quillmere
mapfile nynj "$work/nynj.geojson" -e 's/^min_zoom = 0/min_zoom = 4/' -e 's/^max_zoom = 12/max_zoom = 13/'
row "two states, 5 groups, 1 dot = 1, z4–13" nynj
mapfile nynj2 "$work/nynj.geojson" -e 's/^min_zoom = 0/min_zoom = 4/' -e 's/^max_zoom = 12/max_zoom = 13/'
keep 2 "$work/nynj2.toml"
row "two states, 2 groups, 1 dot = 1, z4–13" nynj2
mapfile nynj1 "$work/nynj.geojson" -e 's/^min_zoom = 0/min_zoom = 8/' -e 's/^max_zoom = 12/max_zoom = 14/' -e 's/^people_per_dot = 1$/people_per_dot = 2/'
keep 1 "$work/nynj1.toml"
row "two states, 1 group, 1 dot = 2, z8–14" nynj1
mapfile tx "$work/tx.geojson" -e 's/^min_zoom = 0/min_zoom = 5/' -e 's/^max_zoom = 12/max_zoom = 13/' -e 's/^people_per_dot = 1$/people_per_dot = 4/' -e 's/^diameter = 1.6/diameter = 2.4/'
row "one state, 5 groups, 1 dot = 4, 2.4 px dots, z5–13" tx
cat >"$work/world.toml" <<TOML
title = "World, synthetic counts proportional to area"
people_per_dot = 5000
seed = 3
[input]
file = "$data/world-110m.geojson"
id = "name"
[tiles]
min_zoom = 0
max_zoom = 6
[[category]]
key = "pop"
label = "People (synthetic)"
color = "#1f5fa8"
fields = ["pop"]
TOML
row "world countries, 1 group, 1 dot = 5,000, z0–6" world
if [ $national = 1 ]; then
	mapfile nat9 "$data/us-counties.geojson" -e 's/^max_zoom = 12/max_zoom = 9/'
	row "national, 5 groups, 1 dot = 1, z0–9" nat9
	mapfile nat12 "$data/us-counties.geojson" -e 's/^people_per_dot = 1$/people_per_dot = 10/'
	row "national, 5 groups, 1 dot = 10, z0–12" nat12
fi
