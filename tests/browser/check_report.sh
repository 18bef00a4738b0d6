#!/usr/bin/env bash
# Browser check of report.html: headless Debian chromium, networking disabled, opens the
# page and fails on any console message (the page has no scripts, so any message is an
# error) or on any request the page makes beyond its own file (read from chromium's net
# log; the browser's own update and time services are not the page's and are ignored),
# checks the rendered DOM and that a screenshot is not blank. Control pages that log a
# console error and that fetch an image must both be caught, so the check can fail.
#
# usage: tests/browser/check_report.sh RUN_DIR [SCREENSHOT.png]
set -euo pipefail
run=${1:?usage: check_report.sh RUN_DIR [SCREENSHOT.png]}
shot=${2:-}
here=$(cd "$(dirname "$0")" && pwd)
page="$(cd "$run" && pwd)/report.html"
[ -f "$page" ] || { echo "check_report: no $page" >&2; exit 1; }
command -v chromium >/dev/null || { echo "check_report: chromium is not installed" >&2; exit 1; }
command -v python3 >/dev/null || { echo "check_report: python3 is not installed" >&2; exit 1; }
work=$(mktemp -d)
trap 'rm -rf "$work"' EXIT

# No network: a fresh network namespace when we may make one, else a dead proxy.
netless=()
if unshare -n true 2>/dev/null; then netless=(unshare -n); fi

browse() { # browse URL OUT_PREFIX [extra chromium args...]
  local url=$1 out=$2; shift 2
  "${netless[@]}" chromium --headless --no-sandbox --disable-gpu --disable-quic --no-first-run \
    --disable-background-networking --disable-component-update --disable-sync --disable-extensions \
    --proxy-server=127.0.0.1:9 --user-data-dir="$(mktemp -d -p "$work")" \
    --enable-logging=stderr --v=0 --log-net-log="$out.net.json" --hide-scrollbars "$@" "$url" >"$out.out" 2>"$out.err" || true
}

# URLs requested other than file:// and data: and chromium's own background services.
page_requests() {
  [ -f "$1" ] || { echo "check_report: chromium wrote no net log $1" >&2; exit 1; }
  grep -o '"url":"[a-z-]*:[^"]*"' "$1" | grep -v -E '"url":"(file|data|chrome|about):' \
    | grep -v -E '://([a-z0-9-]+\.)*(google\.com|googleapis\.com|gvt1\.com|gstatic\.com)[/:"]' | sort -u || true
}

console_lines() { grep -E 'CONSOLE|console' "$1" | grep -v -E 'DevTools listening' || true; }

# 1. Control: a console error must be detected.
printf '<!DOCTYPE html><html><body><p>probe</p><script>console.error("mixband-probe-error")</script></body></html>' >"$work/control.html"
browse "file://$work/control.html" "$work/control" --dump-dom
if ! console_lines "$work/control.err" | grep -q mixband-probe-error; then
  echo "check_report: the console detector did not see a deliberate console error; cannot trust the check" >&2
  cat "$work/control.err" >&2
  exit 1
fi

printf '<!DOCTYPE html><html><body><img src="http://mixband-probe.invalid/x.png"/></body></html>' >"$work/control2.html"
browse "file://$work/control2.html" "$work/control2" --dump-dom
if ! page_requests "$work/control2.net.json" | grep -q mixband-probe.invalid; then
  echo "check_report: the request detector did not see a deliberate fetch; cannot trust the check" >&2
  exit 1
fi

# 2. The report: no console messages, and the DOM holds what the page promises.
browse "file://$page" "$work/report" --dump-dom
msgs=$(console_lines "$work/report.err")
if [ -n "$msgs" ]; then
  echo "check_report: console messages while loading the report:" >&2
  echo "$msgs" >&2
  exit 1
fi
reqs=$(page_requests "$work/report.net.json")
if [ -n "$reqs" ]; then
  echo "check_report: the report tried to fetch:" >&2
  echo "$reqs" >&2
  exit 1
fi
dom="$work/report.out"
for needle in 'id="verdict"' 'id="bands-download"' 'id="caution"' '<svg'; do
  grep -q "$needle" "$dom" || { echo "check_report: rendered page lacks $needle" >&2; exit 1; }
done
svgs=$(grep -o '<svg' "$dom" | wc -l)
[ "$svgs" -ge 3 ] || { echo "check_report: only $svgs figures rendered" >&2; exit 1; }

# 3. Screenshot, and check it is not blank.
png="$work/report.png"
browse "file://$page" "$work/shot" --screenshot="$png" --window-size=1100,2600
[ -s "$png" ] || { echo "check_report: no screenshot" >&2; cat "$work/shot.err" >&2; exit 1; }
python3 "$here/png_stats.py" "$png"
if [ -n "$shot" ]; then cp "$png" "$shot"; fi
echo "check_report: $page renders with no console messages and no requests; $svgs figures; screenshot not blank"
