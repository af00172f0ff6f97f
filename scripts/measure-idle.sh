#!/usr/bin/env bash
# Idle cost of the editor: start it under Xvfb on a demo, let it settle, then
# report the CPU it uses over 10 s of doing nothing and its resident memory.
#
#   scripts/measure-idle.sh [PROJECT]
set -euo pipefail
cd "$(dirname "$0")/.."
project=${1:-projects/two-stage-preamp.json}
display=:${BIASLINE_DISPLAY:-78}
cargo build --release --quiet
config=$(mktemp -d)
Xvfb "$display" -screen 0 1400x860x24 -nolisten tcp >/dev/null 2>&1 &
xvfb=$!
cleanup() {
    [[ -n ${app:-} ]] && kill "$app" 2>/dev/null || true
    kill "$xvfb" 2>/dev/null || true
    rm -rf "$config"
}
trap cleanup EXIT
sleep 1
DISPLAY=$display BIASLINE_CONFIG_DIR=$config WAYLAND_DISPLAY= ./target/release/biasline "$project" &
app=$!
sleep 5
# Move the pointer over the sheet once, then leave it still.
DISPLAY=$display xdotool mousemove 700 400 || true
sleep 2
ticks=$(getconf CLK_TCK)
cpu() { awk '{print $14 + $15}' "/proc/$app/stat"; }
a=$(cpu)
sleep 10
b=$(cpu)
rss=$(awk '/VmRSS/ {print $2}' "/proc/$app/status")
hwm=$(awk '/VmHWM/ {print $2}' "/proc/$app/status")
awk -v a="$a" -v b="$b" -v t="$ticks" -v r="$rss" -v h="$hwm" 'BEGIN {
    printf "idle CPU over 10 s: %.2f %% of one core\n", 100 * (b - a) / t / 10
    printf "resident memory: %.1f MB (peak %.1f MB)\n", r / 1024, h / 1024
}'
