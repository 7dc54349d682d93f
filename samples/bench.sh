#!/usr/bin/env bash
# samples/bench.sh — the fleet-scale speed and memory goals of docs/performance.md, measured side
# by side in one run: every ratio is computed run by run (A then B, repeated) and the median of
# the per-pair ratios is printed, so that a comparison holds while other jobs load the machine.
#
#   samples/bench.sh              # 3 pairs per comparison
#   RUNS=5 samples/bench.sh       # more pairs
#   BIG=0 samples/bench.sh        # without the 10-million-row file (about 1 GB, minutes)
#
# Builds beatnote and the baseline (samples/fleetgen/baseline: encoding/csv with ReuseRecord and
# strconv.ParseFloat on every numeric field, nothing else), generates the inputs into out/ when
# missing (samples/fleetgen, deterministic, seed 1; out/ is never committed) and prints:
#   - triage / bare read at 1M rows (700 ports) and at 10M rows (7,000 ports)
#   - peak RSS per row above 50 MB, at 1M and 10M rows
#   - triage of the same rows as JSON Lines / as CSV, and as OpenConfig-shaped JSON / as CSV
#   - triage of 20,000 files × 50 rows / the bare read loop over them
#   - triage / a pandas read plus per-port quantiles at 1M rows (samples/pandas_summary.py;
#     skipped when pandas is not installed: apt-get install -y python3-pandas, or pip)
# Wall time and peak RSS come from /usr/bin/time (apt-get install -y time if it is missing).
set -euo pipefail
cd "$(dirname "$0")/.."
RUNS=${RUNS:-3}
BIG=${BIG:-1}
BIN=out/bench-bin
TIME=/usr/bin/time
if [ ! -x "$TIME" ]; then
	echo "bench.sh: $TIME is missing (apt-get install -y time)" >&2
	exit 2
fi

mkdir -p "$BIN"
go build -o "$BIN/beatnote" ./cmd/beatnote
go build -o "$BIN/baseline" ./samples/fleetgen/baseline
gen() { # FILE ARGS...: generate FILE (and its port map) with fleetgen unless present
	local f=$1
	shift
	[ -e "$f" ] && [ -f "${f%.*}.portmap.yaml" ] || go run ./samples/fleetgen "$@"
}
gen out/fleet.csv -out out/fleet.csv
gen out/fleet.jsonl -out out/fleet.jsonl
gen out/fleet.json -out out/fleet.json
gen out/fleet-20k-files -out "" -files-dir out/fleet-20k-files -files 20000 -rows 50
[ "$BIG" = 0 ] || gen out/fleet-10m.csv -out out/fleet-10m.csv -ports 7000

calc() { awk "BEGIN { print $1 }"; } # arithmetic without bc

