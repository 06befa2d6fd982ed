#!/usr/bin/env bash
# Opens a rendered report.html in headless Chromium and fails if any inline
# <svg> has zero width or height; also saves a screenshot next to it.
#
# Usage: tests/browser/check_svgs.sh path/to/report.html [screenshot.png]
#
# The report itself contains no scripts. A temporary copy gets one small
# measuring script appended; Chromium runs it and --dump-dom prints the
# result, which this script reads back. Exits 0 with "skipped: chromium not
# installed" when Chromium is absent.
set -euo pipefail

report="${1:?usage: check_svgs.sh report.html [screenshot.png]}"
shot="${2:-${report%.html}.png}"
chromium="${CHROMIUM:-/usr/bin/chromium}"

if [[ ! -x "$chromium" ]]; then
    echo "skipped: chromium not installed"
    exit 0
fi
if [[ ! -f "$report" ]]; then
    echo "error: no such file: $report" >&2
    exit 1
fi

work="$(mktemp -d)"
trap 'rm -rf "$work"' EXIT
copy="$work/measure.html"
cp "$report" "$copy"
cat >>"$copy" <<'JS'
<script>
(function () {
  var out = [];
  var svgs = document.querySelectorAll("svg");
  for (var i = 0; i < svgs.length; i++) {
    var r = svgs[i].getBoundingClientRect();
    var t = svgs[i].querySelector("title");
    out.push((t ? t.textContent : "svg " + i) + "\t" + r.width + "\t" + r.height);
  }
  var pre = document.createElement("pre");
  pre.id = "svg-measurements";
    // The markers are assembled at run time so that the script's own source,
  // which --dump-dom also prints, never contains them.
  pre.textContent = "BEGIN" + "-SVG\n" + svgs.length + "\n" + out.join("\n") + "\nEND" + "-SVG";
  document.body.appendChild(pre);
})();
</script>
JS

flags=(--headless --no-sandbox --disable-gpu --no-first-run
       --disable-background-networking --disable-component-update --disable-sync
       --run-all-compositor-stages-before-draw
       --virtual-time-budget=5000 --window-size=1000,1400)

dom="$("$chromium" "${flags[@]}" --user-data-dir="$(mktemp -d -p "$work")" --dump-dom "file://$copy" 2>"$work/stderr" || true)"
block="$(printf '%s\n' "$dom" | sed -n '/BEGIN-SVG/,/END-SVG/p' | sed '1d;$d')"
if [[ -z "$block" ]]; then
    echo "error: chromium produced no measurements" >&2
    tail -n 20 "$work/stderr" >&2 || true
    exit 1
fi
count="$(printf '%s\n' "$block" | head -n 1)"
bad=0
while IFS=$'\t' read -r name width height; do
    [[ -z "${name:-}" ]] && continue
    if awk -v w="$width" -v h="$height" 'BEGIN { exit !(w > 0 && h > 0) }'; then
        echo "ok: $name (${width} x ${height})"
    else
        echo "FAIL: $name has size ${width} x ${height}"
        bad=1
    fi
done < <(printf '%s\n' "$block" | tail -n +2)

if [[ "$count" == "0" ]]; then
    echo "FAIL: the report has no inline SVG figures"
    bad=1
fi

"$chromium" "${flags[@]}" --user-data-dir="$(mktemp -d -p "$work")" --screenshot="$shot" "file://$(realpath "$report")" 2>>"$work/stderr" >/dev/null || true
if [[ -s "$shot" ]]; then
    echo "screenshot: $shot"
else
    echo "FAIL: no screenshot written"
    bad=1
fi
exit "$bad"
