#!/usr/bin/env sh
# Print every figure the commands give for every demo and test fixture into
# one folder, so two builds can be compared byte for byte:
#
#   sh scripts/figures.sh BIN OUT_DIR          # one build's figures
#   diff -r OUT_A OUT_B                         # nothing printed: no figure changed
#
# BIN is a built `biasline` (e.g. target/release/biasline). Covered:
# analyze --json, sweep --csv, noise --csv, transient --json (steady state),
# stability --json,
# spread --json (runs 200, seed 7, one thread), the SVG export (default and
# every layer with the h model), analyze and check as text and the design
# report (100 runs), of every
# project in projects/, projects/connections/ and tests/fixtures/. The exit code of each command is
# kept beside its output.
set -u
bin=$1
out=$2
mkdir -p "$out"
here=$(cd "$(dirname "$0")/.." && pwd)
cd "$here" || exit 2
for f in projects/*.json projects/connections/*.json tests/fixtures/*.json; do
    n=$(echo "$f" | tr '/' '_')
    "$bin" analyze "$f" --json >"$out/$n.analyze.json" 2>"$out/$n.analyze.err"
    echo "$?" >>"$out/$n.analyze.json"
    "$bin" sweep "$f" --csv >"$out/$n.sweep.csv" 2>"$out/$n.sweep.err"
    echo "$?" >>"$out/$n.sweep.csv"
    "$bin" noise "$f" --csv >"$out/$n.noise.csv" 2>"$out/$n.noise.err"
    echo "$?" >>"$out/$n.noise.csv"
    "$bin" transient "$f" --json >"$out/$n.transient.json" 2>"$out/$n.transient.err"
    echo "$?" >>"$out/$n.transient.json"
    "$bin" stability "$f" --json >"$out/$n.stability.json" 2>"$out/$n.stability.err"
    echo "$?" >>"$out/$n.stability.json"
    "$bin" spread "$f" --json --runs 200 --seed 7 --threads 1 >"$out/$n.spread.json" 2>"$out/$n.spread.err"
    echo "$?" >>"$out/$n.spread.json"
    "$bin" export "$f" -o "$out/$n.svg" >/dev/null 2>"$out/$n.export.err"
    echo "$?" >"$out/$n.export.code"
    "$bin" export "$f" --layers schematic,voltages,currents,stages,spread,noise,distortion --model h -o "$out/$n.layers.svg" >/dev/null 2>"$out/$n.layers.err"
    echo "$?" >"$out/$n.layers.code"
    "$bin" analyze "$f" >"$out/$n.analyze.txt" 2>"$out/$n.analyze.txt.err"
    echo "$?" >>"$out/$n.analyze.txt"
    "$bin" check "$f" >"$out/$n.check.txt" 2>&1
    echo "$?" >>"$out/$n.check.txt"
    "$bin" report "$f" --runs 100 --seed 7 --threads 1 -o "$out/$n.report.html" >/dev/null 2>"$out/$n.report.err"
    echo "$?" >"$out/$n.report.code"
done
# Commands that take no project, or options the loop does not use.
i=0
while IFS= read -r line; do
    i=$((i + 1))
    # shellcheck disable=SC2086
    "$bin" $line >"$out/extra-$i.txt" 2>&1
    echo "$? $line" >>"$out/extra-$i.txt"
done <<'LIST'
transient projects/two-stage-preamp.json --for 2ms --json
transient projects/two-stage-preamp.json --for 1ms --current Q1.collector --csv
transient projects/two-stage-preamp.json --clip --json
transient projects/two-stage-preamp.json
noise projects/two-stage-preamp.json
sweep projects/two-stage-preamp.json
spread projects/two-stage-preamp.json --runs 100 --seed 3 --threads 1
design --stage ce --supply 12 --gain 30dB --zin 20k --load 10k --low 20 --json
design --stage ce-cc --supply 12 --gain 20dB --zin 10k --load 600 --low 20
design --stage jfet-cs --supply 12 --gain 12dB --load 10k --low 20 --id 1m
design --stage jfet-sf --supply 12 --load 10k --low 20 --id 1m --json
design --stage mos-cs --supply 12 --gain 12dB --load 10k --low 20 --id 1m --json
stability projects/line-driver.json
stability projects/line-driver.json --csv
snap projects/two-stage-preamp.json --series E12 --json
preferred 4.9k --series E24
nets projects/two-stage-preamp.json --json
check projects/two-stage-preamp.json --json
export projects/two-stage-preamp.json --table stages
export projects/two-stage-preamp.json --table bias
export projects/two-stage-preamp.json --table parts
LIST
