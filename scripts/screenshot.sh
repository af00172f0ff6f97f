#!/usr/bin/env bash
# Start the editor under a virtual X display on a demo project and take a
# screenshot of the whole screen.
#
#   scripts/screenshot.sh [PROJECT] [OUTPUT.png]
#
# Needs Xvfb, xdotool and ImageMagick (`apt-get install -y xvfb xdotool imagemagick`).
# Builds the release binary with the default features (the editor) first.
# Set BIASLINE_CLICK="x y" to click there first (e.g. the spread button; the
# run is given BIASLINE_CLICK_WAIT seconds, default 4), and
# BIASLINE_HOVER="x y" to move the pointer there before the picture.
set -euo pipefail
cd "$(dirname "$0")/.."
project=${1:-projects/two-stage-preamp.json}
out=${2:-docs/images/editor.png}
display=:${BIASLINE_DISPLAY:-77}
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
DISPLAY=$display BIASLINE_CONFIG_DIR=$config WAYLAND_DISPLAY= \
    ./target/release/biasline "$project" &
app=$!
# Wait for the window, then let it settle.
for _ in $(seq 1 50); do
    if DISPLAY=$display xdotool search --name "Biasline" >/dev/null 2>&1; then break; fi
    sleep 0.2
done
sleep 2
if [[ -n ${BIASLINE_CLICK:-} ]]; then
    # shellcheck disable=SC2086
    DISPLAY=$display xdotool mousemove $BIASLINE_CLICK click 1
    sleep "${BIASLINE_CLICK_WAIT:-4}"
fi
if [[ -n ${BIASLINE_HOVER:-} ]]; then
    # shellcheck disable=SC2086
    DISPLAY=$display xdotool mousemove $BIASLINE_HOVER
    sleep 1
fi
DISPLAY=$display import -window root "$out"
echo "wrote $out"