rows() { # data rows of a file or of the *.csv files of a folder
	if [ -d "$1" ]; then find "$1" -name '*.csv' -exec cat {} + | grep -vc '^time,'; else echo $(($(wc -l <"$1") - 1)); fi
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

# pair A B: RUNS alternating runs of the commands in arrays CMD_A and CMD_B, named A and B.
pair() {
	: >"$BIN/$1"
	: >"$BIN/$2"
	for _ in $(seq "$RUNS"); do
		run "$1" "${CMD_A[@]}"
		run "$2" "${CMD_B[@]}"
	done
}
# ratio A B: median over the pairs of wall(A) / wall(B).
ratio() {
	paste -d' ' "$BIN/$1" "$BIN/$2" | awk '{ print $1 / ($3 > 0 ? $3 : 0.01) }' | sort -g |
		awk '{ r[NR] = $1 } END { print (NR % 2 ? r[(NR + 1) / 2] : (r[NR / 2] + r[NR / 2 + 1]) / 2) }'
}
median() { # median wall time of NAME, s
	cut -d' ' -f1 "$BIN/$1" | sort -g | awk '{ r[NR] = $1 } END { print (NR % 2 ? r[(NR + 1) / 2] : (r[NR / 2] + r[NR / 2 + 1]) / 2) }'
}
peak() { sort -n -k2 "$BIN/$1" | tail -n 1 | cut -d' ' -f2; } # largest peak RSS over the runs, KB
# triage FILE: the triage command line of FILE; above the default --max-rows for the 10M file.
triage() { echo "$BIN/beatnote" triage "$1" --map "${1%.*}.portmap.yaml" --format json --max-rows 20000000; }

CMD_A=($(triage out/fleet.csv))
CMD_B=("$BIN/baseline" out/fleet.csv)
pair tri1m base1m
CMD_A=($(triage out/fleet.jsonl))
CMD_B=($(triage out/fleet.csv))
pair trijsonl tricsv
CMD_A=($(triage out/fleet.json))
CMD_B=($(triage out/fleet.csv))
pair trioc tricsv2
CMD_A=($(triage out/fleet-20k-files))
CMD_B=("$BIN/baseline" out/fleet-20k-files)
pair trifiles basefiles
if [ "$BIG" != 0 ]; then
	CMD_A=($(triage out/fleet-10m.csv))
	CMD_B=("$BIN/baseline" out/fleet-10m.csv)
	pair tri10m base10m
fi
# pandas: the first of $PYTHON, python3 and the system's /usr/bin/python3 (where Debian's
# python3-pandas installs) that imports it.
pandas=skipped
py=
for p in ${PYTHON:-} python3 /usr/bin/python3; do
	if "$p" -c 'import pandas' 2>/dev/null; then
		py=$p
		break
	fi
done
if [ -n "$py" ]; then
	CMD_A=($(triage out/fleet.csv))
	CMD_B=("$py" samples/pandas_summary.py out/fleet.csv)
	pair tripd pandas
	pandas=ran
fi

r1m=$(rows out/fleet.csv)
echo
echo "machine: $(nproc) cores, $(go env GOVERSION), $RUNS alternating pairs per comparison; ratios are medians of the per-pair ratios"
printf '%-62s %8s %8s %8s  %s\n' "comparison" "A s" "B s" "A/B" "goal"
show() { # label A B goal
	printf '%-62s %8.2f %8.2f %8.2f  %s\n' "$1" "$(median "$2")" "$(median "$3")" "$(ratio "$2" "$3")" "$4"
}
show "triage / bare read, out/fleet.csv ($r1m rows, 700 ports)" tri1m base1m "<= 0.6"
if [ "$BIG" != 0 ]; then
	show "triage / bare read, out/fleet-10m.csv ($(rows out/fleet-10m.csv) rows, 7000 ports)" tri10m base10m "<= 0.8"
fi
show "triage JSON Lines / CSV, the same $r1m rows" trijsonl tricsv "<= 2"
show "triage OpenConfig JSON / CSV, the same rows" trioc tricsv2 "<= 2"
show "triage / bare loop, out/fleet-20k-files ($(rows out/fleet-20k-files) rows)" trifiles basefiles "<= 1.5"
if [ "$pandas" = ran ]; then
	show "triage / pandas read + per-port quantiles, out/fleet.csv" tripd pandas "<= 0.1"
else
	echo "triage / pandas summary: skipped (pandas is not installed: apt-get install -y python3-pandas)"
fi
echo
perrow() { # label peak_kb rows
	printf '%-62s %6d MB  %5.0f B/row above 50 MB  (goal <= 64 B/row + 50 MB)\n' "$1" $(($2 / 1024)) \
		"$(calc "($2 / 1024 - 50) * 1048576 / $3")"
}
perrow "peak RSS, triage out/fleet.csv" "$(peak tri1m)" "$r1m"
if [ "$BIG" != 0 ]; then
	perrow "peak RSS, triage out/fleet-10m.csv" "$(peak tri10m)" "$(rows out/fleet-10m.csv)"
fi
perrow "peak RSS, triage out/fleet.jsonl" "$(peak trijsonl)" "$r1m"
perrow "peak RSS, triage out/fleet.json (OpenConfig)" "$(peak trioc)" "$r1m"
perrow "peak RSS, triage out/fleet-20k-files" "$(peak trifiles)" "$(rows out/fleet-20k-files)"
printf 'peak RSS, bare read of out/fleet.csv: %d MB\n' $(($(peak base1m) / 1024))
