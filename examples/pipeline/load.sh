#!/usr/bin/env bash
# Gate a load: check a batch of hive readings against the policy kept beside
# this script, load the rows that break no row-level rule into the
# warehouse, and hold back the others with the reports for a person to read.
#
# Usage: load.sh BATCH.csv [WAREHOUSE_DIR]
#
# The warehouse here is a folder holding readings.csv, a stand-in for a real
# table: replace load_rows with your loader (psql's \copy, bq load, ...).
#
# What assay's exit code means for the load:
#   0  pass or warn: the accepted rows are loaded; rejected rows, if any, go
#      to quarantine. This script exits 0.
#   1  fail: the batch as a whole broke a tolerance (too many bad rows, a
#      table rule, a summary statistic). The accepted rows are still the
#      clean part of the batch, so they are loaded, unless ASSAY_ON_FAIL=stop;
#      the rejected rows and the reports go to quarantine. This script exits 1
#      so that the scheduler raises the alarm.
#   2  trouble: unreadable data, a policy that does not fit the data, a rule
#      that could not run. assay wrote nothing; nothing is loaded. Exit 2.
#
# Environment: ASSAY names the assay command (default: assay on PATH, else one
# built from this repository; `go run` would turn exit 2 into 1).
# ASSAY_ON_FAIL=stop loads nothing from a failing batch.
set -euo pipefail

usage() { printf 'usage: %s BATCH.csv [WAREHOUSE_DIR]\n' "$0" >&2; exit 2; }
if [ $# -lt 1 ] || [ $# -gt 2 ]; then
  usage
fi

here=$(cd "$(dirname "${BASH_SOURCE[0]}")" && pwd)
policy="$here/policy.yaml"
batch=$1
warehouse=${2:-$here/warehouse}
on_fail=${ASSAY_ON_FAIL:-load}
case $on_fail in
  load | stop) ;;
  *) printf 'load.sh: ASSAY_ON_FAIL must be load or stop, not %s\n' "$on_fail" >&2; exit 2 ;;
esac

work=$(mktemp -d)
trap 'rm -rf "$work"' EXIT

assay=${ASSAY:-}
if [ -z "$assay" ]; then
  if command -v assay >/dev/null 2>&1; then
    assay=assay
  else
    assay="$work/assay"
    (cd "$here/../.." && go build -o "$assay" ./cmd/assay) || {
      printf 'load.sh: no assay command: install it, or set ASSAY\n' >&2
      exit 2
    }
  fi
fi

# load_rows appends the rows of a CSV file with a header line to the
# warehouse table. It runs only after assay has written the whole file.
load_rows() {
  local table="$warehouse/readings.csv"
  if [ -s "$table" ]; then
    tail -n +2 "$1" >>"$table"
  else
    cp "$1" "$table"
  fi
}

# quarantine keeps the rejected rows and the reports of the batch.
quarantine() {
  local dir
  dir="$warehouse/quarantine/$(basename "$batch" .csv)-$(date -u +%Y%m%dT%H%M%SZ)"
  mkdir -p "$dir"
  cp "$work/rejected.csv" "$work/report.json" "$work/summary.md" "$dir/"
  printf 'load.sh: rejected rows and reports kept in %s\n' "$dir" >&2
}

mkdir -p "$warehouse"
status=0
"$assay" check "$policy" "$batch" \
  --accepted "$work/accepted.csv" --rejected "$work/rejected.csv" \
  --report json="$work/report.json" --report markdown="$work/summary.md" \
  --format text --quiet || status=$?

# Did any row go to the rejected file (more than its header line)?
any_rejected=no
if [ -f "$work/rejected.csv" ] && [ "$(wc -l <"$work/rejected.csv")" -gt 1 ]; then
  any_rejected=yes
fi

case $status in
  0)
    load_rows "$work/accepted.csv"
    if [ "$any_rejected" = yes ]; then
      quarantine
    fi
    printf 'load.sh: %s loaded\n' "$batch" >&2
    ;;
  1)
    quarantine
    if [ "$on_fail" = load ]; then
      load_rows "$work/accepted.csv"
      printf 'load.sh: %s failed its policy; its accepted rows were loaded\n' "$batch" >&2
    else
      printf 'load.sh: %s failed its policy; nothing loaded\n' "$batch" >&2
    fi
    exit 1
    ;;
  *)
    printf 'load.sh: assay could not judge %s (exit %d); nothing loaded\n' "$batch" "$status" >&2
    exit 2
    ;;
esac
