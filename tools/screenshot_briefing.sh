#!/usr/bin/env bash
# Remakes docs/briefing-demo.png, the picture of the demo briefing shown in
# README.md and docs/guide-manager.md: runs the demo study (full size) into
# scenarios/lantern-reach/out/screenshot and photographs the top of its
# briefing.html with headless Chromium.
#   bash tools/screenshot_briefing.sh [build-dir]
set -euo pipefail
root="$(cd "$(dirname "${BASH_SOURCE[0]}")/.." && pwd)"
exe="${1:-$root/build}/cullcast"
out="$root/scenarios/lantern-reach/out/screenshot"
if [[ ! -e "$root/scenarios/lantern-reach/currents/lantern_reach_20280110.nc" ]]; then
  "$exe" demo-data "$root/scenarios/lantern-reach/currents"
fi
SOURCE_DATE_EPOCH=1796083200 "$exe" run "$root/scenarios/lantern-reach.toml" --quiet \
  --set outputs.dir=lantern-reach/out/screenshot
profile="$(mktemp -d)"
trap 'rm -rf "$profile"' EXIT
/usr/bin/chromium --headless --no-sandbox --disable-gpu --no-first-run --disable-background-networking \
  --user-data-dir="$profile" --hide-scrollbars --window-size=1200,1500 \
  --screenshot="$root/docs/briefing-demo.png" "file://$out/briefing.html" 2>/dev/null
echo "wrote $root/docs/briefing-demo.png"
