#!/usr/bin/env bash
# Issue 7's benchmark: builds the reference data and runs every comparison,
# each RUNS times, then prints a table of median wall times, peak RSS and
# the ratios the issue sets targets for, and compares the offending-row
# counts of assay and the pandas + SciPy script.
#
# Usage: bench/run.sh [ROWS [OUT]]
#   ROWS  rows of the reference data (default 10000000)
#   OUT   folder for binaries, data and logs (default bench/out, gitignored)
# Environment:
#   RUNS      runs of each measurement (default 3)
#   MEM_ROWS  row counts of the plain-policy memory runs (default "1000000 10000000")
#   PYTHON    interpreter with pandas and SciPy (default /usr/bin/python3)
#   SEED      seed of the data (default 1)
set -euo pipefail

here="$(cd "$(dirname "${BASH_SOURCE[0]}")" && pwd)"
repo="$(cd "$here/.." && pwd)"
rows="${1:-10000000}"
out="${2:-$here/out}"
runs="${RUNS:-3}"
mem_rows="${MEM_ROWS:-1000000 10000000}"
python="${PYTHON:-/usr/bin/python3}"
seed="${SEED:-1}"

mkdir -p "$out/bin" "$out/data" "$out/logs"
out="$(cd "$out" && pwd)"

echo "building into $out/bin" >&2
(cd "$repo" && go build -o "$out/bin/" ./cmd/assay ./bench/gen ./bench/decode ./bench/csvpass)

# data FORMAT N: path of the reference data of N rows, generated once.
data() {
	local format="$1" n="$2"
	local path="$out/data/ref-$n-s$seed.$format"
	if [[ ! -s "$path" ]]; then
		echo "generating $path" >&2
		"$out/bin/gen" -rows "$n" -seed "$seed" -format "$format" -o "$path.tmp"
		mv "$path.tmp" "$path"
	fi
	printf '%s\n' "$path"
}

# measure NAME CMD...: runs CMD $runs times, keeping wall seconds and peak
# RSS (KB) per run in $out/logs/NAME.times. Exit codes 0 and 1 are accepted
# (assay exits 1 when a rule fails, as planted rows make some).
have_gnu_time=0
if [[ -x /usr/bin/time ]] && /usr/bin/time -f '%e' true 2>/dev/null; then
	have_gnu_time=1
fi
measure() {
	local name="$1"
	shift
	local times="$out/logs/$name.times"
	: >"$times"
	local i rc
	for ((i = 1; i <= runs; i++)); do
		echo "  $name run $i/$runs" >&2
		rc=0
		if ((have_gnu_time)); then
			/usr/bin/time -f '%e %M' -o "$out/logs/$name.time1" "$@" >"$out/logs/$name.out" 2>"$out/logs/$name.err" || rc=$?
			if ((rc > 1)); then
				echo "$name failed (exit $rc); see $out/logs/$name.err" >&2
				exit 1
			fi
			tail -n 1 "$out/logs/$name.time1" >>"$times"
		else
			local start end
			start="$(date +%s.%N)"
			"$@" >"$out/logs/$name.out" 2>"$out/logs/$name.err" || rc=$?
			end="$(date +%s.%N)"
			if ((rc > 1)); then
				echo "$name failed (exit $rc); see $out/logs/$name.err" >&2
				exit 1
			fi
			echo "$(echo "$end - $start" | bc) NA" >>"$times"
		fi
	done
}

# median NAME COLUMN: median of column 1 (seconds) or 2 (KB) of NAME's runs.
median() {
	sort -g -k "$2,$2" "$out/logs/$1.times" | awk -v c="$2" '{v[NR] = $c} END {
		if (NR == 0 || v[1] == "NA") { print "NA"; exit }
		if (NR % 2) print v[(NR + 1) / 2]; else print (v[NR / 2] + v[NR / 2 + 1]) / 2 }'
}

