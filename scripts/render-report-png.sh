#!/bin/sh
# Renders the demo report to PNG pictures with headless Chromium from Debian's packages, for
# docs/ (not part of CI). Installs chromium with apt when it is missing (needs root).
#   sh scripts/render-report-png.sh [report.html] [out-prefix]
# Writes <out-prefix>-top.png (the first screen) and <out-prefix>-full.png (the whole page,
# cut at 12000 pixels).
set -eu
page="${1:-out/report.html}"
prefix="${2:-docs/report}"
if ! command -v chromium >/dev/null 2>&1; then
    apt-get install -y --no-install-recommends chromium >/dev/null
fi
[ -f "$page" ] || make demo
url="file://$(cd "$(dirname "$page")" && pwd)/$(basename "$page")"
profile="$(mktemp -d)"
shot() {
    # The flags keep Chromium off the (closed) network and out of the user's profile.
    chromium --headless --no-sandbox --disable-gpu --disable-quic --no-first-run \
        --disable-background-networking --disable-component-update --disable-sync \
        --hide-scrollbars --user-data-dir="$profile" --window-size="$1" \
        --screenshot="$2" "$url" >/dev/null 2>&1
}
shot 1200,1500 "$prefix-top.png"
shot 1200,12000 "$prefix-full.png"
rm -rf "$profile"
echo "wrote $prefix-top.png and $prefix-full.png"
