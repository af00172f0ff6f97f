#!/bin/sh
# Regenerate docs/images/*.png from the demo projects: the annotated sheet of
# every demo at 2×, plus the two-stage preamp's sheet with each stage-card
# model. Run from the repository root:  sh scripts/render-demos.sh
set -eu
cargo build --release --no-default-features --quiet
bin=target/release/biasline
out=docs/images
mkdir -p "$out"
for project in projects/*.json; do
    name=$(basename "$project" .json)
    # Exit code 1 only means the analysis has warnings; the image is written.
    "$bin" export "$project" -o "$out/$name.png" --scale 2 || [ $? -eq 1 ]
done
"$bin" export projects/two-stage-preamp.json -o "$out/two-stage-preamp-schematic-only.png" \
    --scale 2 --layers schematic || [ $? -eq 1 ]
# Each demo stripped to connections (no positions, no wires) and laid out
# by the program, beside the hand-drawn sheets above.
tmp=$(mktemp -d)
for project in projects/*.json; do
    name=$(basename "$project" .json)
    "$bin" layout "$project" --connections -o "$tmp/$name.json" >/dev/null
    "$bin" export "$tmp/$name.json" -o "$out/laid-out-$name.png" --scale 2 || [ $? -eq 1 ]
done
"$bin" design --stage ce --supply 12 --gain 30dB --zin 20k --load 10k --low 20 \
    -o "$tmp/designed.json" >/dev/null || [ $? -eq 1 ]
"$bin" export "$tmp/designed.json" -o "$out/laid-out-designed-stage.png" --scale 2 || [ $? -eq 1 ]
rm -r "$tmp"
"$bin" export projects/connections/long-tailed-pair.json \
    -o "$out/laid-out-long-tailed-pair.png" --scale 2 || [ $? -eq 1 ]
echo "wrote $(ls "$out" | wc -l) files to $out"