pq="$(data parquet "$rows")"
csv="$(data csv "$rows")"
policy="$here/policy.yaml"
plain="$here/policy-plain.yaml"
assay="$out/bin/assay"

load_before="$(uptime)"
echo "load before: $load_before" >&2
measure decode "$out/bin/decode" "$pq"
measure csvpass "$out/bin/csvpass" "$csv"
measure assay-parquet "$assay" check "$policy" "$pq" --quiet --format json --output "$out/logs/assay-parquet.json"
measure assay-csv "$assay" check "$policy" "$csv" --quiet --format json --output "$out/logs/assay-csv.json"
measure pandas "$python" "$here/pandas_checks.py" "$csv"
cp "$out/logs/pandas.out" "$out/logs/pandas.tsv"
for n in $mem_rows; do
	measure "plain-parquet-$n" "$assay" check "$plain" "$(data parquet "$n")" --quiet --format json --output "$out/logs/plain-parquet-$n.json"
	measure "plain-csv-$n" "$assay" check "$plain" "$(data csv "$n")" --quiet --format json --output "$out/logs/plain-csv-$n.json"
done
load_after="$(uptime)"

# ratio A B: A / B to two decimals.
ratio() {
	awk -v a="$1" -v b="$2" 'BEGIN { if (a == "NA" || b == "NA" || b == 0) print "NA"; else printf "%.2f\n", a / b }'
}
mb() {
	awk -v k="$1" 'BEGIN { if (k == "NA") print "NA"; else printf "%.0f\n", k / 1024 }'
}

echo
echo "rows: $rows ($(du -h "$pq" | cut -f1) Parquet, $(du -h "$csv" | cut -f1) CSV); medians of $runs runs"
echo "machine: $(nproc) cores, $(uname -sr), $(go version | cut -d' ' -f3)"
echo "load before: $load_before"
echo "load after:  $load_after"
printf '%-28s %10s %10s\n' "run" "wall s" "peak MB"
for name in decode csvpass assay-parquet assay-csv pandas; do
	printf '%-28s %10s %10s\n' "$name" "$(median "$name" 1)" "$(mb "$(median "$name" 2)")"
done
for n in $mem_rows; do
	for f in parquet csv; do
		printf '%-28s %10s %10s\n' "plain-$f-$n" "$(median "plain-$f-$n" 1)" "$(mb "$(median "plain-$f-$n" 2)")"
	done
done
echo
printf '%-52s %8s %s\n' "ratio" "value" "target"
printf '%-52s %8s %s\n' "assay Parquet / bare decode (wall)" "$(ratio "$(median assay-parquet 1)" "$(median decode 1)")" "<= 2"
printf '%-52s %8s %s\n' "assay Parquet peak RSS (MB)" "$(mb "$(median assay-parquet 2)")" "<= 1024"
printf '%-52s %8s %s\n' "assay CSV / bare encoding/csv pass (wall)" "$(ratio "$(median assay-csv 1)" "$(median csvpass 1)")" "<= 1"
printf '%-52s %8s %s\n' "pandas / assay CSV (wall)" "$(ratio "$(median pandas 1)" "$(median assay-csv 1)")" ">= 10"
printf '%-52s %8s %s\n' "pandas / assay CSV (peak RSS)" "$(ratio "$(median pandas 2)" "$(median assay-csv 2)")" "-"
for n in $mem_rows; do
	printf '%-52s %8s %s\n' "plain policy peak RSS at $n rows, Parquet (MB)" "$(mb "$(median "plain-parquet-$n" 2)")" "<= 200"
	printf '%-52s %8s %s\n' "plain policy peak RSS at $n rows, CSV (MB)" "$(mb "$(median "plain-csv-$n" 2)")" "<= 200"
done
echo
echo "offending rows, assay against pandas:"
"$python" "$here/compare.py" "$out/logs/assay-parquet.json" "$out/logs/assay-csv.json" "$out/logs/pandas.tsv"
