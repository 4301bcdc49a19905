#!/usr/bin/env bash
# Writes docs/html-arm-views.png: the arm and path views and the clearance plots of the
# report of paths/rib_weld_collides.yaml, the pose slider at pose 61. The two sections are
# cut out of the page (with its style and script) so that the picture starts at them.
#
#   tools/views-shot.sh
#
# Needs the release binary (built here), python3 and Debian's chromium.
set -euo pipefail
cd "$(dirname "$0")/.."
cargo build --release -q
tmp=$(mktemp -d)
trap 'rm -rf "$tmp"' EXIT
status=0
target/release/armpath check paths/rib_weld_collides.yaml --html "$tmp/report.html" -q || status=$?
if [ "$status" -gt 1 ]; then
  echo "the check failed with exit code $status" >&2
  exit 1
fi
python3 - "$tmp/report.html" "$tmp/views.html" <<'PY'
import sys
page = open(sys.argv[1], encoding="utf-8").read()
head = page[: page.index("<body>") + len("<body>")]
start = page.index('<h2 id="views">')
end = page.index('<h2 id="settings">')
open(sys.argv[2], "w", encoding="utf-8").write(
    head + "<main>" + page[start:end] + "</main></body></html>\n"
)
PY
chromium --headless --no-sandbox --disable-gpu --hide-scrollbars \
  --user-data-dir="$tmp/profile" --window-size=1280,1150 \
  --screenshot="$PWD/docs/html-arm-views.png" "file://$tmp/views.html#pose=60" 2>/dev/null
echo "wrote docs/html-arm-views.png"
