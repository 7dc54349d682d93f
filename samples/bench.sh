#!/usr/bin/env bash
# samples/bench.sh — issue 6: time `beatnote triage --format json` on the fleet shapes next to the
# baseline (encoding/csv with ReuseRecord + strconv.ParseFloat on every numeric field, nothing
# else; samples/fleetgen/baseline), side by side in one run, and print the ratios, the peak
# resident memory and the state bytes per row.
#
#   samples/bench.sh            # best of 3 (RUNS=5 samples/bench.sh for more)
#
# Builds both programs, generates the data into out/ when missing (deterministic, seed 1; never
# committed), then alternates the programs run by run so that both see the same machine load.
# Wall time and peak RSS come from /usr/bin/time (apt-get install -y time if it is missing).
set -euo pipefail
cd "$(dirname "$0")/.."
RUNS=${RUNS:-3}
BIN=out/bench-bin
TIME=/usr/bin/time
if [ ! -x "$TIME" ]; then
	echo "bench.sh: $TIME is missing (apt-get install -y time)" >&2
	exit 2
fi

mkdir -p "$BIN"
go build -o "$BIN/beatnote" ./cmd/beatnote
go build -o "$BIN/baseline" ./samples/fleetgen/baseline
# The port maps give each port its profile (triage refuses to assume one); older out/ lacks them.
[ -f out/fleet.portmap.yaml ] || go run ./samples/fleetgen -out out/fleet.csv
[ -f out/fleet-250k.portmap.yaml ] || go run ./samples/fleetgen -out out/fleet-250k.csv -samples 360
[ -f out/fleet-files.portmap.yaml ] || go run ./samples/fleetgen -out "" -files-dir out/fleet-files

calc() { awk "BEGIN { print $1 }"; } # arithmetic without bc

rows() { # data rows of a file or of the *.csv files of a folder
	if [ -d "$1" ]; then cat "$1"/*.csv | grep -vc '^time,'; else echo $(($(wc -l <"$1") - 1)); fi
}

# run NAME CMD...: one timed run; appends "wall_s peak_kb" to out/bench-bin/NAME.
run() {
	local name=$1
	shift
	local rc=0
	"$TIME" -f '%e %M' -o "$BIN/$name.one" "$@" >/dev/null 2>"$BIN/$name.err" || rc=$?
	# triage exits 1 when some port is not passing: that is a completed run.
	if [ "$rc" -gt 1 ]; then
		echo "bench.sh: $name failed (exit $rc):" >&2
		cat "$BIN/$name.err" >&2
		exit 2
	fi
	tail -n 1 "$BIN/$name.one" >>"$BIN/$name"
}
best() { sort -n "$BIN/$1" | head -n 1 | cut -d' ' -f1; }  # fastest wall time, s
peak() { sort -n -k2 "$BIN/$1" | tail -n 1 | cut -d' ' -f2; } # largest peak RSS over the runs, KB

for n in base1m tri1m base250k tri250k basefiles trifiles; do : >"$BIN/$n"; done
for i in $(seq "$RUNS"); do
	run base1m "$BIN/baseline" out/fleet.csv
	run tri1m "$BIN/beatnote" triage out/fleet.csv --map out/fleet.portmap.yaml --format json
	run base250k "$BIN/baseline" out/fleet-250k.csv
	run tri250k "$BIN/beatnote" triage out/fleet-250k.csv --map out/fleet-250k.portmap.yaml --format json
	run basefiles "$BIN/baseline" out/fleet-files
	run trifiles "$BIN/beatnote" triage out/fleet-files --map out/fleet-files.portmap.yaml --format json
done

r1m=$(rows out/fleet.csv)
r250k=$(rows out/fleet-250k.csv)
rfiles=$(rows out/fleet-files)
echo
echo "machine: $(nproc) cores, $(go env GOVERSION), best of $RUNS runs (wall time), peak RSS the largest of the runs"
printf '%-44s %9s %9s %12s\n' "input" "baseline" "triage" "triage/base"
line() { # label rows base tri
	local b t
	b=$(best "$3")
	t=$(best "$4")
	printf '%-44s %8.2fs %8.2fs %12.2f\n' "$1 ($2 rows)" "$b" "$t" "$(calc "$t / $b")"
}
line "out/fleet.csv" "$r1m" base1m tri1m
line "out/fleet-250k.csv" "$r250k" base250k tri250k
line "out/fleet-files, 5000 files" "$rfiles" basefiles trifiles
echo
t1m=$(best tri1m)
tfiles=$(best trifiles)
printf 'folder of 5000 files / 1M-row file (triage): %.2f (goal < 2)\n' "$(calc "$tfiles / $t1m")"
p1m=$(peak tri1m)
p250k=$(peak tri250k)
pfiles=$(peak trifiles)
printf 'peak RSS triage: 1M rows %d MB, 250k rows %d MB, 5000 files %d MB (goal < 300 MB at 1M rows)\n' \
	$((p1m / 1024)) $((p250k / 1024)) $((pfiles / 1024))
printf 'state bytes per row (RSS growth from 250k to 1M rows): %.0f B/row; RSS/rows at 1M: %.0f B/row\n' \
	"$(calc "($p1m - $p250k) * 1024 / ($r1m - $r250k)")" "$(calc "$p1m * 1024 / $r1m")"
printf 'peak RSS baseline: 1M rows %d MB\n' $(($(peak base1m) / 1024))
